//! The configuration-average energy of a set of orbitals, split into kinetic,
//! electron–nucleus and electron–electron parts (hartree).

use super::average::{AverageEnergyExpression, SlaterKind};
use super::grid::RadialGrid;
use super::numerov::origin_ratio;
use super::operator::NumerovKinetic;
use super::slater::yk_function;

/// The parts of a total energy, hartree.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct EnergyParts {
    /// Total energy E = T + V.
    pub total_hartree: f64,
    /// Kinetic energy T.
    pub kinetic_hartree: f64,
    /// Electron–nucleus energy.
    pub nuclear_hartree: f64,
    /// Electron–electron energy.
    pub electron_electron_hartree: f64,
}

impl EnergyParts {
    /// Potential energy V = electron–nucleus + electron–electron.
    pub fn potential_hartree(&self) -> f64 {
        self.nuclear_hartree + self.electron_electron_hartree
    }

    /// The virial ratio −V/T, which is exactly 2 for Hartree–Fock solutions of a
    /// Coulomb problem (virial theorem; Froese Fischer 1977, §2.8).
    pub fn virial_ratio(&self) -> f64 {
        -self.potential_hartree() / self.kinetic_hartree
    }
}

/// ⟨P| −½ d²/dr² + l(l+1)/(2r²) |P⟩ hartree, with the same Numerov operator as the
/// solver: with P = √r y and x = ln r it is ½∫[−y''y + (l+½)² y²] dx.
pub fn kinetic_energy(grid: &RadialGrid, l: u32, z_origin: f64, p: &[f64]) -> f64 {
    let r = grid.r();
    let n = grid.len();
    let kinetic = NumerovKinetic::new(grid.step(), n - 2, origin_ratio(grid, l, z_origin));
    let u: Vec<f64> = (1..n - 1).map(|i| p[i] / r[i].sqrt()).collect();
    let mut ku = vec![0.0; u.len()];
    kinetic.apply(&u, &mut ku);
    let lh2 = (l as f64 + 0.5).powi(2);
    0.5 * grid.step()
        * u.iter()
            .zip(&ku)
            .map(|(u, k)| u * k + lh2 * u * u)
            .sum::<f64>()
}

/// E_av of orbitals `p` (one per subshell of `expression`, on `grid`) in the field
/// of a point nucleus of charge `z`.
pub fn average_energy(
    grid: &RadialGrid,
    z: f64,
    expression: &AverageEnergyExpression,
    p: &[&[f64]],
) -> EnergyParts {
    let mut kinetic = 0.0;
    let mut nuclear = 0.0;
    for (shell, p) in expression.subshells.iter().zip(p) {
        let q = shell.occupancy as f64;
        kinetic += q * kinetic_energy(grid, shell.l, z, p);
        nuclear -= q * z * grid.integrate_product_power(p, p, -1);
    }
    let electron_electron = expression
        .terms
        .iter()
        .map(|term| {
            let (pa, pb) = (p[term.a], p[term.b]);
            let integral = match term.kind {
                SlaterKind::Direct => {
                    let y = yk_function(grid, term.k, pb, pb);
                    grid.step() * pa.iter().zip(&y).map(|(a, y)| a * a * y).sum::<f64>()
                }
                SlaterKind::Exchange => {
                    let y = yk_function(grid, term.k, pa, pb);
                    grid.step()
                        * pa.iter()
                            .zip(pb)
                            .zip(&y)
                            .map(|((a, b), y)| a * b * y)
                            .sum::<f64>()
                }
            };
            term.coefficient * integral
        })
        .sum::<f64>();
    EnergyParts {
        total_hartree: kinetic + nuclear + electron_electron,
        kinetic_hartree: kinetic,
        nuclear_hartree: nuclear,
        electron_electron_hartree: electron_electron,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::notation::Subshell;
    use crate::radial::grid::GridSpec;
    use crate::radial::hydrogenic::hydrogenic_orbital;
    use proptest::prelude::*;
    use proptest::test_runner::RngSeed;

    /// E_av of He 1s² with a hydrogenic 1s of charge ζ.
    fn helium_with_screened_1s(zeta: f64) -> EnergyParts {
        let grid = RadialGrid::new(2.0, GridSpec::default()).unwrap();
        let p = hydrogenic_orbital(&grid, 1, 0, zeta).unwrap();
        let shells = [Subshell {
            n: 1,
            l: 0,
            occupancy: 2,
        }];
        average_energy(&grid, 2.0, &AverageEnergyExpression::new(&shells), &[&p])
    }

    #[test]
    fn first_order_helium() {
        // Unscreened orbitals: E = −Z² + 5Z/8 = −2.75 hartree (first-order
        // perturbation theory; Bethe & Salpeter 1957, §32); kinetic 2·Z²/2 = 4.
        // Tolerances: the O(h⁴) error of Numerov's kinetic operator (about 1e-9
        // here) and the density inside the first grid point (below 1e-9).
        let e = helium_with_screened_1s(2.0);
        assert!((e.total_hartree + 2.75).abs() < 2e-9);
        assert!((e.kinetic_hartree - 4.0).abs() < 2e-9);
        // The variational optimum ζ = Z − 5/16 = 27/16: E = −(27/16)² = −2.84766
        // (Bethe & Salpeter 1957, eq. 32.20), with −V/T = 2 there.
        let best = helium_with_screened_1s(27.0 / 16.0);
        assert!((best.total_hartree + (27.0f64 / 16.0).powi(2)).abs() < 2e-9);
        assert!((best.virial_ratio() - 2.0).abs() < 1e-9);
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: 24,
            rng_seed: RngSeed::Fixed(6),
            ..ProptestConfig::default()
        })]

        /// For any ζ: T = ζ², V_nuclear = −2Zζ, F⁰(1s,1s) = 5ζ/8 (Bethe & Salpeter
        /// 1957, §32), so E(ζ) = ζ² − 2Zζ + 5ζ/8 with Z = 2. Tolerance 1e-8
        /// relative, as in `first_order_helium`.
        #[test]
        fn helium_energy_is_the_textbook_function_of_the_screening(zeta in 0.5f64..6.0) {
            let e = helium_with_screened_1s(zeta);
            prop_assert!((e.kinetic_hartree - zeta * zeta).abs() < 1e-8 * zeta * zeta);
            prop_assert!((e.nuclear_hartree + 4.0 * zeta).abs() < 1e-8 * zeta);
            prop_assert!((e.electron_electron_hartree - 5.0 * zeta / 8.0).abs() < 1e-8 * zeta);
        }
    }
}
