//! Finding the predicted lines within tolerance of an observed line by binary search.
//!
//! The tolerance of a pair is k·u_c with u_c = √(u_obs² + u_pred²), so it depends on
//! the predicted line. Searching the sorted predictions with the largest u_pred of
//! the whole set would make every window as wide as the worst-known line's; instead
//! the lines are split into classes whose uncertainties lie within a factor of two
//! (2^m ≤ u_pred < 2^(m+1), and a class for u_pred = 0), each kept sorted by
//! wavenumber. An observed line is searched in each class with that class's widest
//! window, then every line found is checked against its own tolerance. The cost is
//! O(C log N + found) per observed line for C classes (a few dozen at most), never
//! O(N).
//!
//! The binary searches start from where the previous observed line's search ended
//! (galloping: steps of 1, 2, 4, … away from that place, then bisection of the last
//! step), so a line list sorted by wavenumber, as line lists are, costs
//! O(log d) per search for a distance d between neighbours, and any order stays
//! correct.

use std::collections::BTreeMap;

use crate::levels::{Listing, Predictions};

/// Predicted lines of one uncertainty class, sorted by wavenumber.
#[derive(Debug, Default)]
struct UncertaintyClass {
    /// Largest u_pred in the class, cm⁻¹.
    max_uncertainty_cm1: f64,
    /// Wavenumbers, cm⁻¹, ascending.
    wavenumbers: Vec<f64>,
    /// u_pred of each line (model uncertainty included), cm⁻¹.
    uncertainties: Vec<f64>,
    /// Index of each line in `Predictions::lines()`.
    lines: Vec<u32>,
    /// How many non-rigorous selection rules each line counts as breaking in
    /// ranking: 0 for a line its compiled source lists, one more than it breaks for
    /// one the source does not list (kept here so that ranking needs no look-up in
    /// the full prediction list).
    broken_rules: Vec<u8>,
}

/// A search structure over a [`Predictions`] set.
#[derive(Debug)]
pub(super) struct CandidateIndex {
    classes: Vec<UncertaintyClass>,
    /// Every wavenumber of the set, ascending (for density counts).
    all_wavenumbers: Vec<f64>,
    /// Lowest and highest wavenumber predicted, cm⁻¹.
    span: Option<(f64, f64)>,
}

/// Where the previous searches ended, to start the next ones from.
#[derive(Debug, Clone)]
pub(super) struct Cursor {
    classes: Vec<usize>,
    all: (usize, usize),
}

/// The first index of `xs` whose value fails `below` (`below` must hold for a
/// prefix of `xs` and fail for the rest, as for `slice::partition_point`), found by
/// galloping from `hint`: steps of 1, 2, 4, … in the direction of the answer, then
/// bisection of the last step.
pub(super) fn partition_point_from(xs: &[f64], hint: usize, below: impl Fn(f64) -> bool) -> usize {
    let n = xs.len();
    let hint = hint.min(n);
    let holds = |i: usize| xs.get(i).is_some_and(|&x| below(x));
    if holds(hint) {
        // The answer lies after `hint`.
        let (mut known, mut step) = (hint, 1);
        loop {
            let probe = known.saturating_add(step);
            if probe >= n || !holds(probe) {
                let end = probe.min(n);
                let rest = xs.get(known + 1..end).unwrap_or_default();
                return known + 1 + rest.partition_point(|&x| below(x));
            }
            known = probe;
            step *= 2;
        }
    } else {
        // The answer is at or before `hint`.
        let (mut known, mut step) = (hint, 1);
        loop {
            let probe = known.saturating_sub(step);
            if probe == 0 || holds(probe) {
                let rest = xs.get(probe..known).unwrap_or_default();
                return probe + rest.partition_point(|&x| below(x));
            }
            known = probe;
            step *= 2;
        }
    }
}

/// A predicted line found within tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Hit {
    /// Index in `Predictions::lines()`.
    pub line: usize,
    /// σ_obs − σ_pred, cm⁻¹.
    pub deviation_cm1: f64,
    /// √(u_obs² + u_pred²), cm⁻¹, model uncertainty included.
    pub combined_uncertainty_cm1: f64,
    /// Non-rigorous selection rules the line breaks (intercombination, L-forbidden,
    /// jump-forbidden or two-electron-jump), 0 to 3.
    pub broken_rules: u8,
}

impl CandidateIndex {
    /// Build the index. Each line's uncertainty is its own combined in quadrature with
    /// the model uncertainty of its species.
    pub fn new(predictions: &Predictions) -> CandidateIndex {
        let model: std::collections::HashMap<_, _> = predictions
            .species()
            .iter()
            .map(|s| (s.species, s.model_uncertainty_cm1))
            .collect();
        let mut classes: BTreeMap<i32, UncertaintyClass> = BTreeMap::new();
        let lines = predictions.lines();
        for (index, line) in lines.iter().enumerate() {
            let model_u = model.get(&line.species).copied().unwrap_or(0.0);
            let u = (line.uncertainty_cm1.powi(2) + model_u.powi(2)).sqrt();
            let key = if u > 0.0 {
                u.log2().floor() as i32
            } else {
                i32::MIN
            };
            let class = classes.entry(key).or_default();
            class.max_uncertainty_cm1 = class.max_uncertainty_cm1.max(u);
            class.wavenumbers.push(line.wavenumber_cm1);
            class.uncertainties.push(u);
            class.lines.push(index as u32);
            // The rule penalty is a prior against lines too weak to be seen. A line
            // that the compiled spectrum's source lists is known to be seen: no
            // penalty (its flags are still reported). One it does not list is a
            // Ritz combination the compilation does not report: one rule more.
            let broken = match line.listing {
                Listing::Listed => 0,
                Listing::NotListed => line.flags.broken() + 1,
                Listing::NotConsulted => line.flags.broken(),
            };
            class.broken_rules.push(broken);
        }
        CandidateIndex {
            classes: classes.into_values().collect(),
            all_wavenumbers: lines.iter().map(|l| l.wavenumber_cm1).collect(),
            span: predictions.span_cm1(),
        }
    }

    /// A search state: where the last search in each class (and in the whole set)
    /// ended.
    pub fn cursor(&self) -> Cursor {
        Cursor {
            classes: vec![0; self.classes.len()],
            all: (0, 0),
        }
    }

    /// Every predicted line with |σ_obs − σ_pred| ≤ k·√(u_obs² + u_pred²), pushed
    /// onto `hits` (cleared first), in no particular order.
    pub fn search(
        &self,
        cursor: &mut Cursor,
        sigma_obs: f64,
        u_obs: f64,
        k: f64,
        hits: &mut Vec<Hit>,
    ) {
        hits.clear();
        if !(sigma_obs.is_finite() && u_obs.is_finite()) {
            return;
        }
        for (class, hint) in self.classes.iter().zip(cursor.classes.iter_mut()) {
            // √(a² + b²) directly: uncertainties are far from overflow, and `hypot`
            // costs several times more in this loop.
            let u_obs_squared = u_obs * u_obs;
            let half_width = k * (u_obs_squared + class.max_uncertainty_cm1.powi(2)).sqrt();
            let low = sigma_obs - half_width;
            let start = partition_point_from(&class.wavenumbers, *hint, |s| s < low);
            *hint = start;
            let high = sigma_obs + half_width;
            let found = class
                .wavenumbers
                .iter()
                .zip(&class.uncertainties)
                .zip(class.lines.iter().zip(&class.broken_rules))
                .skip(start)
                .take_while(|((s, _), _)| **s <= high);
            for ((&sigma, &u_pred), (&line, &broken_rules)) in found {
                let deviation_cm1 = sigma_obs - sigma;
                let combined_uncertainty_cm1 = (u_obs_squared + u_pred * u_pred).sqrt();
                if deviation_cm1.abs() <= k * combined_uncertainty_cm1 {
                    hits.push(Hit {
                        line: line as usize,
                        deviation_cm1,
                        combined_uncertainty_cm1,
                        broken_rules,
                    });
                }
            }
        }
    }

    /// Number of predicted lines with σ in [low, high].
    pub fn count_between(&self, cursor: &mut Cursor, low: f64, high: f64) -> usize {
        let first = partition_point_from(&self.all_wavenumbers, cursor.all.0, |s| s < low);
        let past = partition_point_from(&self.all_wavenumbers, cursor.all.1, |s| s <= high);
        cursor.all = (first, past);
        past.saturating_sub(first)
    }

    /// Lowest and highest predicted wavenumber, if there is any line: of every line
    /// predicted, including those not kept because no observed line reaches them
    /// ([`Predictions::span_cm1`]).
    pub fn span(&self) -> Option<(f64, f64)> {
        self.span
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        // Fixed seed: the same cases in every run (DEVELOPERS.md, "Randomness is seeded").
        #![proptest_config(proptest::test_runner::Config {
            rng_seed: proptest::test_runner::RngSeed::Fixed(16),
            ..proptest::test_runner::Config::default()
        })]

        #[test]
        fn galloping_agrees_with_partition_point(
            mut xs in proptest::collection::vec(-100.0f64..100.0, 0..200),
            hint in 0usize..250,
            cut in -110.0f64..110.0,
        ) {
            xs.sort_by(f64::total_cmp);
            let expected = xs.partition_point(|&x| x < cut);
            prop_assert_eq!(partition_point_from(&xs, hint, |x| x < cut), expected);
            let expected = xs.partition_point(|&x| x <= cut);
            prop_assert_eq!(partition_point_from(&xs, hint, |x| x <= cut), expected);
        }
    }
}
