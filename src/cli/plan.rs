//! `skybearing plan`: a protocol's timeline with the sun at every epoch, before the session.

use crate::protocol::plan::{
    DEFAULT_MAX_DRIFT_DEG, MagneticMark, Plan, PlanSite, WarningKind, make_plan,
};
use crate::protocol::{ArenaMove, format_duration_s, load_protocol};
use crate::rig::config::{BearingReference, Rig};
use crate::sky::Site;
use anyhow::Context;
use chrono::{DateTime, Utc};
use chrono_tz::Tz;
use clap::Args;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Flags of `skybearing plan`.
#[derive(Debug, Args)]
#[command(
    long_about = "Show a protocol's timeline before running it: when each epoch starts and ends \
(UTC and local time), where the arena stands, the sun's azimuth and elevation and the zenith \
e-vector at the start and end of each epoch, with warnings (sun below the horizon or setting, \
near the zenith, its azimuth drifting fast). Times assume turns and prompts take no time."
)]
pub struct PlanArgs {
    /// Protocol file (TOML, see docs/protocols.md).
    #[arg(long, value_name = "FILE")]
    pub protocol: PathBuf,
    /// Rig file giving the site, time zone and arena mark bearing (default: the built-in demo
    /// rig: Larkfield Meadow (demo), Europe/Paris, mark at true 0).
    #[arg(long, value_name = "FILE")]
    pub rig: Option<PathBuf>,
    /// Session start, RFC 3339 such as 2026-06-21T08:00:00Z (default: now, rounded up to the
    /// next minute).
    #[arg(long, value_name = "RFC3339")]
    pub start: Option<String>,
    /// Warn when the sun's azimuth moves more than this within one epoch, degrees.
    #[arg(long, value_name = "DEG", default_value_t = DEFAULT_MAX_DRIFT_DEG, allow_negative_numbers = true)]
    pub max_drift_deg: f64,
    /// Print the plan as JSON instead of a table.
    #[arg(long)]
    pub json: bool,
}

/// Runs the command; returns the exit status.
pub fn run(args: PlanArgs) -> anyhow::Result<i32> {
    if !(args.max_drift_deg.is_finite() && args.max_drift_deg > 0.0) {
        anyhow::bail!(
            "--max-drift-deg: must be a number > 0 (got {})",
            args.max_drift_deg
        );
    }
    let start = match &args.start {
        Some(s) => parse_start(s)?,
        None => next_minute(Utc::now()),
    };
    let (protocol, protocol_warnings) = load_protocol(&args.protocol)?;
    let total_ms = (protocol.total_duration_s() * 1000.0).round() as i64;
    if chrono::TimeDelta::try_milliseconds(total_ms)
        .and_then(|d| start.checked_add_signed(d))
        .is_none()
    {
        anyhow::bail!(
            "--start: {start} plus the protocol's duration is past the last date this program can show"
        );
    }
    let (site, magnetic) = match &args.rig {
        Some(path) => plan_site_from_rig(&read_rig(path)?, start)
            .with_context(|| format!("{}", path.display()))?,
        None => (PlanSite::demo(), None),
    };
    let mut plan = make_plan(&protocol, &site, start, args.max_drift_deg)
        .context("computing the sun for the plan")?;
    plan.magnetic_mark = magnetic;
    plan.add_protocol_warnings(&protocol_warnings);
    if args.json {
        println!("{}", serde_json::to_string_pretty(&plan)?);
    } else {
        print!("{}", render_text(&plan, site.time_zone));
    }
    Ok(0)
}

/// `--start`: RFC 3339 with an offset, kept as UTC.
pub fn parse_start(text: &str) -> anyhow::Result<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(text.trim())
        .map(|t| t.with_timezone(&Utc))
        .map_err(|e| {
            anyhow::anyhow!(
                "--start: '{text}' is not an RFC 3339 time such as 2026-06-21T08:00:00Z ({e})"
            )
        })
}

/// `t` rounded up to the next whole minute (unchanged when already whole).
pub fn next_minute(t: DateTime<Utc>) -> DateTime<Utc> {
    let ms = t.timestamp_millis();
    let up = ms.div_euclid(60_000) * 60_000
        + if ms.rem_euclid(60_000) == 0 {
            0
        } else {
            60_000
        };
    DateTime::from_timestamp_millis(up).unwrap_or(t)
}

/// Reads and checks a rig file (errors name file, line and field).
fn read_rig(path: &Path) -> anyhow::Result<Rig> {
    Ok(crate::rig::config::load_rig(path)?)
}

/// Site, time zone and true mark bearing from a rig; a magnetic mark bearing is corrected with
/// the WMM declination for the site on the session's date.
pub fn plan_site_from_rig(
    rig: &Rig,
    start: DateTime<Utc>,
) -> anyhow::Result<(PlanSite, Option<MagneticMark>)> {
    let (mut site, magnetic) = plan_site_from_parts(
        &rig.site,
        &rig.time_zone,
        rig.arena_mark_bearing_deg,
        rig.arena_mark_reference,
        start,
    )?;
    site.sky_view_min_elevation_deg = rig.sky_view_min_elevation_deg;
    Ok((site, magnetic))
}

/// As [`plan_site_from_rig`], from the rig's parts.
pub fn plan_site_from_parts(
    site: &Site,
    time_zone: &str,
    mark_bearing_deg: f64,
    reference: BearingReference,
    start: DateTime<Utc>,
) -> anyhow::Result<(PlanSite, Option<MagneticMark>)> {
    let time_zone: Tz = time_zone.parse().map_err(|_| {
        anyhow::anyhow!(
            "time_zone: '{time_zone}' is not an IANA time zone name such as Europe/Paris"
        )
    })?;
    let (mark_bearing_true_deg, magnetic) = match reference {
        BearingReference::True => (mark_bearing_deg, None),
        BearingReference::Magnetic => {
            let date = start.date_naive();
            let decl = crate::sky::magnetic::declination_deg(
                site.latitude_deg,
                site.longitude_deg,
                site.elevation_m,
                date,
            )
            .ok_or_else(|| {
                anyhow::anyhow!(
                    "arena mark bearing is magnetic but the magnetic model has no declination for {date}; give a true bearing"
                )
            })?;
            (
                crate::frames::true_from_magnetic_deg(mark_bearing_deg, decl),
                Some(MagneticMark {
                    magnetic_bearing_deg: mark_bearing_deg,
                    declination_deg: decl,
                }),
            )
        }
    };
    Ok((
        PlanSite {
            site: site.clone(),
            time_zone,
            mark_bearing_true_deg,
            sky_view_min_elevation_deg: 0.0,
        },
        magnetic,
    ))
}

fn hms(t: DateTime<Utc>, tz: Tz, day0: chrono::NaiveDate) -> String {
    let local = t.with_timezone(&tz);
    let days = (local.date_naive() - day0).num_days();
    let suffix = match days {
        0 => String::new(),
        d if d > 0 => format!(" +{d}d"),
        d => format!(" {d}d"),
    };
    format!("{}{suffix}", local.format("%H:%M:%S"))
}

fn hms_utc(t: DateTime<Utc>, day0: chrono::NaiveDate) -> String {
    hms(t, chrono_tz::UTC, day0)
}

fn signed(x: f64) -> String {
    if x > 0.0 {
        format!("+{x:.0}")
    } else {
        format!("{x:.0}")
    }
}

fn mm_ss(s: f64) -> String {
    let t = s.round() as u64;
    if t >= 3600 {
        format!("{}:{:02}:{:02}", t / 3600, (t % 3600) / 60, t % 60)
    } else {
        format!("{}:{:02}", t / 60, t % 60)
    }
}

/// The plan as an aligned text table with a header and the warnings.
pub fn render_text(plan: &Plan, tz: Tz) -> String {
    let mut out = String::new();
    let local0 = plan.start_utc.with_timezone(&tz);
    let day0_local = local0.date_naive();
    let day0_utc = plan.start_utc.date_naive();
    let site = &plan.site;
    let ns = if site.latitude_deg >= 0.0 { 'N' } else { 'S' };
    let ew = if site.longitude_deg >= 0.0 { 'E' } else { 'W' };
    let _ = writeln!(
        out,
        "Protocol  {}{}",
        plan.protocol,
        if plan.description.is_empty() {
            String::new()
        } else {
            format!(": {}", plan.description)
        }
    );
    let _ = writeln!(
        out,
        "Site      {}, {:.4} {ns} {:.4} {ew}, {:.0} m; local time {} ({})",
        site.name,
        site.latitude_deg.abs(),
        site.longitude_deg.abs(),
        site.elevation_m,
        plan.time_zone,
        local0.format("%Z, UTC%:z")
    );
    let magnetic = plan
        .magnetic_mark
        .map(|m| {
            format!(
                " (magnetic {:.1} {} declination {:.1})",
                m.magnetic_bearing_deg,
                if m.declination_deg < 0.0 { "-" } else { "+" },
                m.declination_deg.abs()
            )
        })
        .unwrap_or_default();
    let _ = writeln!(
        out,
        "Arena     0 mark at true bearing {:.1} deg{magnetic} at the start; settle window {} s after each turn",
        plan.arena_mark_bearing_deg, plan.settle_s
    );
    let end_local = plan.end_utc.with_timezone(&tz);
    let _ = writeln!(
        out,
        "Session   {} {} local ({} UTC) to {} local, {}, {} epochs",
        local0.format("%Y-%m-%d (%a)"),
        local0.format("%H:%M:%S"),
        plan.start_utc.format("%H:%M:%S"),
        if end_local.date_naive() == day0_local {
            end_local.format("%H:%M:%S").to_string()
        } else {
            end_local.format("%Y-%m-%d %H:%M:%S").to_string()
        },
        format_duration_s(plan.total_duration_s),
        plan.epochs.len()
    );
    let _ = writeln!(out, "          (times assume {})", plan.assumptions);
    let _ = writeln!(out);

    let headers = [
        "epoch",
        "start UTC",
        "start local",
        "end local",
        "length",
        "turn",
        "position",
        "mark",
        "condition",
        "sun az start>end",
        "sun el start>end",
        "e-vector start>end",
    ];
    // Right-aligned columns (numbers); the condition is left-aligned.
    let right = [
        true, true, true, true, true, true, true, true, false, true, true, true,
    ];
    let mut rows: Vec<[String; 12]> = Vec::new();
    for e in &plan.epochs {
        let turn = match e.arena_move {
            ArenaMove::Stay => "-".to_string(),
            ArenaMove::TurnBy { .. } => signed(e.turn_before_deg),
            ArenaMove::GoTo { .. } => format!("{} (go to)", signed(e.turn_before_deg)),
        };
        rows.push([
            e.index.to_string(),
            hms_utc(e.start_utc, day0_utc),
            hms(e.start_utc, tz, day0_local),
            hms(e.end_utc, tz, day0_local),
            mm_ss(e.duration_s),
            turn,
            format!("{:.0}", e.arena_position_deg),
            format!("{:.1}", e.arena_bearing_deg),
            e.condition.clone(),
            format!(
                "{:.1} > {:.1}",
                e.sun_start.azimuth_deg, e.sun_end.azimuth_deg
            ),
            format!(
                "{:.1} > {:.1}",
                e.sun_start.elevation_deg, e.sun_end.elevation_deg
            ),
            format!(
                "{:.1} > {:.1}",
                e.sun_start.zenith_evector_deg, e.sun_end.zenith_evector_deg
            ),
        ]);
    }
    let mut widths: Vec<usize> = headers.iter().map(|h| h.chars().count()).collect();
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r.iter()) {
            *w = (*w).max(c.chars().count());
        }
    }
    let line = |cells: &[String]| -> String {
        let mut s = String::new();
        for (i, c) in cells.iter().enumerate() {
            let pad = widths[i].saturating_sub(c.chars().count());
            if i > 0 {
                s.push_str("  ");
            }
            if right[i] {
                s.push_str(&" ".repeat(pad));
                s.push_str(c);
            } else {
                s.push_str(c);
                s.push_str(&" ".repeat(pad));
            }
        }
        s.trim_end().to_string()
    };
    let header_cells: Vec<String> = headers.iter().map(|h| h.to_string()).collect();
    let _ = writeln!(out, "{}", line(&header_cells));
    let rule: Vec<String> = widths.iter().map(|w| "-".repeat(*w)).collect();
    let _ = writeln!(out, "{}", line(&rule));
    let indent = widths[0] + 2;
    let mut cues_shown: Option<crate::protocol::Cues> = None;
    for (r, e) in rows.iter().zip(&plan.epochs) {
        if cues_shown != Some(e.cues) {
            // What the animal sees, from this epoch on (until the next such line).
            let _ = writeln!(out, "{}sees: {}", " ".repeat(indent), e.cues.describe());
            cues_shown = Some(e.cues);
        }
        if let Some(p) = &e.prompt {
            let _ = writeln!(
                out,
                "{}>> prompt, wait for confirmation: {p}",
                " ".repeat(indent)
            );
        }
        let _ = writeln!(out, "{}", line(r));
    }
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "Angles in degrees: turn + = clockwise seen from above; position from the arena's start; mark = true bearing of the arena's 0 mark; sun azimuth from true north; elevation apparent; e-vector axial [0, 180)."
    );
    let _ = writeln!(out);
    if plan.warnings.is_empty() {
        let _ = writeln!(out, "No warnings.");
    } else {
        let _ = writeln!(out, "Warnings ({}):", plan.warnings.len());
        for w in &plan.warnings {
            let tag = match w.kind {
                WarningKind::Protocol => "protocol: ",
                _ => "",
            };
            let _ = writeln!(out, "  - {tag}{}", w.message);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    #[test]
    fn next_minute_rounds_up() {
        let t = Utc.with_ymd_and_hms(2026, 6, 21, 8, 0, 1).unwrap();
        assert_eq!(
            next_minute(t),
            Utc.with_ymd_and_hms(2026, 6, 21, 8, 1, 0).unwrap()
        );
        let whole = Utc.with_ymd_and_hms(2026, 6, 21, 8, 0, 0).unwrap();
        assert_eq!(next_minute(whole), whole);
        let late = Utc.with_ymd_and_hms(2026, 12, 31, 23, 59, 30).unwrap();
        assert_eq!(
            next_minute(late),
            Utc.with_ymd_and_hms(2027, 1, 1, 0, 0, 0).unwrap()
        );
    }

    #[test]
    fn start_accepts_offsets_and_refuses_junk() {
        let t = parse_start("2026-06-21T10:00:00+02:00").unwrap();
        assert_eq!(t, Utc.with_ymd_and_hms(2026, 6, 21, 8, 0, 0).unwrap());
        let e = parse_start("21/06/2026").unwrap_err().to_string();
        assert!(
            e.starts_with("--start: '21/06/2026' is not an RFC 3339 time"),
            "{e}"
        );
    }

    fn from_parts(
        reference: BearingReference,
        tz: &str,
        start: DateTime<Utc>,
    ) -> anyhow::Result<(PlanSite, Option<MagneticMark>)> {
        plan_site_from_parts(&crate::sky::demo_site(), tz, 10.0, reference, start)
    }

    #[test]
    fn rig_true_and_magnetic_marks() {
        let start = Utc.with_ymd_and_hms(2026, 6, 21, 8, 0, 0).unwrap();
        let (s, none) = from_parts(BearingReference::True, "Europe/Paris", start).unwrap();
        assert_eq!(s.mark_bearing_true_deg, 10.0);
        assert!(none.is_none());
        let (m, mark) = from_parts(BearingReference::Magnetic, "Europe/Paris", start).unwrap();
        let site = crate::sky::demo_site();
        let d = crate::sky::magnetic::declination_deg(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            start.date_naive(),
        )
        .unwrap();
        assert!((m.mark_bearing_true_deg - (10.0 + d)).abs() < 1e-9);
        assert_eq!(mark.map(|k| k.declination_deg), Some(d));
        // Outside the model's validity a magnetic mark cannot be corrected.
        let old = Utc.with_ymd_and_hms(1990, 6, 21, 8, 0, 0).unwrap();
        let e = from_parts(BearingReference::Magnetic, "Europe/Paris", old)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no declination for 1990-06-21"), "{e}");
        let e = from_parts(BearingReference::True, "Mars/Olympus", start)
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("time_zone: 'Mars/Olympus'"), "{e}");
    }
}
