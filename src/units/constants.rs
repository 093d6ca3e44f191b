//! Physical constants, each with its source. CODATA 2018 recommended values
//! (Tiesinga et al. 2021, Rev. Mod. Phys. 93, 025010; physics.nist.gov/constants).
//! Keep every constant of the project here.

/// 1 hartree in cm⁻¹: E_h/(hc) = 2 R∞ = 219474.6313632 cm⁻¹ (CODATA 2018).
pub const HARTREE_CM1: f64 = 219_474.631_363_2;

/// 1 eV in cm⁻¹: e/(hc) = 8065.543937… cm⁻¹, exact since the 2019 SI
/// (e = 1.602176634e-19 C, h = 6.62607015e-34 J s, c = 299792458 m/s; CODATA 2018).
pub const EV_CM1: f64 = 8_065.543_937_349_211;

/// 1 hartree in eV: 27.211386245988 eV (CODATA 2018).
pub const HARTREE_EV: f64 = 27.211_386_245_988;

/// Fine-structure constant α = 7.2973525693e-3 (CODATA 2018).
pub const FINE_STRUCTURE_ALPHA: f64 = 7.297_352_569_3e-3;

/// Magnitude of the electron spin g-factor, g_s = 2.00231930436256 (CODATA 2018).
pub const ELECTRON_SPIN_G: f64 = 2.002_319_304_362_56;

/// Bohr radius a₀ = 0.529177210903e-8 cm (CODATA 2018).
pub const BOHR_RADIUS_CM: f64 = 0.529_177_210_903e-8;

/// Speed of light in vacuum, c = 299792458 m/s (exact, SI).
pub const SPEED_OF_LIGHT_M_S: f64 = 299_792_458.0;

/// Rydberg constant for infinite nuclear mass, R∞ = 109737.31568160 cm⁻¹ (CODATA 2018).
pub const RYDBERG_INFINITY_CM1: f64 = 109_737.315_681_60;

/// Planck constant h = 6.62607015e-34 J s (exact since the 2019 SI; CODATA 2018).
pub const PLANCK_CONSTANT_J_S: f64 = 6.626_070_15e-34;

/// Elementary charge e = 1.602176634e-19 C (exact since the 2019 SI; CODATA 2018).
pub const ELEMENTARY_CHARGE_C: f64 = 1.602_176_634e-19;

/// Electron mass m_e = 9.1093837015e-31 kg (CODATA 2018).
pub const ELECTRON_MASS_KG: f64 = 9.109_383_701_5e-31;

/// Second radiation constant c₂ = hc/k = 1.438776877 cm·K (CODATA 2018): a level
/// E cm⁻¹ above another has the Boltzmann factor exp(−c₂E/T) at temperature T (K).
pub const SECOND_RADIATION_CONSTANT_CM_K: f64 = 1.438_776_877;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hartree_is_twice_rydberg_and_consistent_with_ev() {
        // CODATA 2018: E_h = 2 R∞ hc; E_h / e = 27.211386245988 V.
        assert!((HARTREE_CM1 - 2.0 * RYDBERG_INFINITY_CM1).abs() < 1e-6);
        assert!((HARTREE_CM1 / EV_CM1 - HARTREE_EV).abs() < 1e-11);
    }
}
