//! Headless ingest as fast as possible with the archive written: pre-generated samples at
//! 1 kHz go through the whole engine (timeline, frames, sun track, summary, CSV append with
//! fsync once a second) into a temporary sessions folder. Target: at least 1,000,000 samples
//! per second on one core. Run: `cargo bench --bench ingest`.
//!
//! It also prints how the run time grows with the number of epochs: 10^6 samples at 100 Hz
//! (10,000 s) as one 10,000-s epoch and as 10,000 one-second epochs, the same samples through
//! the same engine with a snapshot published every 33 ms of wall time; the ratio of the two
//! run times should stay near 1 (it was about 10 while the summary was quadratic in epochs).

use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use skybearing::clock::SimClock;
use skybearing::engine::SnapshotCell;
use skybearing::engine::session::{Engine, EngineClock, SessionSetup, Speed, Wiring};
use skybearing::protocol::{ArenaMove, EpochPlan, FlightRules, Protocol};
use skybearing::rig::{
    HeadingSource, RigError, SensorEvent, SensorHealth, Turntable, TurntableEvent,
};
use std::sync::atomic::AtomicUsize;

const SAMPLES: usize = 1_000_000;
const RATE_HZ: f64 = 1000.0;

struct Replay {
    events: Vec<SensorEvent>,
    next: usize,
}

impl HeadingSource for Replay {
    fn drain(&mut self, now_s: f64, out: &mut Vec<SensorEvent>) -> Result<(), RigError> {
        while let Some(ev) = self.events.get(self.next) {
            let SensorEvent::Sample { t_s, .. } = ev else {
                unreachable!()
            };
            if *t_s > now_s {
                break;
            }
            out.push(ev.clone());
            self.next += 1;
        }
        Ok(())
    }
    fn health(&self) -> SensorHealth {
        SensorHealth::default()
    }
    fn describe(&self) -> String {
        "pre-generated samples".into()
    }
}

struct Still;

impl Turntable for Still {
    fn start_turn(&mut self, _: f64, _: f64) -> Result<(), RigError> {
        Ok(())
    }
    fn poll(&mut self, _: f64, _: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        Ok(())
    }
    fn describe(&self) -> String {
        "still".into()
    }
}

fn events() -> Vec<SensorEvent> {
    events_at(RATE_HZ)
}

fn events_at(rate_hz: f64) -> Vec<SensorEvent> {
    (0..SAMPLES)
        .map(|i| {
            let t_s = (i + 1) as f64 / rate_hz;
            let h = (40.0 + 15.0 * (t_s * 0.7).sin() + (i % 7) as f64 * 0.3).rem_euclid(360.0);
            SensorEvent::Sample {
                t_s,
                raw: h,
                arena_heading_deg: h,
                device_time_s: None,
            }
        })
        .collect()
}

fn setup(dir: &std::path::Path) -> SessionSetup {
    let duration_s = SAMPLES as f64 / RATE_HZ;
    let epochs = vec![
        EpochPlan {
            index: 1,
            duration_s: duration_s / 2.0,
            condition: "open sky".into(),
            arena: ArenaMove::Stay,
            prompt: None,
            cues: skybearing::protocol::Cues::OPEN_SKY,
        },
        EpochPlan {
            index: 2,
            duration_s: duration_s / 2.0 + 1.0,
            condition: "open sky".into(),
            arena: ArenaMove::Stay,
            prompt: None,
            cues: skybearing::protocol::Cues::OPEN_SKY,
        },
    ];
    setup_with(dir, epochs)
}

/// `count` epochs of `duration_s` each.
fn epochs_of(count: usize, duration_s: f64) -> Vec<EpochPlan> {
    (1..=count)
        .map(|index| EpochPlan {
            index,
            duration_s,
            condition: "open sky".into(),
            arena: ArenaMove::Stay,
            prompt: None,
            cues: skybearing::protocol::Cues::OPEN_SKY,
        })
        .collect()
}

fn setup_with(dir: &std::path::Path, epochs: Vec<EpochPlan>) -> SessionSetup {
    SessionSetup {
        mode: "demo".into(),
        animal: "bench".into(),
        sessions_dir: dir.to_path_buf(),
        protocol: Protocol {
            name: "ingest".into(),
            description: String::new(),
            settle_s: 0.0,
            flight: FlightRules::default(),
            sensor_loss: Default::default(),
            epochs,
        },
        rig: skybearing::rig::config::demo_rig(),
        start_utc: "2026-06-14T07:30:00Z".parse().expect("time"),
        speed: Speed::Max,
        seed: None,
        extra: serde_json::Value::Null,
        gps: None,
    }
}

/// Runs the engine over `evs` with `setup`; returns the samples written.
fn run_once(setup: SessionSetup, evs: &[SensorEvent]) -> u64 {
    let mut src = Replay {
        events: evs.to_vec(),
        next: 0,
    };
    let engine = Engine::new(setup).expect("engine");
    let (_tx, rx) = std::sync::mpsc::channel();
    let stop = AtomicUsize::new(0);
    let cell = SnapshotCell::new();
    let mut quiet = |_: &str| {};
    let out = engine
        .run(Wiring {
            sensor: &mut src,
            turntable: &mut Still,
            clock: EngineClock::Sim(SimClock::new()),
            cell: &cell,
            commands: &rx,
            stop: &stop,
            progress: &mut quiet,
            auto_confirm_after_s: None,
            sim_operator: None,
        })
        .expect("run");
    out.samples
}

/// Best-of-3 wall time of the same 10,000 s of samples as one epoch and as 10,000 epochs.
fn epochs_scaling_report() {
    let rate_hz = SAMPLES as f64 / 10_000.0;
    let evs = events_at(rate_hz);
    let mut best = [f64::INFINITY; 2];
    for _ in 0..3 {
        for (slot, epochs) in [epochs_of(1, 10_001.0), epochs_of(10_000, 1.0)]
            .into_iter()
            .enumerate()
        {
            let tmp = tempfile::tempdir().expect("tmp");
            let t0 = std::time::Instant::now();
            let n = run_once(setup_with(tmp.path(), epochs), &evs);
            best[slot] = best[slot].min(t0.elapsed().as_secs_f64());
            assert!(n as usize >= SAMPLES * 99 / 100, "{n} samples");
        }
    }
    println!(
        "ingest/epochs scaling, best of 3: 10^6 samples at {rate_hz} Hz as 1 epoch {:.2} s, as 10,000 one-second epochs {:.2} s (ratio {:.2})",
        best[0],
        best[1],
        best[1] / best[0]
    );
}

fn ingest(c: &mut Criterion) {
    epochs_scaling_report();
    let evs = events();
    let mut g = c.benchmark_group("ingest");
    g.sample_size(10);
    g.throughput(Throughput::Elements(SAMPLES as u64));
    g.bench_function("engine_with_archive_1M_samples", |b| {
        b.iter_batched(
            || {
                (
                    tempfile::tempdir().expect("tmp"),
                    Replay {
                        events: evs.clone(),
                        next: 0,
                    },
                )
            },
            |(tmp, mut src)| {
                let engine = Engine::new(setup(tmp.path())).expect("engine");
                let (_tx, rx) = std::sync::mpsc::channel();
                let stop = AtomicUsize::new(0);
                let cell = SnapshotCell::new();
                let mut quiet = |_: &str| {};
                let out = engine
                    .run(Wiring {
                        sensor: &mut src,
                        turntable: &mut Still,
                        clock: EngineClock::Sim(SimClock::new()),
                        cell: &cell,
                        commands: &rx,
                        stop: &stop,
                        progress: &mut quiet,
                        auto_confirm_after_s: None,
                        sim_operator: None,
                    })
                    .expect("run");
                assert_eq!(out.samples as usize, SAMPLES);
                tmp
            },
            criterion::BatchSize::PerIteration,
        )
    });
    g.finish();
}

criterion_group! {
    name = benches;
    config = Criterion::default().without_plots();
    targets = ingest
}
criterion_main!(benches);
