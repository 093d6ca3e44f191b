//! The chance probability of a candidate level.
//!
//! Model: the candidate energies E_k ± σ of unrelated lines fall like a Poisson
//! process of local density ρ (pairs per cm⁻¹). A candidate of n lines whose
//! energies all lie within ±t of its energy spans at most 2t, so, starting from its
//! lowest candidate energy, the n − 1 others fall within the 2t above it. For a
//! Poisson process the number of other points within a window of length 2t from a
//! given point is Poisson with mean λ = 2tρ (Slivnyak's theorem; e.g. Daley &
//! Vere-Jones 2008, *An Introduction to the Theory of Point Processes*, vol. II,
//! § 13.1, cited from memory), so
//!
//! p = P(X ≥ n − 1; λ) = P(n − 1, λ) (the regularised lower incomplete gamma
//! function; Abramowitz & Stegun 1964, eq. 26.4.21, for the Poisson tail).
//!
//! The search looks at every one of its N candidate energies, so the probability
//! that some such cluster appears anywhere by chance is at most N·p; it is given as
//! 1 − (1 − p)^N, which equals N·p where that is small and stays below 1 (the N
//! trials taken as independent). ρ is counted in a window ±F·t_max around the
//! candidate (F the density window factor, t_max the largest tolerance k·u_c of the
//! search), the pairs that hold the candidate's energy left out and
//! no fewer than one counted (a window can show no finer density than one point),
//! over the window's length cut at E = 0.

use statrs::function::gamma::checked_gamma_lr;

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

/// 1 − (1 − p)^N: the chance of a local probability `p` anywhere among `trials` = N
/// candidate energies.
pub fn with_look_elsewhere(p: f64, trials: usize) -> f64 {
    if p >= 1.0 {
        return 1.0;
    }
    let n = trials.max(1) as f64;
    (-(n * (-p).ln_1p()).exp_m1()).clamp(0.0, 1.0)
}

/// The density ρ of candidate energies, per cm⁻¹: `in_window` points counted in
/// ±`half_window` around `center`, `own` of them the candidate's, over the
/// window's length cut at E = 0 (and never below `half_window`).
pub fn density(in_window: usize, own: usize, center: f64, half_window: f64) -> f64 {
    let length = ((center + half_window) - (center - half_window).max(0.0)).max(half_window);
    in_window.saturating_sub(own).max(1) as f64 / length
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
        // 11 points in ±10 around 100, 3 the candidate's: 8 per 20 cm⁻¹.
        assert_eq!(density(11, 3, 100.0, 10.0), 0.4);
        // Around 5, the window is cut at 0: length 15.
        assert_eq!(density(4, 1, 5.0, 10.0), 0.2);
        // No other point: one counted.
        assert_eq!(density(3, 3, 100.0, 10.0), 0.05);
    }
}
