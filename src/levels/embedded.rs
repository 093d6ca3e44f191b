//! The reference level tables compiled into the program (`reference-levels/*.csv`).
//!
//! Each is a level table of one spectrum made from the NIST Atomic Spectra Database
//! (Kramida, Ralchenko, Reader and NIST ASD Team, version of March 2014); the files
//! and `reference-levels/SOURCES.md` say how, and what uncertainties they assume.
//! They are parsed when used; a test parses every one, so a bad table is caught
//! before release, never at a user's run.

use super::table::{LevelTable, LevelTableError, read_level_table};
use crate::notation::Species;

/// One embedded level table.
#[derive(Debug, Clone, Copy)]
pub struct EmbeddedTable {
    /// The spectrum, as written on the command line (`He I`).
    pub species: &'static str,
    /// File name in `reference-levels/`.
    pub file: &'static str,
    /// The CSV text.
    pub text: &'static str,
}

/// Every embedded table, lightest element first.
pub const EMBEDDED_TABLES: [EmbeddedTable; 6] = [
    EmbeddedTable {
        species: "H I",
        file: "HI.csv",
        text: include_str!("../../reference-levels/HI.csv"),
    },
    EmbeddedTable {
        species: "He I",
        file: "HeI.csv",
        text: include_str!("../../reference-levels/HeI.csv"),
    },
    EmbeddedTable {
        species: "Ne I",
        file: "NeI.csv",
        text: include_str!("../../reference-levels/NeI.csv"),
    },
    EmbeddedTable {
        species: "Ar I",
        file: "ArI.csv",
        text: include_str!("../../reference-levels/ArI.csv"),
    },
    EmbeddedTable {
        species: "Cd I",
        file: "CdI.csv",
        text: include_str!("../../reference-levels/CdI.csv"),
    },
    EmbeddedTable {
        species: "Hg I",
        file: "HgI.csv",
        text: include_str!("../../reference-levels/HgI.csv"),
    },
];

impl EmbeddedTable {
    /// The source name used in messages and outputs: `<embedded He I>`.
    pub fn source_name(&self) -> String {
        format!("<embedded {}>", self.species)
    }

    /// Parse the table.
    pub fn load(&self) -> Result<LevelTable, LevelTableError> {
        read_level_table(self.text.as_bytes(), &self.source_name())
    }
}

/// The embedded table of `species`, if there is one.
pub fn embedded_table(species: Species) -> Option<&'static EmbeddedTable> {
    EMBEDDED_TABLES
        .iter()
        .find(|t| t.species.parse::<Species>().is_ok_and(|s| s == species))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_embedded_table_parses_and_holds_its_species_only() {
        for table in EMBEDDED_TABLES {
            let species: Species = table.species.parse().unwrap();
            let levels = table.load().unwrap_or_else(|e| panic!("{e}"));
            assert_eq!(levels.species(), vec![species], "{}", table.file);
            assert!(embedded_table(species).is_some());
            // The ground level is the zero of the scale, with no uncertainty
            // (NIST ASD 2014 tables; reference-levels/SOURCES.md).
            let lowest = levels
                .levels
                .iter()
                .min_by(|a, b| a.energy_cm1.total_cmp(&b.energy_cm1))
                .unwrap();
            assert_eq!((lowest.energy_cm1, lowest.uncertainty_cm1), (0.0, 0.0));
            assert!(levels.levels.iter().all(|l| l.uncertainty_cm1 >= 0.0));
        }
    }

    #[test]
    fn table_sizes_match_the_sources() {
        // Row counts of the NIST ASD (2014) exports (reference-levels/SOURCES.md):
        // H I keeps 54 of 93 rows (the 39 n-only centroid rows are left out).
        let sizes: Vec<(&str, usize)> = EMBEDDED_TABLES
            .iter()
            .map(|t| (t.species, t.load().unwrap().levels.len()))
            .collect();
        assert_eq!(
            sizes,
            vec![
                ("H I", 54),
                ("He I", 101),
                ("Ne I", 223),
                ("Ar I", 119),
                ("Cd I", 26),
                ("Hg I", 205)
            ]
        );
    }

    #[test]
    fn known_levels_have_their_published_energies() {
        // NIST ASD (2014 export), as printed: He I 1s2p 1P°1 = 171134.896946 cm-1;
        // Ne I 2p5(2P°3/2)3s 2[3/2]°2 = 134041.8400; Hg I 6s6p 3P°1 = 39412.237.
        let cases = [
            ("He I", "1s.2p 1P° 1", 171134.896946, 1e-6),
            ("Ne I", "2s2.2p5.(2P°<3/2>).3s 2[3/2]° 2", 134041.84, 1e-4),
            ("Hg I", "5d10.6s.6p 3P° 1", 39412.237, 1e-3),
        ];
        for (species, label, energy, uncertainty) in cases {
            let species: Species = species.parse().unwrap();
            let table = embedded_table(species).unwrap().load().unwrap();
            let level = table.find(species, &label.parse().unwrap()).unwrap();
            assert_eq!(level.energy_cm1, energy);
            assert_eq!(level.uncertainty_cm1, uncertainty);
        }
    }
}
