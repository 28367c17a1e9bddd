//! `skybearing stats`: circular statistics of angles in degrees, one per line.

use crate::circular::{
    CircularSummary, MIN_SCORED_S, VTestResult, circular_variance, describe_axial_deg,
    describe_deg, kappa_estimate, mean_ci95_deg, orientation_test_series, v_test,
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
(and v, v_u, v_p with --expect), plus kappa, ci95_deg, circular_variance and \
`independent` (true: every angle is taken as an independent observation). With 2 to 12 \
angles the Rayleigh p (and with 3 to 12 the V-test p) comes from the exact null of uniform \
directions, simulated with a fixed seed.\n\
With --series the lines are headings in time order, either `angle` (sampled at --rate-hz) or \
`t_s,angle` (seconds, non-decreasing; a step longer than 0.1 s breaks the series); the output \
adds p_oriented, the test that the animal held a heading, calibrated for autocorrelated \
headings (null: an unoriented random walk with the series' own turning rate; null with less \
than 30 s of series), and independent is false. Rayleigh p, the V-test and the CI still \
take the lines as independent and are not valid for a time series."
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
    /// The lines are a time series of headings (`angle` or `t_s,angle`): add the calibrated
    /// orientation test p_oriented.
    #[arg(long)]
    pub series: bool,
    /// Sample rate of a --series file without a time column, Hz.
    #[arg(long, value_name = "HZ")]
    pub rate_hz: Option<f64>,
}

/// Angles read from an input, with the name used in error messages.
struct Input {
    name: String,
    angles_deg: Vec<f64>,
    /// Times of `t_s,angle` lines (empty when the lines hold angles only).
    times_s: Vec<f64>,
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
    let (times_s, angles_deg) = parse_lines(&name, &bytes)?;
    Ok(Input {
        name,
        angles_deg,
        times_s,
    })
}

/// Parses `angle` or `t_s,angle` lines (all lines alike); returns (times, angles), times empty
/// for angle-only input. Errors name the input and the 1-based line number.
fn parse_lines(name: &str, bytes: &[u8]) -> anyhow::Result<(Vec<f64>, Vec<f64>)> {
    let mut times = Vec::new();
    let mut angles = Vec::new();
    let mut with_time: Option<bool> = None;
    for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
        let line_no = i + 1;
        let line = String::from_utf8_lossy(raw);
        let text = line.split('#').next().unwrap_or("").trim();
        if text.is_empty() {
            continue;
        }
        let has_t = text.contains(',');
        if *with_time.get_or_insert(has_t) != has_t {
            bail!("{name}, line {line_no}: mixes `angle` and `t_s,angle` lines");
        }
        if let Some((t, _)) = text.split_once(',') {
            let t: f64 = t
                .trim()
                .parse()
                .ok()
                .filter(|t: &f64| t.is_finite())
                .ok_or_else(|| {
                    anyhow::anyhow!(
                        "{name}, line {line_no}: '{}' is not a time in seconds",
                        shorten(t)
                    )
                })?;
            if times.last().is_some_and(|&last| t < last) {
                bail!("{name}, line {line_no}: t_s {t} goes back in time");
            }
            times.push(t);
        }
    }
    let stripped: Vec<u8> = if with_time == Some(true) {
        let mut v = Vec::new();
        for raw in bytes.split(|&b| b == b'\n') {
            let line = String::from_utf8_lossy(raw);
            let (body, _) = line.split_once('#').unwrap_or((&line, ""));
            v.extend_from_slice(body.split_once(',').map_or("", |x| x.1).as_bytes());
            v.push(b'\n');
        }
        v
    } else {
        bytes.to_vec()
    };
    angles.extend(parse_angles(name, &stripped)?);
    Ok((times, angles))
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
    /// Some(p_oriented) with --series (None inside: too short).
    series: Option<Option<f64>>,
    expect_deg: Option<f64>,
    v: Option<VTestResult>,
}

fn compute(angles_deg: &[f64], axial: bool, expect_deg: Option<f64>) -> Report {
    let mut summary = if axial {
        describe_axial_deg(angles_deg)
    } else {
        describe_deg(angles_deg)
    };
    // With 2 to 12 angles the Rayleigh p comes from the exact null (Zar's approximation cannot
    // reject with 2 and is conservative with 3; `circular::calibration`).
    if summary.n <= crate::circular::RAYLEIGH_EXACT_MAX_N
        && let Some(p) = crate::circular::rayleigh_p_few(summary.n, summary.r)
    {
        summary.rayleigh_p = p;
    }
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
    // With 3 to 12 angles the V-test p too comes from the exact null (as the turn test's).
    let v = match (v, expect_deg) {
        (Some(mut v), Some(e)) if summary.n <= crate::circular::EXACT_MAX_N => {
            let k = if axial { 2.0 } else { 1.0 };
            let toward_0: Vec<f64> = angles_deg.iter().map(|a| k * (a - e)).collect();
            if let Some(p) = crate::circular::v_test_p_small_n(&toward_0) {
                v.p = p;
            }
            Some(v)
        }
        (v, _) => v,
    };
    Report {
        axial,
        summary,
        kappa: kappa_estimate(summary.r, Some(n)),
        ci95_deg,
        series: None,
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
        "independent": rep.series.is_none(),
    });
    if let (Some(p), Some(map)) = (rep.series, obj.as_object_mut()) {
        map.insert("p_oriented".into(), p.into());
    }
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
    match rep.series {
        None => line(
            "note",
            "every angle is taken as independent (for a time series use --series)".into(),
        ),
        Some(p) => line(
            "held a heading",
            match p {
                Some(p) => format!(
                    "p_oriented = {} (against an unoriented walk; the Rayleigh p, V-test and \
                     CI above take the lines as independent)",
                    fmt_p(p)
                ),
                None => format!("too short to say (under {MIN_SCORED_S:.0} s)"),
            },
        ),
    }
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
    let mut rep = compute(&input.angles_deg, args.axial, args.expect);
    if args.series {
        if args.axial {
            bail!("--series: the orientation test is for directions, not axes (drop --axial)");
        }
        let times: Vec<f64> = if input.times_s.is_empty() {
            match args.rate_hz {
                Some(hz) if hz.is_finite() && hz > 0.0 => {
                    (0..input.angles_deg.len()).map(|k| k as f64 / hz).collect()
                }
                Some(hz) => bail!("--rate-hz: '{hz}' is not a positive rate in Hz"),
                None => bail!(
                    "{}: --series needs a time column (`t_s,angle`) or --rate-hz",
                    input.name
                ),
            }
        } else {
            input.times_s.clone()
        };
        rep.series = Some(orientation_test_series(&times, &input.angles_deg).map(|t| t.p));
    } else if !args.json {
        eprintln!("note: every angle is taken as independent (for a time series use --series)");
    }
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
