//! First ionisation energies of the compiled spectra: the energy of the series limit
//! of a stage above its ground level (the ground level of the next stage).
//!
//! Source: NIST Atomic Spectra Database, Ground Levels and Ionization Energies for
//! the Neutral Atoms and the Ionization Energies database (Kramida, Ralchenko,
//! Reader and NIST ASD Team, ASD version 5.x, the values recommended there since
//! about 2013–2020). **The values below were written from memory of those tables,
//! in eV as printed there**, not copied from a retrieval; they should be checked
//! against the current release before a measurement depends on the last digit.
//! A plasma temperature is insensitive to them at that level (an error of 0.001 eV
//! in χ changes ln n_e by 0.001 eV / kT ≈ 0.001 at 10 000 K).

use crate::notation::Species;
use crate::units::constants::EV_CM1;

/// One ionisation energy: the species (the stage ionised), the value in eV as the
/// table prints it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IonizationEnergy {
    /// The stage that is ionised (`Ar I` for Ar I → Ar II).
    pub species: &'static str,
    /// χ, eV.
    pub energy_ev: f64,
}

impl IonizationEnergy {
    /// χ in cm⁻¹ (eV × [`EV_CM1`]).
    pub fn energy_cm1(&self) -> f64 {
        self.energy_ev * EV_CM1
    }
}

/// Where the values come from, for outputs.
pub const IONIZATION_SOURCE: &str = "NIST ASD ionization energies (Kramida, Ralchenko, Reader \
and NIST ASD Team), values written from memory of the tables";

/// The ionisation energies, in the order of the compiled spectra (values from memory
/// of NIST ASD, see the module documentation).
pub const IONIZATION_ENERGIES: [IonizationEnergy; 35] = [
    ie("H I", 13.598_434_599_702),
    ie("He I", 24.587_389_011),
    ie("Li I", 5.391_714_996),
    ie("C I", 11.260_288),
    ie("C II", 24.383_154),
    ie("N I", 14.534_13),
    ie("N II", 29.601_25),
    ie("O I", 13.618_054),
    ie("O II", 35.121_12),
    ie("Ne I", 21.564_540),
    ie("Ne II", 40.962_97),
    ie("Na I", 5.139_076_6),
    ie("Mg I", 7.646_236),
    ie("Mg II", 15.035_271),
    ie("Al I", 5.985_769),
    ie("Si I", 8.151_683),
    ie("Ar I", 15.759_611_7),
    ie("Ar II", 27.629_67),
    ie("K I", 4.340_663_7),
    ie("Ca I", 6.113_155_5),
    ie("Ca II", 11.871_719),
    ie("Fe I", 7.902_468_1),
    ie("Fe II", 16.199_21),
    ie("Cu I", 7.726_380),
    ie("Zn I", 9.394_197),
    ie("Kr I", 13.999_605_5),
    ie("Kr II", 24.359_84),
    ie("Cd I", 8.993_820),
    ie("W I", 7.864_03),
    ie("Hg I", 10.437_504),
    ie("C III", 47.887_78),
    ie("N III", 47.445_3),
    ie("O III", 54.935_5),
    ie("Ar III", 40.735),
    ie("Fe III", 30.651),
];

const fn ie(species: &'static str, energy_ev: f64) -> IonizationEnergy {
    IonizationEnergy { species, energy_ev }
}

/// The ionisation energy of `species` (the stage ionised), if the table has it.
pub fn ionization_energy(species: Species) -> Option<&'static IonizationEnergy> {
    IONIZATION_ENERGIES
        .iter()
        .find(|e| e.species.parse::<Species>().ok() == Some(species))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::levels::EMBEDDED_TABLES;
    use crate::units::constants::{ELECTRON_MASS_KG, RYDBERG_INFINITY_CM1};

    #[test]
    fn every_compiled_spectrum_has_its_ionisation_energy() {
        for table in EMBEDDED_TABLES {
            assert!(
                ionization_energy(table.spectrum()).is_some(),
                "{}",
                table.species
            );
        }
        for entry in IONIZATION_ENERGIES {
            assert!(
                entry.species.parse::<Species>().is_ok(),
                "{}",
                entry.species
            );
        }
    }

    #[test]
    fn hydrogen_is_the_reduced_mass_rydberg_with_its_1s_shifts() {
        // Textbook (e.g. Bethe & Salpeter 1957): χ(H) = R_H (reduced mass, CODATA 2018
        // m_p = 1.67262192369e-27 kg) + α²R_H/4 (Dirac 1s shift) − the 1s Lamb shift
        // (8.17 GHz = 0.2726 cm⁻¹, from memory); agreement to 0.02 cm⁻¹.
        use crate::units::constants::FINE_STRUCTURE_ALPHA;
        let proton_mass_kg = 1.672_621_923_69e-27;
        let rydberg_h = RYDBERG_INFINITY_CM1 / (1.0 + ELECTRON_MASS_KG / proton_mass_kg);
        let expected = rydberg_h * (1.0 + FINE_STRUCTURE_ALPHA.powi(2) / 4.0) - 0.2726;
        let hydrogen = ionization_energy("H I".parse().unwrap()).unwrap();
        assert!((hydrogen.energy_cm1() - expected).abs() < 0.02);
    }

    #[test]
    fn rydberg_series_of_the_tables_converge_below_the_limits() {
        // Rydberg formula with a constant quantum defect (textbook, e.g. Foot 2005,
        // Atomic Physics, §4.1): two high members n, n+1 of the Na I ns series give the
        // limit χ = E_n + R/(n−δ)², solved for δ from their difference. The limit
        // from the compiled table must agree with the tabulated χ to 2 cm⁻¹.
        let table = crate::levels::embedded_table("Na I".parse().unwrap())
            .unwrap()
            .load()
            .unwrap();
        let energy = |label: &str| table.levels.iter().find(|l| l.label.to_string() == label);
        let (Some(low), Some(high)) = (energy("2p6.10s 2S 1/2"), energy("2p6.11s 2S 1/2")) else {
            panic!("Na I 10s and 11s not found");
        };
        let rydberg_na =
            RYDBERG_INFINITY_CM1 / (1.0 + ELECTRON_MASS_KG / (22.98977 * 1.660_539_066_60e-27));
        // Solve E_11 − E_10 = R[1/(10−δ)² − 1/(11−δ)²] for δ by bisection.
        let gap = high.energy_cm1 - low.energy_cm1;
        let (mut lo, mut hi) = (0.5, 2.0);
        for _ in 0..100 {
            let delta: f64 = 0.5 * (lo + hi);
            let predicted =
                rydberg_na * (1.0 / (10.0 - delta).powi(2) - 1.0 / (11.0 - delta).powi(2));
            if predicted < gap {
                lo = delta;
            } else {
                hi = delta;
            }
        }
        let delta = 0.5 * (lo + hi);
        let limit = low.energy_cm1 + rydberg_na / (10.0 - delta).powi(2);
        let sodium = ionization_energy("Na I".parse().unwrap()).unwrap();
        assert!(
            (limit - sodium.energy_cm1()).abs() < 2.0,
            "{limit} {}",
            sodium.energy_cm1()
        );
    }
}
