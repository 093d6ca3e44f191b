//! Wavelengths, wavenumbers and energies, air↔vacuum conversion and the
//! propagation of uncertainties between them.
//!
//! The project's working quantity is the vacuum wavenumber σ = 1/λ_vac in cm⁻¹
//! (the unit of level tables). Wavelengths are read and printed in nm, Å or µm, in
//! air or vacuum; the air formulas are in [`air`] and the constants in [`constants`].
//!
//! ```
//! use termsight::units::{AirFormula, LengthUnit, Medium, Wavelength};
//! // He I 587.56 nm (air) as a vacuum wavenumber.
//! let line = Wavelength { value: 5875.62, unit: LengthUnit::Angstrom, medium: Medium::Air };
//! let sigma = line.to_wavenumber_cm1(AirFormula::default()).unwrap();
//! assert!((sigma - 17014.8).abs() < 0.1);
//! ```

pub mod air;
pub mod constants;

use std::fmt;

use serde::{Deserialize, Serialize};

pub use air::{AirFormula, OutOfAirRange};

/// A vacuum wavenumber in cm⁻¹ (also used for level energies, E/hc).
pub type WavenumberCm1 = f64;

/// The medium a wavelength is measured in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Medium {
    /// Standard dry air (15 °C, 101 325 Pa); see [`air`].
    Air,
    /// Vacuum.
    Vacuum,
}

impl Medium {
    /// The conventional medium for a line of vacuum wavelength `lambda_vac_nm`: air at
    /// and above 200 nm, vacuum below (common practice, no source).
    pub fn conventional(lambda_vac_nm: f64) -> Medium {
        if lambda_vac_nm >= air::AIR_CONVENTION_FROM_NM {
            Medium::Air
        } else {
            Medium::Vacuum
        }
    }

    /// `air` or `vacuum`.
    pub fn name(self) -> &'static str {
        match self {
            Medium::Air => "air",
            Medium::Vacuum => "vacuum",
        }
    }

    /// Parse `air` or `vacuum` (also `vac`), ignoring case.
    pub fn from_name(name: &str) -> Option<Medium> {
        match name.trim().to_ascii_lowercase().as_str() {
            "air" => Some(Medium::Air),
            "vacuum" | "vac" => Some(Medium::Vacuum),
            _ => None,
        }
    }
}

impl fmt::Display for Medium {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A unit of wavelength.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum LengthUnit {
    /// Nanometre, 10⁻⁹ m.
    Nanometre,
    /// Ångström, 10⁻¹⁰ m.
    Angstrom,
    /// Micrometre, 10⁻⁶ m.
    Micrometre,
}

impl LengthUnit {
    /// How many nanometres one unit is.
    pub fn nanometres(self) -> f64 {
        match self {
            LengthUnit::Nanometre => 1.0,
            LengthUnit::Angstrom => 0.1,
            LengthUnit::Micrometre => 1000.0,
        }
    }

    /// The suffix used in column names and flags: `nm`, `A`, `um`.
    pub fn suffix(self) -> &'static str {
        match self {
            LengthUnit::Nanometre => "nm",
            LengthUnit::Angstrom => "A",
            LengthUnit::Micrometre => "um",
        }
    }

    /// Parse a unit name: `nm`; `A`, `Å`, `angstrom`; `um`, `µm`, `micron`.
    pub fn from_name(name: &str) -> Option<LengthUnit> {
        match name.trim() {
            "nm" | "nanometre" | "nanometer" => Some(LengthUnit::Nanometre),
            "A" | "Å" | "Angstrom" | "angstrom" | "AA" => Some(LengthUnit::Angstrom),
            "um" | "µm" | "μm" | "micron" | "micrometre" | "micrometer" => {
                Some(LengthUnit::Micrometre)
            }
            _ => None,
        }
    }
}

impl fmt::Display for LengthUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            LengthUnit::Nanometre => "nm",
            LengthUnit::Angstrom => "Å",
            LengthUnit::Micrometre => "µm",
        })
    }
}

/// A unit of energy.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum EnergyUnit {
    /// Wavenumber units, cm⁻¹ (E/hc).
    Cm1,
    /// Electronvolt.
    Ev,
    /// Hartree (atomic unit of energy).
    Hartree,
}

impl EnergyUnit {
    /// How many cm⁻¹ one unit is (CODATA 2018, see [`constants`]).
    pub fn cm1(self) -> f64 {
        match self {
            EnergyUnit::Cm1 => 1.0,
            EnergyUnit::Ev => constants::EV_CM1,
            EnergyUnit::Hartree => constants::HARTREE_CM1,
        }
    }

    /// Convert `value` from this unit to `to`.
    pub fn convert(self, value: f64, to: EnergyUnit) -> f64 {
        value * self.cm1() / to.cm1()
    }
}

/// A wavelength with its unit and medium.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Wavelength {
    /// The number, in `unit`.
    pub value: f64,
    /// Unit of `value`.
    pub unit: LengthUnit,
    /// Air or vacuum.
    pub medium: Medium,
}

/// Why a wavelength or wavenumber could not be converted.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum ConversionError {
    /// Not a finite positive number.
    #[error("expected a positive finite number, got {0}")]
    NotPositive(f64),
    /// An air wavelength outside the range of the air formulas.
    #[error(transparent)]
    OutOfAirRange(#[from] OutOfAirRange),
}

fn check_positive(value: f64) -> Result<(), ConversionError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(ConversionError::NotPositive(value))
    }
}

impl Wavelength {
    /// The vacuum wavelength in nm.
    pub fn vacuum_nm(&self, formula: AirFormula) -> Result<f64, ConversionError> {
        check_positive(self.value)?;
        let nm = self.value * self.unit.nanometres();
        match self.medium {
            Medium::Vacuum => Ok(nm),
            Medium::Air => Ok(air::air_to_vacuum_nm(nm, formula)?),
        }
    }

    /// The vacuum wavenumber σ = 1/λ_vac in cm⁻¹.
    pub fn to_wavenumber_cm1(&self, formula: AirFormula) -> Result<WavenumberCm1, ConversionError> {
        Ok(1e7 / self.vacuum_nm(formula)?)
    }

    /// The wavelength of vacuum wavenumber `sigma_cm1` in `unit` and `medium`.
    pub fn from_wavenumber_cm1(
        sigma_cm1: WavenumberCm1,
        unit: LengthUnit,
        medium: Medium,
        formula: AirFormula,
    ) -> Result<Wavelength, ConversionError> {
        check_positive(sigma_cm1)?;
        let vac_nm = 1e7 / sigma_cm1;
        let nm = match medium {
            Medium::Vacuum => vac_nm,
            Medium::Air => air::vacuum_to_air_nm(vac_nm, formula)?,
        };
        Ok(Wavelength {
            value: nm / unit.nanometres(),
            unit,
            medium,
        })
    }

    /// Standard uncertainty of the wavenumber (cm⁻¹) that follows from a standard
    /// uncertainty `u` of this wavelength (same unit), to first order:
    /// u(σ) = σ/λ_vac · (dλ_vac/dλ) · u, with the dispersion of air included for
    /// air wavelengths (see [`air::vacuum_per_air_slope`]).
    pub fn wavenumber_uncertainty_cm1(
        &self,
        u: f64,
        formula: AirFormula,
    ) -> Result<f64, ConversionError> {
        let vac_nm = self.vacuum_nm(formula)?;
        let slope = match self.medium {
            Medium::Vacuum => 1.0,
            Medium::Air => air::vacuum_per_air_slope(vac_nm, formula),
        };
        let sigma = 1e7 / vac_nm;
        Ok(sigma / vac_nm * slope * u.abs() * self.unit.nanometres())
    }
}

/// Standard uncertainty of a wavelength (in `unit`, `medium`) that follows from a
/// standard uncertainty `u_sigma_cm1` of vacuum wavenumber `sigma_cm1`, to first order
/// (the inverse of [`Wavelength::wavenumber_uncertainty_cm1`]).
pub fn wavelength_uncertainty(
    sigma_cm1: WavenumberCm1,
    u_sigma_cm1: f64,
    unit: LengthUnit,
    medium: Medium,
    formula: AirFormula,
) -> Result<f64, ConversionError> {
    let wavelength = Wavelength::from_wavenumber_cm1(sigma_cm1, unit, medium, formula)?;
    let per_unit = wavelength.wavenumber_uncertainty_cm1(1.0, formula)?;
    Ok(u_sigma_cm1.abs() / per_unit)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn energy_units_round_trip() {
        // CODATA 2018: 1 hartree = 27.211386245988 eV.
        let ev = EnergyUnit::Hartree.convert(1.0, EnergyUnit::Ev);
        assert!((ev - 27.211386245988).abs() < 1e-9);
        assert!((EnergyUnit::Ev.convert(ev, EnergyUnit::Hartree) - 1.0).abs() < 1e-14);
    }

    #[test]
    fn vacuum_wavenumber_uncertainty_is_sigma_over_lambda() {
        // σ = 1/λ, so u(σ) = u(λ)/λ² (common practice, no source).
        let w = Wavelength {
            value: 100.0,
            unit: LengthUnit::Nanometre,
            medium: Medium::Vacuum,
        };
        let u = w
            .wavenumber_uncertainty_cm1(0.001, AirFormula::default())
            .unwrap();
        assert!((u - 1e7 * 0.001 / 100.0f64.powi(2)).abs() < 1e-12);
    }

    #[test]
    fn air_uncertainty_matches_finite_difference() {
        let f = AirFormula::default();
        let w = Wavelength {
            value: 6562.8,
            unit: LengthUnit::Angstrom,
            medium: Medium::Air,
        };
        let h = 0.01;
        let up = Wavelength {
            value: w.value + h,
            ..w
        }
        .to_wavenumber_cm1(f)
        .unwrap();
        let down = Wavelength {
            value: w.value - h,
            ..w
        }
        .to_wavenumber_cm1(f)
        .unwrap();
        let numeric = (down - up) / (2.0 * h);
        let analytic = w.wavenumber_uncertainty_cm1(1.0, f).unwrap();
        assert!((numeric - analytic).abs() < 1e-9 * analytic);
        let back = wavelength_uncertainty(
            w.to_wavenumber_cm1(f).unwrap(),
            analytic,
            LengthUnit::Angstrom,
            Medium::Air,
            f,
        )
        .unwrap();
        assert!((back - 1.0).abs() < 1e-12);
    }

    #[test]
    fn conventional_medium_switches_at_200_nm() {
        // Common practice, no source: air wavelengths above 200 nm, vacuum below.
        assert_eq!(Medium::conventional(199.9), Medium::Vacuum);
        assert_eq!(Medium::conventional(200.0), Medium::Air);
    }
}
