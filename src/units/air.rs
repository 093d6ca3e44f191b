//! The refractive index of standard air and air↔vacuum wavelength conversion.
//!
//! All three formulas give (n − 1)·10⁸ as a function of s² = σ², where σ = 1/λ_vac
//! in µm⁻¹, for standard dry air at 15 °C and 101 325 Pa:
//!
//! - Birch & Downs (1994, Metrologia 31, 315), in the form given by Morton (2000,
//!   ApJS 130, 403, eq. 3), the default:
//!   8342.54 + 2406147/(130 − s²) + 15998/(38.9 − s²)
//! - Edlén (1966, Metrologia 2, 71):
//!   8342.13 + 2406030/(130 − s²) + 15997/(38.9 − s²)
//! - Ciddor (1996, Appl. Opt. 35, 1566, eq. 1; 450 ppm CO₂):
//!   5792105/(238.0185 − s²) + 167917/(57.362 − s²)
//!
//! Because σ is the vacuum wavenumber, vacuum → air is a direct evaluation
//! (λ_air = λ_vac / n) and air → vacuum is a fixed-point iteration
//! λ_vac ← λ_air · n(λ_vac), which contracts by a factor of about 10⁻⁵ per step.

use std::fmt;

use serde::{Deserialize, Serialize};

/// Shortest vacuum wavelength (nm) at which the air formulas are used. The formulas
/// have a pole near 160 nm; the trade's convention gives air wavelengths only above
/// 200 nm, and 185 nm leaves room for the occasional measurement in air just below.
pub const AIR_FORMULA_MIN_NM: f64 = 185.0;

/// Vacuum wavelengths at or above this value (nm) are given in air by convention
/// (common practice, no source); shorter ones in vacuum.
pub const AIR_CONVENTION_FROM_NM: f64 = 200.0;

/// A published formula for the refractive index of standard air.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum AirFormula {
    /// Birch & Downs (1994) as given by Morton (2000). The default.
    #[default]
    BirchDowns1994,
    /// Edlén (1966).
    Edlen1966,
    /// Ciddor (1996), standard air with 450 ppm CO₂. Stated range 230–1690 nm.
    Ciddor1996,
}

/// One dispersion formula: (n − 1)·10⁸ = constant + Σ a/(b − s²).
struct Dispersion {
    constant: f64,
    terms: [(f64, f64); 2],
}

impl AirFormula {
    /// Every formula, the default first.
    pub const ALL: [AirFormula; 3] = [
        AirFormula::BirchDowns1994,
        AirFormula::Edlen1966,
        AirFormula::Ciddor1996,
    ];

    fn dispersion(self) -> Dispersion {
        match self {
            AirFormula::BirchDowns1994 => Dispersion {
                constant: 8342.54,
                terms: [(2_406_147.0, 130.0), (15_998.0, 38.9)],
            },
            AirFormula::Edlen1966 => Dispersion {
                constant: 8342.13,
                terms: [(2_406_030.0, 130.0), (15_997.0, 38.9)],
            },
            AirFormula::Ciddor1996 => Dispersion {
                constant: 0.0,
                terms: [(5_792_105.0, 238.0185), (167_917.0, 57.362)],
            },
        }
    }

    /// Short name used on the command line (`birch-downs`, `edlen`, `ciddor`).
    pub fn name(self) -> &'static str {
        match self {
            AirFormula::BirchDowns1994 => "birch-downs",
            AirFormula::Edlen1966 => "edlen",
            AirFormula::Ciddor1996 => "ciddor",
        }
    }

    /// The formula's citation, for output headers.
    pub fn citation(self) -> &'static str {
        match self {
            AirFormula::BirchDowns1994 => {
                "Birch & Downs (1994, Metrologia 31, 315) as given by Morton (2000, ApJS 130, 403)"
            }
            AirFormula::Edlen1966 => "Edlen (1966, Metrologia 2, 71)",
            AirFormula::Ciddor1996 => "Ciddor (1996, Appl. Opt. 35, 1566)",
        }
    }

    /// Parse a short name as printed by [`AirFormula::name`].
    pub fn from_name(name: &str) -> Option<AirFormula> {
        Self::ALL.into_iter().find(|f| f.name() == name)
    }

    /// Refractivity n − 1 of standard air at vacuum wavelength `lambda_vac_nm` (nm).
    ///
    /// Valid for λ_vac ≥ [`AIR_FORMULA_MIN_NM`]; callers check the range.
    pub fn refractivity(self, lambda_vac_nm: f64) -> f64 {
        let s2 = (1000.0 / lambda_vac_nm).powi(2);
        let d = self.dispersion();
        (d.constant + d.terms.iter().map(|(a, b)| a / (b - s2)).sum::<f64>()) * 1e-8
    }

    /// d(n − 1)/dλ_vac in nm⁻¹, from the analytic derivative of the formula.
    pub fn refractivity_slope_per_nm(self, lambda_vac_nm: f64) -> f64 {
        let s2 = (1000.0 / lambda_vac_nm).powi(2);
        let ds2_dlambda = -2.0 * s2 / lambda_vac_nm;
        let d = self.dispersion();
        let dn_ds2: f64 = d.terms.iter().map(|(a, b)| a / (b - s2).powi(2)).sum();
        dn_ds2 * ds2_dlambda * 1e-8
    }
}

impl fmt::Display for AirFormula {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A wavelength is outside the range where the air formulas hold.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[error(
    "air wavelength conversion needs a wavelength of at least {AIR_FORMULA_MIN_NM} nm; got {lambda_nm} nm"
)]
pub struct OutOfAirRange {
    /// The offending wavelength in nm.
    pub lambda_nm: f64,
}

/// Convert a vacuum wavelength (nm) to standard air (nm): λ_air = λ_vac / n(λ_vac).
pub fn vacuum_to_air_nm(lambda_vac_nm: f64, formula: AirFormula) -> Result<f64, OutOfAirRange> {
    check_range(lambda_vac_nm)?;
    Ok(lambda_vac_nm / (1.0 + formula.refractivity(lambda_vac_nm)))
}

/// Convert an air wavelength (nm) to vacuum (nm) by iterating λ_vac ← λ_air · n(λ_vac)
/// until the relative change is below 10⁻¹⁵ (three or four steps).
pub fn air_to_vacuum_nm(lambda_air_nm: f64, formula: AirFormula) -> Result<f64, OutOfAirRange> {
    check_range(lambda_air_nm)?;
    let mut lambda_vac = lambda_air_nm;
    for _ in 0..50 {
        let next = lambda_air_nm * (1.0 + formula.refractivity(lambda_vac));
        let converged = ((next - lambda_vac) / next).abs() < 1e-15;
        lambda_vac = next;
        if converged {
            break;
        }
    }
    Ok(lambda_vac)
}

/// dλ_vac/dλ_air at a given vacuum wavelength: from λ_vac = λ_air·n(λ_vac),
/// dλ_vac/dλ_air = n / (1 − λ_air · dn/dλ_vac).
pub fn vacuum_per_air_slope(lambda_vac_nm: f64, formula: AirFormula) -> f64 {
    let n = 1.0 + formula.refractivity(lambda_vac_nm);
    let lambda_air = lambda_vac_nm / n;
    n / (1.0 - lambda_air * formula.refractivity_slope_per_nm(lambda_vac_nm))
}

fn check_range(lambda_nm: f64) -> Result<(), OutOfAirRange> {
    if lambda_nm.is_finite() && lambda_nm >= AIR_FORMULA_MIN_NM {
        Ok(())
    } else {
        Err(OutOfAirRange { lambda_nm })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sodium_d2_in_air() {
        // check-values/README.md cross-check: Na D2 at 589.1583 nm (vacuum) is 588.99507 nm in air.
        let air = vacuum_to_air_nm(589.1583, AirFormula::BirchDowns1994).unwrap();
        assert!((air - 588.99507).abs() < 1e-5, "{air}");
    }

    #[test]
    fn slope_matches_finite_difference() {
        for formula in AirFormula::ALL {
            for lambda in [200.0, 500.0, 2000.0] {
                let h = 1e-3;
                let numeric = (formula.refractivity(lambda + h) - formula.refractivity(lambda - h))
                    / (2.0 * h);
                let analytic = formula.refractivity_slope_per_nm(lambda);
                assert!((numeric - analytic).abs() < 1e-6 * analytic.abs());
            }
        }
    }

    #[test]
    fn rejects_wavelengths_below_the_formula_range() {
        assert!(vacuum_to_air_nm(150.0, AirFormula::Edlen1966).is_err());
        assert!(air_to_vacuum_nm(f64::NAN, AirFormula::Edlen1966).is_err());
    }
}
