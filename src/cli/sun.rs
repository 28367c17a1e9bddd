//! `skybearing sun`: sun position, skylight polarization and magnetic declination at one
//! instant and place.

use crate::sky::polarization::{TYPICAL_DMAX, zenith_degree_of_polarization, zenith_evector_deg};
use crate::sky::sun::{SunDay, mean_solar_date, sun_day, sun_position};
use crate::sky::{SkyError, check_site, magnetic};
use anyhow::{Context, anyhow};
use chrono::{DateTime, SecondsFormat, Utc};
use clap::Args;
use serde_json::json;

/// Flags of `skybearing sun`.
#[derive(Debug, Args)]
pub struct SunArgs {
    /// Latitude in degrees, north positive, [-90, 90].
    #[arg(long, allow_hyphen_values = true, value_name = "DEG")]
    pub lat: f64,
    /// Longitude in degrees, east positive, [-180, 180].
    #[arg(long, allow_hyphen_values = true, value_name = "DEG")]
    pub lon: f64,
    /// The instant, RFC 3339 with an offset (e.g. 2026-06-21T10:30:00Z).
    #[arg(long, value_name = "RFC3339")]
    pub at: String,
    /// Height above sea level in metres (sets the air pressure used for refraction).
    #[arg(
        long = "elevation-m",
        default_value_t = 0.0,
        allow_hyphen_values = true,
        value_name = "M"
    )]
    pub elevation_m: f64,
    /// Print one JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Names the flag behind a range error from the sky module.
fn flag_error(e: SkyError) -> anyhow::Error {
    let flag = match &e {
        SkyError::Latitude(_) | SkyError::NotFinite("latitude") => "--lat",
        SkyError::Longitude(_) | SkyError::NotFinite("longitude") => "--lon",
        SkyError::Elevation(_) | SkyError::NotFinite("elevation") => "--elevation-m",
        _ => "--at",
    };
    anyhow!(e).context(flag)
}

fn parse_at(s: &str) -> anyhow::Result<DateTime<Utc>> {
    DateTime::parse_from_rfc3339(s.trim())
        .map(|t| t.with_timezone(&Utc))
        .map_err(|e| {
            anyhow!("--at: '{s}' is not an RFC 3339 instant such as 2026-06-21T10:30:00Z ({e})")
        })
}

fn fmt_time(t: Option<DateTime<Utc>>) -> String {
    t.map(|t| t.format("%H:%M:%S UTC").to_string())
        .unwrap_or_else(|| "none".to_string())
}

fn rfc(t: Option<DateTime<Utc>>) -> serde_json::Value {
    t.map(|t| json!(t.to_rfc3339_opts(SecondsFormat::Millis, true)))
        .unwrap_or(serde_json::Value::Null)
}

/// Runs the command; returns the exit status.
pub fn run(args: SunArgs) -> anyhow::Result<i32> {
    check_site(args.lat, args.lon, args.elevation_m).map_err(flag_error)?;
    let at = parse_at(&args.at)?;
    let sun = sun_position(args.lat, args.lon, args.elevation_m, at).map_err(flag_error)?;
    let evector = zenith_evector_deg(sun.azimuth_deg);
    let zenith_dop = zenith_degree_of_polarization(sun.elevation_deg.max(-90.0), 1.0);
    let date = mean_solar_date(args.lon, at);
    let day: SunDay = sun_day(args.lat, args.lon, args.elevation_m, date)
        .map_err(flag_error)
        .context("sunrise and sunset")?;
    let decl = magnetic::declination(args.lat, args.lon, args.elevation_m, at.date_naive());
    if decl.is_none() {
        eprintln!(
            "skybearing: warning: {} lies outside the World Magnetic Model's validity \
             ({} to {}); no magnetic declination given",
            at.date_naive(),
            magnetic::validity_start(),
            magnetic::validity_end()
        );
    } else if decl.is_some_and(|d| d.near_magnetic_pole) {
        eprintln!(
            "skybearing: warning: the site is near a magnetic pole (WMM caution zone); \
             compass bearings are unreliable here"
        );
    }

    if args.json {
        let out = json!({
            "t_utc": at.to_rfc3339_opts(SecondsFormat::Millis, true),
            "latitude_deg": args.lat,
            "longitude_deg": args.lon,
            "elevation_m": args.elevation_m,
            "azimuth_deg": sun.azimuth_deg,
            "elevation_deg": sun.elevation_deg,
            "geometric_elevation_deg": sun.geometric_elevation_deg,
            "zenith_evector_deg": evector,
            "zenith_polarization_fraction_of_max": zenith_dop,
            "declination_deg": decl.map(|d| d.declination_deg),
            "declination_uncertainty_deg": decl.map(|d| d.uncertainty_deg),
            "mean_solar_date": date.to_string(),
            "sunrise_utc": rfc(day.sunrise),
            "solar_noon_utc": rfc(Some(day.solar_noon)),
            "sunset_utc": rfc(day.sunset),
            "noon_elevation_deg": day.noon_elevation_deg,
            "polar_day": day.polar_day,
            "polar_night": day.polar_night,
        });
        println!("{}", serde_json::to_string_pretty(&out)?);
        return Ok(0);
    }

    let ns = if args.lat >= 0.0 { 'N' } else { 'S' };
    let ew = if args.lon >= 0.0 { 'E' } else { 'W' };
    println!(
        "Sky at {}, {:.4}° {ns} {:.4}° {ew}, {:.0} m",
        at.to_rfc3339_opts(SecondsFormat::Millis, true),
        args.lat.abs(),
        args.lon.abs(),
        args.elevation_m
    );
    println!(
        "  sun azimuth          {:8.3}°  clockwise from true north",
        sun.azimuth_deg
    );
    println!(
        "  sun elevation        {:8.3}°  apparent (geometric {:.3}°){}",
        sun.elevation_deg,
        sun.geometric_elevation_deg,
        if sun.elevation_deg < 0.0 {
            "  - below the horizon"
        } else {
            ""
        }
    );
    println!(
        "  zenith e-vector      {:8.3}°  axis, perpendicular to the solar meridian",
        evector
    );
    println!(
        "  zenith polarization  {:8.2}   of the sky's maximum (Rayleigh; ≈{:.2} for a clear sky with dmax {TYPICAL_DMAX})",
        zenith_dop,
        zenith_dop * TYPICAL_DMAX
    );
    match decl {
        Some(d) => println!(
            "  magnetic declination {:+8.3}°  ±{:.2}° (WMM, east positive; true = magnetic + declination)",
            d.declination_deg, d.uncertainty_deg
        ),
        None => println!("  magnetic declination     none  (outside the WMM's validity)"),
    }
    let day_note = if day.polar_day {
        "  (sun up all day)"
    } else if day.polar_night {
        "  (sun down all day)"
    } else {
        ""
    };
    println!(
        "  {date} (mean solar date): sunrise {}, solar noon {} at {:.1}°, sunset {}{day_note}",
        fmt_time(day.sunrise),
        fmt_time(Some(day.solar_noon)),
        day.noon_elevation_deg,
        fmt_time(day.sunset),
    );
    Ok(0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flag_names_in_errors() {
        let e = flag_error(SkyError::Latitude(123.0));
        let msg = crate::cli::one_line(&e);
        assert!(msg.starts_with("--lat: latitude 123"), "{msg}");
        let e = flag_error(SkyError::Longitude(200.0));
        assert!(crate::cli::one_line(&e).starts_with("--lon"));
        let e = parse_at("yesterday").unwrap_err();
        assert!(crate::cli::one_line(&e).starts_with("--at: 'yesterday'"));
        assert!(parse_at("2026-06-21T10:30:00.250+02:00").is_ok());
    }
}
