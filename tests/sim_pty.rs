//! The simulated rig over real pseudo-terminals, read through the real serial code path
//! (`rig::open_sensor` / `rig::open_turntable` on the rig file the simulator writes).

use skybearing::clock::{Clock, RealClock};
use skybearing::rig::config::load_rig;
use skybearing::rig::pty::{PtyServer, SimNotice};
use skybearing::rig::sim::SimConfig;
use skybearing::rig::{SensorEvent, TurntableEvent, open_sensor, open_turntable};
use std::sync::Arc;
use std::sync::atomic::AtomicBool;
use std::time::Duration;

fn quiet(seed: u64) -> SimConfig {
    let mut cfg = SimConfig::new(seed);
    cfg.flight_stops_per_hour = 0.0;
    cfg
}

/// Serves `server` for `for_s` seconds on a thread; returns it with its notices.
fn serve(
    mut server: PtyServer,
    for_s: f64,
) -> std::thread::JoinHandle<(PtyServer, Vec<SimNotice>)> {
    std::thread::spawn(move || {
        let stop = AtomicBool::new(false);
        let mut notices = Vec::new();
        server
            .serve(&stop, Some(for_s), |_, n| notices.push(n.clone()))
            .unwrap();
        (server, notices)
    })
}

fn setup(
    cfg: SimConfig,
    lost_after_s: f64,
    timeout_s: f64,
) -> (tempfile::TempDir, PtyServer, skybearing::rig::config::Rig) {
    let dir = tempfile::tempdir().unwrap();
    let rig_path = dir.path().join("rig.toml");
    let mut server = PtyServer::new(cfg, &dir.path().join("rig")).unwrap();
    server.record = Some(Vec::new());
    server.world_mut().keep_truth();
    std::fs::write(&rig_path, server.rig_text(1, lost_after_s, timeout_s)).unwrap();
    let rig = load_rig(&rig_path).unwrap();
    (dir, server, rig)
}

#[test]
fn angles_come_back_within_quantization_and_garbage_is_counted_exactly() {
    let mut cfg = quiet(21);
    cfg.rate_hz = 200.0;
    cfg.garbage_fraction = 0.08;
    let q = cfg.quantization;
    let (_dir, server, rig) = setup(cfg, 1.0, 5.0);
    let clock = Arc::new(RealClock::start());
    let mut src = open_sensor(&rig, clock.clone()).unwrap();
    let (server, _) = serve(server, 2.0).join().unwrap();
    std::thread::sleep(Duration::from_millis(300));
    let mut ev = Vec::new();
    src.drain(clock.now_s(), &mut ev).unwrap();

    let sent = server.record.clone().unwrap();
    let garbage = server.world().garbage_injected();
    assert_eq!(server.dropped(), 0);
    assert!(sent.len() >= 390, "{} lines", sent.len());
    assert!(garbage >= 10, "{garbage} garbage lines");
    let malformed = ev
        .iter()
        .filter(|e| matches!(e, SensorEvent::Malformed { .. }))
        .count() as u64;
    let samples: Vec<(f64, f64, f64)> = ev
        .iter()
        .filter_map(|e| match e {
            SensorEvent::Sample {
                raw,
                arena_heading_deg,
                device_time_s,
                ..
            } => Some((*raw, *arena_heading_deg, device_time_s.unwrap())),
            _ => None,
        })
        .collect();
    assert_eq!(malformed, garbage, "every injected line counted, no other");
    assert_eq!(src.health().malformed, garbage);
    assert_eq!(samples.len() as u64 + malformed, sent.len() as u64);
    // Each sample against the simulator's true, unquantized arena heading.
    let truth: std::collections::HashMap<u64, f64> =
        server.world().truth().iter().copied().collect();
    for (raw, arena, dev_s) in &samples {
        let ms = (dev_s * 1000.0).round() as u64;
        let t = truth[&ms];
        let d = skybearing::frames::signed_difference_deg(t, *arena).abs();
        assert!(
            d <= q / 2.0 + 1e-9,
            "ms {ms}: true {t}, read {arena} (raw {raw})"
        );
    }
    assert!(!ev.iter().any(|e| matches!(e, SensorEvent::Lost { .. })));
}

#[test]
fn unplug_gives_lost_back_and_a_gap() {
    let mut cfg = quiet(4);
    cfg.unplug_at_s = Some(1.0);
    cfg.unplug_for_s = 1.5;
    let (_dir, server, rig) = setup(cfg, 0.3, 5.0);
    let clock = Arc::new(RealClock::start());
    let mut src = open_sensor(&rig, clock.clone()).unwrap();
    let handle = serve(server, 4.0);
    // Drain while serving, as the engine does.
    let mut ev = Vec::new();
    while !handle.is_finished() {
        std::thread::sleep(Duration::from_millis(20));
        src.drain(clock.now_s(), &mut ev).unwrap();
    }
    let (server, notices) = handle.join().unwrap();
    std::thread::sleep(Duration::from_millis(200));
    src.drain(clock.now_s(), &mut ev).unwrap();
    assert!(notices.contains(&SimNotice::Unplugged));
    assert!(notices.iter().any(|n| matches!(n, SimNotice::Replugged(_))));
    let marks: Vec<&SensorEvent> = ev
        .iter()
        .filter(|e| matches!(e, SensorEvent::Lost { .. } | SensorEvent::Back { .. }))
        .collect();
    assert_eq!(marks.len(), 2, "{marks:?}");
    let (SensorEvent::Lost { t_s: lost }, SensorEvent::Back { t_s: back }) = (marks[0], marks[1])
    else {
        panic!("{marks:?}")
    };
    // Device times of the samples read: none inside the unplug window, some after it.
    let dev: Vec<f64> = ev
        .iter()
        .filter_map(|e| match e {
            SensorEvent::Sample { device_time_s, .. } => *device_time_s,
            _ => None,
        })
        .collect();
    assert!(dev.iter().all(|d| !(1.0..2.5).contains(d)));
    assert!(dev.iter().any(|d| *d < 1.0));
    let after = dev.iter().filter(|d| **d >= 2.5).count();
    assert!(after > 50, "{after} samples after the replug");
    assert!(back - lost > 1.0, "lost {lost} back {back}");
    let h = src.health();
    assert_eq!(h.lost_periods, 1);
    assert!(!h.lost);
    // The reader reopened the same path by itself.
    assert!(src.describe().contains("reopened"), "{}", src.describe());
    drop(server);
}

#[test]
fn stalled_turntable_gives_a_fault_after_timeout_and_retry() {
    let mut cfg = quiet(2);
    cfg.stall_turntable = true;
    let (_dir, server, rig) = setup(cfg, 1.0, 0.3);
    let clock = Arc::new(RealClock::start());
    let mut tt = open_turntable(&rig, clock.clone()).unwrap();
    let handle = serve(server, 1.5);
    std::thread::sleep(Duration::from_millis(100));
    let t0 = clock.now_s();
    tt.start_turn(t0, 90.0).unwrap();
    let mut out = Vec::new();
    while clock.now_s() < t0 + 1.2 {
        std::thread::sleep(Duration::from_millis(10));
        tt.poll(clock.now_s(), &mut out).unwrap();
    }
    let (_server, notices) = handle.join().unwrap();
    assert_eq!(out.len(), 1, "{out:?}");
    let TurntableEvent::Fault { t_s, text } = &out[0] else {
        panic!("{out:?}")
    };
    assert!((t_s - (t0 + 0.6)).abs() < 1e-9, "{t_s} vs {t0}");
    assert!(text.contains("retry"), "{text}");
    // The driver sent the command twice (the first try and the one retry).
    let tries = notices
        .iter()
        .filter(|n| {
            matches!(
                n,
                SimNotice::TurnCommand {
                    accepted: false,
                    ..
                }
            )
        })
        .count();
    assert_eq!(tries, 2, "{notices:?}");
}

#[test]
fn turntable_turns_and_reports_done() {
    let mut cfg = quiet(2);
    cfg.turntable_speed_deg_per_s = 300.0;
    let (_dir, server, rig) = setup(cfg, 1.0, 2.0);
    let clock = Arc::new(RealClock::start());
    let mut tt = open_turntable(&rig, clock.clone()).unwrap();
    let handle = serve(server, 2.0);
    std::thread::sleep(Duration::from_millis(100));
    let t0 = clock.now_s();
    tt.start_turn(t0, -90.0).unwrap();
    let mut out = Vec::new();
    while out.is_empty() && clock.now_s() < t0 + 1.9 {
        std::thread::sleep(Duration::from_millis(10));
        tt.poll(clock.now_s(), &mut out).unwrap();
    }
    let _ = handle.join().unwrap();
    let [TurntableEvent::Done { t_s, position_deg }] = out[..] else {
        panic!("{out:?}")
    };
    assert_eq!(position_deg, Some(-90.0));
    // 90 deg at 300 deg/s plus a 50 ms reply delay, plus scheduling.
    assert!(t_s - t0 > 0.3 && t_s - t0 < 1.8, "{}", t_s - t0);
    assert_eq!(tt.position_deg(clock.now_s()), Some(-90.0));
}

#[test]
fn serial_turntable_fault_reply_and_retry_keeps_the_id() {
    use skybearing::rig::pty::Pty;
    // The test plays the device on the master side of a pseudo-terminal.
    let dev = Pty::open().unwrap();
    let dir = tempfile::tempdir().unwrap();
    let text = &skybearing::rig::config::filled_example()
        .replace("kind = \"manual\"", "kind = \"serial\"")
        .replace(
            "# path = \"/dev/ttyACM0\"",
            &format!("path = \"{}\"", dev.slave_path.display()),
        )
        .replace("# baud = 115200    ", "baud = 115200")
        .replace("# timeout_s = 30.0", "timeout_s = 0.3");
    let f = dir.path().join("rig.toml");
    std::fs::write(&f, text).unwrap();
    let rig = load_rig(&f).unwrap();
    let clock = Arc::new(RealClock::start());
    let mut tt = open_turntable(&rig, clock.clone()).unwrap();
    let read_lines = |dev: &Pty, wait_ms: u64| -> Vec<String> {
        std::thread::sleep(Duration::from_millis(wait_ms));
        let mut buf = [0u8; 512];
        let n = dev.read_some(&mut buf).unwrap();
        String::from_utf8_lossy(&buf[..n])
            .lines()
            .map(str::to_string)
            .collect()
    };
    assert_eq!(read_lines(&dev, 100), ["POS?"]);
    let t0 = clock.now_s();
    tt.start_turn(t0, 45.0).unwrap();
    assert_eq!(read_lines(&dev, 100), ["TURN 1 45.000"]);
    // No answer: after timeout_s the same line comes again.
    let mut out = Vec::new();
    while clock.now_s() < t0 + 0.35 {
        std::thread::sleep(Duration::from_millis(10));
        tt.poll(clock.now_s(), &mut out).unwrap();
    }
    assert!(out.is_empty());
    assert_eq!(read_lines(&dev, 50), ["TURN 1 45.000"]);
    // A reply to another id is ignored; the fault for this one is reported.
    dev.write_some(b"DONE 7 1.0\r\nFAULT 1 end switch reached\r\n")
        .unwrap();
    while out.is_empty() && clock.now_s() < t0 + 0.55 {
        std::thread::sleep(Duration::from_millis(10));
        tt.poll(clock.now_s(), &mut out).unwrap();
    }
    let [TurntableEvent::Fault { t_s, ref text }] = out[..] else {
        panic!("{out:?}")
    };
    assert!(t_s < t0 + 0.6);
    assert_eq!(text, "turntable reports: end switch reached");
    // The next turn gets a new id.
    tt.start_turn(clock.now_s(), -10.0).unwrap();
    assert_eq!(read_lines(&dev, 100), ["TURN 2 -10.000"]);
}
