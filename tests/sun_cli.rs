//! `skybearing sun` run as a user would.

mod support;
use support::bin;

fn sun(args: &[&str]) -> std::process::Output {
    bin().arg("sun").args(args).output().unwrap()
}

fn json_of(out: &std::process::Output) -> serde_json::Value {
    serde_json::from_slice(&out.stdout).unwrap()
}

#[test]
fn json_has_the_contract_fields() {
    // The demo site, Larkfield Meadow (demo): 43.2170 N, 5.4420 E, 210 m.
    let out = sun(&[
        "--lat",
        "43.2170",
        "--lon",
        "5.4420",
        "--at",
        "2026-06-21T10:30:00Z",
        "--elevation-m",
        "210",
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v = json_of(&out);
    let az = v["azimuth_deg"].as_f64().unwrap();
    let el = v["elevation_deg"].as_f64().unwrap();
    let ev = v["zenith_evector_deg"].as_f64().unwrap();
    let decl = v["declination_deg"].as_f64().unwrap();
    // Same numbers as the library.
    let t = "2026-06-21T10:30:00Z".parse().unwrap();
    let p = skybearing::sky::sun::sun_position(43.217, 5.442, 210.0, t).unwrap();
    assert!((az - p.azimuth_deg).abs() < 1e-9);
    assert!((el - p.elevation_deg).abs() < 1e-9);
    // Morning sun in the south-east, high in midsummer.
    assert!((100.0..170.0).contains(&az), "{az}");
    assert!((40.0..75.0).contains(&el), "{el}");
    assert!((0.0..180.0).contains(&ev));
    assert!(
        ((ev - az - 90.0).rem_euclid(180.0)).min(180.0 - (ev - az - 90.0).rem_euclid(180.0)) < 1e-9
    );
    // WMM declination in southern France in 2026 is a few degrees east (from memory: ~+2 to +3).
    assert!((0.5..5.0).contains(&decl), "{decl}");
    assert!(
        out.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn negative_coordinates_and_offsets_parse() {
    let out = sun(&[
        "--lat",
        "-33.5",
        "--lon",
        "-70.25",
        "--at",
        "2027-01-10T09:15:30.250-03:00",
        "--json",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v = json_of(&out);
    assert_eq!(v["t_utc"], "2027-01-10T12:15:30.250Z");
    // Mid-morning in the southern summer: sun in the east, some 30° up (29.57° computed).
    let el = v["elevation_deg"].as_f64().unwrap();
    let az = v["azimuth_deg"].as_f64().unwrap();
    assert!(
        (20.0..40.0).contains(&el) && (70.0..120.0).contains(&az),
        "{az} {el}"
    );
}

#[test]
fn outside_wmm_window_gives_null_declination_and_a_warning() {
    let out = sun(&[
        "--lat",
        "43.2",
        "--lon",
        "5.4",
        "--at",
        "2031-06-21T10:30:00Z",
        "--json",
    ]);
    assert!(out.status.success());
    let v = json_of(&out);
    assert!(v["declination_deg"].is_null());
    assert!(v["azimuth_deg"].as_f64().is_some());
    assert!(v["elevation_deg"].as_f64().is_some());
    assert!(v["zenith_evector_deg"].as_f64().is_some());
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains("warning") && err.contains("World Magnetic Model"),
        "{err}"
    );
}

#[test]
fn human_output_by_default() {
    let out = sun(&["--lat", "78", "--lon", "15", "--at", "2026-12-21T12:00:00Z"]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("sun azimuth"), "{text}");
    assert!(text.contains("zenith e-vector"), "{text}");
    assert!(text.contains("sun down all day"), "{text}");
    assert!(text.contains("below the horizon"), "{text}");
}

#[test]
fn bad_input_is_one_line_naming_the_flag() {
    let cases: [(&[&str], &str); 4] = [
        (
            &["--lat", "123", "--lon", "5", "--at", "2026-06-21T10:00:00Z"],
            "--lat",
        ),
        (
            &[
                "--lat",
                "12",
                "--lon",
                "-200",
                "--at",
                "2026-06-21T10:00:00Z",
            ],
            "--lon",
        ),
        (
            &["--lat", "12", "--lon", "5", "--at", "2026-06-21 10:00"],
            "--at",
        ),
        (
            &[
                "--lat",
                "12",
                "--lon",
                "5",
                "--at",
                "2026-06-21T10:00:00Z",
                "--elevation-m",
                "99999",
            ],
            "--elevation-m",
        ),
    ];
    for (args, flag) in cases {
        let out = sun(args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
        assert!(err.starts_with("skybearing: error: "), "{err}");
        assert!(err.contains(flag), "{args:?}: {err}");
        assert!(!err.contains("panicked"), "{err}");
        assert!(out.stdout.is_empty());
    }
    // Not a number at all: clap's own error, still non-zero and no panic.
    let out = sun(&[
        "--lat",
        "north",
        "--lon",
        "5",
        "--at",
        "2026-06-21T10:00:00Z",
    ]);
    assert!(!out.status.success());
    assert!(!String::from_utf8_lossy(&out.stderr).contains("panicked"));
}
