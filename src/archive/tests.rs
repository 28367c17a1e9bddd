use super::*;

#[test]
fn animal_ids() {
    for ok in ["lm-07", "a", "A.b_c-1", &"x".repeat(40)] {
        assert!(validate_animal_id(ok).is_ok(), "{ok}");
    }
    for bad in [
        "",
        "../x",
        "a/b",
        ".hidden",
        "a\\b",
        "a b",
        "é",
        &"x".repeat(41),
        "..",
    ] {
        let e = validate_animal_id(bad).unwrap_err().to_string();
        assert!(e.contains(&format!("{bad:?}")), "{e}");
    }
}

#[test]
fn slugs() {
    assert_eq!(
        site_slug("Larkfield Meadow (demo)"),
        "larkfield-meadow-demo"
    );
    assert_eq!(site_slug("  --  "), "site");
    assert_eq!(site_slug("A_b"), "a-b");
}

#[test]
fn session_ids_count_up() {
    let dir = tempfile::tempdir().unwrap();
    let sessions = dir.path().join("sessions");
    let date = NaiveDate::from_ymd_opt(2026, 6, 14).unwrap();
    let id = new_session_id(&sessions, date, "Larkfield Meadow", "lm-07").unwrap();
    assert_eq!(id, "2026-06-14_larkfield-meadow_lm-07_001");
    std::fs::create_dir_all(sessions.join(&id)).unwrap();
    std::fs::create_dir_all(sessions.join("2026-06-14_larkfield-meadow_lm-07_005")).unwrap();
    std::fs::create_dir_all(sessions.join("2026-06-14_larkfield-meadow_lm-08_009")).unwrap();
    let id2 = new_session_id(&sessions, date, "Larkfield Meadow", "lm-07").unwrap();
    assert_eq!(id2, "2026-06-14_larkfield-meadow_lm-07_006");
    assert!(new_session_id(&sessions, date, "x", "../x").is_err());
    // A named rig puts its name between the site and the animal; its counter is its own.
    let named =
        new_rig_session_id(&sessions, date, "Larkfield Meadow", Some("rig-2"), "lm-07").unwrap();
    assert_eq!(named, "2026-06-14_larkfield-meadow_rig-2_lm-07_001");
}

#[test]
fn summary_nan_round_trip() {
    let s = Summary {
        epochs: vec![EpochSummary {
            index: 1,
            condition: "open sky".into(),
            arena_bearing_deg: 10.0,
            n: 0,
            mean_arena_deg: None,
            mean_world_deg: None,
            r: f64::NAN,
            rayleigh_p: f64::NAN,
            p_oriented: None,
            cue: Default::default(),
        }],
        turns: vec![],
        r_world: 0.5,
        r_arena: 0.25,
    };
    let j = serde_json::to_string(&s).unwrap();
    assert!(j.contains("\"r\":null"), "{j}");
    assert!(j.contains("\"p_oriented\":null"), "{j}");
    assert!(!j.contains("n_eff") && !j.contains("rayleigh_p_eff"), "{j}");
    assert!(j.contains("\"turn_test\":{\"turns\":0"), "{j}");
    let back: Summary = serde_json::from_str(&j).unwrap();
    assert!(back.epochs[0].r.is_nan());
    assert_eq!(back.r_world, 0.5);
}
