//! The radial integrals a level model needs, by name, in cm⁻¹, computed from the
//! orbitals of one or more configurations.
//!
//! | kind | name | from |
//! |---|---|---|
//! | E_av | `Eav` | E_av of the configuration minus E_av of the first one |
//! | F^k | `F2(3p)` (within a subshell), `F2(3d,4p)` | open subshells of one configuration, k > 0 |
//! | G^k | `G1(3s,3p)` | two open subshells of one configuration, every allowed k |
//! | ζ | `zeta(3p)` | open subshells with l > 0 |
//! | R^k | `R1(3s3s,3p3p)` | two configurations of one parity that differ by one or two electrons |
//! | ⟨a\|r\|b⟩ | `P(3s,3p)` | two configurations of opposite parity that differ by one electron (bohr; the `[dipole]` name of a model file) |
//!
//! A subshell is open when it is not full. F^k(a,a) is listed for l^w with
//! 2 ≤ w ≤ 4l (only those have terms that it separates). For R^k between
//! configurations, the orbitals of the first configuration stand on the left
//! (a, b) and those of the second on the right (c, d), each from its own
//! calculation.
//!
//! # The spin–orbit parameter
//!
//! ζ is the central-field formula (Condon & Shortley 1935, §5.4; Cowan 1981,
//! eq. 10.9) with V the potential of the nucleus and of the other electrons'
//! charge, whose field is \[Z − N(r)\]/r² by Gauss's law:
//!
//! ```text
//! ζ_nl = (α²/2) ∫ (1/r)(dV/dr) P² dr = (α²/2) ∫ [Z − N(r)] r⁻³ P_nl² dr   (hartree)
//! ```
//!
//! N(r) the number of the other electrons (the orbital's own subshell less one)
//! inside r. This is the direct, screening part of the spin–orbit parameter of
//! Blume & Watson (1962, Proc. R. Soc. A 270, 127) for Hartree–Fock orbitals; their
//! exchange terms, which lower ζ by several per cent (most for inner shells such as
//! 2p), are not made. Exchange is left out of V because Hartree–Fock exchange is no
//! local potential, and because putting the local (Slater) exchange potential of
//! [`mod@super::local_exchange`] into V, as some programs do, was measured to raise
//! ζ by 1–6 % only for the spectra below: too little to matter beside what the
//! orbitals themselves leave out.
//!
//! What to expect: observed ζ (from the fine structure, NIST ASD) over ζ from
//! Hartree–Fock orbitals, as measured by the tests of this module:
//!
//! | spectrum | observed / computed |
//! |---|---|
//! | Ne II 2p⁵, Ne I 2p⁵3s | 0.87 |
//! | Ar II 3p⁵, Ar I 3p⁵4s | 1.00, 0.99 |
//! | Al I 3p, Mg II 3p | 1.09, 1.19 |
//! | Na I 3p, Ca II 4p, Mg I 3s3p | 1.35, 1.36, 1.42 |
//! | Ca I 4s4p, K I 4p, Cd I 5s5p | 1.58, 1.61, 1.62 |
//! | Hg I 6s6p | 2.01 |
//!
//! The valence p electron of a neutral atom falls 30–60 % short: its ζ comes from
//! the small part of the orbital inside the core, which core polarisation and
//! correlation enlarge and Hartree–Fock leaves out (the same shortfall shows in
//! hyperfine constants); for Hg the relativistic contraction of 6p½ adds to it. So
//! the ζ scale factor that fits observed levels is about 1 for ions and open p
//! shells, but 1.3–1.6 for such valence electrons. Orbitals of the local-exchange
//! field give 0.76–1.04 for all these but Hg (1.29), because Slater's exchange pulls
//! the inner lobes of outer orbitals in too far: a coincidence, not better physics.
//!
//! Scale factors multiply each kind (common practice, no source: 0.8–0.9 for F^k
//! and G^k of neutral atoms, about 1 for ζ, but see above, and for E_av
//! differences).

use std::collections::BTreeMap;

use crate::notation::{Configuration, Subshell};
use crate::units::constants::{FINE_STRUCTURE_ALPHA, HARTREE_CM1};

use super::RadialError;
use super::average::{direct_orders, exchange_orders};
use super::grid::RadialGrid;
use super::scf::ScfSolution;
use super::slater::{rk_integral, zk_function};
use super::three_j::three_j_zero_squared;

/// What a radial integral is.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum IntegralKind {
    /// E_av of a configuration relative to the first configuration.
    AverageEnergy,
    /// F^k(a, b), a and b in one configuration.
    Direct {
        /// The multipole order.
        k: u32,
        /// First orbital label.
        a: String,
        /// Second orbital label.
        b: String,
    },
    /// G^k(a, b), a and b in one configuration.
    Exchange {
        /// The multipole order.
        k: u32,
        /// First orbital label.
        a: String,
        /// Second orbital label.
        b: String,
    },
    /// R^k(ab, cd): a, b of the first configuration, c, d of the second.
    Interaction {
        /// The multipole order.
        k: u32,
        /// Orbital a (first configuration, electron 1).
        a: String,
        /// Orbital b (first configuration, electron 2).
        b: String,
        /// Orbital c (second configuration, electron 1).
        c: String,
        /// Orbital d (second configuration, electron 2).
        d: String,
    },
    /// ζ of an orbital.
    SpinOrbit {
        /// The orbital label.
        orbital: String,
    },
    /// ⟨a|r|b⟩ between configurations, bohr.
    Dipole {
        /// Orbital of the first configuration.
        a: String,
        /// Orbital of the second configuration.
        b: String,
    },
}

/// One radial integral, ready for a level model.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct RadialIntegral {
    /// Its name, e.g. `F2(3p,3p)`.
    pub name: String,
    /// What it is.
    #[serde(flatten)]
    pub kind: IntegralKind,
    /// The configuration it belongs to (its index in the list given).
    pub configuration: usize,
    /// The second configuration of an R^k or dipole integral.
    pub other_configuration: Option<usize>,
    /// The computed value: cm⁻¹, or bohr for a dipole integral.
    pub value: f64,
    /// The scale factor applied.
    pub scale: f64,
    /// value × scale.
    pub scaled: f64,
}

/// Scale factors for the computed integrals. Defaults are the customary starting
/// values for a neutral atom (common practice, no source).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct ScaleFactors {
    /// For F^k and G^k. Default: 0.85.
    pub direct_exchange: f64,
    /// For R^k between configurations. Default: 0.85.
    pub interaction: f64,
    /// For ζ. Default: 1.0, right for ions and open p shells; the valence p
    /// electron of a neutral atom needs 1.3–1.6 with Hartree–Fock orbitals (see
    /// the module documentation).
    pub spin_orbit: f64,
    /// For E_av differences. Default: 1.0.
    pub average_energy: f64,
}

impl Default for ScaleFactors {
    fn default() -> Self {
        ScaleFactors {
            direct_exchange: 0.85,
            interaction: 0.85,
            spin_orbit: 1.0,
            average_energy: 1.0,
        }
    }
}

impl ScaleFactors {
    /// Check that every factor lies in (0, 2].
    pub fn validate(&self) -> Result<(), RadialError> {
        for (name, value) in [
            ("F^k/G^k", self.direct_exchange),
            ("R^k", self.interaction),
            ("zeta", self.spin_orbit),
            ("E_av", self.average_energy),
        ] {
            if !(value > 0.0 && value <= 2.0) {
                return Err(RadialError::InvalidSettings {
                    problem: format!("the {name} scale factor must lie in (0, 2], not {value}"),
                });
            }
        }
        Ok(())
    }
}

/// ζ of orbital `index` of a solution, hartree:
/// (α²/2) ∫ \[Z − N(r)\] r⁻³ P² dr, N(r) the charge of the other electrons inside r
/// (central-field formula, Cowan 1981, eq. 10.9; see the module documentation for
/// why exchange is left out). 0 for s orbitals.
pub fn spin_orbit_hartree(solution: &ScfSolution, index: usize) -> f64 {
    let orbital = &solution.orbitals[index];
    if orbital.subshell.l == 0 {
        return 0.0;
    }
    let grid = &solution.grid;
    let mut enclosed = vec![0.0; grid.len()];
    for (b, other) in solution.orbitals.iter().enumerate() {
        let count = other.subshell.occupancy as f64 - if b == index { 1.0 } else { 0.0 };
        if count == 0.0 {
            continue;
        }
        let charge = zk_function(grid, 0, &other.p, &other.p);
        for (e, c) in enclosed.iter_mut().zip(&charge) {
            *e += count * c;
        }
    }
    let z = solution.nuclear_charge as f64;
    let integrand: Vec<f64> = grid
        .r()
        .iter()
        .zip(&enclosed)
        .zip(&orbital.p)
        .map(|((r, n), p)| (z - n) / (r * r * r) * p * p)
        .collect();
    0.5 * FINE_STRUCTURE_ALPHA * FINE_STRUCTURE_ALPHA * grid.integrate(&integrand)
}

/// ⟨r⟩ of an orbital, bohr.
pub fn mean_radius_bohr(grid: &RadialGrid, p: &[f64]) -> f64 {
    grid.integrate_product_power(p, p, 1)
}

/// Every integral of the module table for the configurations solved in
/// `solutions` (same element, same grid step and start), scaled by `scales`.
pub fn radial_integrals(
    solutions: &[ScfSolution],
    scales: &ScaleFactors,
) -> Result<Vec<RadialIntegral>, RadialError> {
    scales.validate()?;
    let Some(first) = solutions.first() else {
        return Ok(Vec::new());
    };
    for s in solutions {
        if s.nuclear_charge != first.nuclear_charge
            || s.grid.step() != first.grid.step()
            || s.grid.x_start() != first.grid.x_start()
        {
            return Err(RadialError::InvalidGrid {
                problem: "the configurations were computed for different atoms or grids".into(),
            });
        }
    }
    let mut out = Vec::new();
    let mut push = |name: String,
                    kind: IntegralKind,
                    configuration: usize,
                    other: Option<usize>,
                    value: f64,
                    scale: f64| {
        out.push(RadialIntegral {
            name,
            kind,
            configuration,
            other_configuration: other,
            value,
            scale,
            scaled: value * scale,
        })
    };
    for (index, solution) in solutions.iter().enumerate() {
        push(
            "Eav".to_string(),
            IntegralKind::AverageEnergy,
            index,
            None,
            (solution.energy.total_hartree - first.energy.total_hartree) * HARTREE_CM1,
            scales.average_energy,
        );
        let grid = &solution.grid;
        let orbitals = &solution.orbitals;
        let open: Vec<usize> = (0..orbitals.len())
            .filter(|&i| !orbitals[i].subshell.is_closed())
            .collect();
        for (position, &a) in open.iter().enumerate() {
            let shell = orbitals[a].subshell;
            let pa = &orbitals[a].p;
            let label_a = orbitals[a].label();
            if shell.occupancy >= 2 && shell.occupancy <= 4 * shell.l {
                for k in direct_orders(shell.l) {
                    push(
                        format!("F{k}({label_a})"),
                        IntegralKind::Direct {
                            k,
                            a: label_a.clone(),
                            b: label_a.clone(),
                        },
                        index,
                        None,
                        rk_integral(grid, k, [pa, pa, pa, pa]) * HARTREE_CM1,
                        scales.direct_exchange,
                    );
                }
            }
            for &b in &open[position + 1..] {
                let other = orbitals[b].subshell;
                let pb = &orbitals[b].p;
                let label_b = orbitals[b].label();
                for k in direct_orders(shell.l.min(other.l)) {
                    push(
                        format!("F{k}({label_a},{label_b})"),
                        IntegralKind::Direct {
                            k,
                            a: label_a.clone(),
                            b: label_b.clone(),
                        },
                        index,
                        None,
                        rk_integral(grid, k, [pa, pb, pa, pb]) * HARTREE_CM1,
                        scales.direct_exchange,
                    );
                }
                for k in exchange_orders(shell.l, other.l) {
                    push(
                        format!("G{k}({label_a},{label_b})"),
                        IntegralKind::Exchange {
                            k,
                            a: label_a.clone(),
                            b: label_b.clone(),
                        },
                        index,
                        None,
                        rk_integral(grid, k, [pa, pb, pb, pa]) * HARTREE_CM1,
                        scales.direct_exchange,
                    );
                }
            }
            if shell.l > 0 {
                push(
                    format!("zeta({label_a})"),
                    IntegralKind::SpinOrbit {
                        orbital: label_a.clone(),
                    },
                    index,
                    None,
                    spin_orbit_hartree(solution, a) * HARTREE_CM1,
                    scales.spin_orbit,
                );
            }
        }
    }
    for (i, left) in solutions.iter().enumerate() {
        for (j, right) in solutions.iter().enumerate().skip(i + 1) {
            let Some((removed, added)) = replacement(&left.configuration, &right.configuration)
            else {
                continue;
            };
            let length = left.grid.len().min(right.grid.len());
            let p_left = |s: &Subshell| orbital_p(left, s, length);
            let p_right = |s: &Subshell| orbital_p(right, s, length);
            let grid = if left.grid.len() <= right.grid.len() {
                &left.grid
            } else {
                &right.grid
            };
            let same_parity = left.configuration.parity() == right.configuration.parity();
            match (removed.as_slice(), added.as_slice()) {
                ([a], [c]) if !same_parity => {
                    if a.l.abs_diff(c.l) != 1 {
                        continue;
                    }
                    let value = grid.integrate_product_power(&p_left(a), &p_right(c), 1);
                    push(
                        format!("P({},{})", a.orbital(), c.orbital()),
                        IntegralKind::Dipole {
                            a: a.orbital(),
                            b: c.orbital(),
                        },
                        i,
                        Some(j),
                        value,
                        1.0,
                    );
                }
                ([a], [c]) => {
                    // One electron moves a → c; it interacts through the electrons
                    // the two configurations share (spectators), in every subshell
                    // b that is open in either configuration.
                    let occupancy = |config: &Configuration, s: &Subshell| {
                        config
                            .subshells()
                            .find(|t| t.n == s.n && t.l == s.l)
                            .map_or(0, |t| t.occupancy)
                    };
                    for b in left.configuration.subshells() {
                        let (q_left, q_right) = (b.occupancy, occupancy(&right.configuration, b));
                        let shared = q_left.min(q_right);
                        let open = q_left < b.capacity() || q_right < b.capacity();
                        if shared == 0 || !open {
                            continue;
                        }
                        let same = |x: &Subshell| x.n == b.n && x.l == b.l;
                        push_interactions(
                            &mut push,
                            grid,
                            [*a, *b, *c, *b],
                            &p_left,
                            &p_right,
                            i,
                            j,
                            scales,
                        );
                        // R^k(ab, bc) is another integral unless b is a or c itself.
                        if !same(a) && !same(c) {
                            push_interactions(
                                &mut push,
                                grid,
                                [*a, *b, *b, *c],
                                &p_left,
                                &p_right,
                                i,
                                j,
                                scales,
                            );
                        }
                    }
                }
                ([a, b], [c, d]) if same_parity => {
                    push_interactions(
                        &mut push,
                        grid,
                        [*a, *b, *c, *d],
                        &p_left,
                        &p_right,
                        i,
                        j,
                        scales,
                    );
                    if a != b && c != d {
                        push_interactions(
                            &mut push,
                            grid,
                            [*a, *b, *d, *c],
                            &p_left,
                            &p_right,
                            i,
                            j,
                            scales,
                        );
                    }
                }
                _ => {}
            }
        }
    }
    Ok(out)
}

/// R^k(ab, cd) for every k allowed by (l_a k l_c; 000)(l_b k l_d; 000) ≠ 0.
#[allow(clippy::too_many_arguments)]
fn push_interactions(
    push: &mut impl FnMut(String, IntegralKind, usize, Option<usize>, f64, f64),
    grid: &RadialGrid,
    [a, b, c, d]: [Subshell; 4],
    p_left: &impl Fn(&Subshell) -> Vec<f64>,
    p_right: &impl Fn(&Subshell) -> Vec<f64>,
    i: usize,
    j: usize,
    scales: &ScaleFactors,
) {
    let (pa, pb, pc, pd) = (p_left(&a), p_left(&b), p_right(&c), p_right(&d));
    let k_max = (a.l + c.l).min(b.l + d.l);
    for k in 0..=k_max {
        if three_j_zero_squared(a.l, k, c.l) == 0.0 || three_j_zero_squared(b.l, k, d.l) == 0.0 {
            continue;
        }
        let value = rk_integral(grid, k, [&pa, &pb, &pc, &pd]) * HARTREE_CM1;
        let (la, lb, lc, ld) = (a.orbital(), b.orbital(), c.orbital(), d.orbital());
        push(
            format!("R{k}({la}{lb},{lc}{ld})"),
            IntegralKind::Interaction {
                k,
                a: la,
                b: lb,
                c: lc,
                d: ld,
            },
            i,
            Some(j),
            value,
            scales.interaction,
        );
    }
}

/// P of subshell `s` in a solution, cut to `length` points (zeros if absent).
fn orbital_p(solution: &ScfSolution, s: &Subshell, length: usize) -> Vec<f64> {
    solution
        .orbital(s.n, s.l)
        .map(|o| o.p[..length].to_vec())
        .unwrap_or_else(|| vec![0.0; length])
}

/// The electrons that leave (from `left`) and arrive (in `right`) when the two
/// configurations differ by one or two electrons, as subshells with occupancy 1
/// listed once per electron; `None` when they differ by more (or not at all).
pub(crate) fn replacement(
    left: &Configuration,
    right: &Configuration,
) -> Option<(Vec<Subshell>, Vec<Subshell>)> {
    let occupancy = |c: &Configuration| -> BTreeMap<(u32, u32), u32> {
        c.subshells().map(|s| ((s.n, s.l), s.occupancy)).collect()
    };
    let (l, r) = (occupancy(left), occupancy(right));
    let mut removed = Vec::new();
    let mut added = Vec::new();
    let keys: std::collections::BTreeSet<(u32, u32)> = l.keys().chain(r.keys()).copied().collect();
    for key in keys {
        let (ql, qr) = (
            l.get(&key).copied().unwrap_or(0),
            r.get(&key).copied().unwrap_or(0),
        );
        let one = Subshell {
            n: key.0,
            l: key.1,
            occupancy: 1,
        };
        for _ in qr..ql {
            removed.push(one);
        }
        for _ in ql..qr {
            added.push(one);
        }
    }
    match removed.len() {
        1 | 2 if removed.len() == added.len() => Some((removed, added)),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::grid::GridSpec;
    use crate::radial::scf::screened_hydrogenic;

    fn hydrogenic(z: u32, config: &str) -> ScfSolution {
        let spec = GridSpec {
            r_max_bohr: 150.0,
            ..GridSpec::default()
        };
        screened_hydrogenic(z, &config.parse().unwrap(), spec).unwrap()
    }

    fn names(list: &[RadialIntegral]) -> Vec<&str> {
        list.iter().map(|i| i.name.as_str()).collect()
    }

    #[test]
    fn hydrogen_one_s_two_p_dipole_integral() {
        // ∫ P_1s r P_2p dr = 2⁷√6/3⁵ = 1.2903 bohr for hydrogen (Bethe & Salpeter
        // 1957, table 13).
        let list = radial_integrals(
            &[hydrogenic(1, "1s"), hydrogenic(1, "2p")],
            &ScaleFactors::default(),
        )
        .unwrap();
        let dipole = list.iter().find(|i| i.name == "P(1s,2p)").unwrap();
        let exact = 128.0 * 6f64.sqrt() / 243.0;
        assert!((dipole.value - exact).abs() < 1e-9, "{}", dipole.value);
        assert_eq!(dipole.other_configuration, Some(1));
        assert_eq!(dipole.scale, 1.0);
    }

    #[test]
    fn lists_what_a_level_model_of_magnesium_needs() {
        // Mg 3s2, 3s.3p, 3p2: the names follow the module table; the coupling rules
        // are common practice (Condon & Shortley 1935, §6.8: R^k needs
        // (l_a k l_c; 000)(l_b k l_d; 000) ≠ 0).
        let configs = ["1s2 2s2 2p6 3s2", "1s2 2s2 2p6 3s 3p", "1s2 2s2 2p6 3p2"];
        let solutions: Vec<ScfSolution> = configs.iter().map(|c| hydrogenic(12, c)).collect();
        let list = radial_integrals(&solutions, &ScaleFactors::default()).unwrap();
        let names = names(&list);
        for expected in [
            "Eav",
            "G1(3s,3p)",
            "zeta(3p)",
            "F2(3p)",
            "P(3s,3p)",
            "P(3s,3p)",
            "R1(3s3s,3p3p)",
        ] {
            assert!(
                names.contains(&expected),
                "{expected} missing from {names:?}"
            );
        }
        // No F2 for a single p electron, no zeta for s, no R^k between 3s.3p and
        // the even configurations.
        assert!(
            !names
                .iter()
                .any(|n| n.starts_with("F2(3s") || *n == "zeta(3s)")
        );
        assert!(list.iter().filter(|i| i.name.starts_with('R')).count() == 1);
        let first = &list[0];
        assert_eq!(first.value, 0.0);
        // The scaled G1 of Mg 3s.3p against the observed ¹P°₁ − ³P° centroid,
        // 13182.8 cm⁻¹ (NIST ASD of 2017-10 via tests/data/reference-data/MgI-levels.csv:
        // 35051.264 less 21850.405, 21870.464, 21911.178 weighted 1, 3, 5), through
        // E(¹P) − E(³P) = (2/3) G¹ (Condon & Shortley 1935; s.p in
        // tests/data/check-values/term_energies.csv): screened hydrogenic orbitals
        // are too crude for better than a factor 2 (common practice, no source).
        let g1 = list.iter().find(|i| i.name == "G1(3s,3p)").unwrap();
        let observed = 35051.264 - (21850.405 + 3.0 * 21870.464 + 5.0 * 21911.178) / 9.0;
        let ratio = 2.0 / 3.0 * g1.scaled / observed;
        assert!(
            (0.5..2.0).contains(&ratio),
            "G1 {} ratio {ratio}",
            g1.scaled
        );
    }

    #[test]
    fn single_replacement_interacts_through_the_open_spectator() {
        // 3d6.4s2 and 3d7.4s (same parity, one electron 4s → 3d): the 3d spectators
        // give R^k(4s3d,3d3d), k = 2 only ((0 k 2; 000)(2 k 2; 000) ≠ 0); its
        // exchange form is the same integral. The remaining 4s electron allows no k.
        let solutions = [
            hydrogenic(26, "1s2 2s2 2p6 3s2 3p6 3d6 4s2"),
            hydrogenic(26, "1s2 2s2 2p6 3s2 3p6 3d7 4s"),
        ];
        let list = radial_integrals(&solutions, &ScaleFactors::default()).unwrap();
        let r: Vec<&str> = names(&list)
            .into_iter()
            .filter(|n| n.starts_with('R'))
            .collect();
        assert_eq!(r, ["R2(4s3d,3d3d)"]);
    }

    #[test]
    fn bad_scale_factors_are_rejected() {
        let scales = ScaleFactors {
            spin_orbit: 0.0,
            ..ScaleFactors::default()
        };
        assert!(radial_integrals(&[hydrogenic(1, "1s")], &scales).is_err());
    }
    #[test]
    fn enclosed_charge_is_that_of_the_other_electrons() {
        // Li 1s2.2p with hydrogenic 1s (charge a) and 2p (charge b): the 2p electron
        // feels Z − 2N_1s(r), N_1s(r) = 1 − e^(−2ar)(1 + 2ar + 2a²r²) (Gauss's law),
        // and with P_2p² = (b⁵/24) r⁴ e^(−br) (Bethe & Salpeter 1957, eq. 3.17)
        // the integral is elementary:
        // ζ = (α²/2)[Z b³/24 − (b⁵/12)(1/b² − 1/β² − 4a/β³ − 12a²/β⁴)], β = b + 2a.
        // A count that included the 2p electron itself, or left out a 1s one, would
        // be off by ~10 %.
        let solution = hydrogenic(3, "1s2 2p");
        let subshells: Vec<Subshell> = solution.configuration.subshells().copied().collect();
        let charges = crate::radial::hydrogenic::slater_effective_charges(3, &subshells);
        let (a, b) = (charges[0], charges[1]);
        let beta = b + 2.0 * a;
        let screened = b.powi(5) / 12.0
            * (1.0 / (b * b)
                - 1.0 / beta.powi(2)
                - 4.0 * a / beta.powi(3)
                - 12.0 * a * a / beta.powi(4));
        let exact = 0.5 * FINE_STRUCTURE_ALPHA.powi(2) * (3.0 * b.powi(3) / 24.0 - screened);
        let got = spin_orbit_hartree(&solution, 1);
        assert!((got / exact - 1.0).abs() < 1e-7, "{got} vs {exact}");
    }

    /// Energy (cm⁻¹) of the level with this configuration and J in one of the
    /// reference-levels tables (NIST ASD, March 2014 export; reference-levels/SOURCES.md).
    fn reference_level(table: &str, configuration: &str, j: &str) -> f64 {
        table
            .lines()
            .filter(|line| !line.starts_with('#'))
            .map(|line| line.split(',').collect::<Vec<_>>())
            .find(|f| f.len() > 4 && f[1] == configuration && f[3] == j)
            .and_then(|f| f[4].parse().ok())
            .unwrap_or_else(|| panic!("no level {configuration} J = {j}"))
    }

    /// ζ (cm⁻¹) with V the whole local-exchange potential of the orbitals
    /// (nucleus, all electrons' charge, Slater exchange, Latter tail), dV/dr by
    /// five-point differences in x: the "exchange included" variant measured against
    /// the default formula.
    fn zeta_with_local_exchange_cm1(solution: &ScfSolution, index: usize) -> f64 {
        let grid = &solution.grid;
        let z = solution.nuclear_charge as f64;
        let v = super::super::local_exchange::local_exchange_potential(grid, z, &solution.orbitals);
        let (r, h) = (grid.r(), grid.step());
        let p = &solution.orbitals[index].p;
        let integrand: Vec<f64> = (0..r.len())
            .map(|i| {
                if i < 2 || i + 2 >= r.len() {
                    return 0.0;
                }
                let dv_dx = (v[i - 2] - 8.0 * v[i - 1] + 8.0 * v[i + 1] - v[i + 2]) / (12.0 * h);
                dv_dx / (r[i] * r[i]) * p[i] * p[i]
            })
            .collect();
        0.5 * FINE_STRUCTURE_ALPHA.powi(2) * grid.integrate(&integrand) * HARTREE_CM1
    }

    #[test]
    fn observed_over_computed_zeta_for_simple_fine_structure() {
        use crate::radial::{ScfOptions, Silent, hartree_fock, local_exchange};
        // ζ from an observed splitting: one p electron or hole (²P of np, np⁵):
        // |E(²P½) − E(²P3/2)| = 3ζ/2; s.p and p⁵s: E(³P2) − E(³P0) = ±3ζ/2, exact in
        // intermediate coupling within the configuration since J = 0 and 2 occur only
        // in ³P (Condon & Shortley 1935, ch. 11; Cowan 1981, §4.6).
        let ne = include_str!("../../reference-levels/NeI.csv");
        let ar = include_str!("../../reference-levels/ArI.csv");
        let cd = include_str!("../../reference-levels/CdI.csv");
        let hg = include_str!("../../reference-levels/HgI.csv");
        // Bands for observed/computed, with Hartree–Fock orbitals:
        // - 0.8–1.25: open p⁵ shells and ions, where the electron lies in or near
        //   the core and core polarisation is small (Ne is below 1: the exchange terms
        //   of Blume & Watson 1962, not made here, lower ζ(2p) by about 10 %, from memory).
        let near_one = (0.8, 1.25);
        // - 1.25–1.75: the valence p electron of a neutral atom or of Ca⁺ outside a
        //   polarisable core. ζ comes from the small part of the orbital inside the
        //   core, which core polarisation and correlation enlarge; Hartree–Fock misses
        //   both (Dirac–Fock gives A(Na 3p½) ≈ 63 MHz against 94.4 MHz observed, from
        //   memory: the same ⟨r⁻³⟩ falls short by a third).
        let valence = (1.25, 1.75);
        // - 1.7–2.3: Hg, where besides that the relativistic contraction of 6p½,
        //   absent from these non-relativistic orbitals, widens ³P0–³P2 (Hg is far
        //   from LS coupling).
        let heavy = (1.7, 2.3);
        let cases = [
            // NIST ASD, from memory: Ne II 2p5 ²P½ at 780.424 cm⁻¹.
            ("Ne II 2p5", 10, "1s2 2s2 2p5", 780.424, near_one),
            // reference-levels/NeI.csv: 2p5(²P°½)3s J=0 − 2p5(²P°3/2)3s J=2.
            (
                "Ne I 2p5 3s",
                10,
                "1s2 2s2 2p5 3s",
                reference_level(ne, "2s2.2p5.(2P°<1/2>).3s", "0")
                    - reference_level(ne, "2s2.2p5.(2P°<3/2>).3s", "2"),
                near_one,
            ),
            // NIST ASD, from memory: Ar II 3p5 ²P½ at 1431.583 cm⁻¹.
            ("Ar II 3p5", 18, "1s2 2s2 2p6 3s2 3p5", 1431.583, near_one),
            // reference-levels/ArI.csv: 3p5(²P°½)4s J=0 − 3p5(²P°3/2)4s J=2.
            (
                "Ar I 3p5 4s",
                18,
                "1s2 2s2 2p6 3s2 3p5 4s",
                reference_level(ar, "3s2.3p5.(2P°<1/2>).4s", "0")
                    - reference_level(ar, "3s2.3p5.(2P°<3/2>).4s", "2"),
                near_one,
            ),
            // NIST ASD, from memory: Al I 3p ²P3/2 at 112.061 cm⁻¹.
            ("Al I 3p", 13, "1s2 2s2 2p6 3s2 3p", 112.061, near_one),
            // NIST ASD, from memory: Mg II 3p ²P 35669.31, 35760.88 cm⁻¹.
            (
                "Mg II 3p",
                12,
                "1s2 2s2 2p6 3p",
                35760.88 - 35669.31,
                near_one,
            ),
            // NIST ASD, from memory: Na I 3p ²P 16956.170, 16973.366 cm⁻¹.
            (
                "Na I 3p",
                11,
                "1s2 2s2 2p6 3p",
                16973.366 - 16956.170,
                valence,
            ),
            // NIST ASD, from memory: K I 4p ²P 12985.185, 13042.896 cm⁻¹.
            (
                "K I 4p",
                19,
                "1s2 2s2 2p6 3s2 3p6 4p",
                13042.896 - 12985.185,
                valence,
            ),
            // NIST ASD, from memory: Ca II 4p ²P 25191.51, 25414.40 cm⁻¹.
            (
                "Ca II 4p",
                20,
                "1s2 2s2 2p6 3s2 3p6 4p",
                25414.40 - 25191.51,
                valence,
            ),
            // NIST ASD, from memory: Mg I 3s3p ³P0 21850.405, ³P2 21911.178 cm⁻¹.
            (
                "Mg I 3s3p",
                12,
                "1s2 2s2 2p6 3s 3p",
                21911.178 - 21850.405,
                valence,
            ),
            // NIST ASD, from memory: Ca I 4s4p ³P0 15157.901, ³P2 15315.943 cm⁻¹.
            (
                "Ca I 4s4p",
                20,
                "1s2 2s2 2p6 3s2 3p6 4s 4p",
                15315.943 - 15157.901,
                valence,
            ),
            // reference-levels/CdI.csv: 5s5p ³P2 − ³P0.
            (
                "Cd I 5s5p",
                48,
                "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6 4d10 5s 5p",
                reference_level(cd, "4d10.5s.5p", "2") - reference_level(cd, "4d10.5s.5p", "0"),
                valence,
            ),
            // reference-levels/HgI.csv: 6s6p ³P2 − ³P0.
            (
                "Hg I 6s6p",
                80,
                "1s2 2s2 2p6 3s2 3p6 3d10 4s2 4p6 4d10 4f14 5s2 5p6 5d10 6s 6p",
                reference_level(hg, "5d10.6s.6p", "2") - reference_level(hg, "5d10.6s.6p", "0"),
                heavy,
            ),
        ];
        for (label, z, config, splitting, (low, high)) in cases {
            let observed = splitting / 1.5;
            let solution = hartree_fock(
                z,
                &config.parse().unwrap(),
                &ScfOptions::default(),
                &mut Silent,
            )
            .unwrap_or_else(|e| panic!("{label}: {e}"));
            let index = solution
                .orbitals
                .iter()
                .position(|o| o.subshell.l == 1 && !o.subshell.is_closed())
                .unwrap();
            let computed = spin_orbit_hartree(&solution, index) * HARTREE_CM1;
            let ratio = observed / computed;
            assert!(
                ratio > low && ratio < high,
                "{label}: observed ζ {observed:.2} / computed {computed:.2} = {ratio:.3}, \
                 outside {low}–{high}"
            );
            // Putting the local exchange potential into V raises ζ by a few per cent
            // only: the valence shortfall stays above 20 %, so leaving exchange out
            // of V is not its cause.
            if (low, high) == valence {
                let with_exchange = zeta_with_local_exchange_cm1(&solution, index);
                assert!(
                    observed / with_exchange > 1.2,
                    "{label}: with exchange {with_exchange:.2}"
                );
            }
            // Orbitals of the local-exchange field instead: Slater's ρ^⅓ exchange
            // (coefficient 3/2, half as large again as Kohn & Sham's) draws the inner
            // lobes of an outer orbital in, so ⟨r⁻³⟩ and ζ come out 15–75 % above
            // Hartree–Fock and observed/computed lies in 0.7–1.1 for every case but
            // Hg (1.1–1.5, relativity as above). A coincidence, not a better theory.
            let slater = local_exchange(
                z,
                &config.parse().unwrap(),
                &ScfOptions::default(),
                &mut Silent,
            )
            .unwrap_or_else(|e| panic!("{label}: {e}"));
            let ratio = observed / (spin_orbit_hartree(&slater, index) * HARTREE_CM1);
            let (low, high) = if (low, high) == heavy {
                (1.1, 1.5)
            } else {
                (0.7, 1.1)
            };
            assert!(
                ratio > low && ratio < high,
                "{label}, local exchange: observed/computed = {ratio:.3}"
            );
        }
    }
    #[test]
    fn sodium_three_p_is_the_hartree_fock_orbital_and_falls_short_in_hyperfine_too() {
        // The ζ shortfall of Na 3p (observed/computed 1.35, above) is not the
        // orbital's fault. Its energy is Hartree–Fock's, ε(3p) = −0.1095 hartree
        // (Froese Fischer 1977, tables; from memory). Its ⟨r⁻³⟩ gives the hyperfine
        // constant A(3p½) = 2(μ0/4π) μ_B μ_N g_I ⟨r⁻³⟩ l(l+1)/(j(j+1)) (Arimondo,
        // Inguscio & Violino 1977, Rev. Mod. Phys. 49, 31) of the Dirac–Fock
        // orbital, 62.6 MHz, against 94.44 MHz observed (Safronova, Johnson &
        // Derevianko 1999, Phys. Rev. A 60, 4476; both from memory): the same third
        // missing, from core polarisation. g_I = 2.2175/1.5 for ²³Na, m_p/m_e =
        // 1836.153 (from memory).
        use crate::radial::{ScfOptions, Silent, hartree_fock};
        use crate::units::constants::{
            BOHR_RADIUS_CM, ELECTRON_MASS_KG, ELEMENTARY_CHARGE_C, PLANCK_CONSTANT_J_S,
        };
        let na = hartree_fock(
            11,
            &"1s2 2s2 2p6 3p".parse().unwrap(),
            &ScfOptions::default(),
            &mut Silent,
        )
        .unwrap();
        let p3 = na.orbital(3, 1).unwrap();
        assert!(
            (p3.energy_hartree + 0.1095).abs() < 3e-4,
            "{}",
            p3.energy_hartree
        );
        let r3 = na.grid.integrate_product_power(&p3.p, &p3.p, -3);
        let bohr_magneton = ELEMENTARY_CHARGE_C * PLANCK_CONSTANT_J_S
            / (4.0 * std::f64::consts::PI * ELECTRON_MASS_KG);
        let nuclear_magneton = bohr_magneton / 1836.153;
        let a0 = BOHR_RADIUS_CM * 1e-2;
        let unit_mhz =
            1e-7 * bohr_magneton * nuclear_magneton / (PLANCK_CONSTANT_J_S * a0.powi(3)) / 1e6;
        let a_half = 2.0 * unit_mhz * (2.2175 / 1.5) * r3 * 2.0 / 0.75;
        assert!((a_half / 62.6 - 1.0).abs() < 0.05, "A(3p½) = {a_half} MHz");
        assert!(94.44 / a_half > 1.3);
    }
}
