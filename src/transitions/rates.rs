//! From line strength to oscillator strength and transition probability.
//!
//! With the line strength S = |⟨γJ‖D‖γ'J'⟩|² in atomic units (e²a₀²) and the
//! vacuum wavenumber σ in cm⁻¹, in Gaussian units (Condon & Shortley 1935, §4⁹;
//! Sobelman 1979, *Atomic Spectra and Radiative Transitions*, §9.1; Wiese & Fuhr
//! 2009, J. Phys. Chem. Ref. Data 38, 565, eqs. 2–5):
//!
//! - gf = (8π² m_e c a₀² / 3h) · σ · S — the weighted oscillator strength, g of the
//!   lower level times its absorption f-value (equal to g_upper·|f_emission|);
//! - A = (64π⁴ e² a₀² / 3h) · σ³ · S / g_upper — the Einstein coefficient of
//!   spontaneous emission, s⁻¹.
//!
//! The coefficients are computed from the CODATA 2018 constants of
//! [`crate::units::constants`]; with λ in Å they take the familiar forms
//! gf = 303.756 S/λ and A = 2.0261×10¹⁸ S/(g λ³).

use std::f64::consts::PI;

use crate::units::constants::{
    BOHR_RADIUS_CM, ELECTRON_MASS_KG, ELEMENTARY_CHARGE_C, PLANCK_CONSTANT_J_S, SPEED_OF_LIGHT_M_S,
};

/// Electron mass in grams.
const ELECTRON_MASS_G: f64 = ELECTRON_MASS_KG * 1e3;
/// Speed of light in cm/s.
const SPEED_OF_LIGHT_CM_S: f64 = SPEED_OF_LIGHT_M_S * 1e2;
/// Planck constant in erg s.
const PLANCK_ERG_S: f64 = PLANCK_CONSTANT_J_S * 1e7;
/// Elementary charge in statcoulomb (esu): 1 C = 10·c[m/s] statC.
const ELEMENTARY_CHARGE_ESU: f64 = ELEMENTARY_CHARGE_C * 10.0 * SPEED_OF_LIGHT_M_S;

/// gf per (σ in cm⁻¹ × S in e²a₀²): 8π² m_e c a₀² / 3h = 3.03756×10⁻⁶ cm.
pub const GF_PER_WAVENUMBER_STRENGTH: f64 =
    8.0 * PI * PI * ELECTRON_MASS_G * SPEED_OF_LIGHT_CM_S * BOHR_RADIUS_CM * BOHR_RADIUS_CM
        / (3.0 * PLANCK_ERG_S);

/// gA per (σ³ in cm⁻³ × S in e²a₀²): 64π⁴ e² a₀² / 3h = 2.02613×10⁻⁶ cm³ s⁻¹.
pub const GA_PER_WAVENUMBER_CUBED_STRENGTH: f64 = 64.0
    * PI
    * PI
    * PI
    * PI
    * ELEMENTARY_CHARGE_ESU
    * ELEMENTARY_CHARGE_ESU
    * BOHR_RADIUS_CM
    * BOHR_RADIUS_CM
    / (3.0 * PLANCK_ERG_S);

/// gf of a line of strength `strength` (e²a₀²) at vacuum wavenumber
/// `wavenumber_cm1` (see the module documentation).
pub fn weighted_oscillator_strength(strength: f64, wavenumber_cm1: f64) -> f64 {
    GF_PER_WAVENUMBER_STRENGTH * wavenumber_cm1 * strength
}

/// A (s⁻¹) of a line of strength `strength` (e²a₀²) at vacuum wavenumber
/// `wavenumber_cm1`, from an upper level of statistical weight `g_upper` = 2J+1.
pub fn transition_probability(strength: f64, wavenumber_cm1: f64, g_upper: f64) -> f64 {
    GA_PER_WAVENUMBER_CUBED_STRENGTH * wavenumber_cm1.powi(3) * strength / g_upper
}

/// gf of a line from g_upper·A (s⁻¹) at vacuum wavenumber `wavenumber_cm1`: the
/// ratio of the two formulas of the module documentation, gf = gA · (8π² m_e c a₀² /
/// 3h) / (64π⁴ e² a₀² / 3h) / σ² = 1.4992 cm⁻²·s · gA / σ² (Wiese & Fuhr 2009, J. Phys.
/// Chem. Ref. Data 38, 565, eq. 3, with λ = 1/σ).
pub fn gf_from_ga(ga_s1: f64, wavenumber_cm1: f64) -> f64 {
    ga_s1 * GF_PER_WAVENUMBER_STRENGTH
        / (GA_PER_WAVENUMBER_CUBED_STRENGTH * wavenumber_cm1 * wavenumber_cm1)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::constants::HARTREE_CM1;

    #[test]
    fn gf_from_ga_has_the_familiar_coefficient() {
        // gf = 1.4992e-16 λ²[Å] g_k A_ki (Wiese & Fuhr 2009, eq. 3; NIST ASD's line
        // data help uses the same factor): at λ = 5000 Å, gA = 1e8 s⁻¹ gives 0.3748.
        let sigma = 1e8 / 5000.0;
        let gf = gf_from_ga(1e8, sigma);
        assert!(
            (gf / (1.4992e-16 * 5000.0f64.powi(2) * 1e8) - 1.0).abs() < 1e-4,
            "{gf}"
        );
    }

    #[test]
    fn familiar_numeric_forms() {
        // gf = 303.756 S/λ[Å] and A = 2.0261e18 S/(g λ³[Å]) (Wiese & Fuhr 2009,
        // J. Phys. Chem. Ref. Data 38, 565, eqs. 4 and 5; also NIST ASD's
        // "Atomic Spectroscopy" compendium, §11).
        let per_angstrom = GF_PER_WAVENUMBER_STRENGTH * 1e8;
        assert!((per_angstrom - 303.756).abs() < 5e-4, "{per_angstrom}");
        let per_angstrom_cubed = GA_PER_WAVENUMBER_CUBED_STRENGTH * 1e24;
        assert!(
            (per_angstrom_cubed / 2.0261e18 - 1.0).abs() < 5e-5,
            "{per_angstrom_cubed}"
        );
        // In atomic units gf = (2/3) ΔE S with ΔE in hartree (Sobelman 1979, eq. 9.36).
        assert!((GF_PER_WAVENUMBER_STRENGTH * HARTREE_CM1 - 2.0 / 3.0).abs() < 1e-9);
    }

    #[test]
    fn a_and_gf_agree_with_the_standard_relation() {
        // g_k A_ki = 0.6670e16 g_i f_ik / λ²[Å] (Wiese & Fuhr 2009, eq. 3; the
        // Ladenburg relation 8π²e²σ²/(m_e c)).
        let (strength, sigma, g_upper) = (3.7, 25_000.0, 5.0);
        let lambda_angstrom = 1e8 / sigma;
        let gf = weighted_oscillator_strength(strength, sigma);
        let ga = g_upper * transition_probability(strength, sigma, g_upper);
        let expected = 0.6670e16 * gf / (lambda_angstrom * lambda_angstrom);
        assert!((ga / expected - 1.0).abs() < 2e-4, "{ga} {expected}");
    }
}
