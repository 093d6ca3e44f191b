//! Entry points of the fuzz targets (`tests/fuzz/fuzz_targets/`), shared with the
//! test that replays their committed corpus and crash reproducers
//! (`tests/fuzz_corpus.rs`), so that both run exactly the same code.
//!
//! Each function takes arbitrary bytes, feeds them to one reader as a user's file
//! would be, and checks what the reader promises: it returns a value or an error
//! whose message names the source (never a panic), and what it returns is sane.
//! A broken promise panics, which the fuzzer records as a crash. Not part of the
//! public interface.

use crate::levels::optimize::{OptimizeOptions, optimize_classified, read_classified_lines};
use crate::levels::{LevelLabel, read_level_table};
use crate::linelist::{GlobalUncertainty, ReadOptions, UncertaintyUnit, read_line_list};
use crate::notation::{Configuration, HalfInt, Species, Term};
use crate::report::{OptimizeContext, optimized_levels_csv, optimized_lines_csv};
use crate::structure::model::{parse_model, write_model};
use crate::structure::{DipoleIntegral, Radial};
use crate::units::{AirFormula, LengthUnit, Medium};

/// The name the inputs are read under; every error message must carry it.
const SOURCE: &str = "fuzz.input";

fn names_source(message: &str) {
    assert!(
        message.contains(SOURCE),
        "error message without the file name: {message}"
    );
}

/// The measured line-list reader ([`read_line_list`]). The first byte chooses the
/// options (skip bad rows, medium, air formula, a global uncertainty, a short line
/// limit); the rest is the file.
pub fn line_list(data: &[u8]) {
    let Some((&choice, text)) = data.split_first() else {
        return;
    };
    let options = ReadOptions {
        skip_bad: choice & 1 != 0,
        medium: match (choice >> 1) & 3 {
            1 => Some(Medium::Air),
            2 => Some(Medium::Vacuum),
            _ => None,
        },
        air_formula: match (choice >> 3) & 3 {
            1 => AirFormula::Edlen1966,
            2 => AirFormula::Ciddor1996,
            _ => AirFormula::BirchDowns1994,
        },
        uncertainty: match (choice >> 5) & 3 {
            1 => GlobalUncertainty::new(0.002, UncertaintyUnit::Length(LengthUnit::Nanometre)).ok(),
            2 => GlobalUncertainty::new(0.05, UncertaintyUnit::Cm1).ok(),
            _ => None,
        },
        max_line_bytes: if choice & 0x80 != 0 { 64 } else { 1 << 20 },
    };
    match read_line_list(text, SOURCE, &options) {
        Ok(list) => {
            let mut previous_row = 0;
            for line in &list.lines {
                assert!(
                    line.wavenumber_cm1.is_finite() && line.wavenumber_cm1 > 0.0,
                    "wavenumber {} accepted",
                    line.wavenumber_cm1
                );
                assert!(
                    line.uncertainty_cm1.is_finite() && line.uncertainty_cm1 > 0.0,
                    "uncertainty {} accepted",
                    line.uncertainty_cm1
                );
                assert!(line.intensity.is_none_or(f64::is_finite));
                assert_eq!(line.extra.len(), list.extra_columns.len());
                assert!(line.row > previous_row, "rows out of order");
                previous_row = line.row;
            }
            assert!(list.skipped_total >= list.skipped.len());
            for skipped in &list.skipped {
                names_source(&skipped.location.to_string());
            }
        }
        Err(e) => names_source(&e.to_string()),
    }
}

/// The level-table reader ([`read_level_table`]).
pub fn level_table(data: &[u8]) {
    match read_level_table(data, SOURCE) {
        Ok(table) => {
            for level in &table.levels {
                assert!(level.energy_cm1.is_finite(), "energy {}", level.energy_cm1);
                assert!(
                    level.uncertainty_cm1.is_finite() && level.uncertainty_cm1 >= 0.0,
                    "uncertainty {}",
                    level.uncertainty_cm1
                );
                // The label prints in a form the reader takes back.
                let again: Result<LevelLabel, _> = level.label.to_string().parse();
                assert_eq!(again.as_ref().ok(), Some(&level.label), "{}", level.label);
            }
        }
        Err(e) => names_source(&e.to_string()),
    }
}

/// Upper bound of the determinants of a configuration: the product of the
/// binomials C(2(2l+1), w) of its subshells (saturating).
fn determinant_bound(configuration: &Configuration) -> u64 {
    configuration.subshells().fold(1u64, |product, shell| {
        let capacity = u64::from(shell.capacity());
        let w = u64::from(shell.occupancy).min(capacity);
        let mut binomial = 1u64;
        for i in 0..w {
            binomial = binomial.saturating_mul(capacity - i) / (i + 1);
        }
        product.saturating_mul(binomial)
    })
}

/// Largest model the fuzz target builds: a model of many thousand states takes
/// seconds to build, which would only slow the fuzzing (the size of a model is
/// the business of the level-structure code, not of the reader).
const FUZZ_MAX_DETERMINANTS: u64 = 2_000;

/// The model TOML reader ([`parse_model`]); an accepted model must write out
/// ([`write_model`]) and read back as the same model.
pub fn model(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        // The reader's UTF-8 check is in `read_model`; run it too.
        if let Err(e) = crate::structure::model::read_model(data, SOURCE) {
            names_source(&e.to_string());
        }
        return;
    };
    if model_too_large(text) {
        return;
    }
    match parse_model(text, SOURCE) {
        Ok(loaded) => {
            let written = write_model(&loaded.model);
            let again = parse_model(&written, "written.toml")
                .unwrap_or_else(|e| panic!("the written model does not read back: {e}\n{written}"));
            assert_eq!(again.model, loaded.model, "written as\n{written}");
        }
        Err(e) => names_source(&e.to_string()),
    }
}

/// Whether the configurations named in `text` add up to more determinants than
/// [`FUZZ_MAX_DETERMINANTS`]. Every quoted string that reads as a configuration
/// counts (an over-estimate: `between` names them again).
fn model_too_large(text: &str) -> bool {
    let mut total = 0u64;
    for quote in ['"', '\''] {
        for (i, piece) in text.split(quote).enumerate() {
            if i % 2 == 1
                && let Ok(configuration) = piece.parse::<Configuration>()
            {
                total = total.saturating_add(determinant_bound(&configuration));
            }
        }
    }
    total > FUZZ_MAX_DETERMINANTS
}

/// The notation parsers: configurations, terms, J, species, whole level labels
/// and parameter names. What a parser accepts must print in a form it reads back
/// as the same value (the promise of [`crate::notation`]).
pub fn notation(data: &[u8]) {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    fn round_trip<T>(text: &str)
    where
        T: std::str::FromStr + std::fmt::Display + PartialEq + std::fmt::Debug,
    {
        if let Ok(value) = text.parse::<T>() {
            let printed = value.to_string();
            let again = printed.parse::<T>().ok();
            assert_eq!(
                again.as_ref(),
                Some(&value),
                "'{text}' printed as '{printed}' does not read back"
            );
        }
    }
    round_trip::<Configuration>(text);
    round_trip::<Term>(text);
    round_trip::<HalfInt>(text);
    round_trip::<Species>(text);
    round_trip::<LevelLabel>(text);
    round_trip::<Radial>(text);
    round_trip::<DipoleIntegral>(text);
    // The three fields of a level table's row, split at the first two commas.
    let mut fields = text.splitn(3, ',');
    let (c, t, j) = (
        fields.next().unwrap_or(""),
        fields.next().unwrap_or(""),
        fields.next().unwrap_or(""),
    );
    if let Ok(label) = LevelLabel::from_fields(c, t, j) {
        let again: Result<LevelLabel, _> = label.to_string().parse();
        assert_eq!(again.as_ref().ok(), Some(&label), "{label}");
        let _ = label.warnings();
    }
}

/// The assignment CSV as `optimize` reads it ([`read_classified_lines`], then
/// the level optimisation and its CSV outputs), and as the library reads it back
/// ([`crate::assign::read_assignments`]).
pub fn assignments(data: &[u8]) {
    let default_species = "He I".parse::<Species>().ok();
    match read_classified_lines(data, SOURCE, default_species) {
        Ok(lines) => {
            for line in &lines.lines {
                assert!(line.wavenumber_cm1.is_finite());
                assert!(line.uncertainty_cm1.is_finite() && line.uncertainty_cm1 > 0.0);
            }
            let options = OptimizeOptions::default();
            if let Ok(report) = optimize_classified(&lines, &options) {
                let context = OptimizeContext {
                    source: SOURCE,
                    options: &options,
                    air_formula: AirFormula::default(),
                };
                let _ = optimized_levels_csv(&report, &context);
                let _ = optimized_lines_csv(&report, &context);
            }
        }
        Err(e) => names_source(&e.to_string()),
    }
    if let Err(e) = crate::assign::read_assignments(data, SOURCE) {
        names_source(&e.to_string());
    }
}
