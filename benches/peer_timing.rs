//! The Rust side of benches/sun_compare.sh and benches/stats_compare.sh: times one library
//! call over many inputs in this process's CPU time and prints one line of JSON, which the
//! Python driver (benches/peers/sky_stats_peers.py) sets beside pvlib's, astropy's and
//! scipy's timings of the same work.
//!
//!   cargo bench --bench peer_timing -- sun_exact N OUT     sun_position at N instants, 1 ms apart
//!   cargo bench --bench peer_timing -- sun_track N OUT     SunTrack::at at N instants, 1 ms apart
//!   cargo bench --bench peer_timing -- stats IN             HeadingAccumulator over IN's angles
//!
//! Instants start at 2026-06-21T08:00:00.250Z at the demo site (43.2170 N, 5.4420 E, 210 m).
//! OUT receives (azimuth, elevation) pairs as little-endian f64, for the agreement check; IN
//! holds headings in degrees as little-endian f64. Timing excludes reading and writing files.

use chrono::{DateTime, Utc};
use skybearing::circular::HeadingAccumulator;
use skybearing::sky::demo_site;
use skybearing::sky::sun::{SunTrack, sun_position};
use std::hint::black_box;

fn cpu_s() -> f64 {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: clock_gettime writes one timespec through a valid pointer.
    unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut ts) };
    ts.tv_sec as f64 + ts.tv_nsec as f64 * 1e-9
}

fn start() -> DateTime<Utc> {
    "2026-06-21T08:00:00.250Z".parse().expect("a valid instant")
}

fn write_pairs(path: &str, pairs: &[(f64, f64)]) {
    let mut bytes = Vec::with_capacity(pairs.len() * 16);
    for (a, b) in pairs {
        bytes.extend_from_slice(&a.to_le_bytes());
        bytes.extend_from_slice(&b.to_le_bytes());
    }
    std::fs::write(path, bytes).expect("writable output");
}

fn main() {
    let args: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .collect();
    let site = demo_site();
    let (lat, lon, h) = (site.latitude_deg, site.longitude_deg, site.elevation_m);
    match args.first().map(String::as_str) {
        Some(which @ ("sun_exact" | "sun_track")) => {
            let n: usize = args[1].parse().expect("N");
            let mut out = Vec::with_capacity(n);
            let t0 = cpu_s();
            if which == "sun_exact" {
                let step = chrono::Duration::milliseconds(1);
                let mut t = start();
                for _ in 0..n {
                    let p = sun_position(lat, lon, h, black_box(t)).expect("a valid site");
                    out.push((p.azimuth_deg, p.elevation_deg));
                    t += step;
                }
            } else {
                let mut track = SunTrack::new(lat, lon, h, start()).expect("a valid site");
                for i in 0..n {
                    let p = track.at(black_box(i as f64 * 0.001));
                    out.push((p.azimuth_deg, p.elevation_deg));
                }
            }
            let cpu = cpu_s() - t0;
            write_pairs(&args[2], &out);
            println!(
                "{{\"what\":\"{which}\",\"n\":{n},\"cpu_s\":{cpu},\"ns_each\":{}}}",
                cpu / n as f64 * 1e9
            );
        }
        Some("stats") => {
            let bytes = std::fs::read(&args[1]).expect("readable input");
            let angles: Vec<f64> = bytes
                .chunks_exact(8)
                .map(|c| f64::from_le_bytes(c.try_into().expect("8 bytes")))
                .collect();
            let t0 = cpu_s();
            let mut acc = HeadingAccumulator::new();
            for &a in &angles {
                acc.push_deg(a);
            }
            let (mean, r, p, n_eff) = (acc.mean_deg(), acc.r(), acc.rayleigh_p(), acc.n_eff());
            let cpu = cpu_s() - t0;
            println!(
                "{{\"what\":\"stats\",\"n\":{},\"cpu_s\":{cpu},\"ns_each\":{},\"mean_deg\":{},\"r\":{r},\"rayleigh_p\":{p},\"n_eff\":{n_eff}}}",
                angles.len(),
                cpu / angles.len() as f64 * 1e9,
                mean.unwrap_or(f64::NAN)
            );
        }
        _ => {
            eprintln!("usage: peer_timing sun_exact N OUT | sun_track N OUT | stats IN");
            std::process::exit(2);
        }
    }
}
