//! Archive throughput: sample rows written per second (`SessionWriter::append_sample` into a
//! temporary folder, buffered writes included, fsync once at the end of each batch), rows read
//! per second (`read::for_each_sample`), and `SummaryBuilder::push` per sample.
//!
//! Run: `cargo bench --bench archive`.

use std::hint::black_box;
use std::time::{Duration, Instant};

use chrono::{DateTime, Utc};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::archive::{
    PlannedEpoch, SampleRow, SessionMeta, SessionStatus, SessionWriter, SiteMeta, SummaryBuilder,
    read,
};

fn epochs() -> Vec<PlannedEpoch> {
    (1..=6)
        .map(|i| PlannedEpoch {
            index: i,
            condition: "open sky".into(),
            turn_before_deg: if i == 1 { 0.0 } else { 90.0 },
            duration_s: 60.0,
        })
        .collect()
}

fn meta(id: &str) -> SessionMeta {
    SessionMeta {
        format_version: skybearing::archive::FORMAT_VERSION,
        id: id.into(),
        status: SessionStatus::Running,
        started_utc: "2026-06-14T09:30:00Z".parse().unwrap(),
        ended_utc: None,
        animal: "lm-07".into(),
        site: SiteMeta {
            name: "Larkfield Meadow (demo)".into(),
            latitude_deg: 52.1,
            longitude_deg: 0.4,
            elevation_m: 30.0,
            source: None,
        },
        time_zone: "UTC".into(),
        arena_mark_bearing_deg: 12.5,
        arena_mark_bearing_measured_deg: 12.5,
        arena_mark_reference: "true".into(),
        declination_deg: Some(1.0),
        protocol: serde_json::json!({}),
        epochs: epochs(),
        rig: serde_json::json!({}),
        program_version: skybearing::VERSION.into(),
        mode: "demo".into(),
        seed: None,
        end_reason: None,
        notes: 0,
        clock_offset_s: None,
        gps: None,
    }
}

/// Sample k of a 100 Hz session (realistic digits in every column).
fn row(k: u64) -> SampleRow {
    let t_s = k as f64 * 0.01;
    let epoch = ((t_s / 60.0) as usize % 6) + 1;
    let bearing = (12.5 + 90.0 * (epoch - 1) as f64) % 360.0;
    let world = (200.0 + 30.0 * (k as f64 * 0.0123).sin()).rem_euclid(360.0);
    let start: DateTime<Utc> = "2026-06-14T09:30:00Z".parse().unwrap();
    SampleRow {
        t_utc: start + chrono::Duration::milliseconds((k * 10) as i64),
        t_s,
        epoch,
        arena_heading_deg: (world - bearing).rem_euclid(360.0),
        arena_bearing_deg: bearing,
        world_heading_deg: world,
        sun_azimuth_deg: 121.234_567 + t_s * 0.004,
        sun_elevation_deg: 41.987_654,
        flying: true,
        scored: (t_s % 60.0) > 2.0,
        sun_relative_heading_deg: (world - 121.234_567 - t_s * 0.004).rem_euclid(360.0),
        zenith_evector_deg: 31.234_5,
        raw: (world * 10.0).round() / 10.0,
        sun_in_view: true,
        evector_shown_deg: Some(31.234_5),
    }
}

fn rows(n: u64) -> Vec<SampleRow> {
    (0..n).map(row).collect()
}

/// CPU time of the calling thread (user + system). The build machine is shared, so besides
/// wall time the benchmarks report this: it leaves out time the thread spent waiting for a CPU.
fn thread_cpu() -> Duration {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: clock_gettime writes into the timespec we pass.
    unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut ts) };
    Duration::new(ts.tv_sec as u64, ts.tv_nsec as u32)
}

fn write_rows(c: &mut Criterion) {
    let pool = rows(100_000);
    let mut g = c.benchmark_group("archive_write");
    g.throughput(Throughput::Elements(1));
    g.measurement_time(Duration::from_secs(8));
    g.bench_function("append_sample", |b| {
        b.iter_custom(|iters| {
            let tmp = tempfile::tempdir().unwrap();
            let mut w = SessionWriter::create(tmp.path(), &meta("bench")).unwrap();
            let start = Instant::now();
            for k in 0..iters {
                w.append_sample(&pool[(k % pool.len() as u64) as usize])
                    .unwrap();
            }
            w.sync_now().unwrap();
            let elapsed = start.elapsed();
            drop(w);
            elapsed
        })
    });
    g.bench_function("append_sample_thread_cpu", |b| {
        b.iter_custom(|iters| {
            let tmp = tempfile::tempdir().unwrap();
            let mut w = SessionWriter::create(tmp.path(), &meta("bench")).unwrap();
            let start = thread_cpu();
            for k in 0..iters {
                w.append_sample(&pool[(k % pool.len() as u64) as usize])
                    .unwrap();
            }
            w.flush().unwrap();
            let elapsed = thread_cpu() - start;
            drop(w);
            elapsed
        })
    });
    g.finish();
}

fn read_rows(c: &mut Criterion) {
    const N: u64 = 1_000_000;
    let tmp = tempfile::tempdir().unwrap();
    let mut w = SessionWriter::create(tmp.path(), &meta("bench_read")).unwrap();
    for k in 0..N {
        w.append_sample(&row(k)).unwrap();
    }
    w.sync_now().unwrap();
    let path = w.dir().join(skybearing::archive::SAMPLES_FILE);
    let mut g = c.benchmark_group("archive_read");
    g.throughput(Throughput::Elements(N));
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(10));
    g.bench_function("for_each_sample_1M", |b| {
        b.iter(|| {
            let mut sum = 0.0;
            let st = read::for_each_sample(&path, |s| sum += s.world_heading_deg).unwrap();
            assert_eq!(st.rows, N);
            black_box(sum)
        })
    });
    g.bench_function("for_each_sample_1M_thread_cpu", |b| {
        b.iter_custom(|iters| {
            let start = thread_cpu();
            for _ in 0..iters {
                let mut sum = 0.0;
                let st = read::for_each_sample(&path, |s| sum += s.world_heading_deg).unwrap();
                assert_eq!(st.rows, N);
                black_box(sum);
            }
            thread_cpu() - start
        })
    });
    // samples.columns: written at session close from samples.csv, read by batch.
    let dir = w.dir().to_path_buf();
    g.bench_function("write_columns_1M_thread_cpu", |b| {
        b.iter_custom(|iters| {
            let start = thread_cpu();
            for _ in 0..iters {
                let n = skybearing::archive::columns::write_columns(&dir).unwrap();
                assert_eq!(n, skybearing::archive::columns::Written::Rows(N));
            }
            thread_cpu() - start
        })
    });
    g.bench_function("read_columns_1M_thread_cpu", |b| {
        b.iter_custom(|iters| {
            let start = thread_cpu();
            for _ in 0..iters {
                let mut sum = 0.0;
                let r = skybearing::archive::columns::read_columns(&dir, |r| {
                    sum += r.world_heading_deg
                });
                assert_eq!(r, skybearing::archive::columns::ColumnsRead::Done(N));
                black_box(sum);
            }
            thread_cpu() - start
        })
    });
    g.finish();
    drop(w);
}

fn summary_push(c: &mut Criterion) {
    let pool = rows(100_000);
    let mut g = c.benchmark_group("archive_summary");
    g.throughput(Throughput::Elements(pool.len() as u64));
    g.sample_size(20);
    g.bench_function("summary_builder_push_100k", |b| {
        b.iter(|| {
            let mut sb = SummaryBuilder::new(&epochs());
            for r in &pool {
                sb.push(r);
            }
            black_box(sb.r_world())
        })
    });
    g.bench_function("summary_builder_push_100k_thread_cpu", |b| {
        b.iter_custom(|iters| {
            let start = thread_cpu();
            for _ in 0..iters {
                let mut sb = SummaryBuilder::new(&epochs());
                for r in &pool {
                    sb.push(r);
                }
                black_box(sb.r_world());
            }
            thread_cpu() - start
        })
    });
    g.finish();
}

criterion_group!(benches, write_rows, read_rows, summary_push);
criterion_main!(benches);
