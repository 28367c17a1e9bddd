//! Per-second counts of inputs too many to log one by one (malformed sensor lines, samples a
//! burst could not stamp): one `events.csv` row per session second that had any, with the count.

/// Counts inputs within whole session seconds `[k, k + 1)`.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct SecondTally {
    /// The open second (its start, session seconds) and its count so far.
    open: Option<(f64, u64)>,
}

/// A second that has closed: report `count` inputs in `[start_s, start_s + 1)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct ClosedSecond {
    /// Start of the second, session seconds.
    pub(super) start_s: f64,
    /// Inputs counted in it.
    pub(super) count: u64,
}

impl ClosedSecond {
    /// When the row is written: the end of the second, or `at_most_s` if the session ended
    /// first (rows stay in time order either way).
    pub(super) fn row_time_s(&self, at_most_s: f64) -> f64 {
        (self.start_s + 1.0).min(at_most_s).max(self.start_s)
    }
}

impl SecondTally {
    /// Closes the open second if `t_s` lies past it.
    pub(super) fn due(&mut self, t_s: f64) -> Option<ClosedSecond> {
        match self.open {
            Some((start_s, count)) if t_s >= start_s + 1.0 => {
                self.open = None;
                Some(ClosedSecond { start_s, count })
            }
            _ => None,
        }
    }

    /// Counts one input at `t_s`. Call [`SecondTally::due`] with `t_s` first.
    pub(super) fn add(&mut self, t_s: f64) {
        match &mut self.open {
            Some((_, count)) => *count += 1,
            None => self.open = Some((t_s.floor(), 1)),
        }
    }

    /// Closes whatever is open (at the end of the session).
    pub(super) fn close(&mut self) -> Option<ClosedSecond> {
        self.open
            .take()
            .map(|(start_s, count)| ClosedSecond { start_s, count })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_one_row_per_second_that_had_any() {
        let mut t = SecondTally::default();
        let mut rows = Vec::new();
        for at in [0.1, 0.2, 0.9, 3.5, 3.6, 7.0] {
            rows.extend(t.due(at));
            t.add(at);
        }
        rows.extend(t.close());
        let got: Vec<(f64, u64)> = rows.iter().map(|r| (r.start_s, r.count)).collect();
        assert_eq!(got, [(0.0, 3), (3.0, 2), (7.0, 1)]);
        assert_eq!(rows[0].row_time_s(100.0), 1.0);
        assert_eq!(rows[2].row_time_s(7.25), 7.25);
        assert!(t.close().is_none());
    }
}
