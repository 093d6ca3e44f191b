//! Hydrogenic orbitals in closed form, with an effective (screened) nuclear charge.
//!
//! For one electron bound to a point charge Z (infinite nuclear mass, no
//! relativity), P_nl(r) = r R_nl(r) with
//!
//! ```text
//! R_nl(r) = √[(2Z/n)³ (n−l−1)! / (2n (n+l)!)] e^(−ρ/2) ρ^l L^(2l+1)_(n−l−1)(ρ),  ρ = 2Zr/n,
//! ```
//!
//! L^(α)_m the generalised Laguerre polynomial (Bethe & Salpeter 1957, eq. 3.17, in
//! the modern normalisation of Laguerre polynomials). P_nl is positive near the
//! origin. Also here: the exact energy, ⟨r⟩ and spin–orbit parameter of such an
//! orbital, and Slater's screening rules for effective charges.

use crate::notation::Subshell;
use crate::units::constants::FINE_STRUCTURE_ALPHA;

use super::RadialError;
use super::grid::RadialGrid;

/// P_nl(r) on `grid` for charge `z_eff`, normalised (∫P² dr = 1 exactly).
pub fn hydrogenic_orbital(
    grid: &RadialGrid,
    n: u32,
    l: u32,
    z_eff: f64,
) -> Result<Vec<f64>, RadialError> {
    if n == 0 || l >= n {
        return Err(RadialError::InvalidOrbital {
            n,
            l,
            problem: "n must exceed l".into(),
        });
    }
    if !(z_eff.is_finite() && z_eff > 0.0) {
        return Err(RadialError::InvalidOrbital {
            n,
            l,
            problem: format!("the effective charge must be positive, not {z_eff}"),
        });
    }
    let nf = n as f64;
    let degree = n - l - 1;
    let alpha = (2 * l + 1) as f64;
    // (n−l−1)!/(n+l)! = 1/Π_{j=n−l}^{n+l} j.
    let factorial_ratio: f64 = ((n - l)..=(n + l)).map(|j| 1.0 / j as f64).product();
    let scale = 2.0 * z_eff / nf;
    let norm = (scale.powi(3) * factorial_ratio / (2.0 * nf)).sqrt();
    Ok(grid
        .r()
        .iter()
        .map(|&r| {
            let rho = scale * r;
            r * norm * (-rho / 2.0).exp() * rho.powi(l as i32) * laguerre(degree, alpha, rho)
        })
        .collect())
}

/// The generalised Laguerre polynomial L^(α)_m(x), by the three-term recurrence
/// (k+1) L_{k+1} = (2k+1+α−x) L_k − (k+α) L_{k−1} (Abramowitz & Stegun 22.7.12).
pub fn laguerre(m: u32, alpha: f64, x: f64) -> f64 {
    let mut previous = 1.0;
    if m == 0 {
        return previous;
    }
    let mut current = 1.0 + alpha - x;
    for k in 1..m {
        let kf = k as f64;
        let next = ((2.0 * kf + 1.0 + alpha - x) * current - (kf + alpha) * previous) / (kf + 1.0);
        previous = current;
        current = next;
    }
    current
}

/// The energy −Z²/(2n²) hartree of a hydrogenic level (Bohr; any textbook).
pub fn hydrogenic_energy_hartree(n: u32, z: f64) -> f64 {
    -z * z / (2.0 * (n * n) as f64)
}

/// ⟨r⟩ = [3n² − l(l+1)]/(2Z) bohr (Bethe & Salpeter 1957, eq. 3.25).
pub fn hydrogenic_mean_radius_bohr(n: u32, l: u32, z: f64) -> f64 {
    (3.0 * (n * n) as f64 - (l * (l + 1)) as f64) / (2.0 * z)
}

/// ζ_nl = α² Z⁴ / [2 n³ l (l+½)(l+1)] hartree, the spin–orbit parameter of a
/// hydrogenic orbital, l > 0 (Bethe & Salpeter 1957, eq. 13.10 with ⟨r⁻³⟩ of
/// eq. 3.26); `None` for l = 0.
pub fn hydrogenic_zeta_hartree(n: u32, l: u32, z: f64) -> Option<f64> {
    if l == 0 {
        return None;
    }
    let (nf, lf) = (n as f64, l as f64);
    Some(
        FINE_STRUCTURE_ALPHA * FINE_STRUCTURE_ALPHA * z.powi(4)
            / (2.0 * nf.powi(3) * lf * (lf + 0.5) * (lf + 1.0)),
    )
}

/// Effective charges Z − s of the subshells of a configuration by Slater's rules
/// (Slater 1930, Phys. Rev. 36, 57; as given in chemistry textbooks, from memory).
///
/// Subshells are grouped (1s)(2s,2p)(3s,3p)(3d)(4s,4p)(4d)(4f)(5s,5p)…; an electron
/// is screened by 0.35 for each other electron of its group (0.30 in 1s), by
/// nothing from groups to its right; an s or p electron by 0.85 for each electron
/// of principal number n−1 and 1.00 for each deeper one; a d or f electron by 1.00
/// for each electron in groups to its left. Slater's non-integral n* is not used.
/// The charge is kept at least 1 (an electron of a neutral atom sees at least the
/// ion's charge).
pub fn slater_effective_charges(nuclear_charge: u32, subshells: &[Subshell]) -> Vec<f64> {
    let group = |s: &Subshell| (s.n, s.l.saturating_sub(1));
    subshells
        .iter()
        .map(|shell| {
            let own = group(shell);
            let mut screening = 0.0;
            for other in subshells {
                let other_group = group(other);
                let count = other.occupancy as f64 - if other == shell { 1.0 } else { 0.0 };
                let per_electron = if other_group == own {
                    if shell.n == 1 { 0.30 } else { 0.35 }
                } else if other_group > own {
                    0.0
                } else if shell.l >= 2 {
                    1.0
                } else if other.n + 1 == shell.n {
                    0.85
                } else if other.n + 1 < shell.n {
                    1.0
                } else {
                    // Same n, a group to the left of an s/p group cannot exist.
                    0.0
                };
                screening += per_electron * count;
            }
            (nuclear_charge as f64 - screening).max(1.0)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::grid::GridSpec;

    #[test]
    fn orbitals_are_normalised_and_have_textbook_mean_radius() {
        // ∫P² dr = 1 and ⟨r⟩ = [3n² − l(l+1)]/(2Z) (Bethe & Salpeter 1957, eq. 3.25).
        let spec = GridSpec {
            r_max_bohr: 400.0,
            ..GridSpec::default()
        };
        for z in [1.0, 2.5, 26.0] {
            let grid = RadialGrid::new(z, spec).unwrap();
            for n in 1..=6 {
                for l in 0..n {
                    let p = hydrogenic_orbital(&grid, n, l, z).unwrap();
                    let norm = grid.integrate_product(&p, &p);
                    let mean_r = grid.integrate_product_power(&p, &p, 1);
                    assert!((norm - 1.0).abs() < 1e-12, "n={n} l={l} Z={z}: {norm}");
                    let expected = hydrogenic_mean_radius_bohr(n, l, z);
                    assert!((mean_r / expected - 1.0).abs() < 1e-12);
                }
            }
        }
    }

    #[test]
    fn laguerre_matches_explicit_polynomials() {
        // L^(α)_2(x) = x²/2 − (α+2)x + (α+2)(α+1)/2 (Abramowitz & Stegun 22.3.9).
        for (alpha, x) in [(1.0, 0.3), (3.0, 2.5), (5.0, 7.0)] {
            let explicit = x * x / 2.0 - (alpha + 2.0) * x + (alpha + 2.0) * (alpha + 1.0) / 2.0;
            assert!((laguerre(2, alpha, x) - explicit).abs() < 1e-12);
        }
    }

    #[test]
    fn slater_rules_reproduce_textbook_examples() {
        // Worked examples of Slater's rules found in general-chemistry textbooks
        // (values from memory): N 2p 3.90, Zn 3d 8.85, Zn 4s 4.35, Fe 3d 6.25.
        let config = |s: &str| {
            s.parse::<crate::notation::Configuration>()
                .unwrap()
                .subshells()
                .copied()
                .collect::<Vec<_>>()
        };
        let n = slater_effective_charges(7, &config("1s2 2s2 2p3"));
        assert!((n[2] - 3.90).abs() < 1e-12);
        let zn = slater_effective_charges(30, &config("1s2 2s2 2p6 3s2 3p6 3d10 4s2"));
        assert!((zn[5] - 8.85).abs() < 1e-12);
        assert!((zn[6] - 4.35).abs() < 1e-12);
        let fe = slater_effective_charges(26, &config("1s2 2s2 2p6 3s2 3p6 3d6 4s2"));
        assert!((fe[5] - 6.25).abs() < 1e-12);
    }
}
