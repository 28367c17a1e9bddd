//! The timeline on its own: epoch clock, flight rules, prompts, manual turns and faults.

use super::*;
use crate::engine::snapshot::{Command, TurnState};
use crate::engine::testing::{FakeTable, epoch};
use crate::protocol::EpochPlan;

fn timeline(epochs: Vec<EpochPlan>, flight: FlightRules) -> Timeline {
    let protocol = Protocol {
        name: "test".into(),
        description: String::new(),
        settle_s: 2.0,
        flight,
        sensor_loss: Default::default(),
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

fn next(e: &Timeline) -> (TurnState, Option<f64>, Option<f64>) {
    let n = e.next_turn();
    (n.state, n.deg, n.in_s)
}

#[test]
fn next_turn_is_right_while_running_turning_prompting_and_after_a_fault() {
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            // No turn before epoch 2: the countdown runs on to the turn before epoch 3.
            epoch(2, 10.0, ArenaMove::Stay, None),
            epoch(3, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
            epoch(
                4,
                10.0,
                ArenaMove::TurnBy { deg: -90.0 },
                Some("swap the filter"),
            ),
            epoch(5, 10.0, ArenaMove::Stay, None),
        ],
        FlightRules::default(),
    );
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    e.drive_turn(&mut tt);
    assert_eq!(next(&e), (TurnState::Counting, Some(90.0), Some(20.0)));
    advance(&mut e, 5.0, &mut tt);
    assert_eq!(next(&e), (TurnState::Counting, Some(90.0), Some(15.0)));
    cmd(&mut e, 5.0, Command::Pause, &mut tt);
    advance(&mut e, 8.0, &mut tt);
    assert_eq!(next(&e), (TurnState::ClockStopped, Some(90.0), Some(15.0)));
    cmd(&mut e, 8.0, Command::Resume, &mut tt);
    // Epoch 2 ends at 23 s (3 s paused), the turn takes 1 s.
    advance(&mut e, 23.5, &mut tt);
    assert_eq!(next(&e), (TurnState::UnderWay, Some(90.0), None), "turning");
    advance(&mut e, 26.0, &mut tt);
    assert_eq!(next(&e), (TurnState::Counting, Some(-90.0), Some(8.0)));
    advance(&mut e, 36.5, &mut tt);
    assert_eq!(
        next(&e),
        (TurnState::AwaitingOperator, Some(-90.0), None),
        "the protocol's prompt before the turn"
    );
    tt.fail = true;
    cmd(&mut e, 40.0, Command::ConfirmPrompt, &mut tt);
    advance(&mut e, 41.5, &mut tt);
    assert_eq!(
        next(&e),
        (TurnState::Fault, Some(-90.0), None),
        "{:?}",
        e.phase
    );
    cmd(&mut e, 45.0, Command::ConfirmPrompt, &mut tt);
    assert_eq!(
        next(&e),
        (TurnState::NoneLeft, None, None),
        "no turn after epoch 4"
    );
}

#[test]
fn sensor_loss_stops_the_epoch_clock_holds_the_turn_and_aborts_after_the_limit() {
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
            epoch(3, 500.0, ArenaMove::TurnBy { deg: 90.0 }, None),
        ],
        FlightRules::default(),
    );
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    advance(&mut e, 4.0, &mut tt);
    e.set_sensor_lost(4.0, true);
    advance(&mut e, 30.0, &mut tt);
    assert_eq!(next(&e), (TurnState::ClockStopped, Some(90.0), Some(6.0)));
    e.set_sensor_lost(30.0, false);
    advance(&mut e, 35.9, &mut tt);
    assert!(tt.commanded.is_empty(), "4 s + 5.9 s of clock: no turn yet");
    advance(&mut e, 36.0, &mut tt);
    assert_eq!(
        tt.commanded,
        vec![90.0],
        "the epoch was extended by the 26 s lost"
    );

    // Without the clock rule the epoch ends on time, but the turn waits for the sensor.
    e.sensor_loss.pause_clock = false;
    advance(&mut e, 37.0, &mut tt);
    assert_eq!(started(&e, 1), Some(37.0));
    e.set_sensor_lost(40.0, true);
    advance(&mut e, 50.0, &mut tt);
    assert_eq!(tt.commanded, vec![90.0], "not commanded while blind");
    assert_eq!(next(&e), (TurnState::HeldSensorLost, Some(90.0), None));
    assert!(e.take_events().iter().any(|ev| ev.kind == "turn_held"));
    e.set_sensor_lost(55.0, false);
    e.drive_turn(&mut tt);
    assert_eq!(
        tt.commanded,
        vec![90.0, 90.0],
        "commanded once the sensor is back"
    );
    advance(&mut e, 56.0, &mut tt);
    assert_eq!(started(&e, 2), Some(56.0));

    // Lost for good: the session ends at exactly the limit.
    e.set_sensor_lost(100.0, true);
    advance(&mut e, 500.0, &mut tt);
    assert_eq!(e.end, Some(EndReason::SensorLost));
    let limit = crate::protocol::SENSOR_LOSS_ABORT_DEFAULT_S;
    assert!((e.t_s - (100.0 + limit)).abs() < 1e-9, "{}", e.t_s);
}

#[test]
fn a_turn_made_while_the_sensor_is_lost_is_not_scored() {
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
        ],
        FlightRules::default(),
    );
    e.sensor_loss.hold_turns = false;
    e.sensor_loss.pause_clock = false;
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    e.set_sensor_lost(9.0, true);
    advance(&mut e, 10.5, &mut tt);
    advance(&mut e, 12.0, &mut tt);
    assert_eq!(tt.commanded, vec![90.0]);
    assert_eq!(e.unscored_turns, vec![1], "no heading just after the turn");
}

#[test]
fn after_a_fault_turns_go_by_hand_and_could_not_turn_is_recorded_and_unscored() {
    let mut e = timeline(
        vec![
            epoch(1, 10.0, ArenaMove::Stay, None),
            epoch(2, 10.0, ArenaMove::TurnBy { deg: 90.0 }, None),
            epoch(3, 10.0, ArenaMove::TurnBy { deg: -90.0 }, None),
            epoch(4, 10.0, ArenaMove::TurnBy { deg: 180.0 }, None),
        ],
        FlightRules::default(),
    );
    let mut tt = FakeTable {
        fail: true,
        ..FakeTable::motor(1.0)
    };
    e.begin_epoch(0, 0.0, false);
    advance(&mut e, 10.5, &mut tt);
    advance(&mut e, 11.0, &mut tt);
    assert_eq!(next(&e).0, TurnState::Fault);
    assert_eq!(e.turntable_faults, 1);
    cmd(&mut e, 12.0, Command::TurnsByHand, &mut tt);
    cmd(&mut e, 13.0, Command::CouldNotTurn, &mut tt);
    assert_eq!(started(&e, 1), Some(13.0));
    assert!(e.position_deg.abs() < 1e-9, "the arena stayed where it was");
    assert_eq!(e.unscored_turns, vec![1]);
    let kinds: Vec<_> = e.take_events().iter().map(|ev| ev.kind).collect();
    assert!(kinds.contains(&"turns_by_hand") && kinds.contains(&"turn_not_made"));
    // The next turn is a prompt at once: no command, no wait for the turntable's timeouts.
    advance(&mut e, 23.0, &mut tt);
    assert_eq!(
        tt.commanded,
        vec![90.0],
        "only the turn that faulted was commanded"
    );
    assert_eq!(next(&e), (TurnState::AwaitingOperator, Some(-90.0), None));
    cmd(&mut e, 30.0, Command::ConfirmPrompt, &mut tt);
    assert_eq!(started(&e, 2), Some(30.0));
    assert!((e.position_deg + 90.0).abs() < 1e-9);
    assert_eq!(e.unscored_turns, vec![1], "a turn made by hand is scored");
}

#[test]
fn abort_timer_runs_while_not_flying() {
    let rules = FlightRules {
        abort_after_stopped_s: Some(60.0),
        ..Default::default()
    };
    let mut e = timeline(vec![epoch(1, 600.0, ArenaMove::Stay, None)], rules);
    let mut tt = FakeTable::motor(1.0);
    e.begin_epoch(0, 0.0, false);
    assert_eq!(e.abort_at(), None, "flying: no abort timer");
    cmd(&mut e, 100.0, Command::FlightStop, &mut tt);
    assert_eq!(e.abort_at(), Some((160.0, EndReason::NoFlight)));
    e.set_sensor_lost(110.0, true);
    assert_eq!(
        e.abort_at(),
        Some((160.0, EndReason::NoFlight)),
        "the first to fire"
    );
    cmd(&mut e, 120.0, Command::FlightStart, &mut tt);
    let lost_limit = crate::protocol::SENSOR_LOSS_ABORT_DEFAULT_S;
    assert_eq!(
        e.abort_at(),
        Some((110.0 + lost_limit, EndReason::SensorLost))
    );
}
