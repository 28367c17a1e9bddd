use super::*;

fn err(text: &str) -> ProtocolError {
    match parse_protocol(text, "t.toml") {
        Ok(_) => panic!("expected an error for:\n{text}"),
        Err(e) => e,
    }
}

fn ok(text: &str) -> (Protocol, Vec<String>) {
    match parse_protocol(text, "t.toml") {
        Ok(p) => p,
        Err(e) => panic!("unexpected error {e} for:\n{text}"),
    }
}

const HEAD: &str = "name = \"t\"\nsettle_s = 5\n";

fn turns(p: &Protocol) -> Vec<f64> {
    p.epochs
        .iter()
        .skip(1)
        .map(|e| match e.arena {
            ArenaMove::TurnBy { deg } => deg,
            other => panic!("not a turn: {other:?}"),
        })
        .collect()
}

#[test]
fn single_epochs_get_defaults_and_indices_from_one() {
    let (p, w) = ok(&format!(
        "{HEAD}[[epochs]]\nduration_s = 60\n\n[[epochs]]\nduration_s = 30.5\nturn_deg = -90\ncondition = \"diffuser\"\nprompt = \"Place the diffuser\"\n"
    ));
    assert!(w.is_empty(), "{w:?}");
    assert_eq!(p.epochs.len(), 2);
    assert_eq!(p.epochs[0].index, 1);
    assert_eq!(p.epochs[1].index, 2);
    assert_eq!(p.epochs[0].condition, DEFAULT_CONDITION);
    assert_eq!(p.epochs[0].arena, ArenaMove::Stay);
    assert_eq!(p.epochs[1].arena, ArenaMove::TurnBy { deg: -90.0 });
    assert_eq!(p.epochs[1].prompt.as_deref(), Some("Place the diffuser"));
    assert_eq!(p.total_duration_s(), 90.5);
    assert_eq!(p.flight, FlightRules::default());
}

#[test]
fn cycle_sequence_turns_between_epochs_in_order() {
    let (p, _) = ok(&format!(
        "{HEAD}[[epochs]]\ncount = 6\nduration_s = 60\nturns = [90, 180, -90]\norder = \"cycle\"\nprompt = \"go\"\n"
    ));
    assert_eq!(p.epochs.len(), 6);
    assert_eq!(p.epochs[0].arena, ArenaMove::Stay);
    assert_eq!(turns(&p), vec![90.0, 180.0, -90.0, 90.0, 180.0]);
    // The prompt belongs to the first epoch of the sequence only.
    assert_eq!(p.epochs[0].prompt.as_deref(), Some("go"));
    assert!(p.epochs[1..].iter().all(|e| e.prompt.is_none()));
}

#[test]
fn order_defaults_to_cycle() {
    let (p, _) = ok(&format!(
        "{HEAD}[[epochs]]\ncount = 4\nduration_s = 60\nturns = [45, -45]\n"
    ));
    assert_eq!(turns(&p), vec![45.0, -45.0, 45.0]);
}

#[test]
fn shuffle_is_reproducible_for_a_seed_and_balanced_when_it_divides() {
    let text = |seed: u64| {
        format!(
            "{HEAD}[[epochs]]\ncount = 10\nduration_s = 60\nturns = [90, -90, 180]\norder = \"shuffle\"\nseed = {seed}\n"
        )
    };
    let (a, wa) = ok(&text(11));
    let (b, _) = ok(&text(11));
    assert!(wa.is_empty(), "{wa:?}");
    assert_eq!(a, b);
    let ta = turns(&a);
    for x in [90.0, -90.0, 180.0] {
        assert_eq!(ta.iter().filter(|&&t| t == x).count(), 3, "{ta:?}");
    }
    let differs = (12..30).any(|s| turns(&ok(&text(s)).0) != ta);
    assert!(differs, "the seed changes nothing");
}

#[test]
fn balanced_counts_are_equal_in_every_block() {
    let (p, _) = ok(&format!(
        "{HEAD}[[epochs]]\ncount = 9\nduration_s = 60\nturns = [90, -90, 180, 45]\norder = \"balanced\"\nseed = 3\n"
    ));
    let t = turns(&p);
    assert_eq!(t.len(), 8);
    for block in t.chunks(4) {
        for x in [90.0, -90.0, 180.0, 45.0] {
            assert_eq!(block.iter().filter(|&&v| v == x).count(), 1, "{t:?}");
        }
    }
}

#[test]
fn positions_become_goto_for_every_epoch() {
    let (p, _) = ok(&format!(
        "{HEAD}[[epochs]]\ncount = 4\nduration_s = 60\npositions = [0, 90, -90, 540]\norder = \"fixed\"\n"
    ));
    let got: Vec<ArenaMove> = p.epochs.iter().map(|e| e.arena).collect();
    assert_eq!(
        got,
        vec![
            ArenaMove::GoTo { position_deg: 0.0 },
            ArenaMove::GoTo { position_deg: 90.0 },
            ArenaMove::GoTo {
                position_deg: 270.0
            },
            ArenaMove::GoTo {
                position_deg: 180.0
            },
        ]
    );
    assert_eq!(p.positions_deg(), vec![0.0, 90.0, 270.0, 180.0]);
}

#[test]
fn sequence_first_move_comes_from_turn_deg() {
    let (p, _) = ok(&format!(
        "{HEAD}[[epochs]]\nduration_s = 60\n[[epochs]]\ncount = 2\nduration_s = 60\nturn_deg = 30\nturns = [60]\n"
    ));
    assert_eq!(p.epochs[1].arena, ArenaMove::TurnBy { deg: 30.0 });
    assert_eq!(p.epochs[2].arena, ArenaMove::TurnBy { deg: 60.0 });
}

#[test]
fn flight_rules_are_read() {
    let (p, _) = ok(&format!(
        "{HEAD}[flight]\npause_clock_when_stopped = true\nmin_flying_s = 40\nabort_after_stopped_s = 90\n[[epochs]]\nduration_s = 60\n"
    ));
    assert_eq!(
        p.flight,
        FlightRules {
            pause_clock_when_stopped: true,
            min_flying_s: Some(40.0),
            abort_after_stopped_s: Some(90.0),
        }
    );
}

// Bad files: each error is one line naming file, line and field.

fn assert_field(e: &ProtocolError, line: usize, field: &str, words: &str) {
    let text = e.to_string();
    assert!(!text.contains('\n'), "{text}");
    match e {
        ProtocolError::Field {
            file,
            line: l,
            field: f,
            message,
        } => {
            assert_eq!(file, "t.toml", "{text}");
            assert_eq!(*l, line, "{text}");
            assert_eq!(f, field, "{text}");
            assert!(message.contains(words), "{text}");
            assert!(
                text.starts_with(&format!("t.toml:{line}: {field}: ")),
                "{text}"
            );
        }
        other => panic!("not a field error: {other:?}"),
    }
}

#[test]
fn negative_duration() {
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 10\n\n[[epochs]]\nduration_s = -5\n"
    ));
    assert_field(&e, 7, "epochs[2].duration_s", "must be > 0 (got -5)");
}

#[test]
fn unknown_key() {
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 10\ndurration_s = 3\n"
    ));
    assert_field(&e, 5, "epochs[1].durration_s", "unknown key `durration_s`");
    let e = err(&format!(
        "{HEAD}[flight]\npause = true\n[[epochs]]\nduration_s = 3\n"
    ));
    assert_field(&e, 4, "flight.pause", "unknown key");
    let e = err(&format!(
        "{HEAD}colour = \"blue\"\n[[epochs]]\nduration_s = 3\n"
    ));
    assert_field(&e, 3, "colour", "unknown key");
}

#[test]
fn zero_epochs() {
    let e = err(&format!("{HEAD}epochs = []\n"));
    assert_field(&e, 3, "epochs", "no epochs");
    let e = err(HEAD);
    assert_field(&e, 3, "epochs", "no epochs");
}

#[test]
fn turn_not_a_number() {
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [90, \"left\"]\n"
    ));
    assert_field(
        &e,
        6,
        "epochs[1].turns[2]",
        "must be a number (got string \"left\")",
    );
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 3\nturn_deg = \"x\"\n"
    ));
    assert_field(&e, 5, "epochs[1].turn_deg", "must be a number");
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 3\nturn_deg = inf\n"
    ));
    assert_field(&e, 5, "epochs[1].turn_deg", "finite");
}

#[test]
fn shuffle_with_empty_turn_list() {
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = []\norder = \"shuffle\"\nseed = 1\n"
    ));
    assert_field(&e, 6, "epochs[1].turns", "empty list");
}

#[test]
fn other_bad_values() {
    let e = err("settle_s = 3\n[[epochs]]\nduration_s = 3\n");
    assert_field(&e, 1, "name", "missing");
    let e = err(&format!("{HEAD}[[epochs]]\ncount = 3\n"));
    assert_field(&e, 3, "epochs[1].duration_s", "missing");
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1]\norder = \"shufle\"\nseed = 1\n"
    ));
    assert_field(&e, 7, "epochs[1].order", "unknown variant");
    let e = err(&format!("{HEAD}[[epochs]]\ncount = 0\nduration_s = 10\n"));
    assert_field(&e, 4, "epochs[1].count", "must be >= 1 (got 0)");
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1]\norder = \"shuffle\"\n"
    ));
    assert_field(&e, 7, "epochs[1].seed", "needs a seed");
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1, 2, 3]\norder = \"fixed\"\n"
    ));
    assert_field(&e, 6, "epochs[1].turns", "exactly 2 values");
    let e = err(&format!(
        "{HEAD}[[epochs]]\ncount = 3\nduration_s = 10\nturns = [1, 2, 3]\norder = \"balanced\"\nseed = 2\n"
    ));
    assert_field(&e, 6, "epochs[1].turns", "multiple");
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 10\nturns = [90]\n"
    ));
    assert_field(&e, 5, "epochs[1].turns", "only allowed in a sequence");
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 10\nturn_deg = 9\ngo_to_deg = 9\n"
    ));
    assert_field(&e, 5, "epochs[1].turn_deg", "not both");
    let e = err("name = \"t\"\nsettle_s = -1\n[[epochs]]\nduration_s = 10\n");
    assert_field(&e, 2, "settle_s", "must be >= 0 (got -1)");
    let e = err(&format!(
        "{HEAD}[[epochs]]\nduration_s = 10\ncondition = \"  \"\n"
    ));
    assert_field(&e, 5, "epochs[1].condition", "empty");
}

#[test]
fn syntax_error_names_the_line() {
    let e = err(&format!("{HEAD}[[epochs]\nduration_s = 3\n"));
    assert_eq!(e.line(), Some(3), "{e}");
    assert!(e.to_string().starts_with("t.toml:3: "), "{e}");
}

// Warnings for legal but suspicious plans.

fn warns(text: &str) -> Vec<String> {
    ok(&format!("{HEAD}{text}")).1
}

#[test]
fn warns_about_short_epochs_after_turns() {
    let w = warns("[[epochs]]\nduration_s = 3\n[[epochs]]\nduration_s = 4\nturn_deg = 90\n");
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].starts_with("t.toml:6: epochs[2] (epoch 2): duration 4 s"),
        "{w:?}"
    );
    assert!(w[0].contains("settle window"), "{w:?}");
}

#[test]
fn warns_about_zero_turns() {
    let w = warns("[[epochs]]\nduration_s = 30\n[[epochs]]\nduration_s = 30\nturn_deg = 0\n");
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("turn of 0 deg"), "{w:?}");
    let w = warns(
        "[[epochs]]\nduration_s = 30\ngo_to_deg = 90\n[[epochs]]\nduration_s = 30\ngo_to_deg = 450\n",
    );
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("already there"), "{w:?}");
}

#[test]
fn warns_about_a_shuffle_that_cannot_balance() {
    let w = warns(
        "[[epochs]]\ncount = 9\nduration_s = 30\nturns = [90, -90, 180]\norder = \"shuffle\"\nseed = 4\n",
    );
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].starts_with("t.toml:6: epochs[1].turns: shuffle cannot balance"),
        "{w:?}"
    );
}

#[test]
fn warns_about_long_protocols_and_short_epochs_for_min_flying() {
    let w = warns("[[epochs]]\ncount = 5\nduration_s = 3600\nturns = [90]\n");
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("over 4 hours"), "{w:?}");
    assert!(w[0].contains("5 h 00 min 00 s"), "{w:?}");
    let w = warns("[flight]\nmin_flying_s = 100\n[[epochs]]\nduration_s = 60\n");
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(w[0].contains("always be extended"), "{w:?}");
}

#[test]
fn a_plain_protocol_draws_no_warning() {
    let w = warns(
        "[[epochs]]\ncount = 4\nduration_s = 120\nturns = [90, -90, 180]\norder = \"cycle\"\n",
    );
    assert!(w.is_empty(), "{w:?}");
}
