//! Sun geometry per sample: `SunTrack::at` at 1 kHz steps (the session engine's path) and the
//! exact `sun_position`, reported as samples per second (criterion "elem/s").
//!
//! Run: `cargo bench --bench sky`. Compare with pvlib: `bash benches/sun_compare.sh`
//! (pvlib's numpy `spa_python`, ns per timestamp).
use chrono::{DateTime, Utc};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::sky::demo_site;
use skybearing::sky::sun::{SunTrack, sun_position};
use std::hint::black_box;

fn start() -> DateTime<Utc> {
    "2026-06-21T08:00:00.250Z".parse().unwrap()
}

fn sun_track_1khz(c: &mut Criterion) {
    let site = demo_site();
    let mut group = c.benchmark_group("sky");
    group.throughput(Throughput::Elements(1));
    group.bench_function("sun_track_at_1khz", |b| {
        let mut track = SunTrack::new(
            site.latitude_deg,
            site.longitude_deg,
            site.elevation_m,
            start(),
        )
        .unwrap();
        // Time keeps advancing across iterations, so node refills (one exact evaluation per
        // 60 s of session time) are included at their real rate.
        let mut t_s = 0.0_f64;
        b.iter(|| {
            t_s += 0.001;
            black_box(track.at(black_box(t_s)))
        })
    });
    group.bench_function("sun_position_exact", |b| {
        let mut t = start();
        let step = chrono::Duration::milliseconds(1);
        b.iter(|| {
            t += step;
            black_box(
                sun_position(
                    site.latitude_deg,
                    site.longitude_deg,
                    site.elevation_m,
                    black_box(t),
                )
                .unwrap(),
            )
        })
    });
    group.finish();
}

criterion_group! {
    name = benches;
    // No plots: criterion's plotters backend panics on machines without fonts.
    config = Criterion::default().without_plots();
    targets = sun_track_1khz
}
criterion_main!(benches);
