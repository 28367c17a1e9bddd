//! Streaming circular statistics throughput: `cargo bench --bench circular`.
//!
//! Compare with astropy and scipy: `bash benches/stats_compare.sh` (astropy.stats.circstats.rayleightest
//! on the same number of angles).
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::circular::{HeadingAccumulator, describe_deg, effective_sample_size_deg};
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

fn streaming(c: &mut Criterion) {
    let data = headings(N);
    cpu_time_report(&data);
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
