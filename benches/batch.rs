//! Throughput of the batch core (one streaming pass per session, sessions in parallel) on
//! synthetic sessions written through the archive's own writer. The comparison with pandas on
//! 200 demo sessions is benches/batch_compare.sh.
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::analysis::batch::{Filters, run_batch, write_tables};
use skybearing::analysis::session::SampleSource;

#[path = "../tests/support/sessions.rs"]
mod batch_support;

fn batch(c: &mut Criterion) {
    let tmp = tempfile::tempdir().expect("temp dir");
    let root = tmp.path().join("sessions");
    const SESSIONS: usize = 4;
    const EPOCHS: usize = 10;
    const PER_EPOCH: usize = 5_000;
    for i in 0..SESSIONS {
        let mode = if i % 2 == 0 {
            batch_support::Mode::Sky
        } else {
            batch_support::Mode::Arena
        };
        batch_support::write_session(
            &root,
            &format!("bench-{i}"),
            &format!("lm-{i:02}"),
            "complete",
            mode,
            30.0 * i as f64,
            EPOCHS,
            PER_EPOCH,
        );
    }
    let roots = vec![root];
    let filters = Filters::default();
    let mut g = c.benchmark_group("batch");
    g.throughput(Throughput::Elements((SESSIONS * EPOCHS * PER_EPOCH) as u64));
    g.sample_size(10);
    // The sessions are written by the archive's writer alone, without samples.columns: this
    // times the CSV path.
    let read = || {
        run_batch(
            &roots,
            &filters,
            SampleSource::ColumnsIfValid,
            &|| {},
            &|_| {},
        )
        .expect("batch")
    };
    g.bench_function("read_and_summarise_4x50k_samples", |b| {
        b.iter(|| {
            let r = read();
            assert_eq!(r.sessions.len(), SESSIONS);
            r
        })
    });
    let result = read();
    let out = tmp.path().join("out");
    g.bench_function("write_tables_4_sessions", |b| {
        b.iter(|| write_tables(&result, &out).expect("tables"))
    });
    g.finish();
}

criterion_group!(benches, batch);
criterion_main!(benches);
