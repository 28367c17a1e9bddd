use super::*;
use std::io::Write;

fn write(dir: &Path, name: &str, text: &str) -> std::path::PathBuf {
    let p = dir.join(name);
    std::fs::File::create(&p)
        .unwrap()
        .write_all(text.as_bytes())
        .unwrap();
    p
}

const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored";

#[test]
fn reads_by_header_name_with_extra_columns() {
    let d = tempfile::tempdir().unwrap();
    let text = format!(
        "note,{HEADER}\n\"a, b\",2026-06-14T09:30:00.000Z,0.0100,1,10.000,20.000,30.000,100.000,40.000,1,1\nx,2026-06-14T09:30:00.010Z,0.0200,1,11.5,20.000,31.5,100.000,40.000,1,0\n"
    );
    let p = write(d.path(), "s.csv", &text);
    let mut rows = Vec::new();
    let st = for_each_sample(&p, |s| {
        rows.push((
            s.t_utc.to_string(),
            s.t_s,
            s.world_heading_deg,
            s.scored,
            s.sun_relative_heading_deg,
        ))
    })
    .unwrap();
    assert_eq!(st.rows, 2);
    assert!(st.torn.is_none());
    assert_eq!(st.good_bytes, text.len() as u64);
    assert_eq!(rows[0].0, "2026-06-14T09:30:00.000Z");
    assert_eq!(rows[1].2, 31.5);
    assert!(!rows[1].3);
    assert_eq!(rows[0].4, 290.0);
}

#[test]
fn missing_column_is_an_error() {
    let d = tempfile::tempdir().unwrap();
    let p = write(d.path(), "s.csv", "t_utc,t_s,epoch\n");
    let e = for_each_sample(&p, |_| {}).unwrap_err().to_string();
    assert!(
        e.contains("s.csv") && e.contains("arena_heading_deg"),
        "{e}"
    );
}

#[test]
fn torn_tail_and_bad_middle_line() {
    let d = tempfile::tempdir().unwrap();
    let row = "2026-06-14T09:30:00.000Z,0.0100,1,10.000,20.000,30.000,100.000,40.000,1,1";
    let p = write(
        d.path(),
        "a.csv",
        &format!("{HEADER}\n{row}\n{row}\n2026-06-14T09:3"),
    );
    let st = for_each_sample(&p, |_| {}).unwrap();
    assert_eq!(st.rows, 2);
    let torn = st.torn.unwrap();
    assert_eq!(torn.line, 4);
    assert_eq!(torn.len, 15);
    assert_eq!(torn.offset, st.good_bytes);

    // A complete but short last line counts as torn too.
    let p = write(d.path(), "b.csv", &format!("{HEADER}\n{row}\n2026,1\n"));
    let st = for_each_sample(&p, |_| {}).unwrap();
    assert_eq!(st.rows, 1);
    assert_eq!(st.torn.unwrap().line, 3);

    // The same line in the middle is an error naming the line.
    let p = write(
        d.path(),
        "c.csv",
        &format!("{HEADER}\n{row}\n2026,1\n{row}\n"),
    );
    let e = for_each_sample(&p, |_| {}).unwrap_err().to_string();
    assert!(e.contains("c.csv:3:"), "{e}");

    let bad = row.replace(",1,1", ",2,1");
    let p = write(d.path(), "d.csv", &format!("{HEADER}\n{bad}\n{row}\n"));
    let e = for_each_sample(&p, |_| {}).unwrap_err().to_string();
    assert!(e.contains("d.csv:2:") && e.contains("flying"), "{e}");
}

#[test]
fn events_with_quoted_details() {
    let d = tempfile::tempdir().unwrap();
    let p = write(
        d.path(),
        "e.csv",
        "t_utc,t_s,kind,detail\n2026-06-14T09:30:00.000Z,0.0000,note,\"two\nlines, \"\"quoted\"\"\"\n2026-06-14T09:30:01.000Z,1.0000,epoch_start,1\n2026-06-14T09:30:0",
    );
    let (ev, st) = read_events(&p).unwrap();
    assert_eq!(ev.len(), 2);
    assert_eq!(ev[0].detail, "two\nlines, \"quoted\"");
    assert_eq!(ev[1].line, 4);
    assert_eq!(st.torn.unwrap().line, 5);
}

#[test]
fn stray_quote_in_events_resynchronises_at_the_next_line() {
    let d = tempfile::tempdir().unwrap();
    let mut text = String::from("t_utc,t_s,kind,detail\n");
    for k in 0..6 {
        let q = if k == 2 { "\"" } else { "" };
        text.push_str(&format!(
            "2026-06-14T09:30:0{k}.000Z,{k}.0000,note,n{q}{k}\n"
        ));
    }
    let p = write(d.path(), "e.csv", &text);
    let (ev, st) = read_events(&p).unwrap();
    assert_eq!(ev.len(), 5);
    assert_eq!(ev[2].detail, "n3");
    assert_eq!(ev[2].line, 5);
    assert!(st.torn.is_none());
    assert_eq!(st.set_aside.len(), 1);
    assert_eq!(st.set_aside[0].line, 4);
    let (o, l) = (
        st.set_aside[0].offset as usize,
        st.set_aside[0].len as usize,
    );
    assert_eq!(
        &text[o..o + l],
        "2026-06-14T09:30:02.000Z,2.0000,note,n\"2\n"
    );
}

#[test]
fn validated_samples_reject_repeats_order_and_bytes_that_are_not_utf8() {
    let d = tempfile::tempdir().unwrap();
    let row = |t: &str| {
        format!("2026-06-14T09:30:00.000Z,{t},1,10.000,20.000,30.000,100.000,40.000,1,1\n")
    };
    for (name, rows, msg) in [
        (
            "dup",
            [row("0.0100"), row("0.0100"), row("0.0300")],
            "duplicated row",
        ),
        (
            "back",
            [row("0.0200"), row("0.0100"), row("0.0300")],
            "out of order",
        ),
    ] {
        let p = write(d.path(), name, &format!("{HEADER}\n{}", rows.concat()));
        assert_eq!(for_each_sample(&p, |_| {}).unwrap().rows, 3);
        let e = for_each_valid_sample(&p, |_| {}).unwrap_err().to_string();
        assert!(e.contains(&format!("{name}:3:")) && e.contains(msg), "{e}");
    }
    let mut bytes = format!("note,{HEADER}\nx,{}y,{}", row("0.0100"), row("0.0200")).into_bytes();
    let at = bytes.iter().rposition(|&b| b == b'y').unwrap();
    bytes[at] = 0xff;
    bytes.extend_from_slice(format!("z,{}", row("0.0300")).as_bytes());
    let p = d.path().join("u");
    std::fs::write(&p, &bytes).unwrap();
    assert_eq!(for_each_sample(&p, |_| {}).unwrap().rows, 3);
    let e = for_each_valid_sample(&p, |_| {}).unwrap_err().to_string();
    assert!(e.contains("u:3:") && e.contains("not UTF-8"), "{e}");
}

#[test]
fn split_records() {
    assert_eq!(
        split_csv_record("a,\"b,c\",,\"\"\"\"").unwrap(),
        vec!["a", "b,c", "", "\""]
    );
    assert!(split_csv_record("a,\"b").is_none());
    assert!(split_csv_record("a,b\"c").is_none());
}
