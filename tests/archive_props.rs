//! Properties of the archive reader and repair: a samples.csv cut at ANY byte keeps every
//! complete row, reports the rest as a torn tail, and repair drops exactly those bytes.

use proptest::prelude::*;
use skybearing::archive::fmt::{parse_f64, push_angle_deg, push_fixed, quantize_angle_deg};
use skybearing::archive::read::for_each_sample;

const HEADER: &str = "t_utc,t_s,epoch,arena_heading_deg,arena_bearing_deg,world_heading_deg,sun_azimuth_deg,sun_elevation_deg,flying,scored,sun_relative_heading_deg,zenith_evector_deg,raw\n";

fn file_text(rows: usize) -> (String, Vec<usize>) {
    let mut text = String::from(HEADER);
    let mut ends = vec![text.len()];
    for k in 0..rows {
        text.push_str(&format!(
            "2026-06-14T09:30:{:02}.{:03}Z,{}.{:04},1,{}.5,10.000,{}.5,120.000,40.000,1,{},{}.5,30.000,{}\n",
            k / 100,
            (k % 100) * 10,
            k / 100,
            (k % 100) * 100,
            k % 340,
            (k + 10) % 340,
            k % 2,
            (k + 250) % 340,
            k as f64 * 0.1
        ));
        ends.push(text.len());
    }
    (text, ends)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn cut_anywhere_keeps_every_complete_row(rows in 1usize..60, cut_frac in 0.0f64..1.0) {
        let (text, ends) = file_text(rows);
        let cut = HEADER.len() + ((text.len() - HEADER.len()) as f64 * cut_frac) as usize;
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("samples.csv");
        std::fs::write(&p, &text.as_bytes()[..cut]).unwrap();
        let complete = ends.iter().filter(|&&e| e <= cut).count() as u64 - 1;
        let st = for_each_sample(&p, |_| {}).unwrap();
        prop_assert_eq!(st.rows, complete);
        let at_boundary = ends.contains(&cut);
        prop_assert_eq!(st.torn.is_none(), at_boundary);
        prop_assert_eq!(st.good_bytes as usize, *ends.iter().filter(|&&e| e <= cut).max().unwrap());
        if let Some(t) = st.torn {
            prop_assert_eq!(t.offset + t.len, cut as u64);
        }
    }

    #[test]
    fn written_text_reads_back_exactly(x in -1.0e6f64..1.0e6) {
        let mut b = Vec::new();
        push_fixed(&mut b, x, 4);
        let back = parse_f64(&b).unwrap();
        prop_assert!((back - x).abs() <= 0.5e-4 * (1.0 + 1e-9));
        let mut a = Vec::new();
        push_angle_deg(&mut a, x, 3);
        let back = parse_f64(&a).unwrap();
        prop_assert!((0.0..360.0).contains(&back));
        prop_assert_eq!(back.to_bits(), quantize_angle_deg(x, 3).to_bits());
    }
}
