//! The loop's own handling of samples across turns, settling, pauses and flight stops
//! (the timeline's rules on their own are tested in `timeline/tests.rs`).

use super::*;
use crate::engine::snapshot::EpochState;
use crate::engine::testing::{FakeTable, epoch};
use crate::protocol::{ArenaMove, EpochPlan, FlightRules, Protocol};

fn engine(dir: &std::path::Path, epochs: Vec<EpochPlan>, flight: FlightRules) -> Engine {
    let protocol = Protocol {
        name: "test".into(),
        description: String::new(),
        settle_s: 2.0,
        flight,
        sensor_loss: Default::default(),
        epochs,
    };
    let setup = SessionSetup {
        mode: "demo".into(),
        animal: "t-01".into(),
        sessions_dir: dir.to_path_buf(),
        protocol,
        rig: crate::rig::config::demo_rig(),
        start_utc: "2026-06-14T07:30:00Z".parse().expect("time"),
        speed: Speed::Max,
        seed: None,
        extra: serde_json::Value::Null,
        gps: None,
    };
    Engine::new(setup).expect("engine")
}

fn started(e: &Engine, k: usize) -> Option<f64> {
    e.timeline.epochs[k].started_s
}

fn cmd(e: &mut Engine, t: f64, c: Command, tt: &mut FakeTable) {
    e.on_command(t, c, tt).expect("command");
    e.drive_turn(tt).expect("turn");
}

fn advance(e: &mut Engine, t: f64, tt: &mut FakeTable) {
    let mut buf = Vec::new();
    e.poll_turntable(t, tt, &mut buf).expect("poll");
    e.advance_to(t).expect("advance");
    e.drive_turn(tt).expect("turn");
}

#[test]
fn turns_settle_and_skip() {
    let tmp = tempfile::tempdir().expect("tmp");
    let mut e = engine(
        tmp.path(),
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
            epoch(
                3,
                10.0,
                ArenaMove::GoTo {
                    position_deg: 270.0,
                },
                None,
            ),
        ],
        FlightRules::default(),
    );
    let mut tt = FakeTable::motor(3.0);
    e.begin_epoch(0, 0.0, false).expect("begin");
    advance(&mut e, 10.5, &mut tt);
    assert!(
        matches!(e.timeline.phase, Phase::Turning { .. }),
        "turning after epoch 1"
    );
    assert_eq!(tt.commanded, vec![90.0]);
    // A sample mid-turn is recorded but not scored.
    e.on_sample(11.0, 0.0, 10.0, &tt).expect("sample");
    advance(&mut e, 13.5, &mut tt);
    assert!(
        (started(&e, 1).expect("epoch 2") - 13.0).abs() < 1e-9,
        "epoch 2 starts when the turn is done"
    );
    assert!((e.timeline.settle_until_s - 15.0).abs() < 1e-9);
    // GoTo 270 from 90 is the shortest way: +180.
    cmd(&mut e, 16.0, Command::SkipEpoch, &mut tt);
    assert_eq!(e.timeline.epochs[1].state, EpochState::Skipped);
    assert_eq!(tt.commanded, vec![90.0, 180.0]);
    let s = e.scoring.summary();
    assert_eq!(
        s.epochs.iter().map(|x| x.n).sum::<u64>(),
        0,
        "nothing scored yet"
    );
}

#[test]
fn scored_only_when_flying_running_and_settled() {
    let tmp = tempfile::tempdir().expect("tmp");
    let mut e = engine(
        tmp.path(),
        vec![epoch(1, 100.0, ArenaMove::TurnBy { deg: 90.0 }, None)],
        FlightRules::default(),
    );
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false).expect("begin");
    e.drive_turn(&mut tt).expect("turn");
    advance(&mut e, 1.5, &mut tt);
    // Turn done at 1 s, settle until 3 s.
    for (t, expect) in [(2.0, false), (3.5, true)] {
        advance(&mut e, t, &mut tt);
        e.on_sample(t, 0.0, 45.0, &tt).expect("sample");
        assert_eq!(e.scoring.summary().epochs[0].n, u64::from(expect), "at {t}");
    }
    cmd(&mut e, 4.0, Command::Pause, &mut tt);
    e.on_sample(4.5, 0.0, 45.0, &tt).expect("sample");
    cmd(&mut e, 5.0, Command::Resume, &mut tt);
    cmd(&mut e, 5.0, Command::FlightStop, &mut tt);
    e.on_sample(5.5, 0.0, 45.0, &tt).expect("sample");
    assert_eq!(
        e.scoring.summary().epochs[0].n,
        1,
        "paused and stopped samples are not scored"
    );
    // World heading = arena heading + mark bearing (true 0) + arena position (90).
    assert_eq!(e.last_sample.map(|s| s.world_heading_deg), Some(135.0));
}

#[test]
fn a_suspend_of_the_computer_is_marked_as_an_event() {
    // Issue 14 point 12: a suspended laptop left no trace. The real clock reports suspended
    // seconds; each new gap of half a second or more becomes one `suspended` event.
    let tmp = tempfile::tempdir().expect("tmp");
    let mut e = engine(
        tmp.path(),
        vec![epoch(1, 600.0, ArenaMove::Stay, None)],
        FlightRules::default(),
    );
    e.writer = Some(SessionWriter::create(tmp.path(), &e.meta).expect("writer"));
    e.note_suspend(10.0, 0.001).expect("no gap");
    e.note_suspend(130.0, 120.0).expect("gap");
    e.note_suspend(131.0, 120.2).expect("drift only");
    e.note_suspend(200.0, 150.0).expect("second gap");
    e.writer.as_mut().expect("writer").sync_now().expect("sync");
    let text = std::fs::read_to_string(e.session_dir().join("events.csv")).expect("events");
    let gaps: Vec<&str> = text.lines().filter(|l| l.contains(",suspended,")).collect();
    assert_eq!(gaps.len(), 2, "{text}");
    assert!(
        gaps[0].contains(",130.000000,") && gaps[0].contains("for 120.0 s"),
        "{text}"
    );
    assert!(gaps[1].contains("for 30.0 s"), "{text}");
}
