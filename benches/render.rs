//! Drawing one frame of the live screen on ratatui's TestBackend.
//!
//! The case that matters: 200×60 with an hour of history (7200 trace points, all in view with
//! the 60-minute span). Target: under 2 ms per frame, so that ~30 frames per second cost the
//! laptop little. Run: `cargo bench --bench render`.
//!
//! Each case is measured twice: wall time (criterion's default) and this thread's CPU time
//! (`CLOCK_THREAD_CPUTIME_ID`), which stays meaningful on a machine shared with other jobs.
use criterion::measurement::{Measurement, ValueFormatter};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use skybearing::engine::snapshot::Snapshot;
use skybearing::tui::sample::SnapshotBuilder;
use skybearing::tui::{UiState, draw};
use std::hint::black_box;

/// CPU time consumed by the calling thread, in nanoseconds.
fn thread_cpu_ns() -> u64 {
    let mut ts = libc::timespec {
        tv_sec: 0,
        tv_nsec: 0,
    };
    // SAFETY: `ts` is a valid, writable timespec; the clock id is a constant libc defines.
    let rc = unsafe { libc::clock_gettime(libc::CLOCK_THREAD_CPUTIME_ID, &mut ts) };
    if rc != 0 {
        return 0;
    }
    ts.tv_sec as u64 * 1_000_000_000 + ts.tv_nsec as u64
}

/// Criterion measurement of thread CPU time.
struct ThreadCpuTime;

struct NsFormatter;

impl ValueFormatter for NsFormatter {
    fn scale_values(&self, typical: f64, values: &mut [f64]) -> &'static str {
        let (factor, unit) = if typical < 1e3 {
            (1.0, "ns (cpu)")
        } else if typical < 1e6 {
            (1e-3, "µs (cpu)")
        } else {
            (1e-6, "ms (cpu)")
        };
        for v in values {
            *v *= factor;
        }
        unit
    }

    fn scale_throughputs(&self, _t: f64, _th: &Throughput, _values: &mut [f64]) -> &'static str {
        "ns (cpu)"
    }

    fn scale_for_machines(&self, _values: &mut [f64]) -> &'static str {
        "ns"
    }
}

impl Measurement for ThreadCpuTime {
    type Intermediate = u64;
    type Value = u64;
    fn start(&self) -> u64 {
        thread_cpu_ns()
    }
    fn end(&self, i: u64) -> u64 {
        thread_cpu_ns().saturating_sub(i)
    }
    fn add(&self, a: &u64, b: &u64) -> u64 {
        a + b
    }
    fn zero(&self) -> u64 {
        0
    }
    fn to_f64(&self, v: &u64) -> f64 {
        *v as f64
    }
    fn formatter(&self) -> &dyn ValueFormatter {
        &NsFormatter
    }
}

fn cases() -> Vec<(&'static str, Snapshot, u16, u16)> {
    let hour = SnapshotBuilder::hour_of_history().build();
    assert_eq!(hour.trace.len(), 7200);
    let prompt = SnapshotBuilder::hour_of_history().prompt(true).build();
    vec![
        ("draw_200x60_hour_history", hour.clone(), 200, 60),
        ("draw_80x24_hour_history", hour, 80, 24),
        ("draw_200x60_hour_history_prompt", prompt, 200, 60),
    ]
}

fn run<M: Measurement + 'static>(c: &mut Criterion<M>, suffix: &str) {
    // span index 4 = 60 minutes: every trace point is drawn.
    let ui = UiState {
        span_index: 4,
        ..UiState::default()
    };
    for (name, snap, w, h) in cases() {
        let mut terminal = Terminal::new(TestBackend::new(w, h)).expect("test backend");
        c.bench_function(&format!("{name}{suffix}"), |b| {
            b.iter(|| {
                terminal
                    .draw(|f| draw(f, black_box(&snap), black_box(&ui)))
                    .expect("draw");
            })
        });
    }
}

fn wall(c: &mut Criterion) {
    run(c, "");
}

fn cpu(c: &mut Criterion<ThreadCpuTime>) {
    run(c, "_cpu");
}

criterion_group!(wall_time, wall);
criterion_group! {
    name = cpu_time;
    config = Criterion::default().with_measurement(ThreadCpuTime);
    targets = cpu
}
criterion_main!(wall_time, cpu_time);
