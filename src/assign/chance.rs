//! The probability that a candidate's closeness is a chance coincidence.
//!
//! If the predicted lines near an observed line fall like a Poisson process of
//! density ρ (lines per cm⁻¹), the probability that at least one lies within ±w of a
//! given wavenumber is
//!
//! P = 1 − exp(−2ρw)
//!
//! (the probability of no point in an interval of length 2w is exp(−2ρw): the
//! Poisson distribution, e.g. Feller 1968, *An Introduction to Probability Theory
//! and Its Applications*, vol. 1, ch. VI; chapter cited from memory). The choices, per candidate with deviation Δ = σ_obs − σ_pred and combined
//! uncertainty u_c:
//!
//! - **w = max(|Δ|, u_c)**: the chance that an unrelated line would lie at least as
//!   close as this one does. Closer candidates get smaller P, so P ranks alternatives
//!   the way the evidence does; the floor at u_c stops a deviation far below the
//!   measurement's resolution from claiming a certainty it cannot have.
//! - **ρ = n / L**: n is the number of predicted lines (of all the selected species)
//!   with σ within ±W of σ_obs, not counting the candidate itself. W = F·k·u_max,
//!   with F the density window factor (default 300), k the tolerance in standard
//!   uncertainties, and u_max the largest combined uncertainty among the observed
//!   line's candidates: one window per observed line, at least F times wider than
//!   every candidate's tolerance, so the count is local but not noisy. L is the window's length, 2W, cut at the first and
//!   last predicted lines of the set (beyond them there is nothing to count, and
//!   counting over empty space would understate ρ); L is never taken below W.
//! - When no other line lies in the window, n is taken as 1: a window can show a
//!   density no finer than one line per window, so P is never reported as zero.

/// The chance-coincidence probability of one candidate.
///
/// `deviation_cm1` and `combined_uncertainty_cm1` are Δ and u_c; `half_window_cm1`
/// is W; `others_in_window` is n (the candidate excluded); `window_length_cm1` is
/// L (already cut and floored). Returns a value in [0, 1].
pub fn chance_probability(
    deviation_cm1: f64,
    combined_uncertainty_cm1: f64,
    others_in_window: usize,
    window_length_cm1: f64,
) -> f64 {
    chance_probability_with_floor(
        deviation_cm1,
        combined_uncertainty_cm1,
        others_in_window,
        window_length_cm1,
        1.0,
    )
}

/// [`chance_probability`] with the distance floored at `floor_fraction`·u_c
/// instead of u_c: w = max(|Δ|, f·u_c).
///
/// Why a smaller floor stays valid: for an observed line at a random position
/// among predicted lines of density ρ, the nearest lies within d with probability
/// 1 − exp(−2ρd) (the Poisson gap, as above), so P computed from w = |Δ| of the
/// nearest candidate is uniformly distributed: Pr(P ≤ α) = α. Any w ≥ |Δ| only makes
/// P larger (conservative), as does ranking a candidate other than the nearest
/// first. The floor f·u_c keeps P from claiming more than the measurement can show;
/// with f = 1 P cannot fall below 1 − exp(−2ρu_c), which at small α makes it many
/// times conservative; f = 0.1 moves that limit ten times lower.
pub fn chance_probability_with_floor(
    deviation_cm1: f64,
    combined_uncertainty_cm1: f64,
    others_in_window: usize,
    window_length_cm1: f64,
    floor_fraction: f64,
) -> f64 {
    let w = deviation_cm1
        .abs()
        .max(floor_fraction * combined_uncertainty_cm1);
    if !(w > 0.0 && window_length_cm1 > 0.0) {
        return 0.0;
    }
    if !(w.is_finite() && window_length_cm1.is_finite()) {
        // An uncertainty so large that u² or the window overflows: any line
        // would lie within it (ρ = n/∞ times w = ∞ would give NaN).
        return 1.0;
    }
    let density = others_in_window.max(1) as f64 / window_length_cm1;
    let p = -(-2.0 * density * w).exp_m1();
    p.clamp(0.0, 1.0)
}

/// The length L of the counting window ±`half_window` around `center`, cut at
/// the span of the predicted lines and floored at `half_window`.
pub fn window_length(center: f64, half_window: f64, span: (f64, f64)) -> f64 {
    let low = (center - half_window).max(span.0);
    let high = (center + half_window).min(span.1);
    (high - low).max(half_window)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn poisson_formula() {
        // P = 1 − exp(−2ρw) (Poisson process; Feller 1968): 10 lines in 100 cm⁻¹,
        // w = 0.5 cm⁻¹ → 1 − e^(−0.1).
        let p = chance_probability(0.5, 0.1, 10, 100.0);
        assert!((p - (1.0 - (-0.1f64).exp())).abs() < 1e-15);
        // The deviation is floored at u_c.
        assert_eq!(chance_probability(0.01, 0.5, 10, 100.0), p);
        assert_eq!(chance_probability(-0.5, 0.1, 10, 100.0), p);
    }

    #[test]
    fn empty_window_counts_one_line() {
        assert_eq!(
            chance_probability(0.5, 0.1, 0, 100.0),
            chance_probability(0.5, 0.1, 1, 100.0)
        );
        assert!(chance_probability(0.5, 0.1, 0, 100.0) > 0.0);
    }

    // Malformed-input check (common practice, no source): an uncertainty so large
    // that u_c or the window overflows gives certain chance, not NaN.
    #[test]
    fn overflowing_uncertainty_gives_certain_chance() {
        assert_eq!(
            chance_probability(0.0, f64::INFINITY, 5, f64::INFINITY),
            1.0
        );
        assert_eq!(chance_probability(1.0, 1e306, 5, f64::INFINITY), 1.0);
    }

    #[test]
    fn dense_windows_approach_certain_chance() {
        assert!(chance_probability(1.0, 1.0, 1_000_000, 10.0) > 0.999_999);
        assert_eq!(chance_probability(0.0, 0.0, 5, 10.0), 0.0);
    }

    #[test]
    fn window_is_cut_at_the_span_and_floored() {
        assert_eq!(window_length(500.0, 100.0, (0.0, 1000.0)), 200.0);
        assert_eq!(window_length(950.0, 100.0, (0.0, 1000.0)), 150.0);
        assert_eq!(window_length(1000.0, 100.0, (0.0, 1000.0)), 100.0);
        assert_eq!(window_length(5000.0, 100.0, (0.0, 1000.0)), 100.0);
    }
}
