//! The simulated rig: an animal on a tether, a heading sensor that prints lines, a motorized
//! turntable and an operator who marks flight stops.
//!
//! Everything is driven by the times the caller passes in (`drain(now_s)`, `poll(now_s)`): no
//! threads, no wall clock, one seeded generator, so a session at any speed is identical for a
//! seed. The simulated sensor formats every sample as a text line in its own unit
//! (`<raw>,<device ms>`) and the in-process source decodes it with the same [`Pipeline`] as the
//! real serial path.
//!
//! Flight state: the animal stops flying now and then; the sensor keeps reporting (the heading
//! then barely moves, as a real tethered animal hanging still would). As on a real rig, stops
//! are marked by the operator: the simulated operator sees each stop and each restart after
//! [`SimConfig::operator_reaction_s`] and reports it through [`SimOperator::poll`] as
//! [`OperatorAction::FlightStop`] / [`OperatorAction::FlightStart`] (the engine turns them into
//! its operator commands, so the rig does not depend on the engine); the true state is also available from
//! [`SimOperator::flying`]. [`in_process`] drops the operator (stops happen, nobody marks them);
//! [`in_process_with_operator`] returns it.

mod animal;
pub mod gps;

use super::config::DecoderConfig;
use super::decoder::Pipeline;
use super::{HeadingSource, RigError, SensorEvent, SensorHealth, Turntable, TurntableEvent};
use crate::frames::{SensorCalibration, SensorUnit, wrap_360_deg, wrap_signed_deg};
use crate::protocol::Cues;
pub use animal::{Shown, sky_target_deg};
use std::collections::VecDeque;
use std::sync::{Arc, Mutex, MutexGuard};

/// A mark the simulated operator makes, as a person at the rig would with a key.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OperatorAction {
    /// The animal stopped flying.
    FlightStop,
    /// The animal flies again.
    FlightStart,
}

/// What the simulated animal steers by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AnimalMode {
    /// A sky compass: holds its heading relative to the sun's azimuth while the sun is in view,
    /// else an axial heading relative to the e-vector shown (compensates arena turns), else
    /// drifts.
    #[default]
    Sky,
    /// Steers by the e-vector shown only (never by the sun's disc), else drifts.
    Polarization,
    /// Holds a heading relative to the arena (follows arena turns after a delay).
    Arena,
    /// Holds nothing: a random walk.
    None,
}

/// Everything the simulated rig does. Build with [`SimConfig::new`] and change fields.
pub struct SimConfig {
    /// Seed of the generator.
    pub seed: u64,
    /// What the animal steers by.
    pub animal_mode: AnimalMode,
    /// Sky and polarization: the preferred heading relative to the sun (from the seed);
    /// arena: the held arena heading; none: the start heading.
    pub goal_deg: f64,
    /// Sun azimuth (clockwise from true north) `t` session seconds after the start.
    pub sun_azimuth_deg: Box<dyn Fn(f64) -> f64 + Send>,
    /// Apparent sun elevation `t` session seconds after the start.
    pub sun_elevation_deg: Box<dyn Fn(f64) -> f64 + Send>,
    /// The rig's sky view limit: below this elevation the sun is out of the animal's view.
    pub sky_view_min_elevation_deg: f64,
    /// True bearing of the arena's 0 mark at the start.
    pub arena_mark_true_bearing_deg: f64,
    /// Sensor sample rate, Hz.
    pub rate_hz: f64,
    /// Quantization step of the raw value, in the sensor's unit (0 = none).
    pub quantization: f64,
    /// Standard deviation of the delay between a sample and its arrival, ms (delays only).
    pub jitter_ms: f64,
    /// How the simulated device maps arena heading to its raw value (unit, mirror, offset).
    pub sensor_calibration: SensorCalibration,
    /// What the decoder is told (a wrong rig file); `None` = the device's true calibration.
    pub decoder_calibration: Option<SensorCalibration>,
    /// Heading diffusion, degrees per square root of a second.
    pub heading_noise_deg_per_sqrt_s: f64,
    /// Time constant of the pull back toward the held heading, seconds.
    pub hold_time_constant_s: f64,
    /// Fast turns per minute of flight.
    pub saccades_per_min: f64,
    /// Typical size of a fast turn, degrees.
    pub saccade_size_deg: f64,
    /// Flight stops per hour of flight (0 = never stops).
    pub flight_stops_per_hour: f64,
    /// Shortest and longest stop, seconds.
    pub stop_duration_s: (f64, f64),
    /// An arena-steering animal notices an arena turn this late, seconds.
    pub reorient_delay_s: f64,
    /// The simulated operator marks a stop or restart this late, seconds.
    pub operator_reaction_s: f64,
    /// Turntable speed, degrees per second.
    pub turntable_speed_deg_per_s: f64,
    /// Delay of the turntable's reply after the motion ends, seconds.
    pub turntable_reply_delay_s: f64,
    /// Reply timeout of the (emulated) turntable driver; a stalled turntable faults after two.
    pub turntable_timeout_s: f64,
    /// Fraction of lines replaced by malformed ones.
    pub garbage_fraction: f64,
    /// The sensor goes silent (unplugged) at this session time, seconds.
    pub unplug_at_s: Option<f64>,
    /// For this long, seconds.
    pub unplug_for_s: f64,
    /// The turntable never replies.
    pub stall_turntable: bool,
    /// Loss declared after this much silence (the rig's `sensor.lost_after_s`).
    pub lost_after_s: f64,
}

impl SimConfig {
    /// Defaults: 100 Hz, 0.1 degree steps, 1 ms jitter, sky mode with a preferred heading
    /// relative to the sun drawn from the seed (uniform on the circle: each animal its own),
    /// sun fixed at azimuth 180 and elevation 45, arena mark at true 0, open horizon (values
    /// are ours, chosen to look like a steady flier, not measured).
    pub fn new(seed: u64) -> Self {
        let mut goal_rng = SimRng::new(seed.wrapping_mul(0x2545_F491_4F6C_DD1D).wrapping_add(13));
        Self {
            seed,
            animal_mode: AnimalMode::Sky,
            goal_deg: (360.0 * goal_rng.uniform()).round(),
            sun_azimuth_deg: Box::new(|_| 180.0),
            sun_elevation_deg: Box::new(|_| 45.0),
            sky_view_min_elevation_deg: 0.0,
            arena_mark_true_bearing_deg: 0.0,
            rate_hz: 100.0,
            quantization: 0.1,
            jitter_ms: 1.0,
            sensor_calibration: SensorCalibration::default(),
            decoder_calibration: None,
            heading_noise_deg_per_sqrt_s: 12.0,
            hold_time_constant_s: 2.0,
            saccades_per_min: 2.0,
            saccade_size_deg: 60.0,
            flight_stops_per_hour: 6.0,
            stop_duration_s: (4.0, 15.0),
            reorient_delay_s: 3.0,
            operator_reaction_s: 1.0,
            turntable_speed_deg_per_s: 30.0,
            turntable_reply_delay_s: 0.05,
            turntable_timeout_s: 10.0,
            garbage_fraction: 0.0,
            unplug_at_s: None,
            unplug_for_s: 5.0,
            stall_turntable: false,
            lost_after_s: 1.0,
        }
    }

    /// The decoder configuration the simulated sensor's lines need.
    pub fn decoder_config(&self) -> DecoderConfig {
        DecoderConfig {
            delimiter: ',',
            value_column: 1,
            time_column: Some(2),
            ..DecoderConfig::default()
        }
    }
}

/// A small seeded generator (SplitMix64; Steele, Lea & Flood 2014), enough for a simulation.
#[derive(Debug, Clone)]
pub struct SimRng(u64);

impl SimRng {
    /// A generator for a seed.
    pub fn new(seed: u64) -> Self {
        Self(seed ^ 0x5DEE_CE66_D1CE_4E5B)
    }
    /// Next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [0, 1).
    pub fn uniform(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Standard normal (Box–Muller).
    pub fn normal(&mut self) -> f64 {
        let u1 = 1.0 - self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
    /// Exponential with the given mean.
    pub fn exponential(&mut self, mean: f64) -> f64 {
        -mean * (1.0 - self.uniform()).ln()
    }
}

#[derive(Debug, Clone)]
struct Motion {
    id: u64,
    start_s: f64,
    end_s: f64,
    from_deg: f64,
    to_deg: f64,
    reply_s: f64,
    replied: bool,
}

/// The simulated world: animal, sensor, turntable and operator. Shared by the in-process
/// source, turntable and operator, and driven by the pseudo-terminal server of `skybearing sim`.
pub struct SimWorld {
    cfg: SimConfig,
    rng: SimRng,
    garbage_rng: SimRng,
    // animal
    heading_deg: f64,
    flying: bool,
    next_stop_s: f64,
    stop_end_s: f64,
    saccade_until_s: f64,
    saccade_rate_deg_per_s: f64,
    // sensor
    next_index: u64,
    last_arrival_s: f64,
    held: Option<(f64, String, bool)>,
    garbage_injected: u64,
    truth: Option<Vec<(u64, f64)>>,
    lines_sent: u64,
    // turntable
    motions: Vec<Motion>,
    last_id: u64,
    // operator
    marks: VecDeque<(f64, OperatorAction)>,
    /// What the operator has put over the arena (open sky until told).
    cues: Cues,
}

impl SimWorld {
    /// A world at session time 0.
    pub fn new(cfg: SimConfig) -> Self {
        let mut rng = SimRng::new(cfg.seed);
        let garbage_rng = SimRng::new(cfg.seed.wrapping_mul(31).wrapping_add(7));
        let bearing0 = cfg.arena_mark_true_bearing_deg;
        let heading_deg = match cfg.animal_mode {
            AnimalMode::Sky | AnimalMode::Polarization => (cfg.sun_azimuth_deg)(0.0) + cfg.goal_deg,
            AnimalMode::Arena => bearing0 + cfg.goal_deg,
            AnimalMode::None => cfg.goal_deg,
        };
        let next_stop_s = if cfg.flight_stops_per_hour > 0.0 {
            rng.exponential(3600.0 / cfg.flight_stops_per_hour)
        } else {
            f64::INFINITY
        };
        Self {
            cfg,
            rng,
            garbage_rng,
            heading_deg,
            flying: true,
            next_stop_s,
            stop_end_s: 0.0,
            saccade_until_s: f64::NEG_INFINITY,
            saccade_rate_deg_per_s: 0.0,
            next_index: 0,
            last_arrival_s: 0.0,
            held: None,
            garbage_injected: 0,
            truth: None,
            lines_sent: 0,
            motions: Vec::new(),
            last_id: 0,
            marks: VecDeque::new(),
            cues: Cues::OPEN_SKY,
        }
    }

    /// What the animal is shown at `t_s` under the cues in place.
    pub fn shown(&self, t_s: f64) -> Shown {
        let az = (self.cfg.sun_azimuth_deg)(t_s);
        let el = (self.cfg.sun_elevation_deg)(t_s);
        Shown {
            sun_azimuth_deg: az,
            sun_in_view: self
                .cues
                .sun_in_view(el, self.cfg.sky_view_min_elevation_deg),
            evector_deg: self.cues.evector_shown_deg(
                az,
                self.arena_bearing_deg(t_s),
                self.cfg.arena_mark_true_bearing_deg,
            ),
        }
    }

    /// The operator puts `cues` over the arena (a shade, a diffuser, a filter) from now on.
    pub fn set_cues(&mut self, cues: Cues) {
        self.cues = cues;
    }

    /// The configuration.
    pub fn config(&self) -> &SimConfig {
        &self.cfg
    }

    /// Malformed lines injected so far (among the lines handed out).
    pub fn garbage_injected(&self) -> u64 {
        self.garbage_injected
    }

    /// Starts keeping the true (unquantized) arena heading of every generated sample, by
    /// device time in ms (tests).
    pub fn keep_truth(&mut self) {
        self.truth.get_or_insert_with(Vec::new);
    }

    /// The kept truth: (device ms, arena heading).
    pub fn truth(&self) -> &[(u64, f64)] {
        self.truth.as_deref().unwrap_or(&[])
    }

    /// Lines handed out so far.
    pub fn lines_sent(&self) -> u64 {
        self.lines_sent
    }

    /// Whether the animal flew at the last generated sample.
    pub fn flying(&self) -> bool {
        self.flying
    }

    /// Arena rotation from the start position at `t_s`, degrees (clockwise positive).
    pub fn rotation_deg(&self, t_s: f64) -> f64 {
        let mut rot = 0.0;
        for m in &self.motions {
            if t_s >= m.end_s {
                rot = m.to_deg;
            } else if t_s > m.start_s {
                let f = (t_s - m.start_s) / (m.end_s - m.start_s);
                rot = m.from_deg + f * (m.to_deg - m.from_deg);
            } else {
                break;
            }
        }
        rot
    }

    /// True bearing of the arena mark at `t_s`.
    pub fn arena_bearing_deg(&self, t_s: f64) -> f64 {
        self.cfg.arena_mark_true_bearing_deg + self.rotation_deg(t_s)
    }

    /// The animal's true world heading at the last generated sample, [0, 360).
    pub fn world_heading_deg(&self) -> f64 {
        wrap_360_deg(self.heading_deg)
    }

    fn step_animal(&mut self, t_s: f64, dt: f64) {
        // Flight state.
        if self.flying && t_s >= self.next_stop_s {
            self.flying = false;
            let (lo, hi) = self.cfg.stop_duration_s;
            self.stop_end_s = t_s + lo + (hi - lo) * self.rng.uniform();
            self.marks.push_back((
                t_s + self.cfg.operator_reaction_s,
                OperatorAction::FlightStop,
            ));
        } else if !self.flying && t_s >= self.stop_end_s {
            self.flying = true;
            self.next_stop_s = t_s
                + self
                    .rng
                    .exponential(3600.0 / self.cfg.flight_stops_per_hour);
            self.marks.push_back((
                t_s + self.cfg.operator_reaction_s,
                OperatorAction::FlightStart,
            ));
        }
        let sigma = self.cfg.heading_noise_deg_per_sqrt_s;
        let noise = self.rng.normal();
        if !self.flying {
            self.heading_deg += 0.05 * sigma * dt.sqrt() * noise;
            return;
        }
        let target = match self.cfg.animal_mode {
            AnimalMode::Arena => {
                Some(self.arena_bearing_deg(t_s - self.cfg.reorient_delay_s) + self.cfg.goal_deg)
            }
            mode => sky_target_deg(mode, self.cfg.goal_deg, &self.shown(t_s), self.heading_deg),
        };
        let mut d = sigma * dt.sqrt() * noise;
        if let Some(target) = target {
            d += wrap_signed_deg(target - self.heading_deg)
                * (dt / self.cfg.hold_time_constant_s).min(1.0);
        }
        // Fast turns.
        let p = self.cfg.saccades_per_min / 60.0 * dt;
        if self.rng.uniform() < p && t_s >= self.saccade_until_s {
            let size = self.cfg.saccade_size_deg * (0.5 + self.rng.uniform());
            let sign = if self.rng.uniform() < 0.5 { -1.0 } else { 1.0 };
            let dur = 0.15;
            self.saccade_until_s = t_s + dur;
            self.saccade_rate_deg_per_s = sign * size / dur;
        }
        if t_s < self.saccade_until_s {
            d += self.saccade_rate_deg_per_s * dt;
        }
        self.heading_deg = wrap_360_deg(self.heading_deg + d);
    }

    fn format_raw(&self, raw: f64) -> String {
        let q = self.cfg.quantization;
        let decimals = if q > 0.0 {
            (-q.log10()).ceil().clamp(0.0, 9.0) as usize
        } else {
            6
        };
        format!("{raw:.decimals$}")
    }

    fn garbage_line(&mut self, raw_s: &str, ms: u64) -> String {
        let g = &mut self.garbage_rng;
        match g.next_u64() % 5 {
            0 => {
                const ALPHA: &[u8] = b"abcdefghijklmnopqrstuvwxyz#!?@*~ ";
                let n = 1 + (g.next_u64() % 30) as usize;
                let mut s = String::from("x");
                for _ in 0..n {
                    s.push(ALPHA[(g.next_u64() % ALPHA.len() as u64) as usize] as char);
                }
                s
            }
            1 => format!("NaN,{ms}"),
            2 => format!("1e12,{ms}"),
            3 => raw_s.to_string(),
            _ => format!("{raw_s},zz{ms}"),
        }
    }

    /// Generates the sensor lines (without terminator) whose arrival time is at or before
    /// `now_s`, with their arrival times, into `out`. Lines in an unplug window are lost.
    pub fn generate_lines(&mut self, now_s: f64, out: &mut Vec<(f64, String)>) {
        let period = 1.0 / self.cfg.rate_hz;
        loop {
            if let Some((t, _, _)) = &self.held {
                if *t > now_s {
                    return;
                }
                if let Some((t, line, garbage)) = self.held.take() {
                    self.lines_sent += 1;
                    if garbage {
                        self.garbage_injected += 1;
                    }
                    out.push((t, line));
                }
                continue;
            }
            let t_s = self.next_index as f64 * period;
            if t_s > now_s {
                return;
            }
            self.next_index += 1;
            self.step_animal(t_s, period);
            let arena = wrap_360_deg(self.heading_deg - self.arena_bearing_deg(t_s));
            let mut raw = self.cfg.sensor_calibration.raw_from_arena_heading(arena);
            let q = self.cfg.quantization;
            if q > 0.0 {
                raw = (raw / q).round() * q;
                let rev = match self.cfg.sensor_calibration.unit {
                    SensorUnit::Degrees => 360.0,
                    SensorUnit::Radians => std::f64::consts::TAU,
                    SensorUnit::Counts { per_rev } => per_rev,
                };
                if raw >= rev - q / 2.0 {
                    raw = 0.0;
                }
            }
            let delay = (self.cfg.jitter_ms / 1000.0 * self.rng.normal()).abs();
            let arrival = (t_s + delay).max(self.last_arrival_s);
            self.last_arrival_s = arrival;
            let ms = (t_s * 1000.0).round() as u64;
            let raw_s = self.format_raw(raw);
            let garbage = self.cfg.garbage_fraction > 0.0
                && self.garbage_rng.uniform() < self.cfg.garbage_fraction;
            if let Some(at) = self.cfg.unplug_at_s
                && arrival >= at
                && arrival < at + self.cfg.unplug_for_s
            {
                continue;
            }
            let line = if garbage {
                self.garbage_line(&raw_s, ms)
            } else {
                format!("{raw_s},{ms}")
            };
            if let Some(truth) = &mut self.truth {
                truth.push((ms, arena));
            }
            self.held = Some((arrival, line, garbage));
        }
    }

    /// Starts a turn (turntable command arriving at `now_s`). A repeated `id` is ignored, as the
    /// protocol asks. Returns false when the turntable is stalled (no motion, no reply).
    pub fn start_turn(&mut self, now_s: f64, id: u64, by_deg: f64) -> bool {
        if self.cfg.stall_turntable {
            return false;
        }
        if id != 0 && id <= self.last_id {
            if let Some(m) = self.motions.iter_mut().find(|m| m.id == id)
                && m.replied
            {
                m.replied = false;
                m.reply_s = m.reply_s.max(now_s);
            }
            return true;
        }
        self.last_id = self.last_id.max(id);
        let from = self.motions.last().map_or(0.0, |m| m.to_deg);
        let start = self.motions.last().map_or(now_s, |m| m.end_s.max(now_s));
        let end = start + by_deg.abs() / self.cfg.turntable_speed_deg_per_s;
        self.motions.push(Motion {
            id,
            start_s: start,
            end_s: end,
            from_deg: from,
            to_deg: from + by_deg,
            reply_s: end + self.cfg.turntable_reply_delay_s,
            replied: false,
        });
        true
    }

    /// Replies due at or before `now_s`: (time, id, position after the turn).
    pub fn due_replies(&mut self, now_s: f64, out: &mut Vec<(f64, u64, f64)>) {
        for m in &mut self.motions {
            if !m.replied && m.reply_s <= now_s {
                m.replied = true;
                out.push((m.reply_s, m.id, m.to_deg));
            }
        }
    }

    /// Operator marks due at or before `now_s`.
    pub fn due_marks(&mut self, now_s: f64, out: &mut Vec<(f64, OperatorAction)>) {
        while self.marks.front().is_some_and(|(t, _)| *t <= now_s) {
            if let Some(m) = self.marks.pop_front() {
                out.push(m);
            }
        }
    }
}

fn lock(w: &Mutex<SimWorld>) -> MutexGuard<'_, SimWorld> {
    w.lock().unwrap_or_else(|e| e.into_inner())
}

/// The in-process simulated sensor: lines from the world through the real decoder.
pub struct SimSource {
    world: Arc<Mutex<SimWorld>>,
    pipe: Pipeline,
    lines: Vec<(f64, String)>,
}

impl HeadingSource for SimSource {
    fn drain(&mut self, now_s: f64, out: &mut Vec<SensorEvent>) -> Result<(), RigError> {
        self.lines.clear();
        lock(&self.world).generate_lines(now_s, &mut self.lines);
        for (t, line) in &self.lines {
            self.pipe.line(*t, line.as_bytes(), out);
        }
        self.pipe.tick(now_s, out);
        Ok(())
    }

    fn health(&self) -> SensorHealth {
        self.pipe.health.health()
    }

    fn describe(&self) -> String {
        let w = lock(&self.world);
        format!(
            "simulated sensor @ {} Hz (seed {})",
            w.cfg.rate_hz, w.cfg.seed
        )
    }
}

/// The in-process simulated turntable. A stalled one faults after two driver timeouts, as the
/// serial driver would (timeout, one retry, timeout).
pub struct SimTurntable {
    world: Arc<Mutex<SimWorld>>,
    next_id: u64,
    stall_fault_s: Option<(f64, u64)>,
    replies: Vec<(f64, u64, f64)>,
}

impl Turntable for SimTurntable {
    fn start_turn(&mut self, now_s: f64, by_deg: f64) -> Result<(), RigError> {
        if !by_deg.is_finite() {
            return Err(RigError::Device {
                device: "simulated turntable".into(),
                message: format!("turn of {by_deg} deg is not a number"),
            });
        }
        self.next_id += 1;
        let mut w = lock(&self.world);
        if !w.start_turn(now_s, self.next_id, by_deg) {
            self.stall_fault_s = Some((now_s + 2.0 * w.cfg.turntable_timeout_s, self.next_id));
        }
        Ok(())
    }

    fn poll(&mut self, now_s: f64, out: &mut Vec<TurntableEvent>) -> Result<(), RigError> {
        self.replies.clear();
        let timeout = {
            let mut w = lock(&self.world);
            w.due_replies(now_s, &mut self.replies);
            w.cfg.turntable_timeout_s
        };
        for &(t_s, _, pos) in &self.replies {
            out.push(TurntableEvent::Done {
                t_s,
                position_deg: Some(pos),
            });
        }
        if let Some((t_s, id)) = self.stall_fault_s
            && t_s <= now_s
        {
            self.stall_fault_s = None;
            out.push(TurntableEvent::Fault {
                t_s,
                text: format!(
                    "no reply to turn {id} within {timeout} s, nor to the retry (simulated stall)"
                ),
            });
        }
        Ok(())
    }

    fn position_deg(&self, now_s: f64) -> Option<f64> {
        Some(lock(&self.world).rotation_deg(now_s))
    }

    fn describe(&self) -> String {
        "simulated turntable".into()
    }
}

/// The simulated operator (and the true flight state), for [`in_process_with_operator`].
#[derive(Clone)]
pub struct SimOperator {
    world: Arc<Mutex<SimWorld>>,
}

impl SimOperator {
    /// Flight stop and start marks the operator makes at or before `now_s`, with their times.
    pub fn poll(&mut self, now_s: f64, out: &mut Vec<(f64, OperatorAction)>) {
        lock(&self.world).due_marks(now_s, out);
    }

    /// The animal's true flight state at the last generated sample.
    pub fn flying(&self) -> bool {
        lock(&self.world).flying()
    }

    /// Malformed lines injected so far.
    pub fn garbage_injected(&self) -> u64 {
        lock(&self.world).garbage_injected()
    }

    /// The animal's true world heading at the last generated sample.
    pub fn world_heading_deg(&self) -> f64 {
        lock(&self.world).world_heading_deg()
    }

    /// The operator puts what an epoch's cues say over the arena (see [`SimWorld::set_cues`]).
    pub fn show(&mut self, cues: Cues) {
        lock(&self.world).set_cues(cues);
    }
}

/// A simulated sensor and turntable for accelerated in-process sessions (see the module notes).
pub fn in_process(cfg: SimConfig) -> (Box<dyn HeadingSource>, Box<dyn Turntable>) {
    let (s, t, _) = in_process_with_operator(cfg);
    (s, t)
}

/// Like [`in_process`], and the simulated operator who marks flight stops.
pub fn in_process_with_operator(
    cfg: SimConfig,
) -> (Box<dyn HeadingSource>, Box<dyn Turntable>, SimOperator) {
    let pipe = Pipeline::new(
        cfg.decoder_config(),
        cfg.decoder_calibration.unwrap_or(cfg.sensor_calibration),
        cfg.lost_after_s,
        0.0,
    );
    let world = Arc::new(Mutex::new(SimWorld::new(cfg)));
    (
        Box::new(SimSource {
            world: world.clone(),
            pipe,
            lines: Vec::new(),
        }),
        Box::new(SimTurntable {
            world: world.clone(),
            next_id: 0,
            stall_fault_s: None,
            replies: Vec::new(),
        }),
        SimOperator { world },
    )
}

#[cfg(test)]
mod tests;
