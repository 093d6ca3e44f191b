//! Predicted relative emission intensities.
//!
//! In a plasma whose excited levels are populated by a Boltzmann distribution at
//! the excitation temperature T, the population of the upper level k is
//! n_k ∝ g_k exp(−E_k/kT), and a line k → i emits n_k A_ki photons per unit time and
//! volume, each of energy hcσ (Thorne, Litzén & Johansson 1999, *Spectrophysics*,
//! ch. 9; Griem 1997, *Principles of Plasma Spectroscopy*, ch. 6; from memory).
//! So, per species and up to one factor common to its lines:
//!
//! - **photon counts** (a detector that counts photons, as CCDs and photomultipliers
//!   in counting mode do): I ∝ g_k A_ki exp(−c₂E_k/T);
//! - **energy** (a radiometrically calibrated spectrum, W per unit area):
//!   I ∝ g_k A_ki σ exp(−c₂E_k/T) = g_k A_ki exp(−c₂E_k/T)/λ (up to hc),
//!
//! with c₂ = hc/k ([`SECOND_RADIATION_CM_K`]), E_k in cm⁻¹ and T in K.
//! The input intensities are taken as photon counts unless said otherwise
//! ([`IntensityUnits::Energy`]). Self-absorption, which weakens the strongest lines,
//! is not modelled here; the assignment's intensity term allows for it.

use serde::{Deserialize, Serialize};

use crate::units::constants::SECOND_RADIATION_CM_K;

/// What the observed intensities measure.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
pub enum IntensityUnits {
    /// Photon counts (per unit time): I ∝ g_k A_ki exp(−E_k/kT).
    #[default]
    Photon,
    /// Radiant energy (per unit time): I ∝ g_k A_ki exp(−E_k/kT)/λ.
    Energy,
}

impl IntensityUnits {
    /// The name used on the command line and in outputs.
    pub fn name(self) -> &'static str {
        match self {
            IntensityUnits::Photon => "photon",
            IntensityUnits::Energy => "energy",
        }
    }

    /// ln of the factor the units add to g_k A_ki exp(−E_k/kT): 0 for photon
    /// counts, ln σ (σ in cm⁻¹) for energy.
    pub fn ln_factor(self, wavenumber_cm1: f64) -> f64 {
        match self {
            IntensityUnits::Photon => 0.0,
            IntensityUnits::Energy => wavenumber_cm1.ln(),
        }
    }
}

/// ln of the relative intensity of a line with g_k A_ki = `ga_s1` (s⁻¹), upper level
/// `upper_energy_cm1` (cm⁻¹) and vacuum wavenumber `wavenumber_cm1` (cm⁻¹), at
/// `temperature_k` (K), in `units` (see the module documentation). Kept as a
/// logarithm so that high levels at low temperature do not underflow.
pub fn ln_relative_intensity(
    ga_s1: f64,
    upper_energy_cm1: f64,
    wavenumber_cm1: f64,
    temperature_k: f64,
    units: IntensityUnits,
) -> f64 {
    ga_s1.ln() - SECOND_RADIATION_CM_K * upper_energy_cm1 / temperature_k
        + units.ln_factor(wavenumber_cm1)
}

/// The relative intensity itself: `exp` of [`ln_relative_intensity`].
pub fn relative_intensity(
    ga_s1: f64,
    upper_energy_cm1: f64,
    wavenumber_cm1: f64,
    temperature_k: f64,
    units: IntensityUnits,
) -> f64 {
    ln_relative_intensity(
        ga_s1,
        upper_energy_cm1,
        wavenumber_cm1,
        temperature_k,
        units,
    )
    .exp()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boltzmann_factor_of_one_electronvolt() {
        // 1 eV = 8065.544 cm⁻¹ (CODATA 2018); at T = 11604.518 K, kT = 1 eV
        // (CODATA 2018: e/k = 11604.518 K/V), so two lines with equal gA whose
        // upper levels differ by 1 eV differ by a factor e.
        let low = relative_intensity(1e8, 20_000.0, 15_000.0, 11_604.518, IntensityUnits::Photon);
        let high = relative_intensity(
            1e8,
            20_000.0 + 8_065.544,
            15_000.0,
            11_604.518,
            IntensityUnits::Photon,
        );
        assert!(
            (low / high - std::f64::consts::E).abs() < 1e-5,
            "{}",
            low / high
        );
    }

    #[test]
    fn energy_units_weight_by_wavenumber() {
        // Energy per photon hcσ (textbook, common practice, no source): the same
        // gA and upper level at twice the wavenumber gives twice the energy.
        let a = relative_intensity(1e7, 30_000.0, 10_000.0, 8000.0, IntensityUnits::Energy);
        let b = relative_intensity(1e7, 30_000.0, 20_000.0, 8000.0, IntensityUnits::Energy);
        assert!((b / a - 2.0).abs() < 1e-12);
        let c = relative_intensity(1e7, 30_000.0, 20_000.0, 8000.0, IntensityUnits::Photon);
        let d = relative_intensity(1e7, 30_000.0, 10_000.0, 8000.0, IntensityUnits::Photon);
        assert_eq!(c, d);
    }
}
