//! Streaming circular statistics throughput: `cargo bench --bench circular`.
//!
//! Compare with tests/reference/bench_astropy_rayleigh.py (astropy.stats.circstats.rayleightest
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

fn streaming(c: &mut Criterion) {
    let data = headings(N);
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
