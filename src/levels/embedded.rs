//! The spectra compiled into the program (`reference-levels/`): one level table per
//! spectrum and, where the source gives them, the published E1 transition
//! probabilities A_ki of its lines.
//!
//! Each table was made from the NIST Atomic Spectra Database (Kramida, Ralchenko,
//! Reader and NIST ASD Team; retrievals of 2013 to 2017, one per spectrum) by
//! `reference-levels/make_tables.py`; the files and `reference-levels/SOURCES.md` say
//! which release, what the uncertainties assume, and what was left out. They are
//! parsed when used; tests parse every one, so a bad table is caught before
//! release, never at a user's run.
//!
//! [`compiled_predictions`] gives the Ritz lines of the chosen spectra between
//! [`COMPILED_RANGE_NM`] (100 nm to 2.5 µm in vacuum), each with its published A_ki
//! when the table has one.

use std::collections::HashMap;

use super::predicted::{AccuracyCode, PredictionError, Predictions, TransitionProbability};
use super::reach::{ListReach, Reach};
use super::ritz::{WavenumberRange, predict_levels};
use super::table::{LevelTable, LevelTableError, read_level_table};
use crate::location::Location;
use crate::notation::Species;

/// One compiled spectrum.
#[derive(Debug, Clone, Copy)]
pub struct EmbeddedTable {
    /// The spectrum, as written on the command line (`He I`).
    pub species: &'static str,
    /// File name of the level table in `reference-levels/`.
    pub file: &'static str,
    /// The level table, CSV.
    pub text: &'static str,
    /// The classified E1 lines of the source and their transition probabilities
    /// (`<file stem>-lines.csv`: columns `lower,upper,A_s1,accuracy`, the levels by
    /// their data row in the level table, A_s1 blank when none is published), when
    /// the source has a line list.
    pub rates: Option<&'static str>,
}

/// Every compiled spectrum, lightest element first, then by ionisation stage.
pub const EMBEDDED_TABLES: [EmbeddedTable; 29] = [
    EmbeddedTable {
        species: "H I",
        file: "HI.csv",
        text: include_str!("../../reference-levels/HI.csv"),
        rates: Some(include_str!("../../reference-levels/HI-lines.csv")),
    },
    EmbeddedTable {
        species: "He I",
        file: "HeI.csv",
        text: include_str!("../../reference-levels/HeI.csv"),
        rates: Some(include_str!("../../reference-levels/HeI-lines.csv")),
    },
    EmbeddedTable {
        species: "Li I",
        file: "LiI.csv",
        text: include_str!("../../reference-levels/LiI.csv"),
        rates: Some(include_str!("../../reference-levels/LiI-lines.csv")),
    },
    EmbeddedTable {
        species: "C I",
        file: "CI.csv",
        text: include_str!("../../reference-levels/CI.csv"),
        rates: Some(include_str!("../../reference-levels/CI-lines.csv")),
    },
    EmbeddedTable {
        species: "C II",
        file: "CII.csv",
        text: include_str!("../../reference-levels/CII.csv"),
        rates: Some(include_str!("../../reference-levels/CII-lines.csv")),
    },
    EmbeddedTable {
        species: "N I",
        file: "NI.csv",
        text: include_str!("../../reference-levels/NI.csv"),
        rates: Some(include_str!("../../reference-levels/NI-lines.csv")),
    },
    EmbeddedTable {
        species: "N II",
        file: "NII.csv",
        text: include_str!("../../reference-levels/NII.csv"),
        rates: Some(include_str!("../../reference-levels/NII-lines.csv")),
    },
    EmbeddedTable {
        species: "O I",
        file: "OI.csv",
        text: include_str!("../../reference-levels/OI.csv"),
        rates: Some(include_str!("../../reference-levels/OI-lines.csv")),
    },
    EmbeddedTable {
        species: "O II",
        file: "OII.csv",
        text: include_str!("../../reference-levels/OII.csv"),
        rates: Some(include_str!("../../reference-levels/OII-lines.csv")),
    },
    EmbeddedTable {
        species: "Ne I",
        file: "NeI.csv",
        text: include_str!("../../reference-levels/NeI.csv"),
        rates: Some(include_str!("../../reference-levels/NeI-lines.csv")),
    },
    EmbeddedTable {
        species: "Ne II",
        file: "NeII.csv",
        text: include_str!("../../reference-levels/NeII.csv"),
        rates: Some(include_str!("../../reference-levels/NeII-lines.csv")),
    },
    EmbeddedTable {
        species: "Na I",
        file: "NaI.csv",
        text: include_str!("../../reference-levels/NaI.csv"),
        rates: Some(include_str!("../../reference-levels/NaI-lines.csv")),
    },
    EmbeddedTable {
        species: "Mg I",
        file: "MgI.csv",
        text: include_str!("../../reference-levels/MgI.csv"),
        rates: Some(include_str!("../../reference-levels/MgI-lines.csv")),
    },
    EmbeddedTable {
        species: "Mg II",
        file: "MgII.csv",
        text: include_str!("../../reference-levels/MgII.csv"),
        rates: Some(include_str!("../../reference-levels/MgII-lines.csv")),
    },
    EmbeddedTable {
        species: "Al I",
        file: "AlI.csv",
        text: include_str!("../../reference-levels/AlI.csv"),
        rates: Some(include_str!("../../reference-levels/AlI-lines.csv")),
    },
    EmbeddedTable {
        species: "Si I",
        file: "SiI.csv",
        text: include_str!("../../reference-levels/SiI.csv"),
        rates: Some(include_str!("../../reference-levels/SiI-lines.csv")),
    },
    EmbeddedTable {
        species: "Ar I",
        file: "ArI.csv",
        text: include_str!("../../reference-levels/ArI.csv"),
        rates: Some(include_str!("../../reference-levels/ArI-lines.csv")),
    },
    EmbeddedTable {
        species: "Ar II",
        file: "ArII.csv",
        text: include_str!("../../reference-levels/ArII.csv"),
        rates: Some(include_str!("../../reference-levels/ArII-lines.csv")),
    },
    EmbeddedTable {
        species: "K I",
        file: "KI.csv",
        text: include_str!("../../reference-levels/KI.csv"),
        rates: Some(include_str!("../../reference-levels/KI-lines.csv")),
    },
    EmbeddedTable {
        species: "Ca I",
        file: "CaI.csv",
        text: include_str!("../../reference-levels/CaI.csv"),
        rates: Some(include_str!("../../reference-levels/CaI-lines.csv")),
    },
    EmbeddedTable {
        species: "Ca II",
        file: "CaII.csv",
        text: include_str!("../../reference-levels/CaII.csv"),
        rates: Some(include_str!("../../reference-levels/CaII-lines.csv")),
    },
    EmbeddedTable {
        species: "Fe I",
        file: "FeI.csv",
        text: include_str!("../../reference-levels/FeI.csv"),
        rates: Some(include_str!("../../reference-levels/FeI-lines.csv")),
    },
    EmbeddedTable {
        species: "Fe II",
        file: "FeII.csv",
        text: include_str!("../../reference-levels/FeII.csv"),
        rates: None,
    },
    EmbeddedTable {
        species: "Cu I",
        file: "CuI.csv",
        text: include_str!("../../reference-levels/CuI.csv"),
        rates: Some(include_str!("../../reference-levels/CuI-lines.csv")),
    },
    EmbeddedTable {
        species: "Zn I",
        file: "ZnI.csv",
        text: include_str!("../../reference-levels/ZnI.csv"),
        rates: None,
    },
    EmbeddedTable {
        species: "Kr II",
        file: "KrII.csv",
        text: include_str!("../../reference-levels/KrII.csv"),
        rates: None,
    },
    EmbeddedTable {
        species: "Cd I",
        file: "CdI.csv",
        text: include_str!("../../reference-levels/CdI.csv"),
        rates: Some(include_str!("../../reference-levels/CdI-lines.csv")),
    },
    EmbeddedTable {
        species: "W I",
        file: "WI.csv",
        text: include_str!("../../reference-levels/WI.csv"),
        rates: None,
    },
    EmbeddedTable {
        species: "Hg I",
        file: "HgI.csv",
        text: include_str!("../../reference-levels/HgI.csv"),
        rates: Some(include_str!("../../reference-levels/HgI-lines.csv")),
    },
];

/// The vacuum wavelengths (nm) between which the compiled spectra are predicted:
/// 100 nm to 2.5 µm, the range of their published line lists.
pub const COMPILED_RANGE_NM: (f64, f64) = (100.0, 2500.0);

/// A compiled table of transition probabilities that cannot be read (a defect of the
/// build, caught by the tests).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{location}: {problem}")]
pub struct RatesError {
    /// The row.
    pub location: Location,
    /// What is wrong.
    pub problem: String,
}

/// Reading or predicting a compiled spectrum failed (a defect of the build).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum CompiledError {
    /// The level table.
    #[error(transparent)]
    Levels(#[from] LevelTableError),
    /// The transition probabilities.
    #[error(transparent)]
    Rates(#[from] RatesError),
    /// The predictions.
    #[error(transparent)]
    Predictions(#[from] PredictionError),
}

impl EmbeddedTable {
    /// The source name used in messages and outputs: `<embedded He I>`.
    pub fn source_name(&self) -> String {
        format!("<embedded {}>", self.species)
    }

    /// The spectrum.
    pub fn spectrum(&self) -> Species {
        // The names above are valid species labels (checked by the tests).
        self.species.parse().unwrap_or(Species {
            atomic_number: 1,
            charge: 0,
        })
    }

    /// The citation of the source, from the table's first comment line.
    pub fn citation(&self) -> &'static str {
        self.text
            .lines()
            .next()
            .and_then(|l| l.split_once("Source: "))
            .map_or("", |(_, s)| s.trim_end_matches('.'))
    }

    /// Parse the level table.
    pub fn load(&self) -> Result<LevelTable, LevelTableError> {
        read_level_table(self.text.as_bytes(), &self.source_name())
    }

    /// The published lines, by the 0-based indices of their two levels in the table's
    /// order (lower index first), each with its transition probability when one is
    /// published (empty when the source has no line list).
    pub fn transition_rates(
        &self,
    ) -> Result<HashMap<(usize, usize), Option<TransitionProbability>>, RatesError> {
        let mut rates = HashMap::new();
        let Some(text) = self.rates else {
            return Ok(rates);
        };
        let source = format!("<embedded {} transition probabilities>", self.species);
        let mut header_seen = false;
        for (number, line) in text.lines().enumerate() {
            let bad = |problem: String| RatesError {
                location: Location::line(source.clone(), number + 1),
                problem,
            };
            if line.starts_with('#') || line.trim().is_empty() {
                continue;
            }
            if !header_seen {
                header_seen = true;
                if line != "lower,upper,A_s1,accuracy" {
                    return Err(bad(format!("unexpected header '{line}'")));
                }
                continue;
            }
            let fields: Vec<&str> = line.split(',').collect();
            let [lower, upper, a, accuracy] = fields.as_slice() else {
                return Err(bad(format!("{} fields where 4 are expected", fields.len())));
            };
            let row = |text: &str| {
                text.parse::<usize>()
                    .ok()
                    .and_then(|r| r.checked_sub(1))
                    .ok_or_else(|| bad(format!("'{text}' is not a level row")))
            };
            let a_ki_s1 = if a.is_empty() {
                None
            } else {
                Some(
                    a.parse::<f64>()
                        .ok()
                        .filter(|v| v.is_finite() && *v > 0.0)
                        .ok_or_else(|| bad(format!("'{a}' is not a transition probability")))?,
                )
            };
            let accuracy = if accuracy.is_empty() {
                None
            } else {
                Some(
                    AccuracyCode::from_name(accuracy)
                        .ok_or_else(|| bad(format!("'{accuracy}' is not an accuracy code")))?,
                )
            };
            let (i, k) = (row(lower)?, row(upper)?);
            rates.insert(
                (i.min(k), i.max(k)),
                a_ki_s1.map(|a_ki_s1| TransitionProbability {
                    a_ki_s1,
                    g_upper: 0,
                    accuracy,
                }),
            );
        }
        Ok(rates)
    }

    /// The Ritz predictions of this spectrum within [`COMPILED_RANGE_NM`], with the
    /// published transition probabilities.
    pub fn predictions(&self) -> Result<Predictions, CompiledError> {
        let table = self.load()?;
        self.predictions_of(table, None)
    }

    /// [`EmbeddedTable::predictions`] from the table already loaded, keeping only the
    /// lines within `keep` (all when `None`; see [`super::ListReach`]).
    fn predictions_of(
        &self,
        table: LevelTable,
        keep: Option<&Reach>,
    ) -> Result<Predictions, CompiledError> {
        let rates = self.transition_rates()?;
        let warnings = table.warnings.len();
        let mut predictions = predict_levels(
            table.levels,
            &table.source,
            Some(compiled_range()),
            keep,
            Some(&rates),
        )?;
        let listed = predictions
            .summary(self.spectrum())
            .map_or(0, |s| s.listed_lines);
        if listed > 0 {
            predictions.add_note(
                self.spectrum(),
                format!(
                    "{listed} lines are in the source's line list (ranked without the \
                     selection-rule penalty; the other lines ranked as if breaking one rule \
                     more)"
                ),
            );
        }
        if warnings > 0 {
            predictions.add_note(
                self.spectrum(),
                format!(
                    "{warnings} levels kept as published with a label warning (term parity or J; \
                     reference-levels/SOURCES.md)"
                ),
            );
        }
        Ok(predictions)
    }
}

/// [`COMPILED_RANGE_NM`] as vacuum wavenumbers.
pub fn compiled_range() -> WavenumberRange {
    WavenumberRange {
        low_cm1: 1e7 / COMPILED_RANGE_NM.1,
        high_cm1: 1e7 / COMPILED_RANGE_NM.0,
    }
}

/// The embedded table of `species`, if there is one.
pub fn embedded_table(species: Species) -> Option<&'static EmbeddedTable> {
    EMBEDDED_TABLES.iter().find(|t| t.spectrum() == species)
}

/// The compiled spectra of an element, every stage (`Ar` gives Ar I and Ar II).
pub fn embedded_stages(atomic_number: u32) -> Vec<&'static EmbeddedTable> {
    EMBEDDED_TABLES
        .iter()
        .filter(|t| t.spectrum().atomic_number == atomic_number)
        .collect()
}

/// The predictions of the given compiled spectra, combined into one set.
pub fn compiled_predictions(tables: &[&EmbeddedTable]) -> Result<Predictions, CompiledError> {
    use rayon::prelude::*;
    let sets = tables
        .par_iter()
        .map(|t| t.predictions())
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Predictions::combine(sets)?)
}

/// [`compiled_predictions`] keeping only the lines that the observed lines of
/// `reach` can reach (see [`super::ListReach`]), when no other prediction matched
/// beside these has a standard uncertainty above `other_uncertainty_cm1` (cm⁻¹).
/// The matcher's results are the same as with every line kept; the summaries still
/// count every line predicted.
pub fn compiled_predictions_near(
    tables: &[&EmbeddedTable],
    reach: &ListReach,
    other_uncertainty_cm1: f64,
) -> Result<Predictions, CompiledError> {
    use rayon::prelude::*;
    let loaded = tables
        .par_iter()
        .map(|t| t.load().map(|table| (*t, table)))
        .collect::<Result<Vec<_>, _>>()?;
    // A Ritz line's uncertainty √(u₁² + u₂²) is at most √2 times the largest level
    // uncertainty of its table.
    let bound = loaded
        .iter()
        .flat_map(|(_, table)| table.levels.iter().map(|l| l.uncertainty_cm1))
        .fold(other_uncertainty_cm1, |m, u| {
            m.max(u * std::f64::consts::SQRT_2)
        });
    let keep = reach.with_prediction_uncertainty(bound);
    let sets = loaded
        .into_par_iter()
        .map(|(t, table)| t.predictions_of(table, Some(&keep)))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Predictions::combine(sets)?)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_embedded_table_parses_and_holds_its_species_only() {
        for table in EMBEDDED_TABLES {
            let species: Species = table.species.parse().unwrap();
            assert_eq!(table.spectrum(), species);
            let levels = table.load().unwrap_or_else(|e| panic!("{e}"));
            assert_eq!(levels.species(), vec![species], "{}", table.file);
            assert!(embedded_table(species).is_some());
            assert!(table.citation().starts_with("Kramida"), "{}", table.file);
            // The ground level is the zero of the scale, with no uncertainty
            // (NIST ASD tables; reference-levels/SOURCES.md).
            let lowest = levels
                .levels
                .iter()
                .min_by(|a, b| a.energy_cm1.total_cmp(&b.energy_cm1))
                .unwrap();
            assert_eq!((lowest.energy_cm1, lowest.uncertainty_cm1), (0.0, 0.0));
            assert!(levels.levels.iter().all(|l| l.uncertainty_cm1 >= 0.0));
            let rates = table.transition_rates().unwrap_or_else(|e| panic!("{e}"));
            assert!(
                rates
                    .keys()
                    .all(|&(i, k)| i < levels.levels.len() && k < levels.levels.len())
            );
        }
    }

    #[test]
    fn table_sizes_match_the_sources() {
        // Row counts of the NIST ASD exports (reference-levels/SOURCES.md;
        // shared/reference-data SOURCES.md): H I keeps 54 of 93 rows (the 39 n-only
        // centroid rows are left out), W I 464 of 507 (43 rows without J left out);
        // the others every row.
        let sizes: Vec<(&str, usize)> = EMBEDDED_TABLES
            .iter()
            .map(|t| (t.species, t.load().unwrap().levels.len()))
            .collect();
        let expected = [
            ("H I", 54),
            ("He I", 101),
            ("Li I", 181),
            ("C I", 276),
            ("C II", 206),
            ("N I", 366),
            ("N II", 178),
            ("O I", 580),
            ("O II", 275),
            ("Ne I", 223),
            ("Ne II", 372),
            ("Na I", 216),
            ("Mg I", 305),
            ("Mg II", 107),
            ("Al I", 187),
            ("Si I", 540),
            ("Ar I", 503),
            ("Ar II", 418),
            ("K I", 230),
            ("Ca I", 780),
            ("Ca II", 71),
            ("Fe I", 846),
            ("Fe II", 1027),
            ("Cu I", 294),
            ("Zn I", 326),
            ("Kr II", 79),
            ("Cd I", 26),
            ("W I", 464),
            ("Hg I", 205),
        ];
        assert_eq!(sizes, expected);
    }

    #[test]
    fn known_levels_have_their_published_energies() {
        // NIST ASD, as printed: He I 1s2p 1P°1 = 171134.896946 cm-1 (2014, bracketed);
        // Ne I 2p5(2P°3/2)3s 2[3/2]°2 = 134041.8400; Hg I 6s6p 3P°1 = 39412.237;
        // N I 2s2p3(5S°)3p 6P3/2 = 142080.75+x (2013); Fe I 3d6 4s2 a 5D4 = 0.
        let cases = [
            ("He I", "1s.2p 1P° 1", 171134.896946, 1e-6),
            ("Ne I", "2s2.2p5.(2P°<3/2>).3s 2[3/2]° 2", 134041.84, 1e-4),
            ("Hg I", "5d10.6s.6p 3P° 1", 39412.237, 1e-3),
            ("N I", "2s.2p3.(5S°).3p 6P 3/2", 142080.75, 1e-2),
            ("Fe I", "3d6.4s2 a 5D 4", 0.0, 0.0),
        ];
        for (species, label, energy, uncertainty) in cases {
            let species: Species = species.parse().unwrap();
            let table = embedded_table(species).unwrap().load().unwrap();
            let level = table
                .find(species, &label.parse().unwrap())
                .unwrap_or_else(|| panic!("{label}"));
            assert_eq!(level.energy_cm1, energy);
            assert_eq!(level.uncertainty_cm1, uncertainty);
        }
        let nitrogen = embedded_table("N I".parse().unwrap())
            .unwrap()
            .load()
            .unwrap();
        let sextet = nitrogen
            .find(
                "N I".parse().unwrap(),
                &"2s.2p3.(5S°).3p 6P 3/2".parse().unwrap(),
            )
            .unwrap();
        assert_eq!(sextet.energy_status.offset, Some('x'));
    }

    #[test]
    fn elements_give_every_compiled_stage() {
        let argon: Vec<&str> = embedded_stages(18).iter().map(|t| t.species).collect();
        assert_eq!(argon, vec!["Ar I", "Ar II"]);
        assert!(embedded_stages(54).is_empty());
    }
}
