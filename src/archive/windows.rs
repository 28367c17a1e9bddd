//! The windows on both sides of a turn that the turn test compares (see
//! [`super::summary::SummaryBuilder`]): the first and the last [`TURN_WINDOW_S`] seconds of
//! scored world headings of each epoch, kept as sums of unit vectors per 0.1 s bin.

use crate::circular::{BIN_S, bin_index};
use crate::frames::wrap_360_deg;

/// Length of the window on each side of a turn, seconds of scored flight (our choice: long
/// enough to average out the heading's wobble, short enough to sit next to the turn).
pub const TURN_WINDOW_S: f64 = 30.0;
/// The least scored flight on each side of a turn for it to count, seconds.
pub const MIN_TURN_WINDOW_S: f64 = 5.0;

const WINDOW_BINS: usize = 300;

/// Unit-vector sums (cos, sin) of bins.
type Bins = Vec<(f64, f64)>;

/// First and last WINDOW_BINS bins of an epoch's scored world headings.
#[derive(Debug, Clone)]
pub(super) struct EdgeWindows {
    bin: Option<i64>,
    open: (f64, f64),
    open_n: u32,
    first: Vec<(f64, f64)>,
    last: Vec<(f64, f64)>,
    head: usize,
    closed: usize,
}

impl Default for EdgeWindows {
    fn default() -> Self {
        EdgeWindows {
            bin: None,
            open: (0.0, 0.0),
            open_n: 0,
            first: Vec::new(),
            last: vec![(0.0, 0.0); WINDOW_BINS],
            head: 0,
            closed: 0,
        }
    }
}

impl EdgeWindows {
    /// Adds a scored world heading at session time `t_s`.
    pub(super) fn push(&mut self, t_s: f64, angle_deg: f64) {
        let bin = bin_index(t_s);
        if self.bin != Some(bin) {
            self.close();
            self.bin = Some(bin);
        }
        let a = angle_deg.to_radians();
        self.open.0 += a.cos();
        self.open.1 += a.sin();
        self.open_n += 1;
    }

    fn close(&mut self) {
        if self.open_n == 0 {
            return;
        }
        let v = self.open;
        if self.first.len() < WINDOW_BINS {
            self.first.push(v);
        }
        self.head = (self.head + 1) % WINDOW_BINS;
        self.last[self.head] = v;
        self.closed += 1;
        self.open = (0.0, 0.0);
        self.open_n = 0;
    }

    /// Bins holding headings (the open one included).
    pub(super) fn bins(&self) -> usize {
        self.closed + usize::from(self.open_n > 0)
    }

    fn all_bins(&self) -> (Bins, Bins) {
        let mut first = self.first.clone();
        let mut last: Vec<(f64, f64)> = (0..self.closed.min(WINDOW_BINS))
            .map(|k| self.last[(self.head + WINDOW_BINS - k) % WINDOW_BINS])
            .collect();
        if self.open_n > 0 {
            if first.len() < WINDOW_BINS {
                first.push(self.open);
            }
            last.insert(0, self.open);
        }
        (first, last)
    }

    /// Mean heading of the first `w` bins, degrees.
    pub(super) fn first_mean_deg(&self, w: usize) -> Option<f64> {
        mean(self.all_bins().0.iter().take(w))
    }

    /// Mean heading of the last `w` bins, degrees.
    pub(super) fn last_mean_deg(&self, w: usize) -> Option<f64> {
        mean(self.all_bins().1.iter().take(w))
    }
}

fn mean<'a>(it: impl Iterator<Item = &'a (f64, f64)>) -> Option<f64> {
    let (c, s) = it.fold((0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1));
    if c.hypot(s) < 1e-9 {
        return None;
    }
    Some(wrap_360_deg(s.atan2(c).to_degrees()))
}

/// World shift across a turn from the last window before and the first window after, both of
/// length min(TURN_WINDOW_S, the scored flight of either epoch); None when either side holds
/// less than MIN_TURN_WINDOW_S.
pub(super) fn window_shift_deg(before: &EdgeWindows, after: &EdgeWindows) -> Option<f64> {
    let w = WINDOW_BINS.min(before.bins()).min(after.bins());
    if (w as f64) * BIN_S < MIN_TURN_WINDOW_S - 1e-9 {
        return None;
    }
    let a = before.last_mean_deg(w)?;
    let b = after.first_mean_deg(w)?;
    Some(crate::frames::wrap_signed_deg(b - a))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_take_the_edges() {
        let mut a = EdgeWindows::default();
        let mut b = EdgeWindows::default();
        // Epoch a: 100 s, heading 0 for 60 s then 40 for 40 s. The last 30 s are all at 40.
        for i in 0..10_000 {
            let t = i as f64 * 0.01;
            a.push(t, if t < 60.0 { 0.0 } else { 40.0 });
        }
        // Epoch b: first 30 s at 100, then 200.
        for i in 0..10_000 {
            let t = 200.0 + i as f64 * 0.01;
            b.push(t, if t < 230.0 { 100.0 } else { 200.0 });
        }
        assert!((window_shift_deg(&a, &b).unwrap() - 60.0).abs() < 1e-6);
        // Too little on one side.
        let mut c = EdgeWindows::default();
        for i in 0..300 {
            c.push(500.0 + i as f64 * 0.01, 10.0);
        }
        assert!(window_shift_deg(&a, &c).is_none());
    }
}
