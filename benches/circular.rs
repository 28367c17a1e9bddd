//! Streaming circular statistics throughput: `cargo bench --bench circular`.
//!
//! Compare with astropy and scipy: `bash benches/stats_compare.sh` (astropy.stats.circstats.rayleightest
//! on the same number of angles).
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::archive::{EpochCache, PlannedEpoch, SummaryBuilder};
use skybearing::circular::{
    HeadingAccumulator, OrientationTracker, describe_deg, effective_sample_size_deg,
};
use std::hint::black_box;

const N: usize = 10_000_000;

/// Deterministic headings: a slowly wandering heading with jitter (SplitMix64 noise), in
/// degrees, like a long 100 Hz recording.
fn headings(n: usize) -> Vec<f64> {
    let mut state: u64 = 0x5EED;
    let mut next = || {
        state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut th = 120.0;
    (0..n)
        .map(|_| {
            th += (next() - 0.5) * 4.0;
            th + (next() - 0.5) * 20.0
        })
        .collect()
}

/// CPU time of this process in seconds (CLOCK_PROCESS_CPUTIME_ID). On a shared machine the
/// wall-clock figures criterion reports include time spent waiting for a core; CPU time is the
/// fairer figure to compare with the astropy script's `time.process_time`.
fn process_cpu_s() -> f64 {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: clock_gettime writes into the timespec we own; the clock id is a constant.
    let rc = unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut ts) };
    assert_eq!(rc, 0, "clock_gettime failed");
    ts.tv_sec as f64 + ts.tv_nsec as f64 * 1e-9
}

/// Best-of-7 CPU time per sample of push_deg over 10^7 angles then r, Rayleigh p and n_eff.
fn cpu_time_report(data: &[f64]) {
    let mut best = f64::INFINITY;
    for _ in 0..7 {
        let t0 = process_cpu_s();
        let mut acc = HeadingAccumulator::new();
        for &x in black_box(data) {
            acc.push_deg(x);
        }
        black_box((acc.r(), acc.rayleigh_p(), acc.n_eff(), acc.rayleigh_p_eff()));
        best = best.min(process_cpu_s() - t0);
    }
    println!(
        "circular/accumulator CPU time, best of 7: {:.1} ms per 10^7 angles, {:.2} ns/sample, {:.1} Msamples/s",
        best * 1e3,
        best / data.len() as f64 * 1e9,
        data.len() as f64 / best / 1e6
    );
}

/// Live cost of `p_oriented` at a 1 kHz sensor: best-of-7 CPU time per heading of
/// `OrientationTracker::push_deg` over 10 minutes of 1 kHz headings, per call of
/// `OrientationTracker::test` (what each snapshot pays, ~30 a second), and the same through the
/// whole live path (`SummaryBuilder::push_values` for every sample and `refresh_epochs` every
/// 33 ms, which tests the epoch that changed). Printed as a fraction of one core.
fn oriented_live_report(data: &[f64]) {
    const RATE_HZ: f64 = 1000.0;
    const SNAPSHOT_HZ: f64 = 30.0;
    let n = 600_000usize.min(data.len());
    let data = &data[..n];
    let per_snapshot = (RATE_HZ / SNAPSHOT_HZ) as usize;
    let best_of = |f: &mut dyn FnMut()| {
        let mut best = f64::INFINITY;
        for _ in 0..7 {
            let t0 = process_cpu_s();
            f();
            best = best.min(process_cpu_s() - t0);
        }
        best
    };
    let mut tracker = OrientationTracker::new();
    let push_s = best_of(&mut || {
        tracker = OrientationTracker::new();
        for (i, &x) in black_box(data).iter().enumerate() {
            tracker.push_deg(i as f64 / RATE_HZ, x);
        }
    });
    let tests = 20_000;
    let test_s = best_of(&mut || {
        for _ in 0..tests {
            black_box(black_box(&tracker).test());
        }
    });
    let plan = vec![PlannedEpoch {
        index: 1,
        condition: "open sky".into(),
        turn_before_deg: 0.0,
        duration_s: n as f64 / RATE_HZ,
    }];
    let live_s = best_of(&mut || {
        let mut b = SummaryBuilder::new(&plan);
        let mut cache = EpochCache::default();
        for (i, &x) in black_box(data).iter().enumerate() {
            b.push_values(1, i as f64 / RATE_HZ, x, 0.0, x, true);
            if i % per_snapshot == 0 {
                b.refresh_epochs(&mut cache);
            }
        }
        black_box(&cache.epochs);
    });
    let push_ns = push_s / n as f64 * 1e9;
    let test_ns = test_s / f64::from(tests) * 1e9;
    let core = (push_ns * RATE_HZ + test_ns * SNAPSHOT_HZ) * 1e-9;
    let live_core = live_s / (n as f64 / RATE_HZ);
    println!(
        "circular/p_oriented live cost, best of 7: push {push_ns:.1} ns/heading, test {test_ns:.0} ns/snapshot -> {:.3} % of a core at 1 kHz with 30 snapshots/s; whole live summary path (push_values + refresh_epochs) {:.3} % of a core",
        core * 100.0,
        live_core * 100.0
    );
}

fn streaming(c: &mut Criterion) {
    let data = headings(N);
    cpu_time_report(&data);
    oriented_live_report(&data);
    let mut g = c.benchmark_group("circular");
    g.sample_size(10);
    g.throughput(Throughput::Elements(N as u64));
    g.bench_function("accumulator_push_deg_1e7_then_r_rayleigh_p_n_eff", |b| {
        b.iter(|| {
            let mut acc = HeadingAccumulator::new();
            for &x in black_box(&data) {
                acc.push_deg(x);
            }
            black_box((acc.r(), acc.rayleigh_p(), acc.n_eff(), acc.rayleigh_p_eff()))
        })
    });
    g.bench_function("describe_deg_1e7", |b| {
        b.iter(|| black_box(describe_deg(black_box(&data))))
    });
    let ten_minutes = &data[..600_000];
    g.throughput(Throughput::Elements(ten_minutes.len() as u64));
    g.bench_function("oriented_tracker_push_1khz_10min_test_every_33", |b| {
        b.iter(|| {
            let mut t = OrientationTracker::new();
            let mut last = None;
            for (i, &x) in black_box(ten_minutes).iter().enumerate() {
                t.push_deg(i as f64 * 1e-3, x);
                if i % 33 == 0 {
                    last = t.test();
                }
            }
            black_box(last)
        })
    });
    let short = &data[..1 << 20];
    g.throughput(Throughput::Elements(short.len() as u64));
    g.bench_function("effective_sample_size_deg_2pow20", |b| {
        b.iter(|| black_box(effective_sample_size_deg(black_box(short))))
    });
    g.finish();
}

criterion_group! {
    name = benches;
    // No plots: criterion's plotters backend needs system fonts, which a bare machine lacks.
    config = Criterion::default().without_plots();
    targets = streaming
}
criterion_main!(benches);
