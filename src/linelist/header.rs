//! The header line: what each column holds.

use std::collections::HashMap;

use super::error::{LineListError, POSITION_COLUMNS, UNCERTAINTY_COLUMNS, shorten};
use super::fields::Fields;
use super::options::UncertaintyUnit;
use crate::location::Location;
use crate::units::LengthUnit;

/// How the position column gives a line's position.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum PositionUnit {
    /// A wavelength in this unit.
    Wavelength(LengthUnit),
    /// A vacuum wavenumber in cm⁻¹.
    Wavenumber,
}

/// What one column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Role {
    Position(PositionUnit),
    Uncertainty(UncertaintyUnit),
    Medium,
    Intensity,
    Extra,
}

/// The columns of a line list, by 0-based index.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Layout {
    /// Line number of the header.
    pub(crate) line: usize,
    /// Column names as written (trimmed).
    pub(crate) names: Vec<String>,
    /// The position column and its unit.
    pub(crate) position: (usize, PositionUnit),
    /// The uncertainty column and its unit, if any.
    pub(crate) uncertainty: Option<(usize, UncertaintyUnit)>,
    /// The `medium` column, if any.
    pub(crate) medium: Option<usize>,
    /// The `intensity` column, if any.
    pub(crate) intensity: Option<usize>,
    /// The pass-through columns, in order.
    pub(crate) extras: Vec<usize>,
}

impl Layout {
    /// Read the header `fields` found on line `line` of `source`.
    pub(crate) fn from_header(
        fields: &Fields<'_>,
        source: &str,
        line: usize,
    ) -> Result<Layout, LineListError> {
        let at = |name: &str| Location::line(source, line).column(name);
        let names: Vec<String> = (0..fields.len())
            .map(|i| fields.get(i).to_string())
            .collect();
        let lowered: Vec<String> = names.iter().map(|name| name.to_lowercase()).collect();
        let mut position: Option<(usize, PositionUnit)> = None;
        let mut uncertainty: Option<(usize, UncertaintyUnit)> = None;
        let mut medium = None;
        let mut intensity = None;
        let mut extras = Vec::new();
        let mut first_index: HashMap<&str, usize> = HashMap::with_capacity(names.len());
        for (index, (name, lower)) in names.iter().zip(&lowered).enumerate() {
            if name.is_empty() {
                return Err(LineListError::EmptyColumnName {
                    location: Location::line(source, line),
                    index: index + 1,
                });
            }
            // A map, not a scan per column: a garbage header may have 100 000 columns.
            if let Some(first) = first_index.insert(lower.as_str(), index) {
                return Err(LineListError::DuplicateColumn {
                    location: at(name),
                    first_index: first + 1,
                });
            }
            let role = classify(lower).map_err(|accepted| LineListError::UnknownUnit {
                location: at(name),
                accepted,
            })?;
            match role {
                Role::Position(unit) => {
                    if let Some((first, _)) = position {
                        return Err(LineListError::TwoPositionColumns {
                            location: at(name),
                            first: names.get(first).cloned().unwrap_or_default(),
                        });
                    }
                    position = Some((index, unit));
                }
                Role::Uncertainty(unit) => {
                    if let Some((first, _)) = uncertainty {
                        return Err(LineListError::TwoUncertaintyColumns {
                            location: at(name),
                            first: names.get(first).cloned().unwrap_or_default(),
                        });
                    }
                    uncertainty = Some((index, unit));
                }
                Role::Medium => medium = Some(index),
                Role::Intensity => intensity = Some(index),
                Role::Extra => extras.push(index),
            }
        }
        let position = position.ok_or_else(|| LineListError::NoPositionColumn {
            location: Location::line(source, line),
            found: quoted_list(&names),
        })?;
        Ok(Layout {
            line,
            names,
            position,
            uncertainty,
            medium,
            intensity,
            extras,
        })
    }

    /// Number of columns.
    pub(crate) fn width(&self) -> usize {
        self.names.len()
    }

    /// Name of column `index` as written.
    pub(crate) fn name(&self, index: usize) -> &str {
        self.names.get(index).map_or("", String::as_str)
    }
}

/// Most column names quoted in a message.
const LISTED_NAMES: usize = 12;

/// `'a', 'b', 'c'`: the first [`LISTED_NAMES`] names, each shortened, then how many
/// more there are.
fn quoted_list(names: &[String]) -> String {
    let mut list = names
        .iter()
        .take(LISTED_NAMES)
        .map(|name| format!("'{}'", shorten(name)))
        .collect::<Vec<_>>()
        .join(", ");
    if names.len() > LISTED_NAMES {
        list.push_str(&format!(" and {} more", names.len() - LISTED_NAMES));
    }
    list
}

/// What a lower-cased column name holds; for a known quantity with an unknown unit,
/// the accepted names of that quantity.
fn classify(lower: &str) -> Result<Role, &'static str> {
    let length_unit = |unit: &str| match unit {
        "nm" => Some(LengthUnit::Nanometre),
        "a" => Some(LengthUnit::Angstrom),
        "um" => Some(LengthUnit::Micrometre),
        _ => None,
    };
    let quantity_and_unit = lower.split_once('_');
    match (lower, quantity_and_unit) {
        ("medium", _) => Ok(Role::Medium),
        ("intensity", _) => Ok(Role::Intensity),
        // The intensity's uncertainty, read by `assign` from the extra columns (same
        // unit as the intensity); not a position uncertainty.
        ("uncertainty_intensity", _) => Ok(Role::Extra),
        ("wavelength", _) => Err(POSITION_COLUMNS),
        ("wavenumber", _) => Err(POSITION_COLUMNS),
        ("uncertainty", _) => Err(UNCERTAINTY_COLUMNS),
        (_, Some(("wavelength", unit))) => length_unit(unit)
            .map(|unit| Role::Position(PositionUnit::Wavelength(unit)))
            .ok_or(POSITION_COLUMNS),
        (_, Some(("wavenumber", unit))) => match unit {
            "cm1" => Ok(Role::Position(PositionUnit::Wavenumber)),
            _ => Err(POSITION_COLUMNS),
        },
        (_, Some(("uncertainty", unit))) => match unit {
            "cm1" => Ok(Role::Uncertainty(UncertaintyUnit::Cm1)),
            _ => length_unit(unit)
                .map(|unit| Role::Uncertainty(UncertaintyUnit::Length(unit)))
                .ok_or(UNCERTAINTY_COLUMNS),
        },
        _ => Ok(Role::Extra),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_lists_of_names_are_cut_in_messages() {
        let names: Vec<String> = (0..100).map(|i| format!("c{i}")).collect();
        let list = quoted_list(&names);
        assert!(list.starts_with("'c0', 'c1', "), "{list}");
        assert!(list.ends_with("'c11' and 88 more"), "{list}");
    }

    #[test]
    fn classifies_column_names() {
        use LengthUnit::*;
        let cases = [
            (
                "wavelength_nm",
                Role::Position(PositionUnit::Wavelength(Nanometre)),
            ),
            (
                "wavelength_a",
                Role::Position(PositionUnit::Wavelength(Angstrom)),
            ),
            (
                "wavelength_um",
                Role::Position(PositionUnit::Wavelength(Micrometre)),
            ),
            ("wavenumber_cm1", Role::Position(PositionUnit::Wavenumber)),
            (
                "uncertainty_a",
                Role::Uncertainty(UncertaintyUnit::Length(Angstrom)),
            ),
            ("uncertainty_cm1", Role::Uncertainty(UncertaintyUnit::Cm1)),
            ("medium", Role::Medium),
            ("intensity", Role::Intensity),
            ("note", Role::Extra),
            ("intensity_ratio", Role::Extra),
            ("uncertainty_intensity", Role::Extra),
        ];
        for (name, role) in cases {
            assert_eq!(classify(name), Ok(role), "{name}");
        }
        for name in [
            "wavelength_mm",
            "wavelength",
            "wavelength_ritz",
            "wavenumber_m1",
            "uncertainty_pm",
        ] {
            assert!(classify(name).is_err(), "{name}");
        }
    }
}
