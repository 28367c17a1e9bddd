use super::*;
use crate::frames::SensorUnit;

fn good() -> String {
    filled_example()
}

#[test]
fn template_parses() {
    let rig = parse_rig(&good(), "rig.toml").unwrap();
    assert_eq!(rig.site.name, "Larkfield Meadow (demo)");
    assert_eq!(rig.arena_mark_reference, BearingReference::Magnetic);
    assert_eq!(
        rig.sensor.source,
        SensorSource::Serial {
            path: "/dev/ttyUSB0".into(),
            baud: 115200
        }
    );
    assert_eq!(rig.sensor.path_line, Some(28));
    assert_eq!(rig.turntable, TurntableConfig::Manual);
    assert!(serde_json::to_string(&rig).is_ok());
}

fn err(text: &str) -> String {
    parse_rig(text, "rig.toml").unwrap_err().to_string()
}

#[test]
fn latitude_out_of_range() {
    let e = err(&good().replace("latitude_deg = 43.2170", "latitude_deg = 123"));
    assert_eq!(
        e,
        "rig.toml:13: site.latitude_deg: 123 is outside [-90, 90]"
    );
}

#[test]
fn missing_field_names_table_line() {
    let e = err(&good().replace("elevation_m = 210.0", ""));
    assert_eq!(e, "rig.toml:11: site.elevation_m: missing (required)");
}

#[test]
fn unknown_unit() {
    let e = err(&good().replace("unit = \"degrees\"", "unit = \"grads\""));
    assert!(
        e.starts_with("rig.toml:42: sensor.unit: unknown unit \"grads\""),
        "{e}"
    );
    assert!(!e.contains('\n'));
}

#[test]
fn unknown_key() {
    let e = err(&good().replace("baud = 115200  ", "baudrate = 115200"));
    assert!(
        e.starts_with("rig.toml:29: sensor.baudrate: unknown key"),
        "{e}"
    );
    assert!(!e.contains('\n'));
}

#[test]
fn wrong_type_and_syntax() {
    let e = err(&good().replace("sessions_dir = \"sessions\"", "sessions_dir = 5"));
    assert!(e.starts_with("rig.toml:6: sessions_dir: "), "{e}");
    assert!(!e.contains('\n'));
    let e = err(&good().replace("[arena]", "[arena"));
    assert!(e.starts_with("rig.toml:18:"), "{e}");
    assert!(!e.contains('\n'));
}

#[test]
fn counts_need_counts_per_rev() {
    let e = err(&good().replace("unit = \"degrees\"", "unit = \"counts\""));
    assert!(
        e.starts_with("rig.toml:42: sensor.counts_per_rev: missing"),
        "{e}"
    );
    let rig = parse_rig(
        &good()
            .replace("unit = \"degrees\"", "unit = \"counts\"")
            .replace("# counts_per_rev = 4096.0", "counts_per_rev = 4096.0"),
        "rig.toml",
    )
    .unwrap();
    assert_eq!(rig.calibration.unit, SensorUnit::Counts { per_rev: 4096.0 });
}

#[test]
fn bad_time_zone_and_missing_table() {
    let e = err(&good().replace("Europe/Paris", "Europe/Larkfield"));
    assert!(
        e.starts_with("rig.toml:16: site.time_zone: unknown time zone"),
        "{e}"
    );
    let g = good();
    let cut = g.find("[turntable]").unwrap();
    let e = err(&g[..cut]);
    assert!(e.contains("[turntable]: missing table"), "{e}");
}

#[test]
fn placeholders_sim_and_settle_are_refused_naming_file_line_field() {
    let e = err(TEMPLATE);
    assert!(
        e.starts_with("rig.toml:12: site.name: not filled in"),
        "{e}"
    );
    let e = err(&good().replace("latitude_deg = 43.2170", "latitude_deg = \"FILL IN\""));
    assert!(
        e.starts_with("rig.toml:13: site.latitude_deg: not filled in"),
        "{e}"
    );
    let e = err(&good().replace("kind = \"manual\"", "kind = \"sim\""));
    assert!(
        e.starts_with("rig.toml:53: turntable.kind: \"sim\" is the built-in"),
        "{e}"
    );
    let e = err(&good().replace("source = \"serial\"", "source = \"sim\""));
    assert!(
        e.starts_with("rig.toml:27: sensor.source: \"sim\" is the built-in"),
        "{e}"
    );
    let e = err(&format!("settle_s = 5.0\n{}", good()));
    assert!(
        e.starts_with("rig.toml:1: settle_s: not a rig setting"),
        "{e}"
    );
}

#[test]
fn demo_rig_is_sim() {
    let r = demo_rig();
    assert_eq!(r.sensor.source, SensorSource::Sim);
    assert_eq!(r.turntable, TurntableConfig::Sim);
    assert_eq!(r.site, crate::sky::demo_site());
}

#[test]
fn sky_view_limit_is_read_and_checked() {
    let rig = parse_rig(&filled_example(), "rig.toml").unwrap();
    assert_eq!(rig.sky_view_min_elevation_deg, 0.0);
    let t = filled_example().replace(
        "sky_view_min_elevation_deg = 0.0",
        "sky_view_min_elevation_deg = 22.5",
    );
    assert_eq!(
        parse_rig(&t, "rig.toml")
            .unwrap()
            .sky_view_min_elevation_deg,
        22.5
    );
    let e = err(&filled_example().replace(
        "sky_view_min_elevation_deg = 0.0",
        "sky_view_min_elevation_deg = 95.0",
    ));
    assert!(
        e.starts_with("rig.toml:23: arena.sky_view_min_elevation_deg: "),
        "{e}"
    );
    // Left out: an open horizon.
    let t = filled_example().replace("sky_view_min_elevation_deg = 0.0", "");
    assert_eq!(
        parse_rig(&t, "rig.toml")
            .unwrap()
            .sky_view_min_elevation_deg,
        0.0
    );
}

#[test]
fn gps_section_is_optional_read_and_checked_naming_file_line_field() {
    assert_eq!(parse_rig(&good(), "rig.toml").unwrap().gps, None);
    // The template's commented [gps] section, uncommented.
    let with = good()
        .replace("# [gps]", "[gps]")
        .replace("# path = \"/dev/ttyACM2\"", "path = \"/dev/ttyACM2\"")
        .replace("# baud = 9600 ", "baud = 9600 ")
        .replace("# wait_s = 10.0 ", "wait_s = 10.0 ");
    let line = with
        .lines()
        .position(|l| l.starts_with("path = \"/dev/ttyACM2\""))
        .unwrap()
        + 1;
    let rig = parse_rig(&with, "rig.toml").unwrap();
    assert_eq!(
        rig.gps,
        Some(crate::rig::gps::GpsConfig {
            path: "/dev/ttyACM2".into(),
            baud: 9600,
            wait_s: 10.0,
            path_line: Some(line),
        })
    );
    let e = err(&with.replace("wait_s = 10.0 ", "wait_s = 900.0 "));
    assert_eq!(
        e,
        format!("rig.toml:{}: gps.wait_s: 900 is outside [0, 600]", line + 2)
    );
    let e = err(&with.replace("baud = 9600 ", "# baud"));
    assert_eq!(
        e,
        format!("rig.toml:{}: gps.baud: missing (required)", line - 1)
    );
    let e = err(&with.replace("wait_s = 10.0 ", "timeout = 1 "));
    assert!(
        e.starts_with(&format!("rig.toml:{}: gps.timeout: unknown key", line + 2)),
        "{e}"
    );
    // Without wait_s: the default.
    let rig = parse_rig(&with.replace("wait_s = 10.0 ", "# "), "rig.toml").unwrap();
    assert_eq!(rig.gps.unwrap().wait_s, crate::rig::gps::DEFAULT_WAIT_S);
}

#[test]
fn rig_name_is_optional_short_and_filesystem_safe() {
    assert_eq!(parse_rig(&good(), "rig.toml").unwrap().name, None);
    let named = format!("name = \"rig-2\"\n{}", good());
    assert_eq!(
        parse_rig(&named, "rig.toml").unwrap().name.as_deref(),
        Some("rig-2")
    );
    // The template's commented line, uncommented, is a valid name.
    let t = good().replace("# name = \"rig-1\"", "name = \"rig-1\"");
    assert_eq!(
        parse_rig(&t, "rig.toml").unwrap().name.as_deref(),
        Some("rig-1")
    );
    for bad in ["", "rig 2", "rig_2", "../x", "-rig", "räg", &"r".repeat(25)] {
        let e = err(&format!("name = \"{bad}\"\n{}", good()));
        assert!(e.starts_with("rig.toml:1: name: \""), "{bad}: {e}");
        assert!(e.contains("is not a rig name"), "{e}");
    }
    // The site's name is another field.
    let e = err(&good().replace("name = \"Larkfield Meadow (demo)\"", "name = \"\""));
    assert!(e.contains("site.name"), "{e}");
}
