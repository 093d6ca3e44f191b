//! Which predicted wavenumbers an observed line list can reach.
//!
//! The matcher looks at a predicted line only when it lies within a window around
//! some observed line: as a candidate (within k combined standard uncertainties) or
//! in the density count of the chance probability (within ±W, W = F·k·u_max). Both
//! windows of an observed line of wavenumber σ and uncertainty u are inside
//! σ ± R·√(u² + U²), where R = max(F, 1)·k and U bounds the uncertainty of every
//! predicted line (model uncertainty included). Predicting only the lines inside
//! the union of these windows changes no result and saves most of the start-up
//! time when every compiled spectrum (10⁵ lines from the vacuum UV to 2.5 µm) is
//! matched against a short list.

/// The observed lines and the multiplier R of their windows; with a bound on the
/// predictions' uncertainty it gives the [`Reach`].
#[derive(Debug, Clone, PartialEq)]
pub struct ListReach {
    /// (σ, u) of each observed line, cm⁻¹.
    lines: Vec<(f64, f64)>,
    /// R, in combined standard uncertainties.
    factor: f64,
}

impl ListReach {
    /// The reach of observed lines `(σ, u)` (cm⁻¹) whose windows extend `factor`
    /// combined standard uncertainties (R = max(F, 1)·k of the matcher).
    pub fn new(lines: impl IntoIterator<Item = (f64, f64)>, factor: f64) -> ListReach {
        ListReach {
            lines: lines.into_iter().collect(),
            factor,
        }
    }

    /// The wavenumbers reached when no predicted line has a standard uncertainty
    /// above `max_prediction_uncertainty_cm1` (cm⁻¹).
    pub fn with_prediction_uncertainty(&self, max_prediction_uncertainty_cm1: f64) -> Reach {
        let u_pred = max_prediction_uncertainty_cm1;
        let mut intervals: Vec<(f64, f64)> = self
            .lines
            .iter()
            .map(|&(sigma, u)| {
                let half = self.factor * (u * u + u_pred * u_pred).sqrt();
                if half.is_finite() && sigma.is_finite() {
                    (sigma - half, sigma + half)
                } else {
                    // A line the matcher cannot place reaches nothing; one with an
                    // unbounded window reaches everything.
                    if sigma.is_finite() {
                        (f64::NEG_INFINITY, f64::INFINITY)
                    } else {
                        (f64::NAN, f64::NAN)
                    }
                }
            })
            .filter(|(low, high)| low <= high)
            .collect();
        intervals.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut merged: Vec<(f64, f64)> = Vec::with_capacity(intervals.len());
        for (low, high) in intervals {
            match merged.last_mut() {
                Some(last) if low <= last.1 => last.1 = last.1.max(high),
                _ => merged.push((low, high)),
            }
        }
        Reach { intervals: merged }
    }
}

/// A union of closed wavenumber intervals, cm⁻¹: what an observed list can reach.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    /// Sorted, disjoint.
    intervals: Vec<(f64, f64)>,
}

impl Reach {
    /// Whether `sigma_cm1` lies in one of the intervals.
    pub fn contains(&self, sigma_cm1: f64) -> bool {
        let after = self.intervals.partition_point(|&(low, _)| low <= sigma_cm1);
        after
            .checked_sub(1)
            .and_then(|i| self.intervals.get(i))
            .is_some_and(|&(_, high)| sigma_cm1 <= high)
    }

    /// The intervals, sorted and disjoint.
    pub fn intervals(&self) -> &[(f64, f64)] {
        &self.intervals
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn windows_merge_and_contain_what_they_should() {
        // Two lines 10 cm⁻¹ apart with windows of ±3·√(1 + 1) ≈ ±4.24: disjoint;
        // a third at 15 joins the second.
        let list = ListReach::new([(100.0, 1.0), (110.0, 1.0), (115.0, 1.0)], 3.0);
        let reach = list.with_prediction_uncertainty(1.0);
        assert_eq!(reach.intervals().len(), 2);
        let half = 3.0 * 2.0f64.sqrt();
        assert!(reach.contains(100.0 + half - 1e-9));
        assert!(!reach.contains(100.0 + half + 1e-9));
        assert!(reach.contains(112.5));
        assert!(reach.contains(115.0 + half));
        assert!(!reach.contains(0.0));
        assert!(!reach.contains(f64::NAN));
    }

    #[test]
    fn an_unbounded_window_reaches_everything_and_a_lost_line_nothing() {
        let reach = ListReach::new([(100.0, f64::INFINITY)], 3.0).with_prediction_uncertainty(0.0);
        assert!(reach.contains(1e9) && reach.contains(-1e9));
        let reach = ListReach::new([(f64::NAN, 1.0)], 3.0).with_prediction_uncertainty(0.0);
        assert!(!reach.contains(100.0));
    }
}
