use super::*;

fn mean_deg(a: &[f64]) -> f64 {
    let (s, c) = a.iter().fold((0.0, 0.0), |(s, c), x| {
        (s + x.to_radians().sin(), c + x.to_radians().cos())
    });
    wrap_360_deg(s.atan2(c).to_degrees())
}

fn run(cfg: SimConfig, until_s: f64, step_s: f64) -> (Vec<SensorEvent>, Vec<TurntableEvent>) {
    let (mut s, mut t) = in_process(cfg);
    let mut ev = Vec::new();
    let mut tt = Vec::new();
    let mut now: f64 = 0.0;
    while now < until_s {
        now += step_s;
        s.drain(now, &mut ev).unwrap();
        t.poll(now, &mut tt).unwrap();
    }
    (ev, tt)
}

fn samples(ev: &[SensorEvent]) -> Vec<(f64, f64)> {
    ev.iter()
        .filter_map(|e| match e {
            SensorEvent::Sample {
                t_s,
                arena_heading_deg,
                ..
            } => Some((*t_s, *arena_heading_deg)),
            _ => None,
        })
        .collect()
}

#[test]
fn deterministic_regardless_of_step() {
    use crate::rig::source::event_time;
    let cut = |v: Vec<SensorEvent>| -> Vec<SensorEvent> {
        v.into_iter().filter(|e| event_time(e) <= 19.9).collect()
    };
    let a = cut(run(SimConfig::new(7), 20.0, 0.013).0);
    let b = cut(run(SimConfig::new(7), 20.0, 0.5).0);
    assert!(a == b, "{} vs {} events", a.len(), b.len());
    let c = cut(run(SimConfig::new(8), 20.0, 0.5).0);
    assert!(a != c);
    // 100 Hz over 20 s.
    assert!((1985..=1991).contains(&samples(&a).len()), "{}", a.len());
}

#[test]
fn garbage_counted_and_unplug_gives_lost_back_and_gap() {
    let mut cfg = SimConfig::new(3);
    cfg.garbage_fraction = 0.05;
    cfg.unplug_at_s = Some(10.0);
    cfg.unplug_for_s = 4.0;
    let (mut s, _t, op) = in_process_with_operator(cfg);
    let mut ev = Vec::new();
    let mut now: f64 = 0.0;
    while now < 30.0 {
        now += 0.1;
        s.drain(now, &mut ev).unwrap();
    }
    let malformed = ev
        .iter()
        .filter(|e| matches!(e, SensorEvent::Malformed { .. }))
        .count() as u64;
    assert!(malformed > 50);
    assert_eq!(malformed, op.garbage_injected());
    assert_eq!(s.health().malformed, malformed);
    let lost: Vec<_> = ev
        .iter()
        .filter(|e| matches!(e, SensorEvent::Lost { .. } | SensorEvent::Back { .. }))
        .collect();
    assert_eq!(lost.len(), 2, "{lost:?}");
    let (SensorEvent::Lost { t_s: tl }, SensorEvent::Back { t_s: tb }) = (lost[0], lost[1]) else {
        panic!("{lost:?}")
    };
    assert!((10.9..11.1).contains(tl), "{tl}");
    assert!((14.0..14.1).contains(tb), "{tb}");
    let gap = samples(&ev)
        .iter()
        .filter(|(t, _)| (10.0..14.0).contains(t))
        .count();
    assert_eq!(gap, 0);
}

#[test]
fn sky_animal_compensates_turns_arena_animal_does_not() {
    for mode in [AnimalMode::Sky, AnimalMode::Arena] {
        let mut cfg = SimConfig::new(11);
        cfg.animal_mode = mode;
        cfg.goal_deg = 90.0;
        cfg.flight_stops_per_hour = 0.0;
        cfg.saccades_per_min = 0.0;
        let (mut s, mut t) = in_process(cfg);
        let mut ev = Vec::new();
        let mut tt = Vec::new();
        let mut now: f64 = 0.0;
        while now < 60.0 {
            now += 0.05;
            if (now - 30.0).abs() < 0.025 {
                t.start_turn(now, 90.0).unwrap();
            }
            s.drain(now, &mut ev).unwrap();
            t.poll(now, &mut tt).unwrap();
        }
        assert_eq!(tt.len(), 1);
        let TurntableEvent::Done { t_s, position_deg } = tt[0] else {
            panic!()
        };
        assert!((t_s - 33.05).abs() < 0.06, "{t_s}");
        assert_eq!(position_deg, Some(90.0));
        let smp = samples(&ev);
        let before: Vec<f64> = smp
            .iter()
            .filter(|(t, _)| (10.0..30.0).contains(t))
            .map(|x| x.1)
            .collect();
        let after: Vec<f64> = smp
            .iter()
            .filter(|(t, _)| (45.0..60.0).contains(t))
            .map(|x| x.1)
            .collect();
        let mb = mean_deg(&before);
        let ma = mean_deg(&after);
        let shift = wrap_signed_deg(ma - mb);
        match mode {
            // Sun at 180, goal 90 right of the sun: world 270; arena heading 270 then 180.
            AnimalMode::Sky => assert!((shift + 90.0).abs() < 15.0, "{mode:?} {shift}"),
            _ => assert!(shift.abs() < 15.0, "{mode:?} {shift}"),
        }
    }
}

#[test]
fn stalled_turntable_faults_after_two_timeouts() {
    let mut cfg = SimConfig::new(1);
    cfg.stall_turntable = true;
    cfg.turntable_timeout_s = 2.0;
    let (_s, mut t) = in_process(cfg);
    t.start_turn(1.0, 90.0).unwrap();
    let mut tt = Vec::new();
    t.poll(4.9, &mut tt).unwrap();
    assert!(tt.is_empty());
    t.poll(5.0, &mut tt).unwrap();
    assert!(matches!(tt[..], [TurntableEvent::Fault { t_s, .. }] if t_s == 5.0));
}

#[test]
fn operator_marks_stops() {
    let mut cfg = SimConfig::new(5);
    cfg.flight_stops_per_hour = 120.0;
    let (mut s, _t, mut op) = in_process_with_operator(cfg);
    let mut ev = Vec::new();
    let mut marks = Vec::new();
    let mut now: f64 = 0.0;
    while now < 600.0 {
        now += 0.5;
        s.drain(now, &mut ev).unwrap();
        op.poll(now, &mut marks);
    }
    assert!(marks.len() >= 4, "{}", marks.len());
    for pair in marks.chunks(2) {
        assert_eq!(pair[0].1, OperatorAction::FlightStop);
        if pair.len() == 2 {
            assert_eq!(pair[1].1, OperatorAction::FlightStart);
            assert!(pair[1].0 - pair[0].0 >= 4.0 - 1e-9);
        }
    }
}

#[test]
fn a_wrong_mirror_in_the_rig_shows_as_a_mirrored_heading() {
    // The device is clockwise; the rig file wrongly says counterclockwise.
    let mut cfg = SimConfig::new(6);
    cfg.decoder_calibration = Some(SensorCalibration {
        direction: crate::frames::Direction::Counterclockwise,
        ..SensorCalibration::default()
    });
    cfg.flight_stops_per_hour = 0.0;
    cfg.quantization = 0.0;
    let truth_cfg = SimConfig::new(6);
    let (mut wrong, _) = in_process(cfg);
    let mut w = SimWorld::new(SimConfig {
        flight_stops_per_hour: 0.0,
        quantization: 0.0,
        ..truth_cfg
    });
    w.keep_truth();
    let mut ev = Vec::new();
    wrong.drain(2.0, &mut ev).unwrap();
    let mut lines = Vec::new();
    w.generate_lines(2.0, &mut lines);
    let got = samples(&ev);
    // The truth also holds the one sample generated but not yet arrived.
    assert!(got.len() >= 199 && w.truth().len() >= got.len());
    for ((_, read), (_, truth)) in got.iter().zip(w.truth()) {
        let d = wrap_signed_deg(*read + *truth);
        assert!(d.abs() < 1e-6, "read {read} truth {truth}");
    }
}

#[test]
fn quantized_counts_mirrored() {
    let mut cfg = SimConfig::new(2);
    cfg.sensor_calibration = SensorCalibration {
        unit: SensorUnit::Counts { per_rev: 4096.0 },
        direction: crate::frames::Direction::Counterclockwise,
        zero_offset_deg: 30.0,
    };
    cfg.quantization = 1.0;
    let mut w = SimWorld::new(cfg);
    let mut lines = Vec::new();
    w.generate_lines(1.0, &mut lines);
    for (_, l) in &lines {
        let raw: f64 = l.split(',').next().unwrap().parse().unwrap();
        assert_eq!(raw, raw.round());
        assert!((0.0..4096.0).contains(&raw));
    }
}

#[test]
fn each_seed_its_own_preferred_heading() {
    // Individual headings: the preferred sun-relative heading is drawn per seed, uniform on
    // the circle, so 24 animals cover every quadrant and have no common direction.
    let goals: Vec<f64> = (1..=24).map(|s| SimConfig::new(s).goal_deg).collect();
    for q in 0..4 {
        let lo = 90.0 * q as f64;
        assert!(
            goals.iter().any(|g| (lo..lo + 90.0).contains(g)),
            "quadrant {q}: {goals:?}"
        );
    }
    let (s, c) = goals.iter().fold((0.0, 0.0), |(s, c), g| {
        (s + g.to_radians().sin(), c + g.to_radians().cos())
    });
    assert!((s * s + c * c).sqrt() / 24.0 < 0.4, "{goals:?}");
    assert_eq!(SimConfig::new(5).goal_deg, SimConfig::new(5).goal_deg);
}
