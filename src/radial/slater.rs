//! Slater integrals by the Y^k potential (Hartree 1957; Froese Fischer 1977, §6.4).
//!
//! The Y^k function of two orbitals is
//!
//! ```text
//! Y^k(ab; r) = r ∫₀^∞ (r<^k / r>^(k+1)) P_a(s) P_b(s) ds
//!            = ∫₀^r (s/r)^k P_a P_b ds + ∫_r^∞ (r/s)^(k+1) P_a P_b ds,
//! ```
//!
//! and the radial integrals follow from it with one more integral:
//!
//! ```text
//! R^k(ab, cd) = ∫∫ P_a(1) P_b(2) (r<^k / r>^(k+1)) P_c(1) P_d(2) dr₁ dr₂
//!             = ∫₀^∞ P_a(r) P_c(r) Y^k(bd; r) / r dr,
//! F^k(a, b) = R^k(ab, ab),   G^k(a, b) = R^k(ab, ba)
//! ```
//!
//! (Condon & Shortley 1935, §6.8; Slater 1960, vol. I, ch. 13). The two running
//! integrals of Y^k are carried out as recurrences from point to point on the
//! logarithmic grid, so the work is linear in the number of points:
//! Z_i = e^(−kh) Z_{i−1} + ∫_{x_{i−1}}^{x_i} e^(k(x−x_i)) r P_a P_b dx and
//! W_i = e^(−(k+1)h) W_{i+1} + ∫_{x_i}^{x_{i+1}} e^(−(k+1)(x−x_i)) r P_a P_b dx, with
//! each step by the six-point rule of [`super::grid::CUMULATIVE_WEIGHTS_1440`].
//! All values are in hartree (atomic units).

use super::grid::{CUMULATIVE_WEIGHTS_1440, RadialGrid, cumulative_weights};

/// Y^k(ab; r) on the grid, for orbitals `pa`, `pb` sampled on `grid` (dimensionless:
/// Y^k/r is a potential in hartree). `pa` and `pb` must have the grid's length.
pub fn yk_function(grid: &RadialGrid, k: u32, pa: &[f64], pb: &[f64]) -> Vec<f64> {
    yk_of_density(grid, k, &r_density(grid, pa, pb))
}

/// Y^k of a pair density already multiplied by r: `r_density[i]` = r_i P_a(r_i) P_b(r_i).
pub fn yk_of_density(grid: &RadialGrid, k: u32, r_density: &[f64]) -> Vec<f64> {
    let h = grid.step();
    let mut y = running_integral(r_density, h, k as f64, Direction::Outward);
    let outer = running_integral(r_density, h, (k + 1) as f64, Direction::Inward);
    for (y, w) in y.iter_mut().zip(&outer) {
        *y += w;
    }
    y
}

/// Z^k(ab; r) = ∫₀^r (s/r)^k P_a P_b ds alone. Z⁰(bb; r) is the charge of orbital b
/// inside r, which gives the field of the electrons (Gauss's law).
pub fn zk_function(grid: &RadialGrid, k: u32, pa: &[f64], pb: &[f64]) -> Vec<f64> {
    running_integral(
        &r_density(grid, pa, pb),
        grid.step(),
        k as f64,
        Direction::Outward,
    )
}

/// R^k(ab, cd) = ∫ P_a P_c Y^k(bd)/r dr, hartree.
pub fn rk_integral(grid: &RadialGrid, k: u32, [pa, pb, pc, pd]: [&[f64]; 4]) -> f64 {
    let y = yk_function(grid, k, pb, pd);
    // ∫ P_a P_c Y/r dr = h Σ r (P_a P_c Y / r) = h Σ P_a P_c Y.
    grid.step()
        * pa.iter()
            .zip(pc)
            .zip(&y)
            .map(|((a, c), y)| a * c * y)
            .sum::<f64>()
}

/// F^k(a, b) = R^k(ab, ab), hartree.
pub fn fk_integral(grid: &RadialGrid, k: u32, pa: &[f64], pb: &[f64]) -> f64 {
    rk_integral(grid, k, [pa, pb, pa, pb])
}

/// G^k(a, b) = R^k(ab, ba), hartree.
pub fn gk_integral(grid: &RadialGrid, k: u32, pa: &[f64], pb: &[f64]) -> f64 {
    rk_integral(grid, k, [pa, pb, pb, pa])
}

/// r_i P_a(r_i) P_b(r_i): the integrand in x of ∫ P_a P_b dr.
pub(crate) fn r_density(grid: &RadialGrid, pa: &[f64], pb: &[f64]) -> Vec<f64> {
    grid.r()
        .iter()
        .zip(pa)
        .zip(pb)
        .map(|((r, a), b)| r * a * b)
        .collect()
}

/// Which way a running integral accumulates.
#[derive(Clone, Copy)]
pub(crate) enum Direction {
    /// out_i = e^(−m h) out_{i−1} + ∫_{x_{i−1}}^{x_i} e^(m(x−x_i)) f dx, out_0 = 0.
    Outward,
    /// out_i = e^(−m h) out_{i+1} + ∫_{x_i}^{x_{i+1}} e^(−m(x−x_i)) f dx, out_{N−1} = 0.
    Inward,
}

/// The running integral of `f` (sampled on a uniform x-grid of step `h`) with the
/// exponential weight of rate `m` per unit x, by the six-point rule. What lies
/// inside the first point is left out: on the default grid it is below 10⁻¹⁵ of the
/// total.
pub(crate) fn running_integral(f: &[f64], h: f64, m: f64, direction: Direction) -> Vec<f64> {
    let n = f.len();
    let mut out = vec![0.0; n];
    if n < 6 {
        return out;
    }
    let step_factor = (-m * h).exp();
    // Each row's weights times the exponential factor of each window point
    // relative to the interval's far end, and times h.
    let mut weights = [[0.0; 6]; 5];
    for (p, row) in CUMULATIVE_WEIGHTS_1440.iter().enumerate() {
        for (j, w) in row.iter().enumerate() {
            let offset = j as f64 - (p as f64 + 1.0);
            weights[p][j] = h * w / 1440.0 * (m * h * offset).exp();
        }
    }
    match direction {
        Direction::Outward => {
            for i in 1..n {
                let (start, p) = cumulative_weights(i, n);
                let w = &weights[p];
                let f = &f[start..start + 6];
                let piece = w[0] * f[0]
                    + w[1] * f[1]
                    + w[2] * f[2]
                    + w[3] * f[3]
                    + w[4] * f[4]
                    + w[5] * f[5];
                out[i] = step_factor * out[i - 1] + piece;
            }
        }
        Direction::Inward => {
            // The mirror image: step i of the reversed sequence ends at point n−1−i.
            for i in 1..n {
                let (start, p) = cumulative_weights(i, n);
                let w = &weights[p];
                let at = |j: usize| f[n - 1 - (start + j)];
                let piece = w[0] * at(0)
                    + w[1] * at(1)
                    + w[2] * at(2)
                    + w[3] * at(3)
                    + w[4] * at(4)
                    + w[5] * at(5);
                out[n - 1 - i] = step_factor * out[n - i] + piece;
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::grid::GridSpec;
    use crate::radial::hydrogenic::hydrogenic_orbital;

    fn orbital(grid: &RadialGrid, label: &str, z: f64) -> Vec<f64> {
        let n = label[..1].parse().unwrap();
        let l = crate::notation::ORBITAL_LETTERS
            .iter()
            .position(|&c| c as char == label.chars().nth(1).unwrap())
            .unwrap() as u32;
        hydrogenic_orbital(grid, n, l, z).unwrap()
    }

    #[test]
    fn hydrogenic_slater_integrals_match_sympy() {
        // tests/data/check-values/hydrogenic_slater.csv (exact sympy integrals, copied from
        // ../shared/check-values): value = coefficient × Z hartree. It includes the
        // textbook F⁰(1s,1s) = 5Z/8, J(1s2s) = 17Z/81, K(1s2s) = 16Z/729,
        // J(1s2p) = 59Z/243 and K(1s2p) = G¹/3 = 112Z/6561.
        let text = include_str!("../../tests/data/check-values/hydrogenic_slater.csv");
        let mut checked = 0;
        for z in [1.0, 2.0, 26.0] {
            let spec = GridSpec {
                r_max_bohr: 200.0 / z,
                ..GridSpec::default()
            };
            let grid = RadialGrid::new(z, spec).unwrap();
            for line in text.lines().skip(2) {
                let f: Vec<&str> = line.split(',').collect();
                let k: u32 = f[1].parse().unwrap();
                let (pa, pb) = (orbital(&grid, f[2], z), orbital(&grid, f[3], z));
                let expected = z * f[5].parse::<f64>().unwrap();
                let got = match &f[0][..1] {
                    "F" => fk_integral(&grid, k, &pa, &pb),
                    _ => gk_integral(&grid, k, &pa, &pb),
                };
                // The running integrals err by O(h⁶): about 1e-12 on the default grid.
                assert!(
                    (got / expected - 1.0).abs() < 1e-10,
                    "{} k={k} {} {} Z={z}: {got} vs {expected}",
                    f[0],
                    f[2],
                    f[3]
                );
                checked += 1;
            }
        }
        assert_eq!(checked, 48);
    }

    #[test]
    fn potential_of_a_hydrogen_1s_cloud() {
        // Y⁰(1s1s; r) = r V(r) = 1 − (1 + r) e^(−2r) for hydrogen 1s (Z = 1), the
        // electrostatic potential of the charge cloud (Bethe & Salpeter 1957, §32).
        let grid = RadialGrid::new(1.0, GridSpec::default()).unwrap();
        let p = orbital(&grid, "1s", 1.0);
        let y = yk_function(&grid, 0, &p, &p);
        for (r, y) in grid.r().iter().zip(&y) {
            let exact = 1.0 - (1.0 + r) * (-2.0 * r).exp();
            assert!((y - exact).abs() < 1e-11, "r = {r}: {y} vs {exact}");
        }
    }

    #[test]
    fn rk_has_the_symmetries_of_the_coulomb_integral() {
        // R^k(ab,cd) = R^k(ba,dc) = R^k(cb,ad) = R^k(ad,cb) (exchange of the two
        // electrons; of the bra and ket of one electron): Slater 1960, vol. I, §13-3.
        let grid = RadialGrid::new(3.0, GridSpec::default()).unwrap();
        let a = orbital(&grid, "2s", 2.3);
        let b = orbital(&grid, "3p", 1.7);
        let c = orbital(&grid, "3s", 2.9);
        let d = orbital(&grid, "4d", 1.1);
        for k in 0..4 {
            let reference = rk_integral(&grid, k, [&a, &b, &c, &d]);
            for other in [
                rk_integral(&grid, k, [&b, &a, &d, &c]),
                rk_integral(&grid, k, [&c, &b, &a, &d]),
                rk_integral(&grid, k, [&a, &d, &c, &b]),
            ] {
                assert!((other - reference).abs() < 1e-11 * reference.abs().max(1e-3));
            }
        }
    }
}
