//! One data row: its fields checked and turned into an [`ObservedLine`].

use super::error::{LineProblem, shorten};
use super::fields::Fields;
use super::header::{Layout, PositionUnit};
use super::options::{ReadOptions, UncertaintyUnit};
use super::{GivenPosition, ObservedLine};
use crate::units::{AirFormula, ConversionError, LengthUnit, Medium, Wavelength, WavenumberCm1};

/// A problem with a row, and the 0-based column at fault if one is.
pub(crate) type RowError = (Option<usize>, LineProblem);

/// A converted row, and whether its medium was assumed by convention.
pub(crate) struct ConvertedRow {
    pub(crate) line: ObservedLine,
    pub(crate) medium_assumed: bool,
}

/// Check the fields of data row `row` (found on line `source_line`) and convert them.
pub(crate) fn convert_row(
    fields: &Fields<'_>,
    layout: &Layout,
    options: &ReadOptions,
    row: usize,
    source_line: usize,
) -> Result<ConvertedRow, RowError> {
    if fields.len() != layout.width() {
        return Err((
            None,
            LineProblem::FieldCount {
                expected: layout.width(),
                found: fields.len(),
                header_line: layout.line,
            },
        ));
    }
    let (position_column, position_unit) = layout.position;
    let position_text = fields.get(position_column);
    let value = positive_number(position_text).map_err(|p| (Some(position_column), p))?;
    let medium_cell = layout
        .medium
        .map(|column| (column, fields.get(column)))
        .filter(|(_, text)| !text.is_empty());
    let medium_of = |(column, text): (usize, &str)| {
        medium_named(text).ok_or_else(|| {
            (
                Some(column),
                LineProblem::UnknownMedium {
                    text: shorten(text),
                },
            )
        })
    };

    let mut medium_assumed = false;
    let given = match position_unit {
        PositionUnit::Wavenumber => {
            if let Some(cell) = medium_cell
                && medium_of(cell)? == Medium::Air
            {
                return Err((Some(cell.0), LineProblem::AirWavenumber));
            }
            GivenPosition::Wavenumber { value }
        }
        PositionUnit::Wavelength(unit) => {
            let medium = match (medium_cell, options.medium) {
                (Some(cell), _) => medium_of(cell)?,
                (None, Some(medium)) => medium,
                (None, None) => {
                    medium_assumed = true;
                    Medium::conventional(value * unit.nanometres())
                }
            };
            GivenPosition::Wavelength {
                value,
                unit,
                medium,
            }
        }
    };
    let not_convertible = |text: &str, what| LineProblem::NotConvertible {
        text: shorten(text),
        what,
    };
    let wavenumber_cm1 = vacuum_wavenumber(&given, options.air_formula)
        .map_err(|problem| (Some(position_column), problem))?;
    if !(wavenumber_cm1.is_finite() && wavenumber_cm1 > 0.0) {
        return Err((
            Some(position_column),
            not_convertible(position_text, "vacuum wavenumber"),
        ));
    }
    // Its square must be an ordinary number too, since a wavelength uncertainty is
    // turned into a wavenumber one by σ²: a wavelength of 1e300 nm is the position's
    // fault, not the uncertainty's.
    if !(wavenumber_cm1 * wavenumber_cm1).is_normal()
        || !(1.0 / (wavenumber_cm1 * wavenumber_cm1)).is_normal()
    {
        return Err((
            Some(position_column),
            not_convertible(position_text, "vacuum wavenumber's square"),
        ));
    }

    let uncertainty_cell = layout
        .uncertainty
        .map(|(column, unit)| (column, unit, fields.get(column)))
        .filter(|(_, _, text)| !text.is_empty());
    let (uncertainty, uncertainty_unit, uncertainty_column) = match uncertainty_cell {
        Some((column, unit, text)) => (
            positive_number(text).map_err(|p| (Some(column), p))?,
            unit,
            Some(column),
        ),
        None => match options.uncertainty {
            Some(global) => (global.value(), global.unit(), None),
            None => {
                let column = layout.uncertainty.map(|(column, _)| column);
                return Err((column, LineProblem::NoUncertainty));
            }
        },
    };
    let uncertainty_cm1 = wavenumber_uncertainty(
        uncertainty,
        uncertainty_unit,
        &given,
        wavenumber_cm1,
        options.air_formula,
    );
    // Its square must be an ordinary number too: the combined uncertainty and the
    // chance probability square it (1e300 cm-1 would make them infinite).
    let finite = uncertainty_cm1.is_finite() && uncertainty_cm1 > 0.0;
    if !(finite && (1.0 / (uncertainty_cm1 * uncertainty_cm1)).is_normal()) {
        let text = match uncertainty_column {
            Some(column) => fields.get(column).to_string(),
            None => format!("{uncertainty} {uncertainty_unit}"),
        };
        let what = if finite {
            "wavenumber uncertainty's square"
        } else {
            "wavenumber uncertainty"
        };
        return Err((uncertainty_column, not_convertible(&text, what)));
    }
    if uncertainty_cm1 >= wavenumber_cm1 {
        let text = match uncertainty_column {
            Some(column) => fields.get(column).to_string(),
            None => format!("--uncertainty {uncertainty}{uncertainty_unit}"),
        };
        return Err((
            uncertainty_column,
            LineProblem::UncertaintyTooLarge {
                text: shorten(&text),
                uncertainty_cm1,
                wavenumber_cm1,
            },
        ));
    }

    let intensity = match layout.intensity {
        Some(column) => {
            optional_finite_number(fields.get(column)).map_err(|p| (Some(column), p))?
        }
        None => None,
    };
    let extra = layout
        .extras
        .iter()
        .map(|&column| fields.get(column).to_string())
        .collect();
    Ok(ConvertedRow {
        line: ObservedLine {
            row,
            source_line,
            given,
            wavenumber_cm1,
            uncertainty_cm1,
            intensity,
            extra,
        },
        medium_assumed,
    })
}

/// A finite number greater than zero.
fn positive_number(text: &str) -> Result<f64, LineProblem> {
    match optional_finite_number(text)? {
        None => Err(LineProblem::Missing),
        Some(value) if value > 0.0 => Ok(value),
        Some(_) => Err(LineProblem::NotPositive {
            text: shorten(text),
        }),
    }
}

/// A finite number, or `None` for a blank field.
fn optional_finite_number(text: &str) -> Result<Option<f64>, LineProblem> {
    if text.is_empty() {
        return Ok(None);
    }
    let value: f64 = text.parse().map_err(|_| LineProblem::NotANumber {
        text: shorten(text),
    })?;
    if value.is_finite() {
        Ok(Some(value))
    } else {
        Err(LineProblem::NotFinite {
            text: shorten(text),
        })
    }
}

/// The names [`Medium::from_name`] accepts, compared without allocating (this runs
/// once per row).
fn medium_named(text: &str) -> Option<Medium> {
    if text.eq_ignore_ascii_case("air") {
        Some(Medium::Air)
    } else if text.eq_ignore_ascii_case("vacuum") || text.eq_ignore_ascii_case("vac") {
        Some(Medium::Vacuum)
    } else {
        None
    }
}

/// Vacuum wavenumber σ (cm⁻¹) of a position as given.
fn vacuum_wavenumber(
    given: &GivenPosition,
    formula: AirFormula,
) -> Result<WavenumberCm1, LineProblem> {
    match *given {
        GivenPosition::Wavenumber { value } => Ok(value),
        GivenPosition::Wavelength {
            value,
            unit,
            medium,
        } => Wavelength {
            value,
            unit,
            medium,
        }
        .to_wavenumber_cm1(formula)
        .map_err(|error| match error {
            ConversionError::OutOfAirRange(range) => LineProblem::AirOutOfRange {
                lambda_nm: range.lambda_nm,
            },
            _ => LineProblem::NotConvertible {
                text: value.to_string(),
                what: "vacuum wavenumber",
            },
        }),
    }
}

/// Standard uncertainty (cm⁻¹) of the wavenumber of `given` (σ = `sigma_cm1`) from an
/// uncertainty `u` in `unit`. A length uncertainty of a wavelength is first expressed
/// in the wavelength's unit and propagated with
/// [`Wavelength::wavenumber_uncertainty_cm1`] (dispersion of air included); a length
/// uncertainty of a wavenumber is taken as that of the vacuum wavelength 1/σ,
/// u(σ) = σ²·u(λ) to first order. Returns NaN when the propagation fails.
fn wavenumber_uncertainty(
    u: f64,
    unit: UncertaintyUnit,
    given: &GivenPosition,
    sigma_cm1: WavenumberCm1,
    formula: AirFormula,
) -> f64 {
    let propagated = match (unit, *given) {
        (UncertaintyUnit::Cm1, _) => Ok(u),
        (
            UncertaintyUnit::Length(u_unit),
            GivenPosition::Wavelength {
                value,
                unit,
                medium,
            },
        ) => Wavelength {
            value,
            unit,
            medium,
        }
        .wavenumber_uncertainty_cm1(u * u_unit.nanometres() / unit.nanometres(), formula),
        (UncertaintyUnit::Length(u_unit), GivenPosition::Wavenumber { .. }) => Wavelength {
            value: 1e7 / sigma_cm1,
            unit: LengthUnit::Nanometre,
            medium: Medium::Vacuum,
        }
        .wavenumber_uncertainty_cm1(u * u_unit.nanometres(), formula),
    };
    propagated.unwrap_or(f64::NAN)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn medium_names_agree_with_the_units_module() {
        for name in [
            "air", "AIR", "Air", "vacuum", "VAC", "vac", "vacuo", "", "airr",
        ] {
            assert_eq!(medium_named(name), Medium::from_name(name), "{name}");
        }
    }

    #[test]
    fn numbers_are_checked() {
        assert_eq!(positive_number("1e3"), Ok(1000.0));
        assert_eq!(positive_number(""), Err(LineProblem::Missing));
        assert!(matches!(
            positive_number("-0.5"),
            Err(LineProblem::NotPositive { .. })
        ));
        assert!(matches!(
            positive_number("0"),
            Err(LineProblem::NotPositive { .. })
        ));
        assert!(matches!(
            positive_number("inf"),
            Err(LineProblem::NotFinite { .. })
        ));
        assert!(matches!(
            positive_number("NaN"),
            Err(LineProblem::NotFinite { .. })
        ));
        assert!(matches!(
            positive_number("1,5"),
            Err(LineProblem::NotANumber { .. })
        ));
        assert_eq!(optional_finite_number(""), Ok(None));
        assert_eq!(optional_finite_number("-3"), Ok(Some(-3.0)));
    }

    #[test]
    fn wavelength_uncertainty_of_a_wavenumber_is_sigma_squared_times_u() {
        // u(σ) = σ²·u(λ) for σ = 1/λ (common practice, no source): σ = 20000 cm⁻¹,
        // u(λ) = 0.01 Å = 1e-10 cm gives 0.04 cm⁻¹.
        let u = wavenumber_uncertainty(
            0.01,
            UncertaintyUnit::Length(LengthUnit::Angstrom),
            &GivenPosition::Wavenumber { value: 20000.0 },
            20000.0,
            AirFormula::default(),
        );
        assert!((u - 0.04).abs() < 1e-12, "{u}");
    }
}
