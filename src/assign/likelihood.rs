//! The log-likelihood a candidate is ranked on in the intensity-aware assignment.
//!
//! For observed line i and candidate prediction j of species s (natural logs;
//! every term is a log-likelihood ratio against a reference that is the same for
//! all candidates of the line, so the terms add and compare across species):
//!
//! ℓ_ij = ℓ_position + ℓ_intensity + ℓ_rules + ℓ_share + ℓ_species
//!
//! - **Position**: the observed line is normal about the prediction with the
//!   combined standard uncertainty u_c: ℓ_position = −½ z² − ln u_c, z = Δ/u_c
//!   (the normal log-density without its constant ½ ln 2π). The −ln u_c makes a
//!   precise prediction beat a broad one at equal |z|.
//! - **Intensity** (the observed line has an intensity I > 0, the prediction a
//!   transition probability, and the species a fitted scale): r = ln I − ln S_s −
//!   ln I_pred, with I_pred the predicted relative intensity
//!   ([`crate::plasma::intensity`]; for a member of a declared blend, the blend's sum)
//!   and S_s the species' scale. r is log-normal about 0 (the usual error model of
//!   line intensities, whose errors are relative: Wiese & Fuhr's accuracy classes are
//!   percentages; the log-normal model e.g. in Bevington & Robinson 2003, *Data
//!   Reduction and Error Analysis*, §3; from memory), width σ_r, with a broad
//!   component for outliers, heavier below than above because self-absorption makes
//!   strong lines weaker than predicted:
//!   p(r) = (1 − ε_lo − ε_hi) N(r; 0, σ_r) + 2ε_lo N(r; 0, W)[r < 0] + 2ε_hi N(r; 0, W)[r > 0],
//!   ε_lo = 0.08, ε_hi = 0.02, W = 2.5 (a factor 12). The term is ln p(r) −
//!   ln p₀(ln I), p₀ the normal density of ln I over the whole list (median and
//!   1.4826 × MAD): the likelihood ratio against a candidate that predicts nothing
//!   about intensity. A candidate without a transition probability gets no
//!   intensity term (position only), and the outputs say so.
//! - **Selection rules** (only for a candidate without an intensity term: a
//!   transition probability already says how strong a forbidden line is):
//!   ℓ_rules = −½(n w_s² + m p²), n the non-rigorous rules the line breaks (for a
//!   line its source does not list; a listed line breaks none), m = 1 for a line the
//!   source does not list, p the rule penalty ([`super::MatchConfig`], default 2)
//!   and w_s = p for lines between LS labels of light atoms (Z ≤ 18), w_s = p/2
//!   otherwise: LS rules hold loosely for heavy atoms (Hg I 253.7 nm is an
//!   intercombination line) and pair-coupled levels (Ne I, Ar I), where the position
//!   and the intensity should decide. In likelihood terms the rule counts as prior
//!   odds e^(−w²/2) (1/7.4 for w = 2, 1/1.6 for w = 1).
//! - **Share of a blend**: when several predictions of one species lie within
//!   tolerance of the line with comparable intensities (each at least
//!   [`BLEND_RATIO`] of the strongest), they are a declared blend and the line is
//!   their sum; the probability that the line "is" component j is its share of the
//!   predicted intensity, ℓ_share = ln(I_j/Σ I_k) (the mixture weight of a mixture
//!   model). Without transition probabilities, the LS relative line strengths of a
//!   multiplet S(J, J') = (2J+1)(2J'+1){L J S; J' L' 1}² (Condon & Shortley 1935,
//!   ch. IX; Sobelman 1979, *Atomic Spectra and Radiative Transitions*, §9.2) give
//!   the shares among the components of one multiplet.
//! - **Species**: ℓ_species = ln P(present | evidence) from the species' likelihood
//!   ratio Λ of present against absent ([`super::verdict`]) and a prior probability
//!   π₀ = [`SPECIES_PRIOR`] that a compiled species is in the source:
//!   P = π₀Λ / (π₀Λ + 1 − π₀).

use crate::angular::six_j;
use crate::levels::{Level, Listing, PredictedLine, SelectionRules};

/// Components of a blend are at least this fraction of the strongest one's
/// predicted intensity: 0.1.
pub const BLEND_RATIO: f64 = 0.1;

/// Prior probability that a species offered for matching is in the source: 0.2
/// (a source usually holds a few of the spectra offered).
pub const SPECIES_PRIOR: f64 = 0.2;

/// Outlier weight below (observed weaker than predicted).
const OUTLIER_BELOW: f64 = 0.08;
/// Outlier weight above.
const OUTLIER_ABOVE: f64 = 0.02;
/// Width of the outlier component, in ln I.
const OUTLIER_WIDTH: f64 = 2.5;

const LN_SQRT_2PI: f64 = 0.918_938_533_204_672_8;

/// ln of the normal density N(x; 0, σ).
pub fn ln_normal(x: f64, sigma: f64) -> f64 {
    -0.5 * (x / sigma).powi(2) - sigma.ln() - LN_SQRT_2PI
}

/// ℓ_position = −½ z² − ln u_c (u_c in cm⁻¹; a zero u_c is taken as 10⁻¹²).
pub fn position_term(deviation_sigma: f64, combined_uncertainty_cm1: f64) -> f64 {
    let z = if deviation_sigma.is_finite() {
        deviation_sigma
    } else {
        1e3
    };
    -0.5 * z * z - combined_uncertainty_cm1.max(1e-12).ln()
}

/// ln p(r): the robust log-normal model of the intensity residual r (see the module
/// documentation), width `sigma` in ln I.
pub fn ln_intensity_density(r: f64, sigma: f64) -> f64 {
    let core = (1.0 - OUTLIER_BELOW - OUTLIER_ABOVE) * ln_normal(r, sigma).exp();
    let tail_weight = if r < 0.0 {
        OUTLIER_BELOW
    } else {
        OUTLIER_ABOVE
    };
    let tail = 2.0 * tail_weight * ln_normal(r, OUTLIER_WIDTH).exp();
    (core + tail).max(f64::MIN_POSITIVE).ln()
}

/// The reference density p₀ of ln I over the list: normal with `center` and
/// `spread`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IntensityReference {
    /// Median of ln I.
    pub center: f64,
    /// 1.4826 × MAD of ln I, at least 0.5.
    pub spread: f64,
}

impl IntensityReference {
    /// From the ln I of the list (none: center 0, spread 1).
    pub fn from_ln_intensities(mut values: Vec<f64>) -> IntensityReference {
        values.retain(|v| v.is_finite());
        if values.is_empty() {
            return IntensityReference {
                center: 0.0,
                spread: 1.0,
            };
        }
        let center = median(&mut values);
        let mut deviations: Vec<f64> = values.iter().map(|v| (v - center).abs()).collect();
        let spread = (1.4826 * median(&mut deviations)).max(0.5);
        IntensityReference { center, spread }
    }

    /// ln p₀(ln I).
    pub fn ln_density(&self, ln_intensity: f64) -> f64 {
        ln_normal(ln_intensity - self.center, self.spread)
    }
}

/// The median of `values` (reordered); 0 for none.
pub fn median(values: &mut [f64]) -> f64 {
    if values.is_empty() {
        return 0.0;
    }
    values.sort_by(f64::total_cmp);
    let n = values.len();
    let upper = values.get(n / 2).copied().unwrap_or(0.0);
    if n % 2 == 1 {
        upper
    } else {
        0.5 * (values.get(n / 2 - 1).copied().unwrap_or(upper) + upper)
    }
}

/// ℓ_intensity = ln p(r) − ln p₀(ln I).
pub fn intensity_term(
    r: f64,
    sigma: f64,
    ln_intensity: f64,
    reference: &IntensityReference,
) -> f64 {
    ln_intensity_density(r, sigma) - reference.ln_density(ln_intensity)
}

/// ℓ_rules of a line (see the module documentation), with the rule penalty p.
pub fn rules_term(line: &PredictedLine, penalty: f64) -> f64 {
    let light_ls = line.rules == SelectionRules::Ls && line.species.atomic_number <= 18;
    let w = if light_ls { penalty } else { 0.5 * penalty };
    let (n, m) = match line.listing {
        Listing::Listed => (0, 0),
        Listing::NotListed => (line.flags.broken(), 1),
        Listing::NotConsulted => (line.flags.broken(), 0),
    };
    -0.5 * (f64::from(n) * w * w + f64::from(m) * penalty * penalty)
}

/// ℓ_species = ln(π₀Λ / (π₀Λ + 1 − π₀)) for ln Λ = `ln_ratio`, computed without
/// overflow.
pub fn species_term(ln_ratio: f64) -> f64 {
    // −ln(1 + e^x), x = ln((1 − π₀)/π₀) − ln Λ.
    let x = ((1.0 - SPECIES_PRIOR) / SPECIES_PRIOR).ln() - ln_ratio;
    -(if x > 30.0 { x } else { x.exp().ln_1p() })
}

/// The LS relative strength S(J, J') of the line between `lower` and `upper`
/// within its multiplet, and a key naming the multiplet (a hash of the species,
/// configurations and terms), when both levels carry LS terms of the same
/// multiplicity.
pub fn ls_multiplet_strength(lower: &Level, upper: &Level) -> Option<(f64, u64)> {
    use std::hash::{Hash, Hasher};
    let a = lower.label.term.as_ls()?;
    let b = upper.label.term.as_ls()?;
    if a.multiplicity != b.multiplicity {
        return None;
    }
    let two_s = a.multiplicity.checked_sub(1)?;
    let (j, jp) = (lower.label.j.twice, upper.label.j.twice);
    let sixj = six_j([2 * a.l, j, two_s, jp, 2 * b.l, 2]).ok()?;
    let strength = f64::from(j + 1) * f64::from(jp + 1) * sixj * sixj;
    let mut hasher = std::collections::hash_map::DefaultHasher::new();
    (
        lower.species,
        &lower.label.configuration,
        lower.label.term,
        &upper.label.configuration,
        upper.label.term,
    )
        .hash(&mut hasher);
    (strength > 0.0).then_some((strength, hasher.finish()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_precise_prediction_beats_a_broad_one_at_equal_z() {
        // The normal log-density −½z² − ln σ (textbook).
        assert!(position_term(1.0, 0.01) > position_term(1.0, 0.1));
        assert!((position_term(0.0, 1.0) - 0.0).abs() < 1e-15);
    }

    #[test]
    fn intensity_density_is_normalised_and_heavier_below() {
        // ∫ p(r) dr = 1 (a density; Riemann sum on [−30, 30], step 10⁻³, the
        // jump at r = 0 costing ~10⁻⁵).
        let h = 1e-3;
        let total: f64 = (-30_000..30_000)
            .map(|k| ln_intensity_density(f64::from(k) * h, 0.5).exp() * h)
            .sum();
        assert!((total - 1.0).abs() < 1e-4, "{total}");
        assert!(ln_intensity_density(-4.0, 0.5) > ln_intensity_density(4.0, 0.5));
    }

    #[test]
    fn species_term_is_the_posterior_probability() {
        // Bayes' rule with prior π₀ and likelihood ratio Λ: P = π₀Λ/(π₀Λ + 1 − π₀).
        for ln_ratio in [-5.0f64, 0.0, 2.0, 10.0] {
            let l = ln_ratio.exp();
            let p = SPECIES_PRIOR * l / (SPECIES_PRIOR * l + 1.0 - SPECIES_PRIOR);
            assert!((species_term(ln_ratio) - p.ln()).abs() < 1e-12);
        }
        assert!(species_term(-100.0) < -90.0);
    }
}
