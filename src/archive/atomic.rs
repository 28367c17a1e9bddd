//! Atomic file writes: temporary file, fsync, rename, fsync of the folder.

use std::fs::File;
use std::io::Write;
use std::path::Path;

use super::ArchiveError;

/// Writes `bytes` to `dir/name` atomically: temporary file, fsync, rename, fsync of the folder.
pub fn write_atomic(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), ArchiveError> {
    let tmp = dir.join(format!(".{name}.tmp"));
    let path = dir.join(name);
    {
        let mut f = File::create(&tmp).map_err(|e| ArchiveError::io(&tmp, e))?;
        f.write_all(bytes).map_err(|e| ArchiveError::io(&tmp, e))?;
        f.sync_all().map_err(|e| ArchiveError::io(&tmp, e))?;
    }
    std::fs::rename(&tmp, &path).map_err(|e| ArchiveError::io(&path, e))?;
    sync_dir(dir)
}

/// Serializes `value` as pretty JSON and writes it atomically.
pub fn write_json_atomic<T: serde::Serialize>(
    dir: &Path,
    name: &str,
    value: &T,
) -> Result<(), ArchiveError> {
    let mut bytes = serde_json::to_vec_pretty(value).map_err(|source| ArchiveError::Json {
        path: dir.join(name),
        source,
    })?;
    bytes.push(b'\n');
    write_atomic(dir, name, &bytes)
}

/// fsyncs a folder so that renames and new files in it are durable.
pub fn sync_dir(dir: &Path) -> Result<(), ArchiveError> {
    File::open(dir)
        .and_then(|d| d.sync_all())
        .map_err(|e| ArchiveError::io(dir, e))
}
