//! The timeline on its own: epoch clock, flight rules, prompts, manual turns and faults.

use super::*;
use crate::engine::testing::{FakeTable, epoch};
use crate::protocol::EpochPlan;

fn timeline(epochs: Vec<EpochPlan>, flight: FlightRules) -> Timeline {
    let protocol = Protocol {
        name: "test".into(),
        description: String::new(),
        settle_s: 2.0,
        flight,
        epochs,
    };
    Timeline::new(&protocol, 0.0)
}

fn started(e: &Timeline, k: usize) -> Option<f64> {
    e.epochs[k].started_s
}

fn cmd(e: &mut Timeline, t: f64, c: Command, tt: &mut FakeTable) {
    e.on_command(t, c, tt);
    e.drive_turn(tt);
}

/// What the loop does at `t`: turntable replies first, then the clock, then a pending turn.
fn advance(e: &mut Timeline, t: f64, tt: &mut FakeTable) {
    let mut buf = Vec::new();
    tt.poll(t, &mut buf).expect("poll");
    for ev in buf {
        e.on_turntable(ev);
        e.drive_turn(tt);
    }
    e.advance_to(t);
    e.drive_turn(tt);
}

#[test]
fn epoch_clock_pauses_while_not_flying() {
    let rules = FlightRules {
        pause_clock_when_stopped: true,
        ..Default::default()
    };
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 10.0, ArenaMove::Stay, None),
        ],
        rules,
    );
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    advance(&mut e, 3.0, &mut tt);
    cmd(&mut e, 3.0, Command::FlightStop, &mut tt);
    advance(&mut e, 8.0, &mut tt);
    cmd(&mut e, 8.0, Command::FlightStart, &mut tt);
    advance(&mut e, 14.9, &mut tt);
    assert_eq!(started(&e, 1), None, "3 s + 6.9 s of clock is not yet 10 s");
    advance(&mut e, 20.0, &mut tt);
    // 3 s before the stop + 7 s after it: the epoch ends at exactly 15 s.
    assert!((started(&e, 1).expect("epoch 2") - 15.0).abs() < 1e-9);
    assert_eq!(e.epochs[0].state, EpochState::Done);
}

#[test]
fn epoch_is_extended_until_it_has_enough_flying_time() {
    let rules = FlightRules {
        min_flying_s: Some(8.0),
        ..Default::default()
    };
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 5.0, ArenaMove::Stay, None),
        ],
        rules,
    );
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    cmd(&mut e, 2.0, Command::FlightStop, &mut tt);
    cmd(&mut e, 6.0, Command::FlightStart, &mut tt);
    advance(&mut e, 11.0, &mut tt);
    assert_eq!(started(&e, 1), None, "only 7 flying seconds at 11 s");
    advance(&mut e, 30.0, &mut tt);
    assert!((started(&e, 1).expect("epoch 2") - 12.0).abs() < 1e-9);
}

#[test]
fn session_aborts_after_too_long_without_flight() {
    let rules = FlightRules {
        abort_after_stopped_s: Some(5.0),
        ..Default::default()
    };
    let mut e = timeline(vec![epoch(1, 60.0, ArenaMove::Stay, None)], rules);
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    cmd(&mut e, 2.0, Command::FlightStop, &mut tt);
    advance(&mut e, 6.9, &mut tt);
    assert!(e.end.is_none());
    advance(&mut e, 9.0, &mut tt);
    assert_eq!(e.end.map(EndReason::status), Some("aborted"));
    assert!(
        (e.t_s - 7.0).abs() < 1e-9,
        "aborted at exactly 7 s, not {}",
        e.t_s
    );
}

#[test]
fn prompts_manual_turns_and_faults_wait_for_the_operator() {
    let mut e = timeline(
        vec![
            epoch(1, 5.0, ArenaMove::Stay, None),
            epoch(
                2,
                5.0,
                ArenaMove::TurnBy { deg: -90.0 },
                Some("place the diffuser"),
            ),
            epoch(3, 5.0, ArenaMove::TurnBy { deg: 90.0 }, None),
        ],
        FlightRules::default(),
    );
    let mut tt = FakeTable {
        manual: true,
        ..FakeTable::motor(0.0)
    };
    e.begin_epoch(0, 0.0, false);
    advance(&mut e, 6.0, &mut tt);
    assert!(matches!(
        &e.phase,
        Phase::Prompt {
            kind: PromptKind::Protocol,
            ..
        }
    ));
    advance(&mut e, 60.0, &mut tt);
    assert_eq!(started(&e, 1), None, "a prompt waits however long it takes");
    cmd(&mut e, 60.0, Command::ConfirmPrompt, &mut tt);
    assert!(matches!(
        &e.phase,
        Phase::Prompt {
            kind: PromptKind::ManualTurn { .. },
            ..
        }
    ));
    assert!(tt.commanded.is_empty(), "a manual table is never commanded");
    cmd(&mut e, 70.0, Command::ConfirmPrompt, &mut tt);
    assert_eq!(started(&e, 1), Some(70.0));
    assert!((e.position_deg + 90.0).abs() < 1e-9);
    // A motor that faults turns into a question to the operator.
    tt.manual = false;
    tt.fail = true;
    advance(&mut e, 75.5, &mut tt);
    advance(&mut e, 75.6, &mut tt);
    assert!(
        matches!(
            &e.phase,
            Phase::Prompt {
                kind: PromptKind::TurntableFault { .. },
                ..
            }
        ),
        "{:?}",
        e.phase
    );
    cmd(&mut e, 80.0, Command::ConfirmPrompt, &mut tt);
    assert_eq!(started(&e, 2), Some(80.0));
    assert!(e.position_deg.abs() < 1e-9);
}
