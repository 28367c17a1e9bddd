//! `skybearing stats`: circular statistics of angles in degrees, one per line.

use crate::circular::{
    CircularSummary, VTestResult, circular_variance, describe_axial_deg, describe_deg,
    effective_sample_size_deg, kappa_estimate, mean_ci95_deg, rayleigh_test, v_test,
};
use anyhow::{Context, bail};
use clap::Args;
use std::io::Read;
use std::path::PathBuf;

/// Flags of `skybearing stats`.
#[derive(Debug, Args)]
#[command(
    after_help = "Input: one angle in degrees per line (compass style, any finite value; \
blank lines and text after '#' are ignored). Reads standard input when FILE is '-' or missing.\n\
--json prints n, mean_deg, r, rayleigh_z, rayleigh_p, circular_sd_deg, angular_deviation_deg \
(and v, v_u, v_p with --expect), plus kappa, ci95_deg, circular_variance, n_eff and \
rayleigh_p_eff."
)]
pub struct StatsArgs {
    /// File of angles in degrees, one per line; '-' or nothing reads standard input.
    pub file: Option<PathBuf>,
    /// Treat the angles as axial (undirected, e.g. e-vector orientations): statistics of the
    /// doubled angles, mean in [0, 180).
    #[arg(long)]
    pub axial: bool,
    /// Expected direction in degrees for the V-test (an axis in degrees with --axial).
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    pub expect: Option<f64>,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Angles read from an input, with the name used in error messages.
struct Input {
    name: String,
    angles_deg: Vec<f64>,
}

fn read_input(file: Option<&PathBuf>) -> anyhow::Result<Input> {
    let (name, bytes) = match file {
        Some(p) if p.as_os_str() != "-" => {
            let name = p.display().to_string();
            let bytes = std::fs::read(p).with_context(|| format!("cannot read {name}"))?;
            (name, bytes)
        }
        _ => {
            let mut bytes = Vec::new();
            std::io::stdin()
                .read_to_end(&mut bytes)
                .context("cannot read standard input")?;
            ("<stdin>".to_string(), bytes)
        }
    };
    let angles_deg = parse_angles(&name, &bytes)?;
    Ok(Input { name, angles_deg })
}

/// Parses one angle per line; blank lines and `#` comments are skipped. Errors name the input
/// and the 1-based line number.
fn parse_angles(name: &str, bytes: &[u8]) -> anyhow::Result<Vec<f64>> {
    let mut out = Vec::new();
    for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
        let line_no = i + 1;
        let line = std::str::from_utf8(raw)
            .map_err(|_| anyhow::anyhow!("{name}, line {line_no}: not valid UTF-8 text"))?;
        let text = line.split('#').next().unwrap_or("").trim();
        if text.is_empty() {
            continue;
        }
        let value: f64 = match text.parse() {
            Ok(v) => v,
            Err(_) => bail!(
                "{name}, line {line_no}: '{}' is not an angle in degrees",
                shorten(text)
            ),
        };
        if !value.is_finite() {
            bail!(
                "{name}, line {line_no}: '{}' is not a finite angle in degrees",
                shorten(text)
            );
        }
        out.push(value);
    }
    Ok(out)
}

fn shorten(s: &str) -> String {
    const MAX: usize = 40;
    if s.chars().count() <= MAX {
        s.to_string()
    } else {
        format!("{}...", s.chars().take(MAX).collect::<String>())
    }
}

/// Everything the command prints.
struct Report {
    axial: bool,
    summary: CircularSummary,
    kappa: f64,
    ci95_deg: Option<(f64, f64)>,
    n_eff: f64,
    rayleigh_p_eff: f64,
    expect_deg: Option<f64>,
    v: Option<VTestResult>,
}

fn compute(angles_deg: &[f64], axial: bool, expect_deg: Option<f64>) -> Report {
    let summary = if axial {
        describe_axial_deg(angles_deg)
    } else {
        describe_deg(angles_deg)
    };
    let n = summary.n as f64;
    // The CI is computed on the (doubled, for axes) angles and halved back for axes.
    let ci95_deg = if axial {
        mean_ci95_deg(n, summary.r, summary.mean_deg.map(|m| 2.0 * m)).map(|(lo, hi)| {
            (
                crate::frames::wrap_axial_deg(lo / 2.0),
                crate::frames::wrap_axial_deg(hi / 2.0),
            )
        })
    } else {
        mean_ci95_deg(n, summary.r, summary.mean_deg)
    };
    let n_eff = if axial {
        let doubled: Vec<f64> = angles_deg.iter().map(|a| 2.0 * a).collect();
        effective_sample_size_deg(&doubled)
    } else {
        effective_sample_size_deg(angles_deg)
    };
    let rayleigh_p_eff = rayleigh_test(n_eff, summary.r).1;
    let (expect_deg, v) = match expect_deg {
        Some(e) if axial => {
            let e = crate::frames::wrap_axial_deg(e);
            (
                Some(e),
                Some(v_test(
                    n,
                    summary.r,
                    summary.mean_deg.map(|m| 2.0 * m),
                    2.0 * e,
                )),
            )
        }
        Some(e) => {
            let e = crate::frames::wrap_360_deg(e);
            (Some(e), Some(v_test(n, summary.r, summary.mean_deg, e)))
        }
        None => (None, None),
    };
    Report {
        axial,
        summary,
        kappa: kappa_estimate(summary.r, Some(n)),
        ci95_deg,
        n_eff,
        rayleigh_p_eff,
        expect_deg,
        v,
    }
}

fn to_json(rep: &Report) -> serde_json::Value {
    let s = &rep.summary;
    let mut obj = serde_json::json!({
        "n": s.n,
        "mean_deg": s.mean_deg,
        "r": s.r,
        "rayleigh_z": s.rayleigh_z,
        "rayleigh_p": s.rayleigh_p,
        "circular_sd_deg": finite_or_null(s.circular_sd_deg),
        "angular_deviation_deg": s.angular_deviation_deg,
        "axial": rep.axial,
        "circular_variance": circular_variance(s.r),
        "kappa": finite_or_null(rep.kappa),
        "ci95_deg": rep.ci95_deg.map(|(lo, hi)| [lo, hi]),
        "n_eff": rep.n_eff,
        "rayleigh_p_eff": rep.rayleigh_p_eff,
    });
    if let (Some(v), Some(e), Some(map)) = (rep.v, rep.expect_deg, obj.as_object_mut()) {
        map.insert("expect_deg".into(), e.into());
        map.insert("v".into(), v.v.into());
        map.insert("v_u".into(), v.u.into());
        map.insert("v_p".into(), v.p.into());
    }
    obj
}

fn finite_or_null(x: f64) -> serde_json::Value {
    if x.is_finite() {
        x.into()
    } else {
        serde_json::Value::Null
    }
}

fn fmt_p(p: f64) -> String {
    if p >= 0.001 {
        format!("{p:.4}")
    } else {
        format!("{p:.2e}")
    }
}

fn to_text(name: &str, rep: &Report) -> String {
    let s = &rep.summary;
    let kind = if rep.axial {
        "axes (doubled angles)"
    } else {
        "directions"
    };
    let mut out = String::new();
    let mut line = |k: &str, v: String| out.push_str(&format!("{k:<22}{v}\n"));
    line("input", format!("{name}: {} {kind}", s.n));
    line(
        "mean direction",
        match s.mean_deg {
            Some(m) => format!("{m:.2}°"),
            None => "undefined (r = 0)".to_string(),
        },
    );
    line(
        "95% CI of the mean",
        match rep.ci95_deg {
            Some((lo, hi)) => format!("{lo:.2}° to {hi:.2}° (Zar)"),
            None => "not available (n < 8 or r too small)".to_string(),
        },
    );
    line("mean vector length r", format!("{:.4}", s.r));
    line(
        "Rayleigh test",
        format!("z = {:.4}, p = {}", s.rayleigh_z, fmt_p(s.rayleigh_p)),
    );
    line(
        "circular sd",
        if s.circular_sd_deg.is_finite() {
            format!("{:.2}°", s.circular_sd_deg)
        } else {
            "infinite (r = 0)".to_string()
        },
    );
    line(
        "angular deviation",
        format!("{:.2}°", s.angular_deviation_deg),
    );
    line(
        "circular variance",
        format!("{:.4}", circular_variance(s.r)),
    );
    line(
        "kappa (von Mises)",
        if rep.kappa.is_finite() {
            format!("{:.3}", rep.kappa)
        } else {
            "infinite".to_string()
        },
    );
    line(
        "effective n",
        format!(
            "{:.1} (if the lines are a time series); Rayleigh p on it = {}",
            rep.n_eff,
            fmt_p(rep.rayleigh_p_eff)
        ),
    );
    if let (Some(v), Some(e)) = (rep.v, rep.expect_deg) {
        line(
            "V-test",
            format!(
                "toward {e:.2}°: V = {:.4}, u = {:.4}, p = {}",
                v.v,
                v.u,
                fmt_p(v.p)
            ),
        );
    }
    out
}

/// Runs the command; returns the exit status.
pub fn run(args: StatsArgs) -> anyhow::Result<i32> {
    if let Some(e) = args.expect
        && !e.is_finite()
    {
        bail!("--expect: '{e}' is not a finite angle in degrees");
    }
    let input = read_input(args.file.as_ref())?;
    if input.angles_deg.is_empty() {
        bail!(
            "{}: no angles found (expected one angle in degrees per line)",
            input.name
        );
    }
    let rep = compute(&input.angles_deg, args.axial, args.expect);
    if args.json {
        println!("{}", to_json(&rep));
    } else {
        print!("{}", to_text(&input.name, &rep));
    }
    Ok(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_comments_blank_lines_and_crlf() {
        let v = parse_angles("x", b"# header\n10\n\n 20.5 \r\n30 # note\n-15\n").unwrap();
        assert_eq!(v, vec![10.0, 20.5, 30.0, -15.0]);
    }

    #[test]
    fn bad_line_names_file_and_line() {
        let e = parse_angles("angles.txt", b"10\n# c\nnorth\n").unwrap_err();
        assert_eq!(
            e.to_string(),
            "angles.txt, line 3: 'north' is not an angle in degrees"
        );
        let e = parse_angles("a", b"1\nNaN\n").unwrap_err();
        assert!(e.to_string().contains("line 2"));
        let e = parse_angles("a", b"1\n\xff\n").unwrap_err();
        assert!(e.to_string().contains("line 2"));
    }

    #[test]
    fn json_has_the_contract_fields() {
        let rep = compute(&[10.0, 20.0, 30.0, 350.0], false, Some(15.0));
        let j = to_json(&rep);
        for k in [
            "n",
            "mean_deg",
            "r",
            "rayleigh_z",
            "rayleigh_p",
            "circular_sd_deg",
            "angular_deviation_deg",
            "v",
            "v_u",
            "v_p",
        ] {
            assert!(j.get(k).is_some(), "missing {k}");
        }
        assert_eq!(j["n"], 4);
    }

    #[test]
    fn axial_expect_is_an_axis() {
        // Axis 100 and 280 are the same axis: same V.
        let a = [95.0, 100.0, 105.0, 275.0, 280.0];
        let r1 = compute(&a, true, Some(100.0));
        let r2 = compute(&a, true, Some(280.0));
        assert!((r1.v.unwrap().v - r2.v.unwrap().v).abs() < 1e-12);
        assert!(r1.v.unwrap().p < 0.05);
    }
}
