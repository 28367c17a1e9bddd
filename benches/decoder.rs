//! Heading line decoder throughput, and the CPU cost of the serial reader thread at 1 kHz over
//! a pseudo-terminal.
//!
//! `cargo bench --bench decoder` runs both. The pseudo-terminal measurement serves the
//! simulated sensor at 1000 lines/s for `SKYBEARING_BENCH_PTY_S` seconds (default 10), reads it
//! with the real serial reader (`rig::open_sensor`), drains every 10 ms as the engine does, and
//! reads the reader thread's CPU time from /proc/self/task/<tid>/schedstat (Linux).

use criterion::{Criterion, Throughput};
use skybearing::clock::{Clock, RealClock};
use skybearing::frames::SensorCalibration;
use skybearing::rig::config::DecoderConfig;
use skybearing::rig::decoder::{LineDecoder, Pipeline};
use skybearing::rig::pty::PtyServer;
use skybearing::rig::sim::SimConfig;
use std::hint::black_box;
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

const LINES: usize = 100_000;

fn input() -> Vec<u8> {
    let mut s = String::with_capacity(LINES * 16);
    for i in 0..LINES {
        let deg = (i as f64 * 0.37) % 360.0;
        s.push_str(&format!("{deg:.1},{}\r\n", i * 10));
    }
    s.into_bytes()
}

fn cfg() -> DecoderConfig {
    DecoderConfig {
        time_column: Some(2),
        ..DecoderConfig::default()
    }
}

fn decoder(c: &mut Criterion) {
    let data = input();
    let mut g = c.benchmark_group("decoder");
    g.throughput(Throughput::Elements(LINES as u64));
    g.bench_function("line_decoder_100k_lines_4k_chunks", |b| {
        let mut out = Vec::with_capacity(LINES);
        b.iter(|| {
            let mut d = LineDecoder::new(cfg(), SensorCalibration::default());
            out.clear();
            for (i, chunk) in data.chunks(4096).enumerate() {
                d.feed(i as f64, chunk, &mut out);
            }
            black_box(out.len())
        })
    });
    g.bench_function("pipeline_100k_lines_one_line_per_read", |b| {
        // As the serial thread sees it at 1 kHz: one line per read, health and loss watch on.
        let lines: Vec<&[u8]> = data.split_inclusive(|&b| b == b'\n').collect();
        let mut out = Vec::with_capacity(LINES);
        b.iter(|| {
            let mut p = Pipeline::new(cfg(), SensorCalibration::default(), 1.0, 0.0);
            out.clear();
            for (i, l) in lines.iter().enumerate() {
                p.feed(i as f64 * 0.001, l, &mut out);
            }
            black_box(out.len())
        })
    });
    g.finish();
    let mut g = c.benchmark_group("sim");
    g.throughput(Throughput::Elements(60 * 100));
    g.bench_function("in_process_60s_at_100hz", |b| {
        b.iter(|| {
            let (mut s, _t) = skybearing::rig::sim::in_process(SimConfig::new(1));
            let mut out = Vec::with_capacity(6100);
            s.drain(60.0, &mut out).expect("drain");
            black_box(out.len())
        })
    });
    g.finish();
}

/// CPU nanoseconds of one thread of this process, by its name.
fn thread_cpu_ns(name: &str) -> Option<(u64, u64)> {
    for e in std::fs::read_dir("/proc/self/task").ok()?.flatten() {
        let comm = std::fs::read_to_string(e.path().join("comm")).unwrap_or_default();
        if comm.trim() == name {
            let s = std::fs::read_to_string(e.path().join("schedstat")).ok()?;
            let ns = s.split_whitespace().next()?.parse().ok()?;
            let tid = e.file_name().to_string_lossy().parse().ok()?;
            return Some((tid, ns));
        }
    }
    None
}

fn reader_cpu_over_pty() {
    let secs: f64 = std::env::var("SKYBEARING_BENCH_PTY_S")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(10.0);
    let dir = std::env::temp_dir().join(format!("skybearing-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut cfg = SimConfig::new(1);
    cfg.rate_hz = 1000.0;
    cfg.flight_stops_per_hour = 0.0;
    let mut server = PtyServer::new(cfg, &dir.join("rig")).expect("pseudo-terminals");
    let rig_path = dir.join("rig.toml");
    std::fs::write(&rig_path, server.rig_text(1, 1.0, 5.0)).expect("rig file");
    let rig = skybearing::rig::config::load_rig(&rig_path).expect("rig");
    let clock = Arc::new(RealClock::start());
    let mut src = skybearing::rig::open_sensor(&rig, clock.clone()).expect("open sensor");
    let stop = Arc::new(AtomicBool::new(false));
    let stop2 = stop.clone();
    let sim = std::thread::Builder::new()
        .name("sim-pty".into())
        .spawn(move || {
            server.serve(&stop2, None, |_, _| {}).expect("serve");
            server.remove_links();
        })
        .expect("sim thread");
    std::thread::sleep(Duration::from_millis(500));
    let mut ev = Vec::new();
    src.drain(clock.now_s(), &mut ev).expect("drain");
    ev.clear();
    let (_, r0) = thread_cpu_ns("sensor-serial").expect("reader thread");
    let (_, s0) = thread_cpu_ns("sim-pty").expect("sim thread");
    let drain0 = Instant::now();
    let mut drain_ns = 0u128;
    let wall = Instant::now();
    let mut samples = 0usize;
    while wall.elapsed().as_secs_f64() < secs {
        std::thread::sleep(Duration::from_millis(10));
        let t = Instant::now();
        src.drain(clock.now_s(), &mut ev).expect("drain");
        drain_ns += t.elapsed().as_nanos();
        samples += ev
            .iter()
            .filter(|e| matches!(e, skybearing::rig::SensorEvent::Sample { .. }))
            .count();
        ev.clear();
    }
    let elapsed = wall.elapsed().as_secs_f64();
    let (_, r1) = thread_cpu_ns("sensor-serial").expect("reader thread");
    let (_, s1) = thread_cpu_ns("sim-pty").expect("sim thread");
    let _ = drain0;
    stop.store(true, Ordering::Relaxed);
    let _ = sim.join();
    let _ = std::fs::remove_dir_all(&dir);
    let reader_ms = (r1 - r0) as f64 / 1e6;
    println!(
        "reader thread over pty at 1000 Hz: {reader_ms:.1} ms CPU in {elapsed:.1} s = {:.3} % of a core; {samples} samples ({:.0}/s); health {:?}",
        reader_ms / (elapsed * 1000.0) * 100.0,
        samples as f64 / elapsed,
        src.health()
    );
    println!(
        "  (engine-side drain every 10 ms: {:.1} ms = {:.3} %; simulator thread: {:.1} ms = {:.3} %)",
        drain_ns as f64 / 1e6,
        drain_ns as f64 / 1e6 / (elapsed * 1000.0) * 100.0,
        (s1 - s0) as f64 / 1e6,
        (s1 - s0) as f64 / 1e6 / (elapsed * 1000.0) * 100.0
    );
}

fn main() {
    let mut c = Criterion::default().without_plots().configure_from_args();
    decoder(&mut c);
    c.final_summary();
    reader_cpu_over_pty();
}
