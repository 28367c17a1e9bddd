use super::*;
use crate::archive::read::for_each_valid_sample;
use proptest::prelude::*;

fn columns_path(dir: &Path) -> std::path::PathBuf {
    dir.join(COLUMNS_FILE)
}

const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored";

/// A samples.csv of `n` rows whose every column changes now and then, with headings that do
/// not repeat (0.001° steps) and a NaN sun for a stretch.
fn csv_text(n: usize) -> String {
    let mut s = format!("{HEADER}\n");
    for i in 0..n {
        let t = i as f64 * 0.01;
        let epoch = i / 5_000;
        let arena = (i * 7_919) % 360_000;
        let bearing = (epoch * 90) % 360;
        let world = (arena + bearing * 1000) % 360_000;
        let az = if (900..950).contains(&i) {
            "NaN".to_string()
        } else {
            format!("{:.3}", 120.0 + (i / 37) as f64 * 0.003)
        };
        let flying = u8::from(i % 1_000 < 900);
        let scored = u8::from(flying == 1 && epoch > 0);
        s.push_str(&format!(
            "2026-06-14T09:30:00.000Z,{t:.6},{epoch},{}.{:03},{bearing}.000,{}.{:03},{az},41.250,{flying},{scored}\n",
            arena / 1000,
            arena % 1000,
            world / 1000,
            world % 1000,
        ));
    }
    s
}

fn session(n: usize) -> tempfile::TempDir {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join(SAMPLES_FILE), csv_text(n)).unwrap();
    d
}

fn from_csv(dir: &Path) -> Vec<[u64; 9]> {
    let mut rows = Vec::new();
    for_each_valid_sample(&dir.join(SAMPLES_FILE), |s| rows.push(Row::from(s).bits())).unwrap();
    rows
}

fn from_columns(dir: &Path) -> (ColumnsRead, Vec<[u64; 9]>) {
    let mut rows = Vec::new();
    let r = read_columns(dir, |r| rows.push(r.bits()));
    (r, rows)
}

fn set_mtime(path: &Path, secs: u64) {
    let f = std::fs::File::options().write(true).open(path).unwrap();
    f.set_modified(UNIX_EPOCH + std::time::Duration::from_secs(secs))
        .unwrap();
}

#[test]
fn holds_exactly_what_the_csv_reads_as_over_several_blocks() {
    let n = 2 * BLOCK_ROWS + 123;
    let d = session(n);
    assert_eq!(write_columns(d.path()).unwrap(), Written::Rows(n as u64));
    let (r, rows) = from_columns(d.path());
    assert_eq!(r, ColumnsRead::Done(n as u64));
    assert_eq!(rows, from_csv(d.path()));
    // About a fifth of the CSV's bytes.
    let csv = std::fs::metadata(d.path().join(SAMPLES_FILE))
        .unwrap()
        .len();
    let cols = std::fs::metadata(columns_path(d.path())).unwrap().len();
    assert!(cols * 3 < csv, "{cols} against {csv}");
    assert!(!d.path().join(format!(".{COLUMNS_FILE}.tmp")).exists());
}

#[test]
fn an_empty_session_has_an_empty_column_file() {
    let d = session(0);
    assert_eq!(write_columns(d.path()).unwrap(), Written::Rows(0));
    assert_eq!(from_columns(d.path()), (ColumnsRead::Done(0), vec![]));
}

#[test]
fn a_changed_csv_is_not_read_from_its_old_column_file() {
    let d = session(3_000);
    let csv = d.path().join(SAMPLES_FILE);
    write_columns(d.path()).unwrap();
    // A row appended.
    let mut text = csv_text(3_000);
    text.push_str("2026-06-14T09:31:00.000Z,30.000000,1,1.000,0.000,1.000,120.000,41.250,1,1\n");
    std::fs::write(&csv, &text).unwrap();
    let (r, _) = from_columns(d.path());
    assert!(
        matches!(&r, ColumnsRead::Unused(w) if w.contains("bytes")),
        "{r:?}"
    );
    // One digit changed, same length, and a time the column file was not made at.
    write_columns(d.path()).unwrap();
    let edited = text.replacen(",1,1\n", ",1,0\n", 1);
    assert_eq!(edited.len(), text.len());
    std::fs::write(&csv, &edited).unwrap();
    set_mtime(&csv, 1_000_000);
    let (r, _) = from_columns(d.path());
    assert!(
        matches!(&r, ColumnsRead::Unused(w) if w.contains("other bytes")),
        "{r:?}"
    );
}

#[test]
fn a_copy_that_lost_its_times_is_still_read_when_its_bytes_match() {
    let d = session(3_000);
    write_columns(d.path()).unwrap();
    set_mtime(&d.path().join(SAMPLES_FILE), 1_000_000);
    let (r, rows) = from_columns(d.path());
    assert_eq!(r, ColumnsRead::Done(3_000));
    assert_eq!(rows, from_csv(d.path()));
}

#[test]
fn a_torn_csv_gets_no_column_file_and_loses_its_old_one() {
    let d = session(100);
    write_columns(d.path()).unwrap();
    let mut text = csv_text(100);
    text.push_str("2026-06-14T09:31:00.000Z,30.0");
    std::fs::write(d.path().join(SAMPLES_FILE), text).unwrap();
    let w = write_columns(d.path()).unwrap();
    assert!(
        matches!(&w, Written::Not(why) if why.contains("torn")),
        "{w:?}"
    );
    assert!(!columns_path(d.path()).exists());
    assert_eq!(from_columns(d.path()).0, ColumnsRead::Missing);
}

#[test]
fn an_unreadable_csv_is_the_readers_error_and_leaves_no_column_file() {
    let d = session(100);
    write_columns(d.path()).unwrap();
    let text = csv_text(100).replacen(",41.250,", ",forty,", 3);
    std::fs::write(d.path().join(SAMPLES_FILE), text).unwrap();
    let e = write_columns(d.path()).unwrap_err().to_string();
    assert!(e.contains("samples.csv") && e.contains(":2:"), "{e}");
    assert!(!columns_path(d.path()).exists());
}

#[test]
fn damage_anywhere_is_found_before_a_row_counts() {
    let d = session(BLOCK_ROWS + 10);
    write_columns(d.path()).unwrap();
    let path = columns_path(d.path());
    let good = std::fs::read(&path).unwrap();
    for at in [
        3,
        9,
        14,
        20,
        5_000,
        good.len() / 2,
        good.len() - 60,
        good.len() - 1,
    ] {
        let mut bad = good.clone();
        bad[at] ^= 0x10;
        std::fs::write(&path, &bad).unwrap();
        let (r, _) = from_columns(d.path());
        assert!(matches!(r, ColumnsRead::Unused(_)), "byte {at}: {r:?}");
    }
    std::fs::write(&path, &good[..good.len() - 100]).unwrap();
    assert!(matches!(from_columns(d.path()).0, ColumnsRead::Unused(_)));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]
    /// Any cut or any flipped bytes: never a panic, never `Done` with rows other than the CSV's.
    #[test]
    fn damaged_files_never_read_as_other_rows(
        cut in 0usize..4_000,
        flips in proptest::collection::vec((0usize..4_000, 1u8..=255), 0..4),
    ) {
        let d = session(150);
        write_columns(d.path()).unwrap();
        let path = columns_path(d.path());
        let mut bytes = std::fs::read(&path).unwrap();
        for (at, x) in &flips {
            let i = at % bytes.len();
            bytes[i] ^= x;
        }
        bytes.truncate(bytes.len().saturating_sub(cut % 200));
        std::fs::write(&path, &bytes).unwrap();
        let (r, rows) = from_columns(d.path());
        if let ColumnsRead::Done(_) = r {
            prop_assert_eq!(rows, from_csv(d.path()));
        }
    }
}

#[test]
fn check_finds_a_column_file_whose_rows_are_not_the_csvs_and_repair_rewrites_it() {
    let d = session(BLOCK_ROWS + 500);
    let csv = d.path().join(SAMPLES_FILE);
    assert_eq!(verify_columns(d.path()).unwrap(), ColumnsState::Missing);
    assert!(
        refresh_columns(d.path())
            .unwrap()
            .unwrap()
            .contains("missing")
    );
    assert_eq!(verify_columns(d.path()).unwrap(), ColumnsState::Current);
    assert_eq!(refresh_columns(d.path()).unwrap(), None);
    // The same length and modification time, the last flight flag cleared (in the second
    // block): only a deliberate edit that restores the time can do this; `check` finds it.
    let when = std::fs::metadata(&csv).unwrap().modified().unwrap();
    let text = csv_text(BLOCK_ROWS + 500);
    let at = text.rfind(",1,0\n").unwrap();
    let mut edited = text.clone();
    edited.replace_range(at..at + 5, ",0,0\n");
    std::fs::write(&csv, &edited).unwrap();
    std::fs::File::options()
        .write(true)
        .open(&csv)
        .unwrap()
        .set_modified(when)
        .unwrap();
    let state = verify_columns(d.path()).unwrap();
    let want = format!("rows {}–{}", BLOCK_ROWS + 1, 2 * BLOCK_ROWS);
    assert!(
        matches!(&state, ColumnsState::Differs(w) if w.contains(&want)),
        "{state:?}"
    );
    assert!(
        refresh_columns(d.path())
            .unwrap()
            .unwrap()
            .contains("differs")
    );
    assert_eq!(verify_columns(d.path()).unwrap(), ColumnsState::Current);
    assert_eq!(from_columns(d.path()).1, from_csv(d.path()));
}
