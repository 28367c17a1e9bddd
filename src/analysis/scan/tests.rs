use super::*;

fn scan(text: &str) -> (ScanOutcome, Vec<Row>) {
    let tmp = tempfile::NamedTempFile::new().unwrap();
    std::fs::write(tmp.path(), text).unwrap();
    let mut rows = Vec::new();
    let out = scan_samples(tmp.path(), |r| rows.push(*r));
    (out, rows)
}

const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored,raw\n";

#[test]
fn plain_file_is_read_by_header_name() {
    let (out, rows) = scan(&format!(
        "{HEADER}2026-06-01T10:00:00.000Z,0.0100,1,10.500,200.000,210.500,120.250,40.100,1,0,3\n\
             2026-06-01T10:00:00.010Z,0.0200,2,11.000,200.000,211.000,120.250,40.100,0,1,-4.5\n"
    ));
    assert_eq!(out, ScanOutcome::Done(2));
    assert_eq!(
        rows[1],
        Row {
            t_s: 0.02,
            epoch: 2,
            arena_heading_deg: 11.0,
            arena_bearing_deg: 200.0,
            world_heading_deg: 211.0,
            sun_azimuth_deg: 120.25,
            sun_elevation_deg: 40.1,
            flying: false,
            scored: true,
        }
    );
}

#[test]
fn agrees_with_the_archive_reader_field_by_field() {
    let mut text = String::from(HEADER);
    let numbers = [
        "0",
        "359.999",
        "12.5",
        "-0.125",
        "1e-3",
        "7",
        "123456.0001",
        "0.000",
        "+4.5",
    ];
    for i in 0..400usize {
        let f = |k: usize| numbers[(i * 7 + k * 3) % numbers.len()];
        text.push_str(&format!(
            "2026-06-01T10:00:00.000Z,{},{},{},{},{},{},{},{},{},{}\n",
            f(0),
            i % 13,
            f(1),
            f(2),
            f(3),
            f(4),
            f(5),
            i % 2,
            (i / 3) % 2,
            f(6)
        ));
    }
    let (out, fast) = scan(&text);
    assert_eq!(out, ScanOutcome::Done(400));
    let tmp = tempfile::NamedTempFile::new().unwrap();
    std::fs::write(tmp.path(), &text).unwrap();
    let mut general = Vec::new();
    crate::archive::read::for_each_sample(tmp.path(), |s| general.push(Row::from(s))).unwrap();
    assert_eq!(fast.len(), general.len());
    for (a, b) in fast.iter().zip(&general) {
        // Bit-equal numbers: the same parse rule.
        assert_eq!(format!("{a:?}"), format!("{b:?}"));
    }
}

#[test]
fn byte_masks_are_exact() {
    let w = u64::from_le_bytes(*b",a,\",,\x80,");
    let at = |i: &[u32]| i.iter().map(|b| 0x80u64 << (8 * b)).sum::<u64>();
    assert_eq!(byte_mask(w, b','), at(&[0, 2, 4, 5, 7]));
    assert_eq!(byte_mask(w, b'"'), at(&[3]));
    assert_eq!(byte_mask(w, 0x80), at(&[6]));
    let block: Vec<u8> = (0..64u32)
        .map(|i| match i % 7 {
            1 | 4 => b',',
            5 if i % 3 == 0 => b'"',
            6 if i % 2 == 0 => b'\n',
            _ => b'7',
        })
        .collect();
    let bits = |want: u8| {
        (0..64)
            .filter(|&i| block[i] == want)
            .map(|i| 1u64 << i)
            .sum::<u64>()
    };
    let block: &[u8; 64] = block.first_chunk().unwrap();
    assert_eq!(masks_64(block), (bits(b','), bits(b'\n'), true));
    let plain = [b'7'; 64];
    assert_eq!(masks_64(&plain), (0, 0, false));
}

fn quick(t: &str) -> Option<f64> {
    let b = t.as_bytes();
    if b.len() > 16 {
        return None;
    }
    let (lo, hi) = field_words(b, 0, b.len());
    fixed_decimal(lo, hi, b.len())
}

#[test]
fn the_quick_number_form_agrees_with_the_archive_parser_bit_for_bit() {
    let mut cases: Vec<String> = [
        "0",
        "5.",
        ".5",
        "-0.000",
        "-",
        ".",
        "-.",
        "1.2.3",
        "12345678",
        "123456789",
        "1234.5678",
        "12345.6789",
        "-9999.9999",
        "00000000",
        "0.0000001",
        "+1.5",
        "1e3",
        "1,5",
        "12 3",
        "--5",
        "9/",
        ":1",
        "359.999",
        "1800.0000",
        "-180.000",
        "1799.990304",
        "-1799.990304",
        "123456789012345",
        "1234567890123456",
        "12345678.9012345",
        "-1234567.89012345",
        "999999999999999.",
        ".999999999999999",
        "0.000000000000001",
        "12345678.90123x5",
        "1234567.89.12345",
        "",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    // Every mix of digits, one dot and a sign up to eighteen characters, sampled.
    let mut x = 0x2545_f491_4f6c_dd1du64;
    let mut next = move || {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        x
    };
    for _ in 0..40_000 {
        let x = next();
        let len = (x % 18) as usize;
        let mut t: String = (0..len)
            .map(|_| char::from(b'0' + (next() % 10) as u8))
            .collect();
        if len > 0 && x & (1 << 60) != 0 {
            let at = ((x >> 50) as usize) % (len + 1);
            t.insert(at, '.');
        }
        if x & (1 << 61) != 0 {
            t.insert(0, '-');
        }
        cases.push(t);
    }
    for t in &cases {
        let line = format!("{t},9");
        let quick = quick(t);
        let general = parse_f64(t.as_bytes());
        if let Some(q) = quick {
            assert_eq!(Some(q.to_bits()), general.map(f64::to_bits), "{t:?}");
        }
        assert_eq!(
            Memo::default()
                .number(0, line.as_bytes(), 0, t.len())
                .map(f64::to_bits),
            parse_f64(t.as_bytes()).map(f64::to_bits),
            "{t:?}"
        );
    }
    // The common forms do take the quick way.
    for t in [
        "191.400",
        "0.0510",
        "1800.0000",
        "-1800.0000",
        "-12.345",
        "7",
        "99999999",
        "1799.990304",
        "123456789012345",
        "-1234567.8901234",
    ] {
        assert!(quick(t).is_some(), "{t}");
    }
    // A field at the very end of a line (a short window, zero-padded).
    assert_eq!(Memo::default().number(0, b"x,12.5", 2, 6), Some(12.5));
}

#[test]
fn long_lines_and_needed_columns_past_the_first_64_bytes() {
    let pad = "p".repeat(70);
    let text = format!(
        "note,{HEADER}{pad},2026-06-01T10:00:00.000Z,0.0100,3,10.500,200.000,210.500,120.250,40.100,1,1,3\n"
    );
    let (out, rows) = scan(&text);
    assert_eq!(out, ScanOutcome::Done(1));
    assert_eq!(rows[0].epoch, 3);
    assert_eq!(rows[0].sun_elevation_deg, 40.1);
    assert!(rows[0].scored);
    // The last needed column as the line's last field.
    let (out, rows) = scan(
        "raw,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored\n\
             x,1.5,2,3,4,5,6,7,0,1\n",
    );
    assert_eq!(out, ScanOutcome::Done(1));
    assert!(rows[0].scored && !rows[0].flying && rows[0].t_s == 1.5);
    // One field short of that.
    let (out, _) = scan(
        "raw,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored\n\
             x,1.5,2,3,4,5,6,7,0\n",
    );
    assert_eq!(out, ScanOutcome::Fallback);
}

#[test]
fn lines_across_buffer_refills_and_longer_than_the_buffer() {
    let mut text = String::from(HEADER);
    for i in 0..300usize {
        let tail = if i % 17 == 0 {
            "x".repeat(150)
        } else {
            "3".into()
        };
        let end = if i % 5 == 0 { "\r\n" } else { "\n" };
        text.push_str(&format!(
                "2026-06-01T10:00:00.000Z,{}.{:04},{},{}.5,200.000,1{}.25,120.250,-0.5,{},1,{tail}{end}",
                i / 100,
                i % 100,
                i % 4,
                i % 360,
                i % 90,
                i % 2
            ));
    }
    let tmp = tempfile::NamedTempFile::new().unwrap();
    std::fs::write(tmp.path(), &text).unwrap();
    let mut whole = Vec::new();
    assert_eq!(
        scan_samples(tmp.path(), |r| whole.push(*r)),
        ScanOutcome::Done(300)
    );
    for chunk in [1, 7, 64, 100, 333] {
        let mut rows = Vec::new();
        let out = scan_in_chunks(tmp.path(), chunk, |r| rows.push(*r));
        assert_eq!(out, ScanOutcome::Done(300), "{chunk}");
        assert_eq!(rows, whole, "{chunk}");
    }
    assert_eq!(whole[101].t_s, 1.0001);
    assert_eq!(whole[101].world_heading_deg, 111.25);
    assert_eq!(whole[101].sun_elevation_deg, -0.5);
    let mut general = Vec::new();
    crate::archive::read::for_each_sample(tmp.path(), |s| general.push(Row::from(s))).unwrap();
    assert_eq!(general, whole);
}

#[test]
fn anything_unusual_falls_back() {
    let good = "2026-06-01T10:00:00.000Z,0.01,1,10.5,200,210.5,120.25,40.1,1,0,3\n";
    for bad in [
        format!("{HEADER}{good}2026-06-01T10:00:00.000Z,0.01,1,10.5\n{good}"), // torn
        format!("{HEADER}{good}{}", good.trim_end()),                          // no newline
        format!("{HEADER}{}", good.replace(",3\n", ",\"3\"\n")),               // quoted
        format!("{HEADER}{}", good.replace("10.5", "x")),                      // not a number
        format!("{HEADER}{}", good.replace(",1,0,", ",1,2,")),                 // bad flag
        format!("{HEADER}{}", good.replace(",3\n", ",3,9\n")),                 // extra field
        "t_s,epoch\n1,1\n".to_string(),                                        // no column
    ] {
        assert_eq!(scan(&bad).0, ScanOutcome::Fallback, "{bad}");
    }
}
