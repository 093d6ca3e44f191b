//! The McWhirter criterion for local thermodynamic equilibrium.
//!
//! n_e ≥ 1.6×10¹² T^{1/2} (ΔE)³ cm⁻³, T in K and ΔE in eV the largest energy gap
//! between adjacent levels of the species (McWhirter 1965, in Huddlestone &
//! Leonard, *Plasma Diagnostic Techniques*, ch. 5, eq. 5.8; Cristoforetti et al.
//! 2010, Spectrochim. Acta B 65, 86, eq. 1). Collisions must then dominate the
//! radiative decay of the levels. The criterion is necessary, not sufficient: it
//! says nothing of transient or inhomogeneous plasmas (Cristoforetti et al. 2010).

use serde::Serialize;

use crate::units::constants::EV_CM1;

/// The minimum electron density, cm⁻³, for LTE at `temperature_k` with a largest
/// gap of `gap_cm1`.
pub fn mcwhirter_minimum_cm3(temperature_k: f64, gap_cm1: f64) -> f64 {
    1.6e12 * temperature_k.sqrt() * (gap_cm1 / EV_CM1).powi(3)
}

/// Whether the measured density meets the criterion.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LteVerdict {
    /// n_e − 2σ above the minimum: the necessary condition holds.
    Met,
    /// n_e + 2σ below the minimum: LTE does not hold; the temperatures of the
    /// Boltzmann and Saha–Boltzmann plots are not those of an LTE plasma.
    NotMet,
    /// The minimum lies within two standard uncertainties of n_e.
    Marginal,
    /// No electron density to compare with.
    Unknown,
}

impl LteVerdict {
    /// Name in outputs.
    pub fn name(self) -> &'static str {
        match self {
            LteVerdict::Met => "met",
            LteVerdict::NotMet => "not met",
            LteVerdict::Marginal => "marginal",
            LteVerdict::Unknown => "unknown",
        }
    }
}

/// Where the density of an LTE check comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum DensitySource {
    /// The element's own Saha–Boltzmann fit.
    SahaBoltzmann,
    /// The Stark widths of the Balmer lines.
    Stark,
    /// Given by the user.
    Given,
}

impl DensitySource {
    /// Name in outputs.
    pub fn name(self) -> &'static str {
        match self {
            DensitySource::SahaBoltzmann => "saha-boltzmann",
            DensitySource::Stark => "stark",
            DensitySource::Given => "given",
        }
    }
}

/// The criterion at a fitted temperature beside a measured density.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LteCheck {
    /// Temperature, K.
    pub temperature_k: f64,
    /// The gap used: lower and upper level energies, cm⁻¹.
    pub gap_cm1: (f64, f64),
    /// The species the gap belongs to, as printed (`Ar I`).
    #[serde(serialize_with = "crate::plasma::saha::species_name")]
    pub gap_species: crate::notation::Species,
    /// Minimum n_e, cm⁻³.
    pub minimum_cm3: f64,
    /// Measured n_e and its σ, cm⁻³, when there is one.
    pub density_cm3: Option<(f64, f64)>,
    /// Where that density comes from.
    pub density_source: Option<DensitySource>,
    /// The verdict.
    pub verdict: LteVerdict,
}

/// Compare a density (value, σ, where it comes from) with the criterion.
pub fn lte_check(
    temperature_k: f64,
    gap_species: crate::notation::Species,
    gap_cm1: (f64, f64),
    density: Option<(f64, f64, DensitySource)>,
) -> LteCheck {
    let density_cm3 = density.map(|(n, s, _)| (n, s));
    let minimum_cm3 = mcwhirter_minimum_cm3(temperature_k, gap_cm1.1 - gap_cm1.0);
    let verdict = match density_cm3 {
        None => LteVerdict::Unknown,
        Some((n, s)) if n - 2.0 * s >= minimum_cm3 => LteVerdict::Met,
        Some((n, s)) if n + 2.0 * s < minimum_cm3 => LteVerdict::NotMet,
        Some(_) => LteVerdict::Marginal,
    };
    LteCheck {
        temperature_k,
        gap_cm1,
        gap_species,
        minimum_cm3,
        density_cm3,
        density_source: density.map(|(_, _, source)| source),
        verdict,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_criterion_has_its_published_form() {
        // Cristoforetti et al. 2010, eq. 1: 1.6e12 T^{1/2} ΔE³; for ΔE = 1 eV and
        // T = 10⁴ K, 1.6×10¹⁴ cm⁻³; the cube and the square root scale it.
        let one_ev = mcwhirter_minimum_cm3(1e4, EV_CM1);
        assert!((one_ev / 1.6e14 - 1.0).abs() < 1e-12);
        assert!((mcwhirter_minimum_cm3(4e4, 2.0 * EV_CM1) / one_ev - 16.0).abs() < 1e-9);
        // Ar I resonance gap 11.55 eV (93143.76 cm⁻¹, NIST ASD) at 10 000 K needs
        // about 2.5×10¹⁷ cm⁻³ (common practice: argon LTE needs high densities).
        let argon = mcwhirter_minimum_cm3(1e4, 93143.76);
        assert!((argon / 2.46e17 - 1.0).abs() < 0.01, "{argon}");
    }

    #[test]
    fn verdicts_follow_the_density_and_its_uncertainty() {
        let argon: crate::notation::Species = "Ar I".parse().unwrap();
        let gap = (0.0, EV_CM1);
        let given = DensitySource::Given;
        let check = |n: Option<(f64, f64, DensitySource)>| lte_check(1e4, argon, gap, n).verdict;
        assert_eq!(check(Some((1e15, 1e14, given))), LteVerdict::Met);
        assert_eq!(check(Some((1e13, 1e12, given))), LteVerdict::NotMet);
        assert_eq!(check(Some((1.6e14, 5e13, given))), LteVerdict::Marginal);
        assert_eq!(check(None), LteVerdict::Unknown);
    }
}
