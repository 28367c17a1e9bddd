//! The epoch clock and the rules that stop it or end the session: advancing the timeline to
//! exact epoch ends, flying seconds, the flight and sensor-loss rules and their abort limits.

use super::{Phase, Timeline};
use crate::engine::setup::EndReason;
use crate::engine::snapshot::EpochState;

impl Timeline {
    /// Is the epoch clock running right now?
    pub(in crate::engine) fn clock_runs(&self) -> bool {
        let stopped_by_flight = !self.flying && self.flight.pause_clock_when_stopped;
        let stopped_by_loss = self.sensor_lost && self.sensor_loss.pause_clock;
        !self.paused && !stopped_by_flight && !stopped_by_loss
    }

    /// Do flying seconds count right now? (Not while paused, and not while the sensor is lost:
    /// seconds without headings are no flight data.)
    fn flight_counts(&self) -> bool {
        self.flying && !self.paused && !self.sensor_lost
    }

    /// When the session will be aborted if nothing changes, and why: the flight rules' limit
    /// on time without flight, or the sensor-loss rules' limit on time without data.
    pub(in crate::engine) fn abort_at(&self) -> Option<(f64, EndReason)> {
        let no_flight = match (self.flight.abort_after_stopped_s, self.stopped_since_s) {
            (Some(limit), Some(since)) if !self.flying => {
                Some((since + limit, EndReason::NoFlight))
            }
            _ => None,
        };
        let lost = match (self.sensor_loss.abort_after_s, self.lost_since_s) {
            (Some(limit), Some(since)) if self.sensor_lost => {
                Some((since + limit, EndReason::SensorLost))
            }
            _ => None,
        };
        match (no_flight, lost) {
            (Some(a), Some(b)) => Some(if b.0 < a.0 { b } else { a }),
            (a, b) => a.or(b),
        }
    }

    /// Advances the timeline to `t`, executing epoch ends (and the abort rule) at the exact
    /// instants they fall on.
    pub(in crate::engine) fn advance_to(&mut self, t: f64) {
        while t > self.t_s && self.end.is_none() {
            let from = self.t_s;
            // Abort rules: too long without flight, or without data from the sensor.
            let abort = self.abort_at();
            let abort_at = abort.map(|(at, _)| at);
            let end_at = match self.phase {
                Phase::Running { k } => {
                    let e = &self.epochs[k];
                    let runs = self.clock_runs();
                    let need_clock = (e.duration_s - e.clock_s).max(0.0);
                    let need_fly = match self.flight.min_flying_s {
                        Some(m) => (m - e.flying_s).max(0.0),
                        None => 0.0,
                    };
                    let fly_runs = self.flight_counts();
                    let clock_done_at = if need_clock == 0.0 {
                        Some(from)
                    } else if runs {
                        Some(from + need_clock)
                    } else {
                        None
                    };
                    let fly_done_at = if need_fly == 0.0 {
                        Some(from)
                    } else if fly_runs {
                        Some(from + need_fly)
                    } else {
                        None
                    };
                    match (clock_done_at, fly_done_at) {
                        (Some(a), Some(b)) => Some(a.max(b)),
                        _ => None,
                    }
                }
                _ => None,
            };
            let next_at = [end_at, abort_at]
                .into_iter()
                .flatten()
                .fold(f64::INFINITY, f64::min);
            let step_to = next_at.min(t).max(from);
            self.accrue(from, step_to);
            self.t_s = step_to;
            if step_to >= t && next_at > t {
                break;
            }
            if let Some((at, why)) = abort
                && at <= step_to
            {
                let detail = match why {
                    EndReason::SensorLost => format!(
                        "sensor lost for {:.0} s",
                        self.sensor_loss.abort_after_s.unwrap_or(0.0)
                    ),
                    _ => format!(
                        "no flight for {:.0} s",
                        self.flight.abort_after_stopped_s.unwrap_or(0.0)
                    ),
                };
                self.event(step_to, "abort", detail);
                self.finish_timeline(step_to, why);
                break;
            }
            if end_at.is_some_and(|a| a <= step_to)
                && let Phase::Running { k } = self.phase
            {
                self.end_epoch(k, step_to, EpochState::Done);
            }
            if step_to >= t {
                break;
            }
        }
    }

    pub(in crate::engine) fn accrue(&mut self, from: f64, to: f64) {
        let dt = to - from;
        if dt <= 0.0 {
            return;
        }
        if let Phase::Running { k } = self.phase {
            let runs = self.clock_runs();
            let counts = self.flight_counts();
            let e = &mut self.epochs[k];
            if runs {
                e.clock_s += dt;
            }
            if counts {
                e.flying_s += dt;
            }
        }
    }

    /// The sensor was lost (or came back) at `t`. While it is lost the sensor-loss rules apply:
    /// the epoch clock may stop, a due turn waits ([`Timeline::drive_turn`]) and the abort
    /// limit runs. A turn held while the sensor was lost starts when it is back.
    pub(in crate::engine) fn set_sensor_lost(&mut self, t: f64, lost: bool) {
        if lost == self.sensor_lost {
            return;
        }
        self.advance_to(t);
        self.sensor_lost = lost;
        if lost {
            self.lost_since_s = Some(t);
        } else {
            self.lost_since_s = None;
            if let Phase::Turning {
                since_s,
                commanded: false,
                ..
            } = &mut self.phase
            {
                *since_s = t;
            }
        }
    }

    pub(in crate::engine) fn set_flying(&mut self, t: f64, flying: bool) {
        if flying == self.flying {
            return;
        }
        self.advance_to(t);
        self.flying = flying;
        if flying {
            self.stopped_since_s = None;
            self.event(t, "flight_start", "");
        } else {
            self.stopped_since_s = Some(t);
            self.event(t, "flight_stop", "");
        }
    }
}
