//! Reading the small text files people write (rig and protocol files) with a size cap, so a
//! path such as `/dev/zero` or a multi-gigabyte file gives a clear error instead of filling
//! memory, and text that is not UTF-8 is named by its line.

use std::io::Read;
use std::path::Path;

/// Largest rig or protocol file read, bytes (4 MiB; a protocol of 10,000 epochs written out one
/// by one is about 0.5 MB).
pub const MAX_TEXT_FILE_BYTES: u64 = 4 * 1024 * 1024;

/// Why a text file could not be read. Always one line (the file is named by the caller).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum TextFileError {
    /// The system refused (missing, a folder, no permission...).
    #[error("{0}")]
    Io(String),
    /// More than [`MAX_TEXT_FILE_BYTES`].
    #[error("larger than {} MiB: not a rig or protocol file", MAX_TEXT_FILE_BYTES / (1024 * 1024))]
    TooLarge,
    /// Not UTF-8 at this 1-based line and column (bytes).
    #[error("not UTF-8 text at line {line}, byte {column} (save the file as UTF-8)")]
    NotUtf8 {
        /// 1-based line.
        line: usize,
        /// 1-based byte column within the line.
        column: usize,
    },
}

/// Reads `path` as UTF-8 text of at most [`MAX_TEXT_FILE_BYTES`].
pub fn read_text_capped(path: &Path) -> Result<String, TextFileError> {
    let f = std::fs::File::open(path).map_err(|e| TextFileError::Io(e.to_string()))?;
    let mut bytes = Vec::new();
    f.take(MAX_TEXT_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| TextFileError::Io(e.to_string()))?;
    if bytes.len() as u64 > MAX_TEXT_FILE_BYTES {
        return Err(TextFileError::TooLarge);
    }
    String::from_utf8(bytes).map_err(|e| {
        let good = &e.as_bytes()[..e.utf8_error().valid_up_to()];
        let line_start = good.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
        TextFileError::NotUtf8 {
            line: good.iter().filter(|&&b| b == b'\n').count() + 1,
            column: good.len() - line_start + 1,
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn caps_size_and_names_the_line_of_bad_utf8() {
        let dir = tempfile::tempdir().unwrap();
        let f = dir.path().join("x.toml");
        std::fs::write(&f, b"a = 1\nb = \"\xc3\xa9\"\nc = \"\xff\"\n").unwrap();
        assert_eq!(
            read_text_capped(&f),
            Err(TextFileError::NotUtf8 { line: 3, column: 6 })
        );
        std::fs::write(&f, "é\n").unwrap();
        assert_eq!(read_text_capped(&f).unwrap(), "é\n");
        assert_eq!(
            read_text_capped(Path::new("/dev/zero")),
            Err(TextFileError::TooLarge)
        );
    }
}
