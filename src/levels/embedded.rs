//! The spectra compiled into the program (`reference-levels/`): one level table per
//! spectrum and, where the source gives them, the published E1 transition
//! probabilities A_ki of its lines.
//!
//! Each table was made from the NIST Atomic Spectra Database (Kramida, Ralchenko,
//! Reader and NIST ASD Team; retrievals of 2013 to 2017, one per spectrum) by
//! `reference-levels/make_tables.py`; the files and `reference-levels/SOURCES.md` say
//! which release, what the uncertainties assume, and what was left out. They are
//! read at build time (`build.rs`, with the readers of [`super::read_level_table`]):
//! a bad table stops the build with a message naming its file, line and column, and
//! the program carries the levels, their warnings and the published lines in a
//! compact binary form ([`super::compiled_form`]), decoded when a spectrum is used.
//!
//! [`compiled_predictions`] gives the Ritz lines of the chosen spectra between
//! [`COMPILED_RANGE_NM`] (100 nm to 2.5 µm in vacuum), each with its published A_ki
//! when the table has one.

use std::collections::HashMap;

use super::compiled_form::CompiledSpectrum;
use super::predicted::{PredictionError, Predictions, TransitionProbability};
use super::rates::PublishedLine;
use super::reach::{ListReach, Reach};
use super::ritz::{WavenumberRange, predict_levels};
use super::table::{Level, LevelTable, TableWarning};
use crate::location::Location;
use crate::notation::Species;

/// One compiled spectrum.
#[derive(Debug, Clone, Copy)]
pub struct EmbeddedTable {
    /// The spectrum, as written on the command line (`He I`).
    pub species: &'static str,
    /// File name of the level table in `reference-levels/`.
    pub file: &'static str,
    /// The level table and the classified E1 lines of the source with their
    /// transition probabilities (`<file stem>-lines.csv`, when the source has a line
    /// list), read at build time, in the form of [`super::compiled_form`].
    pub compiled: &'static [u8],
    /// The citation of the source, from the table's first comment line.
    pub citation: &'static str,
}

/// Every compiled spectrum, lightest element first, then by ionisation stage.
pub const EMBEDDED_TABLES: [EmbeddedTable; 29] = [
    EmbeddedTable {
        species: "H I",
        file: "HI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/HI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/HI.citation")),
    },
    EmbeddedTable {
        species: "He I",
        file: "HeI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/HeI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/HeI.citation")),
    },
    EmbeddedTable {
        species: "Li I",
        file: "LiI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/LiI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/LiI.citation")),
    },
    EmbeddedTable {
        species: "C I",
        file: "CI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CI.citation")),
    },
    EmbeddedTable {
        species: "C II",
        file: "CII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CII.citation")),
    },
    EmbeddedTable {
        species: "N I",
        file: "NI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/NI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/NI.citation")),
    },
    EmbeddedTable {
        species: "N II",
        file: "NII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/NII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/NII.citation")),
    },
    EmbeddedTable {
        species: "O I",
        file: "OI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/OI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/OI.citation")),
    },
    EmbeddedTable {
        species: "O II",
        file: "OII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/OII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/OII.citation")),
    },
    EmbeddedTable {
        species: "Ne I",
        file: "NeI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/NeI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/NeI.citation")),
    },
    EmbeddedTable {
        species: "Ne II",
        file: "NeII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/NeII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/NeII.citation")),
    },
    EmbeddedTable {
        species: "Na I",
        file: "NaI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/NaI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/NaI.citation")),
    },
    EmbeddedTable {
        species: "Mg I",
        file: "MgI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/MgI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/MgI.citation")),
    },
    EmbeddedTable {
        species: "Mg II",
        file: "MgII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/MgII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/MgII.citation")),
    },
    EmbeddedTable {
        species: "Al I",
        file: "AlI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/AlI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/AlI.citation")),
    },
    EmbeddedTable {
        species: "Si I",
        file: "SiI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/SiI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/SiI.citation")),
    },
    EmbeddedTable {
        species: "Ar I",
        file: "ArI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/ArI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/ArI.citation")),
    },
    EmbeddedTable {
        species: "Ar II",
        file: "ArII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/ArII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/ArII.citation")),
    },
    EmbeddedTable {
        species: "K I",
        file: "KI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/KI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/KI.citation")),
    },
    EmbeddedTable {
        species: "Ca I",
        file: "CaI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CaI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CaI.citation")),
    },
    EmbeddedTable {
        species: "Ca II",
        file: "CaII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CaII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CaII.citation")),
    },
    EmbeddedTable {
        species: "Fe I",
        file: "FeI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/FeI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/FeI.citation")),
    },
    EmbeddedTable {
        species: "Fe II",
        file: "FeII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/FeII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/FeII.citation")),
    },
    EmbeddedTable {
        species: "Cu I",
        file: "CuI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CuI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CuI.citation")),
    },
    EmbeddedTable {
        species: "Zn I",
        file: "ZnI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/ZnI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/ZnI.citation")),
    },
    EmbeddedTable {
        species: "Kr II",
        file: "KrII.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/KrII.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/KrII.citation")),
    },
    EmbeddedTable {
        species: "Cd I",
        file: "CdI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/CdI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/CdI.citation")),
    },
    EmbeddedTable {
        species: "W I",
        file: "WI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/WI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/WI.citation")),
    },
    EmbeddedTable {
        species: "Hg I",
        file: "HgI.csv",
        compiled: include_bytes!(concat!(env!("OUT_DIR"), "/HgI.bin")),
        citation: include_str!(concat!(env!("OUT_DIR"), "/HgI.citation")),
    },
];

/// The published lines of a spectrum by the pair of their levels' indices (lower
/// index first), with the transition probability when one is published.
type PublishedRates = HashMap<(usize, usize), Option<TransitionProbability>>;

/// The levels of a compiled spectrum and its warnings as (line, column, problem).
type LevelsAndWarnings = (Vec<Level>, Vec<(usize, Option<String>, String)>);

impl CompiledSpectrum {
    fn levels_and_warnings(self) -> LevelsAndWarnings {
        (self.levels, self.warnings)
    }
}

/// The published lines by pair (a line given twice keeps its last row).
fn rates_by_pair(published: Vec<PublishedLine>) -> PublishedRates {
    published
        .into_iter()
        .map(|l| {
            (
                (l.lower.min(l.upper), l.lower.max(l.upper)),
                l.a_ki_s1.map(|a_ki_s1| TransitionProbability {
                    a_ki_s1,
                    g_upper: 0,
                    accuracy: l.accuracy,
                }),
            )
        })
        .collect()
}

/// The vacuum wavelengths (nm) between which the compiled spectra are predicted:
/// 100 nm to 2.5 µm, the range of their published line lists.
pub const COMPILED_RANGE_NM: (f64, f64) = (100.0, 2500.0);

/// Reading or predicting a compiled spectrum failed (a defect of the build).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum CompiledError {
    /// The compiled form cannot be decoded.
    #[error("the compiled form of {spectrum} cannot be read: {problem}")]
    Form {
        /// The spectrum.
        spectrum: &'static str,
        /// What went wrong.
        problem: String,
    },
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
        self.citation
    }

    /// The compiled form, decoded.
    fn decode(&self) -> Result<CompiledSpectrum, CompiledError> {
        CompiledSpectrum::decode(self.compiled).map_err(|e| CompiledError::Form {
            spectrum: self.species,
            problem: e.to_string(),
        })
    }

    /// The level table, as read from `reference-levels/` at build time, with its
    /// warnings.
    pub fn load(&self) -> Result<LevelTable, CompiledError> {
        Ok(self.level_table(self.decode()?.levels_and_warnings()))
    }

    fn level_table(&self, (levels, warnings): LevelsAndWarnings) -> LevelTable {
        let source = self.source_name();
        let warnings = warnings
            .into_iter()
            .map(|(line, column, problem)| {
                let location = Location::line(source.clone(), line);
                TableWarning {
                    location: match column {
                        Some(column) => location.column(column),
                        None => location,
                    },
                    problem,
                }
            })
            .collect();
        LevelTable {
            source,
            levels,
            warnings,
        }
    }

    /// The published lines, by the 0-based indices of their two levels in the table's
    /// order (lower index first), each with its transition probability when one is
    /// published (empty when the source has no line list).
    pub fn transition_rates(
        &self,
    ) -> Result<HashMap<(usize, usize), Option<TransitionProbability>>, CompiledError> {
        Ok(rates_by_pair(self.decode()?.published))
    }

    /// The level table and the published lines, from one decoding.
    fn load_with_rates(&self) -> Result<(LevelTable, PublishedRates), CompiledError> {
        let mut compiled = self.decode()?;
        let rates = rates_by_pair(std::mem::take(&mut compiled.published));
        Ok((self.level_table(compiled.levels_and_warnings()), rates))
    }

    /// The Ritz predictions of this spectrum within [`COMPILED_RANGE_NM`], with the
    /// published transition probabilities.
    pub fn predictions(&self) -> Result<Predictions, CompiledError> {
        let (table, rates) = self.load_with_rates()?;
        self.predictions_of(table, &rates, None)
    }

    /// [`EmbeddedTable::predictions`] from the table already loaded, keeping only the
    /// lines within `keep` (all when `None`; see [`super::ListReach`]).
    fn predictions_of(
        &self,
        table: LevelTable,
        rates: &PublishedRates,
        keep: Option<&Reach>,
    ) -> Result<Predictions, CompiledError> {
        let warnings = table.warnings.len();
        let mut predictions = predict_levels(
            table.levels,
            &table.source,
            Some(compiled_range()),
            keep,
            Some(rates),
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
        .map(|t| t.load_with_rates().map(|(table, rates)| (*t, table, rates)))
        .collect::<Result<Vec<_>, _>>()?;
    // A Ritz line's uncertainty √(u₁² + u₂²) is at most √2 times the largest level
    // uncertainty of its table.
    let bound = loaded
        .iter()
        .flat_map(|(_, table, _)| table.levels.iter().map(|l| l.uncertainty_cm1))
        .fold(other_uncertainty_cm1, |m, u| {
            m.max(u * std::f64::consts::SQRT_2)
        });
    let keep = reach.with_prediction_uncertainty(bound);
    let sets = loaded
        .into_par_iter()
        .map(|(t, table, rates)| t.predictions_of(table, &rates, Some(&keep)))
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

    // The published tables are the authority: the compiled form built into the
    // program must be exactly what the program's readers make of each file of
    // reference-levels/ (levels with their marks, the warnings kept with them, the
    // published lines and their A_ki, the citation), and every table of the
    // directory must be compiled in.
    #[test]
    fn the_compiled_form_is_what_the_readers_make_of_the_published_files() {
        use super::super::rates::read_rates;
        use super::super::table::read_level_table;
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("reference-levels");
        let mut files: Vec<String> = std::fs::read_dir(&dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .filter(|n| n.ends_with(".csv") && !n.ends_with("-lines.csv"))
            .collect();
        files.sort();
        let mut compiled: Vec<String> = EMBEDDED_TABLES.iter().map(|t| t.file.into()).collect();
        compiled.sort();
        assert_eq!(files, compiled);
        for table in EMBEDDED_TABLES {
            let text = std::fs::read_to_string(dir.join(table.file)).unwrap();
            let fresh = read_level_table(text.as_bytes(), &table.source_name()).unwrap();
            let built = table.load().unwrap();
            assert_eq!(built, fresh, "{}", table.file);
            assert_eq!(built.warnings, fresh.warnings, "{}", table.file);
            let lines = dir.join(table.file.replace(".csv", "-lines.csv"));
            let published = match std::fs::read_to_string(&lines) {
                Ok(text) => read_rates(&text, "x").unwrap(),
                Err(_) => Vec::new(),
            };
            assert_eq!(
                table.decode().unwrap().published,
                published,
                "{}",
                table.file
            );
            let first = text.lines().next().unwrap();
            assert!(!table.citation().is_empty());
            assert!(
                first.contains(&format!("Source: {}", table.citation())),
                "{first}"
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
