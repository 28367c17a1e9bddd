//! `malformed.csv`: the raw lines the sensor sent that were not samples (one row each; the
//! events count them per second). The file exists only when there were any.

use std::path::Path;

use super::read::split_csv_record;
use super::{MALFORMED_COLUMNS, MALFORMED_FILE, parse_utc};

/// What a look at a session's `malformed.csv` found.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MalformedCheck {
    /// Good rows.
    pub rows: u64,
    /// Faults that make the file unreadable or wrong.
    pub problems: Vec<String>,
    /// Things worth knowing (a torn last line: the file is a log of rejected input, so a line
    /// cut by an interruption loses nothing the session needs).
    pub notes: Vec<String>,
}

/// Validates `dir/malformed.csv` if it exists (header, and per row a UTC instant, a number of
/// session seconds that never decreases, a reason and a line). `None` when there is no file.
pub fn check_malformed(dir: &Path) -> Option<MalformedCheck> {
    let path = dir.join(MALFORMED_FILE);
    let bytes = match std::fs::read(&path) {
        Ok(b) => b,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return None,
        Err(e) => {
            return Some(MalformedCheck {
                problems: vec![format!("{MALFORMED_FILE}: {e}")],
                ..Default::default()
            });
        }
    };
    let mut c = MalformedCheck::default();
    let text = String::from_utf8_lossy(&bytes);
    let complete = text.ends_with('\n');
    let mut lines: Vec<&str> = text.split('\n').collect();
    let torn = if complete {
        lines.pop();
        None
    } else {
        lines.pop()
    };
    let mut previous_t_s = f64::NEG_INFINITY;
    for (k, line) in lines.iter().enumerate() {
        let n = k + 1;
        let fields = split_csv_record(line.trim_end_matches('\r'));
        if n == 1 {
            let ok = fields.is_some_and(|f| {
                f.iter()
                    .map(String::as_str)
                    .eq(MALFORMED_COLUMNS.iter().copied())
            });
            if !ok {
                c.problems.push(format!(
                    "{MALFORMED_FILE}:1: header is not {}",
                    MALFORMED_COLUMNS.join(",")
                ));
                return Some(c);
            }
            continue;
        }
        let row = fields.filter(|f| f.len() == MALFORMED_COLUMNS.len());
        let Some(f) = row else {
            c.problems.push(format!(
                "{MALFORMED_FILE}:{n}: not {} fields",
                MALFORMED_COLUMNS.len()
            ));
            continue;
        };
        let t_s = f[1].parse::<f64>().ok().filter(|t| t.is_finite());
        match (parse_utc(&f[0]), t_s) {
            (Some(_), Some(t)) if t >= previous_t_s => {
                previous_t_s = t;
                c.rows += 1;
            }
            (Some(_), Some(t)) => c.problems.push(format!(
                "{MALFORMED_FILE}:{n}: t_s {t} goes back from {previous_t_s}"
            )),
            _ => c
                .problems
                .push(format!("{MALFORMED_FILE}:{n}: t_utc or t_s unreadable")),
        }
    }
    if lines.is_empty() {
        c.problems
            .push(format!("{MALFORMED_FILE}:1: no complete header line"));
    }
    if let Some(t) = torn.filter(|t| !t.is_empty()) {
        c.notes.push(format!(
            "{MALFORMED_FILE}:{}: torn last line ({} bytes; a raw line cut by the interruption)",
            lines.len() + 1,
            t.len()
        ));
    }
    Some(c)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_rows_and_flags_bad_ones() {
        let d = tempfile::tempdir().unwrap();
        assert!(check_malformed(d.path()).is_none());
        let p = d.path().join(MALFORMED_FILE);
        std::fs::write(
            &p,
            "t_utc,t_s,reason,line\n2026-06-14T09:30:00.000Z,0.100000,not a number,\"a,b\"\n2026-06-14T09:30:00.000Z,0.050000,x,y\n2026-06-14T09:30:0",
        )
        .unwrap();
        let c = check_malformed(d.path()).unwrap();
        assert_eq!(c.rows, 1);
        assert_eq!(c.problems.len(), 1, "{:?}", c.problems);
        assert!(
            c.problems[0].contains(":3: t_s 0.05 goes back"),
            "{:?}",
            c.problems
        );
        assert_eq!(c.notes.len(), 1);
        std::fs::write(&p, "t,line\n").unwrap();
        assert!(check_malformed(d.path()).unwrap().problems[0].contains("header"));
    }
}
