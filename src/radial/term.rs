//! The energy of one term of a configuration with an s electron and an l electron
//! outside closed shells (He 1s2s, 1s2p; Mg 3s3p; Ca 4s3d).
//!
//! Closed shells interact alike with every state of the configuration, so the terms
//! ¹L and ³L of s·l differ from E_av only in the exchange integral of the open pair
//! (Condon & Shortley 1935, §7.5; Slater 1960, vol. I, ch. 13; the term energies of
//! s.s', s.p, s.d, s.f in tests/data/check-values/term_energies.csv, sympy):
//!
//! ```text
//! E(^{2S+1}L) = … + F⁰(s,l) ± G^l(s,l)/(2l+1)     (+ singlet, − triplet)
//! E_av        = … + F⁰(s,l) − G^l(s,l)/(2(2l+1))
//! ```
//!
//! [`s_l_term_expression`] builds that expression; Hartree–Fock for it is
//! [`super::hartree_fock::hartree_fock_term`]. For the delicate ¹S of two s
//! electrons, [`two_s_electron_singlet_energies`] gives an upper bound to the
//! excited ¹S level from the same pair of orbitals.

use crate::notation::Subshell;

use super::RadialError;
use super::average::{EnergyExpression, SlaterKind};
use super::energy::kinetic_energy;
use super::grid::RadialGrid;
use super::slater::yk_function;

/// The total spin of the open s·l pair.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PairSpin {
    /// S = 0, the ¹L term.
    Singlet,
    /// S = 1, the ³L term.
    Triplet,
}

impl PairSpin {
    /// The spin multiplicity 2S + 1.
    pub fn multiplicity(self) -> u32 {
        match self {
            PairSpin::Singlet => 1,
            PairSpin::Triplet => 3,
        }
    }

    /// The spin of multiplicity 1 or 3, if it is one of them.
    pub fn from_multiplicity(multiplicity: u32) -> Option<PairSpin> {
        match multiplicity {
            1 => Some(PairSpin::Singlet),
            3 => Some(PairSpin::Triplet),
            _ => None,
        }
    }

    /// The coefficient of G^l(s,l) in the term energy: ±1/(2l+1).
    pub fn exchange_coefficient(self, l: u32) -> f64 {
        let magnitude = 1.0 / (2 * l + 1) as f64;
        match self {
            PairSpin::Singlet => magnitude,
            PairSpin::Triplet => -magnitude,
        }
    }
}

/// The indices (s, l) of the two singly occupied subshells when every other
/// subshell is closed and one of the two is an s subshell; `None` otherwise.
pub fn open_s_l_pair(subshells: &[Subshell]) -> Option<(usize, usize)> {
    let open: Vec<usize> = (0..subshells.len())
        .filter(|&a| !subshells[a].is_closed())
        .collect();
    let &[a, b] = open.as_slice() else {
        return None;
    };
    if subshells[a].occupancy != 1 || subshells[b].occupancy != 1 {
        return None;
    }
    match (subshells[a].l, subshells[b].l) {
        (0, _) => Some((a, b)),
        (_, 0) => Some((b, a)),
        _ => None,
    }
}

/// The energy expression of the term ^{2S+1}L of closed shells + s + l: E_av with
/// the coefficient of G^l(s,l) replaced by ±1/(2l+1) (see the module notes).
///
/// Subshells are those of the configuration, each written once; an error names
/// the configuration when it is not of the form closed shells + s¹ + l¹.
pub fn s_l_term_expression(
    subshells: &[Subshell],
    spin: PairSpin,
) -> Result<EnergyExpression, RadialError> {
    let Some((s, l)) = open_s_l_pair(subshells) else {
        return Err(RadialError::InvalidConfiguration {
            configuration: subshells
                .iter()
                .map(|s| s.to_string())
                .collect::<Vec<_>>()
                .join(" "),
            problem: "a term energy needs one s electron and one other electron \
                      outside closed shells"
                .to_string(),
        });
    };
    let mut expression = EnergyExpression::new(subshells);
    let k = subshells[l].l;
    let pair = (s.min(l), s.max(l));
    let mut found = 0;
    for term in &mut expression.terms {
        if term.kind == SlaterKind::Exchange && (term.a, term.b) == pair && term.k == k {
            term.coefficient = spin.exchange_coefficient(k);
            found += 1;
        }
    }
    debug_assert_eq!(found, 1, "E_av has one G^l(s,l) term");
    Ok(expression)
}

/// The ¹S energies of two electrons in two orthonormal s orbitals `pa`, `pb`
/// (on `grid`, nuclear charge `z`, no other electrons), hartree, lowest first:
/// the eigenvalues of the Hamiltonian in the three ¹S functions a², (ab)¹S, b².
///
/// The three functions span the same space for any rotation of a and b, so the
/// result does not depend on how the pair is mixed; by the Hylleraas–Undheim–
/// MacDonald theorem (Phys. Rev. 43, 1933) the second eigenvalue lies above the
/// exact energy of the second ¹S state (He 1s2s ¹S) — the bound that a single
/// 1s2s ¹S function lacks. The matrix (Condon & Shortley 1935, §6.8; Slater
/// 1960, ch. 13), with h_xy = ⟨x| −½d²/dr² − Z/r |y⟩ and the Slater integrals
/// R⁰(xy, uv) = ∫∫ x(1)u(2) y(1)v(2)/r_> dr₁dr₂:
///
/// ```text
/// H(a², a²)   = 2h_aa + F⁰(a,a)          H(b², b²) = 2h_bb + F⁰(b,b)
/// H(ab, ab)   = h_aa + h_bb + F⁰(a,b) + G⁰(a,b)
/// H(a², b²)   = G⁰(a,b)
/// H(a², ab)   = √2 [h_ab + R⁰(aa, ab)]   H(ab, b²) = √2 [h_ab + R⁰(ab, bb)]
/// ```
pub fn two_s_electron_singlet_energies(
    grid: &RadialGrid,
    z: f64,
    pa: &[f64],
    pb: &[f64],
) -> [f64; 3] {
    let h = grid.step();
    let one = |x: &[f64], y: &[f64]| {
        let sum: Vec<f64> = x.iter().zip(y).map(|(x, y)| x + y).collect();
        let difference: Vec<f64> = x.iter().zip(y).map(|(x, y)| x - y).collect();
        let kinetic =
            (kinetic_energy(grid, 0, z, &sum) - kinetic_energy(grid, 0, z, &difference)) / 4.0;
        kinetic - z * grid.integrate_product_power(x, y, -1)
    };
    // R⁰(xy, uv) = ∫ x y Y⁰(uv)/r dr.
    let r0 = |x: &[f64], y: &[f64], u: &[f64], v: &[f64]| {
        let y0 = yk_function(grid, 0, u, v);
        h * x
            .iter()
            .zip(y)
            .zip(&y0)
            .map(|((x, y), w)| x * y * w)
            .sum::<f64>()
    };
    let (haa, hbb, hab) = (one(pa, pa), one(pb, pb), one(pa, pb));
    let g0 = r0(pa, pb, pa, pb);
    let root2 = std::f64::consts::SQRT_2;
    let m11 = 2.0 * haa + r0(pa, pa, pa, pa);
    let m33 = 2.0 * hbb + r0(pb, pb, pb, pb);
    let m22 = haa + hbb + r0(pa, pa, pb, pb) + g0;
    let m12 = root2 * (hab + r0(pa, pa, pa, pb));
    let m23 = root2 * (hab + r0(pa, pb, pb, pb));
    let matrix = nalgebra::Matrix3::new(m11, m12, g0, m12, m22, m23, g0, m23, m33);
    let mut values: Vec<f64> = matrix.symmetric_eigenvalues().iter().copied().collect();
    values.sort_by(f64::total_cmp);
    [values[0], values[1], values[2]]
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rational(s: &str) -> f64 {
        match s.split_once('/') {
            Some((p, q)) => p.parse::<f64>().unwrap() / q.parse::<f64>().unwrap(),
            None => s.parse().unwrap(),
        }
    }

    /// Our term expressions against the term energies of s.s', s.p, s.d and s.f in
    /// tests/data/check-values/term_energies.csv (sympy, Slater-determinant method):
    /// every integral's coefficient, for both terms.
    #[test]
    fn s_l_terms_match_sympy_term_energies() {
        let text = include_str!("../../tests/data/check-values/term_energies.csv");
        let mut lines = text.lines().skip(1);
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let column = |name: &str| header.iter().position(|h| *h == name).unwrap();
        let mut checked = 0;
        for line in lines {
            let f: Vec<&str> = line.split(',').collect();
            let config = f[column("config")];
            let l = match config {
                "s.s'" => 0,
                "s.p" => 1,
                "s.d" => 2,
                "s.f" => 3,
                _ => continue,
            };
            let spin =
                PairSpin::from_multiplicity((2.0 * rational(f[column("S")]) + 1.0).round() as u32)
                    .unwrap();
            let shells = [
                Subshell {
                    n: 2,
                    l: 0,
                    occupancy: 1,
                },
                Subshell {
                    n: 3,
                    l,
                    occupancy: 1,
                },
            ];
            let expression = s_l_term_expression(&shells, spin).unwrap();
            let mut ours = std::collections::BTreeMap::new();
            for term in &expression.terms {
                let name = match term.kind {
                    SlaterKind::Direct => format!("F^{}", term.k),
                    SlaterKind::Exchange => format!("G^{}", term.k),
                };
                *ours.entry(name).or_insert(0.0) += term.coefficient;
            }
            for name in &header[column("F^0")..] {
                let expected = rational(f[column(name)]);
                let got = ours.get(*name).copied().unwrap_or(0.0);
                assert!(
                    (got - expected).abs() < 1e-14,
                    "{config} {}: {name} ours {got} vs sympy {expected}",
                    f[column("term")]
                );
            }
            checked += 1;
        }
        assert_eq!(checked, 8, "terms checked");
    }

    #[test]
    fn closed_shells_keep_their_average_coefficients() {
        // Mg 3s3p ³P: only the G¹(3s,3p) coefficient differs from E_av
        // (−1/3 instead of −1/6; Condon & Shortley 1935, §7.5).
        let config: crate::notation::Configuration = "1s2 2s2 2p6 3s 3p".parse().unwrap();
        let shells: Vec<Subshell> = config.subshells().copied().collect();
        let average = EnergyExpression::new(&shells);
        let triplet = s_l_term_expression(&shells, PairSpin::Triplet).unwrap();
        let changed: Vec<_> = average
            .terms
            .iter()
            .zip(&triplet.terms)
            .filter(|(a, t)| a != t)
            .collect();
        assert_eq!(changed.len(), 1);
        let (a, t) = changed[0];
        assert_eq!((a.kind, a.k, a.a, a.b), (SlaterKind::Exchange, 1, 3, 4));
        assert!((a.coefficient + 1.0 / 6.0).abs() < 1e-15);
        assert!((t.coefficient + 1.0 / 3.0).abs() < 1e-15);
    }

    #[test]
    fn singlet_energies_of_hydrogenic_orbitals_match_sympy() {
        // Hydrogenic 1s, 2s of Z = 2 (h_12 = 0, h_nn = −Z²/2n²). Matrix elements
        // exact with sympy 1.14 (∫∫ of r·R_nl from sympy.physics.hydrogen):
        // F⁰(1s,1s) = 5Z/8, F⁰(1s,2s) = 17Z/81, G⁰(1s,2s) = 16Z/729,
        // F⁰(2s,2s) = 77Z/512, R⁰(1s1s,1s2s) = 4096√2 Z/64827,
        // R⁰(1s2s,2s2s) = 512√2 Z/84375; the eigenvalues of the resulting 3×3
        // matrix (sympy, 15 digits): −2.83099545725110, −1.95696810761653,
        // −0.697606351113166 hartree.
        let grid = RadialGrid::new(2.0, super::super::GridSpec::default()).unwrap();
        let p1 = super::super::hydrogenic::hydrogenic_orbital(&grid, 1, 0, 2.0).unwrap();
        let p2 = super::super::hydrogenic::hydrogenic_orbital(&grid, 2, 0, 2.0).unwrap();
        let got = two_s_electron_singlet_energies(&grid, 2.0, &p1, &p2);
        for (got, expected) in
            got.iter()
                .zip([-2.83099545725110, -1.95696810761653, -0.697606351113166])
        {
            assert!((got - expected).abs() < 1e-8, "{got} vs {expected}");
        }
        // The mixing of the pair does not matter (rotation by 0.3 rad).
        let (c, s) = (0.3f64.cos(), 0.3f64.sin());
        let q1: Vec<f64> = p1.iter().zip(&p2).map(|(a, b)| c * a + s * b).collect();
        let q2: Vec<f64> = p1.iter().zip(&p2).map(|(a, b)| -s * a + c * b).collect();
        let rotated = two_s_electron_singlet_energies(&grid, 2.0, &q1, &q2);
        for (a, b) in rotated.iter().zip(&got) {
            assert!((a - b).abs() < 1e-9, "{a} vs {b}");
        }
    }

    #[test]
    fn other_configurations_are_refused() {
        for config in ["1s2", "1s2 2s2 2p", "1s 2p2", "2p 3d", "1s2 2s2 2p5 3s"] {
            let config: crate::notation::Configuration = config.parse().unwrap();
            let shells: Vec<Subshell> = config.subshells().copied().collect();
            assert!(
                s_l_term_expression(&shells, PairSpin::Singlet).is_err(),
                "{config}"
            );
        }
    }
}
