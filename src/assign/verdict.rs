//! Whether a species is in the source: the count of its expected lines that are
//! observed, against the count chance coincidences would give.
//!
//! For a species with transition probabilities, its lines expected above the
//! detection limit of the list (from its fitted scale and temperature; see
//! [`super::evidence`]) number N; n of them have an observed line within tolerance.
//! If the species is absent, the n coincidences are chance ones, Poisson with mean
//! μ₀ = Σ_j (1 − exp(−2ρ k u_j)) (ρ the density of observed lines, k u_j the
//! tolerance of expected line j: the chance that an unrelated observed line lies
//! within it, as in [`super::chance`]). If it is present, each expected line is seen
//! with probability q = [`DETECTION_PROBABILITY`] (a line can be lost to
//! self-absorption, a stronger neighbour or the noise) and the mean is
//! μ₁ = qN + μ₀. The log-likelihood ratio of the Poisson counts is
//!
//! ln Λ = n ln(μ₁/μ₀) − (μ₁ − μ₀)
//!
//! (the Poisson probability μⁿe^(−μ)/n!, e.g. Feller 1968, vol. 1, ch. VI; from
//! memory). The species is **present** when ln Λ > ln 100 and **absent** when
//! ln Λ < −ln 100 (odds of 100 to 1, Jeffreys' "decisive" scale, Jeffreys 1961,
//! *Theory of Probability*, app. B; from memory), or when its three strongest
//! expected lines are all missing and fewer than half of its expected lines are
//! seen; else **undecided**.
//!
//! Without transition probabilities N cannot be known: the species is present when
//! the observed lines with a candidate of it exceed the chance count so that the
//! Poisson tail Pr(X ≥ n | μ₀) < 10⁻³, and undecided otherwise.

use serde::{Deserialize, Serialize};

/// Probability that a line expected above the detection limit is seen: 0.7.
pub const DETECTION_PROBABILITY: f64 = 0.7;

/// ln of the decisive odds, ln 100.
pub const DECISIVE_LN_ODDS: f64 = 4.605_170_185_988_091;

/// The verdict on one species.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
pub enum Verdict {
    /// The evidence says the species is in the source.
    Present,
    /// The evidence says it is not: its candidates are demoted.
    Absent,
    /// The evidence does not decide.
    #[default]
    Undecided,
}

impl Verdict {
    /// The name written in outputs.
    pub fn name(self) -> &'static str {
        match self {
            Verdict::Present => "present",
            Verdict::Absent => "absent",
            Verdict::Undecided => "undecided",
        }
    }
}

impl std::fmt::Display for Verdict {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// ln Λ of `observed` coincidences among `expected` lines with chance mean
/// `chance_mean` (see the module documentation).
pub fn ln_likelihood_ratio(observed: usize, expected: usize, chance_mean: f64) -> f64 {
    let mu0 = chance_mean.max(1e-12);
    let mu1 = DETECTION_PROBABILITY * expected as f64 + mu0;
    observed as f64 * (mu1 / mu0).ln() - (mu1 - mu0)
}

/// ln Pr(X ≥ n) for X Poisson with mean `mean` (summed from the term at n, which
/// is exact to rounding for the counts met here: the terms fall off quickly once
/// k > mean).
pub fn ln_poisson_tail(n: usize, mean: f64) -> f64 {
    if n == 0 {
        return 0.0;
    }
    let mean = mean.max(1e-300);
    let ln_term = |k: usize| {
        let k = k as f64;
        k * mean.ln() - mean - ln_gamma(k + 1.0)
    };
    let first = ln_term(n);
    let mut sum = 0.0;
    let mut ratio = 1.0;
    for k in n..n + 2000 {
        sum += ratio;
        ratio *= mean / (k as f64 + 1.0);
        if ratio < 1e-17 * sum {
            break;
        }
    }
    (first + sum.ln()).min(0.0)
}

fn ln_gamma(x: f64) -> f64 {
    statrs::function::gamma::ln_gamma(x)
}

/// The verdict from ln Λ and whether the three strongest expected lines are all
/// missing while fewer than half of the expected lines are seen.
pub fn verdict(ln_ratio: f64, strongest_missing: bool) -> Verdict {
    if ln_ratio < -DECISIVE_LN_ODDS || strongest_missing {
        Verdict::Absent
    } else if ln_ratio > DECISIVE_LN_ODDS {
        Verdict::Present
    } else {
        Verdict::Undecided
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn poisson_ratio_by_hand() {
        // Poisson likelihoods μⁿe^(−μ)/n! (Feller 1968): n = 5, N = 10, μ₀ = 0.5:
        // μ₁ = 7.5, ln Λ = 5 ln 15 − 7.
        let r = ln_likelihood_ratio(5, 10, 0.5);
        assert!((r - (5.0 * 15f64.ln() - 7.0)).abs() < 1e-12);
        // None of 20 expected lines seen: ln Λ = −qN = −14, decisively absent.
        assert!((ln_likelihood_ratio(0, 20, 0.3) + 14.0).abs() < 1e-12);
        assert_eq!(
            verdict(ln_likelihood_ratio(0, 20, 0.3), false),
            Verdict::Absent
        );
        assert_eq!(verdict(r, false), Verdict::Present);
        assert_eq!(verdict(0.0, false), Verdict::Undecided);
    }

    #[test]
    fn poisson_tail_against_the_closed_form() {
        // The closed form of the Poisson sum (Feller 1968): Pr(X ≥ 3 | μ = 1) =
        // 1 − e^(−1)(1 + 1 + 1/2).
        let p = ln_poisson_tail(3, 1.0).exp();
        assert!((p - (1.0 - (-1f64).exp() * 2.5)).abs() < 1e-12, "{p}");
        assert_eq!(ln_poisson_tail(0, 2.0), 0.0);
    }
}
