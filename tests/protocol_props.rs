//! Properties of protocol parsing and expansion (proptest).

use proptest::prelude::*;
use skybearing::protocol::{DEMO_TOML, parse_protocol};

proptest! {
    /// Any text gives a protocol or a one-line error; it never panics.
    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,200}") {
        if let Err(e) = parse_protocol(&text, "x.toml") {
            let s = e.to_string();
            prop_assert!(s.starts_with("x.toml:"), "{}", s);
            prop_assert!(!s.contains('\n'), "{}", s);
        }
    }

    /// Cutting the demo file anywhere never panics, and errors name a line inside the text.
    #[test]
    fn truncated_demo_never_panics(cut in 0usize..DEMO_TOML.len()) {
        let mut end = cut;
        while !DEMO_TOML.is_char_boundary(end) {
            end -= 1;
        }
        let text = &DEMO_TOML[..end];
        if let Err(e) = parse_protocol(text, "demo.toml") {
            let lines = text.lines().count().max(1) + 1;
            prop_assert!(e.line().is_some_and(|l| l >= 1 && l <= lines), "{} (of {} lines)", e, lines);
        }
    }

    /// Generated sequences: the expansion has `count` epochs, indices 1..=count, and the
    /// arena positions follow the turns; shuffles and balanced orders keep each value's count.
    #[test]
    fn sequences_expand_consistently(
        count in 1usize..40,
        turns in prop::collection::vec(prop::sample::select(vec![-180.0, -90.0, -45.0, 45.0, 90.0, 180.0]), 1..5),
        order in prop::sample::select(vec!["cycle", "shuffle"]),
        seed in 0u64..1000,
    ) {
        let list: Vec<String> = turns.iter().map(|t| format!("{t}")).collect();
        let text = format!(
            "name = \"p\"\nsettle_s = 1\n[[epochs]]\ncount = {count}\nduration_s = 30\nturns = [{}]\norder = \"{order}\"\nseed = {seed}\n",
            list.join(", ")
        );
        let (p, _) = parse_protocol(&text, "p.toml").unwrap();
        prop_assert_eq!(p.epochs.len(), count);
        for (i, e) in p.epochs.iter().enumerate() {
            prop_assert_eq!(e.index, i + 1);
        }
        let got: Vec<f64> = (2..=count).map(|i| p.turn_before_deg(i, 0.0).unwrap()).collect();
        // Same multiset as cycling the list.
        let mut want: Vec<f64> = (0..count - 1).map(|i| turns[i % turns.len()]).collect();
        let mut sorted = got.clone();
        sorted.sort_by(f64::total_cmp);
        want.sort_by(f64::total_cmp);
        prop_assert_eq!(sorted, want);
        let mut pos = 0.0_f64;
        for (i, want_pos) in p.positions_deg().iter().enumerate() {
            if i > 0 {
                pos = (pos + got[i - 1]).rem_euclid(360.0);
            }
            prop_assert!((pos - want_pos).abs() < 1e-9);
        }
    }

    /// GoTo always lands on its target by a turn in (-180, 180].
    #[test]
    fn goto_turns_are_shortest(from in -720.0f64..720.0, to in 0.0f64..360.0) {
        let text = format!("name = \"g\"\nsettle_s = 1\n[[epochs]]\nduration_s = 9\ngo_to_deg = {to}\n");
        let (p, _) = parse_protocol(&text, "g.toml").unwrap();
        let t = p.turn_before_deg(1, from).unwrap();
        prop_assert!(t > -180.0 && t <= 180.0, "{}", t);
        let landed = (from + t).rem_euclid(360.0);
        let diff = (landed - to).abs();
        prop_assert!(diff < 1e-9 || (360.0 - diff) < 1e-9, "{} + {} = {} != {}", from, t, landed, to);
    }
}
