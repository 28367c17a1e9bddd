//! The population tests of uniformity against tests/fixtures/population_reference.json,
//! written by tests/reference/population_reference.py (versions recorded in the file):
//! Rao's spacing U against `pycircstat2.hypothesis.rao_spacing_test` to 1e-9°, its p and the
//! Hermans–Rasson p within Monte Carlo error (ours 9999 draws with SplitMix64, the reference
//! 100000 with numpy: 4 standard errors of a 9999-draw p plus 0.001), the Hermans–Rasson
//! statistic against an independent numpy transcription (Landler, Ruxton & Malkemper 2019's
//! form, recalled from memory) to 1e-9 relative.

use skybearing::circular::{hermans_rasson_test, rao_spacing_test};

fn mc_close(ours: f64, reference: f64) -> bool {
    (ours - reference).abs() <= 4.0 * (reference * (1.0 - reference) / 9999.0).sqrt() + 1e-3
}

#[test]
fn rao_spacing_and_hermans_rasson_match_the_reference() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/population_reference.json"
    );
    let v: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    let samples = v["samples"].as_object().unwrap();
    assert!(samples.len() >= 6);
    for (name, s) in samples {
        let angles: Vec<f64> = s["angles_deg"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect();
        let rao = rao_spacing_test(&angles).unwrap();
        let u = s["rao_spacing_u_deg"].as_f64().unwrap();
        assert!(
            (rao.statistic - u).abs() < 1e-9,
            "{name}: U {} vs {u}",
            rao.statistic
        );
        let p = s["rao_spacing_p"].as_f64().unwrap();
        assert!(mc_close(rao.p, p), "{name}: Rao p {} vs {p}", rao.p);
        let hr = hermans_rasson_test(&angles).unwrap();
        let t = s["hermans_rasson_t"].as_f64().unwrap();
        assert!(
            (hr.statistic - t).abs() < 1e-9 * t.abs().max(1.0),
            "{name}: T {} vs {t}",
            hr.statistic
        );
        let p = s["hermans_rasson_p"].as_f64().unwrap();
        assert!(mc_close(hr.p, p), "{name}: HR p {} vs {p}", hr.p);
    }
}
