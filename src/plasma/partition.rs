//! Internal partition functions U(T) = Σ g_i exp(−E_i/kT) from the compiled level
//! tables (`reference-levels/`, NIST ASD), summed over the levels below the lowered
//! ionisation limit χ − Δχ.
//!
//! How the sum is cut: every tabulated level with E_i < χ − Δχ counts once with
//! g_i = 2J_i + 1; levels at or above the lowered limit (autoionising levels, and
//! bound Rydberg levels pushed into the continuum by the plasma, Δχ from
//! [`super::saha::debye_lowering_cm1`]) are left out. A level whose energy is
//! relative to an unknown offset (`+x`) is taken at its printed value.
//!
//! What that does at high T: the tables list the levels that were observed, so the
//! high-lying levels (large n, high L) are incomplete. Below about 10 000 K for
//! neutrals with χ ≳ 7 eV the missing terms weigh e^(−E/kT) ≲ 10⁻³ each and U is
//! good to a per cent or better; at higher T, or for stages with low-lying dense
//! Rydberg series, U is underestimated (the true sum grows without the cut, and
//! depends on the cut: the lowering Δχ makes it finite). The result carries the
//! number of levels summed and the highest one so that a reader can judge.

use crate::levels::{EmbeddedTable, embedded_table};
use crate::notation::Species;
use crate::units::constants::SECOND_RADIATION_CM_K;

use super::ionization::ionization_energy;

/// The levels of one spectrum as needed for partition functions and LTE checks:
/// (energy cm⁻¹, statistical weight g = 2J + 1), sorted by energy, with the
/// ionisation energy.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesLevels {
    /// The spectrum.
    pub species: Species,
    /// (E cm⁻¹, g), by increasing energy.
    pub levels: Vec<(f64, u32)>,
    /// The ionisation energy χ of this stage, cm⁻¹.
    pub ionization_cm1: f64,
}

/// A partition function with how it was summed.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct PartitionFunction {
    /// U(T), dimensionless.
    pub value: f64,
    /// Temperature, K.
    pub temperature_k: f64,
    /// The cut: χ − Δχ, cm⁻¹.
    pub limit_cm1: f64,
    /// Levels summed.
    pub levels_summed: usize,
    /// Tabulated levels at or above the cut, left out.
    pub levels_cut: usize,
    /// Energy of the highest level summed, cm⁻¹.
    pub highest_summed_cm1: f64,
}

/// Why the levels of a spectrum are not available.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum PartitionError {
    /// No compiled level table for the spectrum.
    #[error(
        "no compiled level table for {species} (the compiled spectra are listed by `termsight assign --help`)"
    )]
    NoTable {
        /// The spectrum.
        species: Species,
    },
    /// No ionisation energy for the spectrum.
    #[error("no ionisation energy for {species} in the table of the program")]
    NoIonizationEnergy {
        /// The spectrum.
        species: Species,
    },
    /// The compiled table cannot be read (a defect of the build, caught by the tests).
    #[error("{0}")]
    Table(String),
}

impl SpeciesLevels {
    /// The levels of a compiled spectrum with its ionisation energy.
    pub fn compiled(species: Species) -> Result<SpeciesLevels, PartitionError> {
        let table: &EmbeddedTable =
            embedded_table(species).ok_or(PartitionError::NoTable { species })?;
        let ionization_cm1 = ionization_energy(species)
            .ok_or(PartitionError::NoIonizationEnergy { species })?
            .energy_cm1();
        let table = table
            .load()
            .map_err(|e| PartitionError::Table(e.to_string()))?;
        let levels = table
            .levels
            .iter()
            .map(|l| (l.energy_cm1, l.label.j.multiplicity()))
            .collect();
        Ok(SpeciesLevels::new(species, levels, ionization_cm1))
    }

    /// Levels from (E cm⁻¹, g) pairs in any order.
    pub fn new(species: Species, mut levels: Vec<(f64, u32)>, ionization_cm1: f64) -> Self {
        levels.retain(|(e, _)| e.is_finite());
        levels.sort_by(|a, b| a.0.total_cmp(&b.0));
        SpeciesLevels {
            species,
            levels,
            ionization_cm1,
        }
    }

    /// U(T) summed below χ − `lowering_cm1` (see the module documentation).
    pub fn partition_function(&self, temperature_k: f64, lowering_cm1: f64) -> PartitionFunction {
        let limit_cm1 = self.ionization_cm1 - lowering_cm1.max(0.0);
        let kt_cm1 = temperature_k / SECOND_RADIATION_CM_K;
        let mut value = 0.0;
        let mut summed = 0;
        let mut highest = 0.0;
        for &(energy, g) in &self.levels {
            if energy >= limit_cm1 {
                break;
            }
            value += f64::from(g) * (-energy / kt_cm1).exp();
            summed += 1;
            highest = energy;
        }
        PartitionFunction {
            value,
            temperature_k,
            limit_cm1,
            levels_summed: summed,
            levels_cut: self.levels.len() - summed,
            highest_summed_cm1: highest,
        }
    }

    /// The largest gap between adjacent tabulated levels at or below `up_to_cm1`
    /// (and below the ionisation limit): (lower E, upper E), cm⁻¹. `None` with fewer
    /// than two such levels. For most spectra this is the gap between the ground
    /// term and the first excited level (the resonance transition).
    pub fn largest_gap(&self, up_to_cm1: f64) -> Option<(f64, f64)> {
        let top = up_to_cm1.min(self.ionization_cm1);
        self.levels
            .windows(2)
            .filter_map(|w| match w {
                [(a, _), (b, _)] if *b <= top => Some((*a, *b)),
                _ => None,
            })
            .max_by(|x, y| (x.1 - x.0).total_cmp(&(y.1 - y.0)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn compiled(name: &str) -> SpeciesLevels {
        SpeciesLevels::compiled(name.parse().unwrap()).unwrap()
    }

    #[test]
    fn partition_functions_agree_with_published_tables() {
        // Published values, written from memory (so said): Ar I 1.00 at 5000 and
        // 10 000 K (first excited level 11.5 eV above the ground); Ar II ground term
        // 2P°3/2,1/2 (Δ = 1431.58 cm⁻¹) gives 4 + 2e^(−Δ/kT) = 5.32 (5000 K) and 5.63
        // (10 000 K), as in the NIST ASD and Irwin (1981, ApJS 45, 621) tables;
        // Fe I ≈ 26.9 (5000 K, log U = 1.43, Gray 2005, The Observation and Analysis of
        // Stellar Photospheres, Table D.2, θ = 1.0) and Fe II ≈ 43 (θ = 1.0,
        // log U = 1.63). Tolerance: 3 % for the argon values (the tables print three
        // figures) and 8 % for iron (memory of a log table to two decimals, and a
        // different cut: Gray's tables come from older level lists).
        // Also, from memory: H I 2.00 at 5000 and 10 000 K (the n = 2 levels, 10.2 eV
        // up, add 6e-5 at 10 000 K) and Na I 2.04 at 5040 K (Gray 2005, Table D.2,
        // log U = 0.31), to the tables' three figures.
        let cases = [
            ("H I", 5000.0, 2.00, 0.005),
            ("H I", 10000.0, 2.00, 0.005),
            ("Na I", 5040.0, 2.04, 0.03),
            ("Ar I", 5000.0, 1.000, 0.03),
            ("Ar I", 10000.0, 1.000, 0.03),
            ("Ar II", 5000.0, 5.32, 0.03),
            ("Ar II", 10000.0, 5.63, 0.03),
            ("Fe I", 5040.0, 26.9, 0.08),
            ("Fe II", 5040.0, 42.7, 0.08),
        ];
        for (species, t, published, tolerance) in cases {
            let u = compiled(species).partition_function(t, 0.0).value;
            assert!(
                (u / published - 1.0).abs() < tolerance,
                "{species} at {t} K: {u} against {published}"
            );
        }
    }

    #[test]
    fn the_sum_is_cut_at_the_lowered_limit() {
        // Common practice, no source: levels at or above χ − Δχ are left out, so a
        // larger lowering never adds levels, and the ground level alone gives g₀.
        let argon = compiled("Ar I");
        let plain = argon.partition_function(10000.0, 0.0);
        let lowered = argon.partition_function(10000.0, 2000.0);
        assert!(lowered.levels_summed < plain.levels_summed);
        assert!(lowered.value <= plain.value);
        assert!(
            plain.levels_cut > 0,
            "Ar I lists autoionising levels above χ"
        );
        assert!(plain.highest_summed_cm1 < argon.ionization_cm1);
        let cold = argon.partition_function(300.0, 0.0);
        assert!((cold.value - 1.0).abs() < 1e-12);
    }

    #[test]
    fn the_largest_gap_of_argon_is_the_resonance_gap() {
        // NIST ASD (the Ar I table): ground 3p6 1S0 at 0 and 4s [3/2]°2 at
        // 93143.76 cm⁻¹.
        let gap = compiled("Ar I").largest_gap(120_000.0).unwrap();
        assert_eq!(gap, (0.0, 93143.76));
    }
}
