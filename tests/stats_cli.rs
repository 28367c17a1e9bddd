//! `skybearing stats` through the binary. Expected values come from
//! tests/fixtures/circular_reference.json (pycircstat2 and astropy; versions in the fixture).

mod support;
use support::bin;

use serde_json::Value;
use std::io::Write;
use std::process::{Output, Stdio};

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/circular_reference.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn case<'a>(fx: &'a Value, group: &str, name: &str) -> &'a Value {
    fx[group]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == name)
        .unwrap()
}

fn angles_text(c: &Value) -> String {
    let mut s = String::from("# angles in degrees, one per line\n\n");
    for a in c["angles_deg"].as_array().unwrap() {
        // Full precision (Rust prints the shortest representation that round-trips).
        s.push_str(&format!("{}\n", a.as_f64().unwrap()));
    }
    s
}

fn run_with_stdin(args: &[&str], stdin: &[u8]) -> Output {
    let mut child = bin()
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(stdin).unwrap();
    child.wait_with_output().unwrap()
}

fn json_of(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

fn close(what: &str, a: &Value, b: &Value, tol: f64) {
    let (a, b) = (a.as_f64().unwrap(), b.as_f64().unwrap());
    assert!(
        (a - b).abs() <= tol * b.abs().max(1.0),
        "{what}: {a:e} vs {b:e}"
    );
}

fn angle_close(what: &str, a: &Value, b: &Value) {
    let d = (a.as_f64().unwrap() - b.as_f64().unwrap()).rem_euclid(360.0);
    assert!(d.min(360.0 - d) < 1e-9, "{what}: {a} vs {b}");
}

#[test]
fn json_fields_match_pycircstat2_and_astropy_from_a_file() {
    let fx = fixture();
    let c = case(&fx, "directions", "n20_kappa2.0");
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("headings.txt");
    std::fs::write(&path, angles_text(c)).unwrap();
    let expect = c["expect_deg"].as_f64().unwrap().to_string();
    let out = bin()
        .args([
            "stats",
            path.to_str().unwrap(),
            "--json",
            "--expect",
            &expect,
        ])
        .output()
        .unwrap();
    let j = json_of(&out);
    let pc = &c["pycircstat2"];
    let ap = &c["astropy"];
    assert_eq!(j["n"], 20);
    angle_close("mean_deg (pycircstat2)", &j["mean_deg"], &pc["mean_deg"]);
    close("r (pycircstat2)", &j["r"], &pc["r"], 1e-9);
    close(
        "rayleigh_z (pycircstat2)",
        &j["rayleigh_z"],
        &pc["rayleigh_z"],
        1e-9,
    );
    close(
        "rayleigh_p (pycircstat2)",
        &j["rayleigh_p"],
        &pc["rayleigh_p"],
        1e-9,
    );
    close(
        "circular_sd_deg (astropy circstd circular)",
        &j["circular_sd_deg"],
        &ap["circstd_circular_deg"],
        1e-9,
    );
    close(
        "angular_deviation_deg (astropy circstd angular)",
        &j["angular_deviation_deg"],
        &ap["circstd_angular_deg"],
        1e-9,
    );
    close("v (pycircstat2)", &j["v"], &pc["v"], 1e-9);
    close("v_u (pycircstat2)", &j["v_u"], &pc["v_u"], 1e-9);
    close("v_p (pycircstat2)", &j["v_p"], &pc["v_p"], 1e-9);
    let ci = j["ci95_deg"].as_array().unwrap();
    let ci_ref = pc["ci95_deg"].as_array().unwrap();
    angle_close("ci95 lower (pycircstat2)", &ci[0], &ci_ref[0]);
    angle_close("ci95 upper (pycircstat2)", &ci[1], &ci_ref[1]);
}

#[test]
fn reads_standard_input_with_dash_or_no_file() {
    let fx = fixture();
    let c = case(&fx, "directions", "around_north");
    let text = angles_text(c);
    let a = json_of(&run_with_stdin(&["stats", "-", "--json"], text.as_bytes()));
    let b = json_of(&run_with_stdin(&["stats", "--json"], text.as_bytes()));
    assert_eq!(a, b);
    assert_eq!(a["n"], 10);
    angle_close(
        "mean_deg (astropy circmean)",
        &a["mean_deg"],
        &c["astropy"]["circmean_deg"],
    );
    assert!(a.get("v").is_none(), "no V-test without --expect");
}

#[test]
fn axial_json_matches_libraries_on_doubled_angles() {
    let fx = fixture();
    let c = case(&fx, "axial", "axial_n40_kappa1.0");
    let j = json_of(&run_with_stdin(
        &["stats", "--axial", "--json", "--expect", "30"],
        angles_text(c).as_bytes(),
    ));
    let m = j["mean_deg"].as_f64().unwrap();
    assert!((0.0..180.0).contains(&m));
    let theirs = c["astropy_doubled"]["half_circmean_deg"].as_f64().unwrap();
    let d = (m - theirs).rem_euclid(180.0);
    assert!(
        d.min(180.0 - d) < 1e-9,
        "{m} vs {theirs} (astropy on doubled angles)"
    );
    close(
        "r (astropy doubled)",
        &j["r"],
        &c["astropy_doubled"]["r"],
        1e-9,
    );
    close(
        "rayleigh_p (pycircstat2 doubled)",
        &j["rayleigh_p"],
        &c["pycircstat2_doubled"]["rayleigh_p"],
        1e-9,
    );
    for k in ["v", "v_u", "v_p"] {
        assert!(j[k].is_number(), "{k}");
    }
    assert_eq!(j["axial"], true);
}

#[test]
fn human_readable_output_by_default() {
    let out = run_with_stdin(&["stats", "--expect", "90"], b"80\n90\n100\n");
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("mean direction"), "{text}");
    assert!(text.contains("90.00°"), "{text}");
    assert!(text.contains("Rayleigh"), "{text}");
    assert!(text.contains("V-test"), "{text}");
}

#[test]
fn bad_line_is_a_one_line_error_with_file_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.txt");
    std::fs::write(&path, "10\n# fine\n\n20\nNE\n30\n").unwrap();
    let out = bin()
        .args(["stats", path.to_str().unwrap()])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.starts_with("skybearing: error: "), "{err}");
    assert!(
        err.contains("bad.txt") && err.contains("line 5") && err.contains("'NE'"),
        "{err}"
    );
    assert!(!err.contains("panicked"));
}

#[test]
fn non_finite_and_non_utf8_lines_are_errors() {
    for (input, line) in [
        (&b"1\ninf\n"[..], "line 2"),
        (&b"nan\n"[..], "line 1"),
        (&b"1\n2\n\xff\xfe\n"[..], "line 3"),
    ] {
        let out = run_with_stdin(&["stats", "--json"], input);
        assert_eq!(out.status.code(), Some(2));
        let err = String::from_utf8(out.stderr).unwrap();
        assert!(err.contains("<stdin>") && err.contains(line), "{err}");
        assert!(out.stdout.is_empty());
    }
}

#[test]
fn empty_input_is_a_clear_error() {
    let out = run_with_stdin(&["stats", "--json"], b"\n# only a comment\n   \n");
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("no angles"), "{err}");
}

#[test]
fn missing_file_is_an_error_naming_it() {
    let out = bin()
        .args(["stats", "/nonexistent/lm-07-headings.txt"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8(out.stderr).unwrap();
    assert!(err.contains("lm-07-headings.txt"), "{err}");
}

#[test]
fn uniform_headings_have_no_mean_and_json_stays_valid() {
    // Four opposite headings: r = 0, no mean direction (null), infinite circular sd (null).
    let j = json_of(&run_with_stdin(&["stats", "--json"], b"0\n90\n180\n270\n"));
    assert_eq!(j["r"], 0.0);
    assert!(j["mean_deg"].is_null());
    assert!(j["circular_sd_deg"].is_null());
    close("rayleigh_p", &j["rayleigh_p"], &Value::from(1.0), 1e-12);
}

#[test]
fn help_lists_the_flags() {
    let out = bin().args(["stats", "--help"]).output().unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    for flag in ["--axial", "--expect", "--json"] {
        assert!(text.contains(flag), "{flag}");
    }
}

/// A seeded heading series: held (restoring time 2 s) or an unoriented walk, 50 Hz, 120 s.
fn series(held: bool) -> (Vec<f64>, Vec<f64>) {
    let mut state: u64 = 11;
    let mut normal = move || {
        let mut u = || {
            state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = state;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
        };
        let (a, b) = (1.0 - u(), u());
        (-2.0 * a.ln()).sqrt() * (std::f64::consts::TAU * b).cos()
    };
    let dt = 0.02;
    let (mut t, mut a) = (Vec::new(), Vec::new());
    let mut theta: f64 = 1.0;
    for k in 0..6000 {
        if held {
            theta -= (theta - 1.0).sin() * dt / 2.0;
        }
        theta += 12f64.to_radians() * dt.sqrt() * normal();
        t.push(k as f64 * dt);
        a.push(theta.to_degrees().rem_euclid(360.0));
    }
    (t, a)
}

#[test]
fn series_gives_the_calibrated_orientation_test() {
    let (t, a) = series(true);
    let with_time: String = t
        .iter()
        .zip(&a)
        .map(|(t, a)| format!("{t:.2},{a:.3}\n"))
        .collect();
    let v = json_of(&run_with_stdin(
        &["stats", "--series", "--json"],
        with_time.as_bytes(),
    ));
    assert_eq!(v["independent"], false);
    let p = v["p_oriented"].as_f64().expect("p_oriented");
    assert!(p < 0.01, "{p}");
    // The same numbers through the library function.
    let lib_t: Vec<f64> = t
        .iter()
        .map(|t| format!("{t:.2}").parse().unwrap())
        .collect();
    let lib_a: Vec<f64> = a
        .iter()
        .map(|a| format!("{a:.3}").parse().unwrap())
        .collect();
    let lib = skybearing::circular::orientation_test_series(&lib_t, &lib_a).unwrap();
    assert!((lib.p - p).abs() < 1e-12);
    // Angles only, with the rate: the same test.
    let only: String = a.iter().map(|a| format!("{a:.3}\n")).collect();
    let v2 = json_of(&run_with_stdin(
        &["stats", "--series", "--rate-hz", "50", "--json"],
        only.as_bytes(),
    ));
    assert!((v2["p_oriented"].as_f64().unwrap() - p).abs() < 1e-9);
    // An unoriented walk is not called oriented; 10 s is too short to say.
    let (_, w) = series(false);
    let walk: String = w.iter().map(|a| format!("{a:.3}\n")).collect();
    let v3 = json_of(&run_with_stdin(
        &["stats", "--series", "--rate-hz", "50", "--json"],
        walk.as_bytes(),
    ));
    assert!(v3["p_oriented"].as_f64().unwrap() > 0.05, "{v3}");
    let short: String = a[..500].iter().map(|a| format!("{a:.3}\n")).collect();
    let v4 = json_of(&run_with_stdin(
        &["stats", "--series", "--rate-hz", "50", "--json"],
        short.as_bytes(),
    ));
    assert!(v4["p_oriented"].is_null());
    // Without --series the angles are independent, and the table says so on stderr.
    let v5 = json_of(&run_with_stdin(&["stats", "--json"], only.as_bytes()));
    assert_eq!(v5["independent"], true);
    assert!(v5.get("p_oriented").is_none() && v5.get("n_eff").is_none());
    let out = run_with_stdin(&["stats"], b"10\n20\n");
    assert!(String::from_utf8_lossy(&out.stderr).contains("independent"));
}

#[test]
fn series_without_time_or_rate_is_an_error() {
    let out = run_with_stdin(&["stats", "--series"], b"10\n20\n");
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--rate-hz"), "{err}");
    let out = run_with_stdin(&["stats", "--series"], b"0,10\n1,20\n0.5,30\n");
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("line 3"));
}

/// With few angles the p come from the exact null of uniform directions: two angles 4° apart
/// have p = 4/180 exactly (the difference of two uniform directions is uniform; derived in
/// `circular::small_n`), where Zar's approximation could not go below e^−2 ≈ 0.135; three
/// angles near the expected direction give a small V-test p.
#[test]
fn few_angles_get_the_exact_null() {
    let out = run_with_stdin(&["stats", "-", "--json"], b"10\n14\n");
    let j = json_of(&out);
    let p = j["rayleigh_p"].as_f64().unwrap();
    assert!((p - 4.0 / 180.0).abs() < 0.005, "{p}");
    let out = run_with_stdin(&["stats", "-", "--json", "--expect", "90"], b"85\n92\n95\n");
    let j = json_of(&out);
    let v_p = j["v_p"].as_f64().unwrap();
    // Exact: P(Σcos ≥ 2.98) for three uniform angles is small (well under 0.01).
    assert!(v_p < 0.01 && v_p > 0.0, "{v_p}");
}
