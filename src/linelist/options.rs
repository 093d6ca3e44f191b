//! What the caller adds to a line list: the medium, a global uncertainty, the air
//! formula and how to treat bad rows.

use std::fmt;
use std::str::FromStr;

use crate::units::{AirFormula, LengthUnit, Medium};

/// Options of [`read_line_list`](super::read_line_list).
#[derive(Debug, Clone, PartialEq)]
pub struct ReadOptions {
    /// Medium of wavelengths whose row does not say (no `medium` column, or a blank
    /// cell). `None` leaves it to the convention: air at and above 200 nm, vacuum
    /// below. Ignored for wavenumbers, which are vacuum wavenumbers.
    /// Default: `None`.
    pub medium: Option<Medium>,
    /// Uncertainty of every line whose row has none (no uncertainty column, or a
    /// blank cell). Default: `None` (each row must give its own).
    pub uncertainty: Option<GlobalUncertainty>,
    /// Formula for the refractive index of air, used to convert air wavelengths.
    /// Default: [`AirFormula::BirchDowns1994`].
    pub air_formula: AirFormula,
    /// Leave out bad data rows, recording them in
    /// [`LineList::skipped`](super::LineList::skipped), instead of stopping at the
    /// first one. Problems with the header are never skipped. Default: `false`.
    pub skip_bad: bool,
    /// Longest line accepted, in bytes (without the line end). A longer line is a bad
    /// row, or an error at once when it is the header or rows are not skipped, so
    /// that input that is not a line list fails quickly and in bounded memory.
    /// Default: 1 MiB (1 048 576).
    pub max_line_bytes: usize,
}

impl Default for ReadOptions {
    fn default() -> Self {
        ReadOptions {
            medium: None,
            uncertainty: None,
            air_formula: AirFormula::default(),
            skip_bad: false,
            max_line_bytes: 1 << 20,
        }
    }
}

/// The unit of an uncertainty: a length (of a wavelength) or cm⁻¹ (of a wavenumber).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UncertaintyUnit {
    /// A wavelength uncertainty in this unit.
    Length(LengthUnit),
    /// A wavenumber uncertainty in cm⁻¹.
    Cm1,
}

impl UncertaintyUnit {
    /// The suffix used in column names: `nm`, `A`, `um`, `cm1`.
    pub fn suffix(self) -> &'static str {
        match self {
            UncertaintyUnit::Length(unit) => unit.suffix(),
            UncertaintyUnit::Cm1 => "cm1",
        }
    }

    /// Parse a unit: a length unit as [`LengthUnit::from_name`] accepts, or `cm-1`,
    /// `cm1`, `cm^-1`, `cm⁻¹`, `/cm` (ignoring case for the wavenumber forms).
    pub fn from_name(name: &str) -> Option<UncertaintyUnit> {
        let name = name.trim();
        if let Some(unit) = LengthUnit::from_name(name) {
            return Some(UncertaintyUnit::Length(unit));
        }
        ["cm-1", "cm1", "cm^-1", "cm⁻¹", "/cm"]
            .iter()
            .any(|form| form.eq_ignore_ascii_case(name))
            .then_some(UncertaintyUnit::Cm1)
    }
}

impl fmt::Display for UncertaintyUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UncertaintyUnit::Length(unit) => unit.fmt(f),
            UncertaintyUnit::Cm1 => f.write_str("cm⁻¹"),
        }
    }
}

/// One standard uncertainty for all lines that do not give their own, with its unit
/// (for example 0.002 nm, or 0.05 cm⁻¹). Always finite and greater than zero.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GlobalUncertainty {
    value: f64,
    unit: UncertaintyUnit,
}

/// A global uncertainty that could not be taken.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum UncertaintyError {
    /// The value is zero, negative or not finite.
    #[error("an uncertainty must be a finite number greater than zero, got {0}")]
    NotPositive(f64),
    /// The text is not a number followed by a unit.
    #[error(
        "'{0}' is not an uncertainty; write a number and a unit, e.g. 0.002nm, 0.02A, 0.05cm-1"
    )]
    Unreadable(String),
}

impl GlobalUncertainty {
    /// An uncertainty of `value` in `unit`; `value` must be finite and greater than
    /// zero.
    pub fn new(value: f64, unit: UncertaintyUnit) -> Result<Self, UncertaintyError> {
        if value.is_finite() && value > 0.0 {
            Ok(GlobalUncertainty { value, unit })
        } else {
            Err(UncertaintyError::NotPositive(value))
        }
    }

    /// The number, in [`GlobalUncertainty::unit`].
    pub fn value(&self) -> f64 {
        self.value
    }

    /// The unit of the number.
    pub fn unit(&self) -> UncertaintyUnit {
        self.unit
    }
}

impl FromStr for GlobalUncertainty {
    type Err = UncertaintyError;

    /// Parse a number followed by a unit, with or without a space: `0.002nm`,
    /// `0.02 A`, `0.0001um`, `0.05 cm-1` (units as [`UncertaintyUnit::from_name`]).
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        let trimmed = text.trim();
        let unreadable = || UncertaintyError::Unreadable(trimmed.to_string());
        let split = number_length(trimmed);
        let number = trimmed.get(..split).ok_or_else(unreadable)?;
        let unit = trimmed.get(split..).ok_or_else(unreadable)?;
        let value: f64 = number.trim().parse().map_err(|_| unreadable())?;
        let unit = UncertaintyUnit::from_name(unit).ok_or_else(unreadable)?;
        GlobalUncertainty::new(value, unit)
    }
}

/// Length in bytes of the number at the start of `text`: digits, `.`, signs, and an
/// `e`/`E` when an exponent (optionally signed digits) follows it. Only ASCII bytes
/// are counted, so the result is a char boundary.
fn number_length(text: &str) -> usize {
    let bytes = text.as_bytes();
    let mut length = 0;
    while let Some(&byte) = bytes.get(length) {
        let starts_exponent = matches!(byte, b'e' | b'E') && {
            let rest = bytes.get(length + 1..).unwrap_or_default();
            let digits = rest
                .strip_prefix(b"+")
                .or_else(|| rest.strip_prefix(b"-"))
                .unwrap_or(rest);
            digits.first().is_some_and(u8::is_ascii_digit)
        };
        if byte.is_ascii_digit() || matches!(byte, b'.' | b'+' | b'-') || starts_exponent {
            length += 1;
        } else {
            break;
        }
    }
    length
}

impl fmt::Display for GlobalUncertainty {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} {}", self.value, self.unit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_number_and_unit() {
        let cases = [
            (
                "0.002nm",
                0.002,
                UncertaintyUnit::Length(LengthUnit::Nanometre),
            ),
            (
                "0.02 A",
                0.02,
                UncertaintyUnit::Length(LengthUnit::Angstrom),
            ),
            (
                "1e-4um",
                1e-4,
                UncertaintyUnit::Length(LengthUnit::Micrometre),
            ),
            ("0.05 cm-1", 0.05, UncertaintyUnit::Cm1),
            ("0.05cm⁻¹", 0.05, UncertaintyUnit::Cm1),
            (" 2.5E-2 CM-1 ", 0.025, UncertaintyUnit::Cm1),
        ];
        for (text, value, unit) in cases {
            let u: GlobalUncertainty = text.parse().unwrap();
            assert_eq!((u.value(), u.unit()), (value, unit), "{text}");
        }
    }

    #[test]
    fn rejects_missing_unit_and_non_positive_values() {
        assert!(matches!(
            "0.002".parse::<GlobalUncertainty>(),
            Err(UncertaintyError::Unreadable(_))
        ));
        assert!(matches!(
            "0.002 mm".parse::<GlobalUncertainty>(),
            Err(UncertaintyError::Unreadable(_))
        ));
        assert!(matches!(
            "nm".parse::<GlobalUncertainty>(),
            Err(UncertaintyError::Unreadable(_))
        ));
        assert_eq!(
            "0nm".parse::<GlobalUncertainty>(),
            Err(UncertaintyError::NotPositive(0.0))
        );
        assert_eq!(
            "-1 cm-1".parse::<GlobalUncertainty>(),
            Err(UncertaintyError::NotPositive(-1.0))
        );
        assert!(GlobalUncertainty::new(f64::NAN, UncertaintyUnit::Cm1).is_err());
    }
}
