//! Headless ingest as fast as possible with the archive written: pre-generated samples at
//! 1 kHz go through the whole engine (timeline, frames, sun track, summary, CSV append with
//! fsync once a second) into a temporary sessions folder. Target: at least 1,000,000 samples
//! per second on one core. Run: `cargo bench --bench ingest`.

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
    (0..SAMPLES)
        .map(|i| {
            let t_s = (i + 1) as f64 / RATE_HZ;
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
            epochs: vec![
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
            ],
        },
        rig: skybearing::rig::config::demo_rig(),
        start_utc: "2026-06-14T07:30:00Z".parse().expect("time"),
        speed: Speed::Max,
        seed: None,
        extra: serde_json::Value::Null,
    }
}

fn ingest(c: &mut Criterion) {
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
