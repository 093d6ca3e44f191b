//! The chance probability of a candidate level.
//!
//! Model: the candidate energies E_k ± σ of unrelated lines fall like a Poisson
//! process of local density ρ (pairs per cm⁻¹). A candidate of n lines whose
//! energies all lie within ±t of its energy spans s ≤ 2t. Seen from its lowest
//! candidate energy, the others are its followers; for a Poisson process the number
//! of followers within a length ℓ is Poisson with mean ρℓ (Slivnyak's theorem; e.g.
//! Daley & Vere-Jones 2008, *An Introduction to the Theory of Point Processes*,
//! vol. II, § 13.1, cited from memory).
//!
//! The candidate is judged by the pair (n, s): more lines within the window 2t is
//! more extreme, and with as many lines a smaller span s is. The probability that a
//! candidate energy of the null model starts a cluster at least that extreme is
//!
//! p = P(X ≥ n; λ) + P(X = n − 1; λ)·(s/2t)^(n−1),   λ = 2tρ,
//!
//! the first term for n or more followers within 2t, the second for exactly n − 1
//! of them, all within s: e^(−ρs)(ρs)^(n−1)/(n−1)! for those and e^(−ρ(2t−s)) for
//! none in the rest of the window, whose product is the term written. It is exact
//! for the model (a p-value uniform on [0, 1], not only a bound); at s = 2t it is
//! the Poisson tail P(X ≥ n − 1; λ) of a window count alone (Abramowitz & Stegun
//! 1964, eq. 26.4.21, for the tail as an incomplete gamma function), which counts
//! every cluster of n lines as loose as the tolerance allows and so overstates the
//! chance of a tight one.
//!
//! The search looks at every one of its N candidate energies, so the probability
//! that some such cluster appears anywhere by chance is at most N·p; it is given as
//! 1 − (1 − p)^N, which equals N·p where that is small and stays below 1 (the N
//! trials taken as independent). ρ is counted in a window ±F·t_max around the
//! candidate (F the density window factor, t_max the largest tolerance k·u_c of the
//! search), the pairs that hold the candidate's energy left out and two added (see
//! [`density`]), over the window's length cut at E = 0.

use statrs::function::gamma::{checked_gamma_lr, ln_gamma};

/// P(X ≥ `at_least`) for X Poisson with mean `mean`: 1 for `at_least` = 0,
/// P(at_least, mean) (regularised lower incomplete gamma) otherwise; 1 when it
/// cannot be computed (a conservative answer).
pub fn poisson_tail(at_least: usize, mean: f64) -> f64 {
    if at_least == 0 {
        return 1.0;
    }
    if mean <= 0.0 {
        return 0.0;
    }
    if !mean.is_finite() {
        return 1.0;
    }
    checked_gamma_lr(at_least as f64, mean)
        .map(|p| p.clamp(0.0, 1.0))
        .unwrap_or(1.0)
}

/// The local probability p = P(X ≥ n − 1; λ) of `lines` = n lines with λ =
/// `expected` other candidate energies expected by chance.
pub fn local_probability(lines: usize, expected: f64) -> f64 {
    poisson_tail(lines.saturating_sub(1), expected)
}

/// P(X = `count`) for X Poisson with mean `mean`: e^(−λ)λ^n/n!, computed in logs.
pub fn poisson_pmf(count: usize, mean: f64) -> f64 {
    if !(mean.is_finite() && mean >= 0.0) {
        return 0.0;
    }
    if mean == 0.0 {
        return if count == 0 { 1.0 } else { 0.0 };
    }
    let n = count as f64;
    (n * mean.ln() - mean - ln_gamma(n + 1.0)).exp()
}

/// The probability p = P(X ≥ n; λ) + P(X = n − 1; λ)·f^(n−1) that a candidate
/// energy of the null model starts a cluster of `lines` = n lines within the window
/// 2t (λ = `expected` = 2tρ) as tight as one whose span is the fraction
/// `span_fraction` = f = s/2t of the window (clamped to [0, 1]), or more lines.
pub fn cluster_probability(lines: usize, expected: f64, span_fraction: f64) -> f64 {
    let others = lines.saturating_sub(1);
    let f = if span_fraction.is_nan() {
        1.0
    } else {
        span_fraction.clamp(0.0, 1.0)
    };
    let p =
        poisson_tail(others + 1, expected) + poisson_pmf(others, expected) * f.powi(others as i32);
    p.clamp(0.0, 1.0)
}

/// 1 − (1 − p)^N: the chance of a local probability `p` anywhere among `trials` = N
/// candidate energies.
pub fn with_look_elsewhere(p: f64, trials: usize) -> f64 {
    if p >= 1.0 {
        return 1.0;
    }
    let n = trials.max(1) as f64;
    (-(n * (-p).ln_1p()).exp_m1()).clamp(0.0, 1.0)
}

/// The density ρ of candidate energies, per cm⁻¹: (m + 2)/L for the m = `in_window`
/// − `own` points counted in ±`half_window` around `center` that are not the
/// candidate's, over the window's length L cut at E = 0 (and never below
/// `half_window`).
///
/// The two points added keep the chance probability valid although ρ is itself
/// estimated from a count: p grows as ρ^(n−1) for small λ, and a count m below its
/// mean μ makes p too small more than one above it makes it too large. For m
/// Poisson with mean μ, the mean of (μ/(m + 2))^k is below 1 for k = 2 and 3 (the
/// candidates of 3 and 4 lines that chance makes most) at every μ ≥ 8 and falls
/// with μ (0.87 and 0.96 at μ = 8.6, 0.95 and 1.00 at μ = 20; computed with scipy
/// poisson.pmf), where m alone gives 1.71 and 3.89 at μ = 8.6.
pub fn density(in_window: usize, own: usize, center: f64, half_window: f64) -> f64 {
    let length = ((center + half_window) - (center - half_window).max(0.0)).max(half_window);
    (in_window.saturating_sub(own) + 2) as f64 / length
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn poisson_tail_against_the_sum_of_the_pmf() {
        // P(X ≥ n) = 1 − Σ_{i<n} e^{−λ} λ^i / i! (Poisson distribution, textbook
        // formula): λ = 0.5, n = 2 → 1 − e^{−0.5}(1 + 0.5) = 0.090204010431050;
        // n = 3 → 1 − e^{−0.5}(1 + 0.5 + 0.125) = 0.014387677966971 (values by
        // scipy.stats.poisson.sf(n − 1, 0.5)).
        assert!((poisson_tail(2, 0.5) - 0.090204010431050).abs() < 1e-12);
        assert!((poisson_tail(3, 0.5) - 0.014387677966971).abs() < 1e-12);
        assert_eq!(poisson_tail(0, 3.0), 1.0);
        // For small λ, P(X ≥ n) ≈ λ^n/n! (leading term of the series).
        assert!((poisson_tail(3, 1e-4) / (1e-12 / 6.0) - 1.0).abs() < 1e-3);
    }

    #[test]
    fn cluster_probability_between_the_tails() {
        // At f = 1 it is the window count's tail P(X ≥ n − 1; λ); at f = 0 the tail
        // P(X ≥ n; λ); between, P(X ≥ n) + P(X = n − 1)·f^(n−1) (the formula of the
        // module). λ = 0.5, n = 3: P(X ≥ 2) = 0.090204010431050, P(X ≥ 3) =
        // 0.014387677966971, P(X = 2) = e^−0.5·0.125 = 0.075816332464079 (scipy
        // poisson.sf/pmf).
        assert!((cluster_probability(3, 0.5, 1.0) - 0.090204010431050).abs() < 1e-12);
        assert!((cluster_probability(3, 0.5, 0.0) - 0.014387677966971).abs() < 1e-12);
        let half = 0.014387677966971 + 0.075816332464079 * 0.25;
        assert!((cluster_probability(3, 0.5, 0.5) - half).abs() < 1e-12);
        assert!((poisson_pmf(2, 0.5) - 0.075816332464079).abs() < 1e-14);
    }

    #[test]
    fn cluster_probability_is_uniform_under_the_null() {
        // Seeded simulation of the null model: a Poisson process of unit density,
        // window 2t = λ; for each point the pair (followers within 2t, span of the
        // first n − 1 of them) gives p. The fraction of points with p ≤ α must be α
        // within the binomial spread (an exact p-value; definition, common
        // practice, no source). Only points with at least 2 followers are judged
        // (n ≥ 3, as the search); the others count as p = 1, valid as well.
        use rand::rngs::StdRng;
        use rand::{Rng, SeedableRng};
        let mut rng = StdRng::seed_from_u64(5);
        let lambda = 0.3;
        let points: Vec<f64> = {
            let mut x = 0.0;
            (0..400_000)
                .map(|_| {
                    x += -(1.0 - rng.random::<f64>()).ln();
                    x
                })
                .collect()
        };
        let alphas = [0.001, 0.003, 0.01];
        let mut hits = [0usize; 3];
        for (i, &x) in points.iter().enumerate() {
            let followers: Vec<f64> = points[i + 1..]
                .iter()
                .take_while(|&&y| y - x <= lambda)
                .copied()
                .collect();
            if followers.len() < 2 {
                continue;
            }
            let n = followers.len() + 1;
            let span = followers.last().copied().unwrap_or(x) - x;
            let p = cluster_probability(n, lambda, span / lambda);
            for (hit, alpha) in hits.iter_mut().zip(alphas) {
                if p <= alpha {
                    *hit += 1;
                }
            }
        }
        let trials = points.len() as f64;
        for (hit, alpha) in hits.iter().zip(alphas) {
            let expected = alpha * trials;
            let spread = 4.0 * expected.sqrt();
            assert!(
                (*hit as f64 - expected).abs() <= spread,
                "α = {alpha}: {hit} points, {expected} expected"
            );
        }
    }

    #[test]
    fn look_elsewhere_is_n_p_when_small_and_below_one() {
        // 1 − (1 − p)^N → N·p as N·p → 0 (binomial expansion).
        let p = with_look_elsewhere(1e-9, 1000);
        assert!((p / 1e-6 - 1.0).abs() < 1e-6, "{p}");
        // (1 − 0.1)^10 = 0.3486784401, so 1 − that = 0.6513215599.
        assert!((with_look_elsewhere(0.1, 10) - 0.6513215599).abs() < 1e-10);
        assert_eq!(with_look_elsewhere(1.0, 5), 1.0);
    }

    #[test]
    fn density_cut_at_zero_and_floored() {
        // 11 points in ±10 around 100, 3 the candidate's: 8 + 2 per 20 cm⁻¹.
        assert_eq!(density(11, 3, 100.0, 10.0), 0.5);
        // Around 5, the window is cut at 0: length 15.
        assert_eq!(density(4, 1, 5.0, 10.0), 1.0 / 3.0);
        // No other point: the two added.
        assert_eq!(density(3, 3, 100.0, 10.0), 0.1);
    }
}
