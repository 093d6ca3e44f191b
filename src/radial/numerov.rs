//! Bound states of a local central potential by Numerov's method, with node
//! counting and matching.
//!
//! The radial equation −½P'' + [l(l+1)/(2r²) + V(r)] P = E P becomes, with
//! x = ln r and P = √r y,
//!
//! ```text
//! y'' = g(x) y,   g = 2r²(V − E) + (l + ½)²
//! ```
//!
//! (Froese Fischer 1977, §6.2), which Numerov's three-point formula integrates with
//! an error O(h⁴): f_{i+1} y_{i+1} − (12 − 10 f_i) y_i + f_{i−1} y_{i−1} = 0 with
//! f = 1 − h²g/12 (Numerov 1924; Hartree 1957, §4.6). The solution is integrated
//! outward from the origin (P ≈ r^(l+1)(1 − Z r/(l+1))) to the outer classical
//! turning point and inward from where it has decayed by e⁻⁶⁰; the two are matched
//! in value there. The energy is corrected from the mismatch R of the three-point
//! formula at the matching point, δE = −R y_m / (h² Σ 2r² y²) (first-order
//! perturbation theory on the discrete equations), and kept inside a bracket that
//! the node count narrows, so the state with n − l − 1 nodes is found.

use super::RadialError;
use super::grid::RadialGrid;

/// A bound state of a local potential.
#[derive(Debug, Clone, PartialEq)]
pub struct BoundState {
    /// Principal quantum number n (the state has n − l − 1 nodes).
    pub n: u32,
    /// Orbital angular momentum l.
    pub l: u32,
    /// Eigenvalue, hartree.
    pub energy_hartree: f64,
    /// P(r) on the grid, normalised so that ∫P² dr = 1, positive near the origin.
    pub p: Vec<f64>,
    /// Energy iterations used.
    pub iterations: u32,
    /// |P|'s largest value beyond 0.7 r_max, relative to its maximum: how well the
    /// grid contains the state.
    pub tail: f64,
}

/// Settings of the bound-state search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ShootingOptions {
    /// Stop when the energy correction is below this, hartree (relative to |E| for
    /// |E| > 1). Default: 10⁻¹¹.
    pub tolerance_hartree: f64,
    /// Most energy iterations. Default: 300.
    pub max_iterations: u32,
}

impl Default for ShootingOptions {
    fn default() -> Self {
        ShootingOptions {
            tolerance_hartree: 1e-11,
            max_iterations: 300,
        }
    }
}

/// y₀/y₁ at the origin, from P ≈ r^(l+1)(1 − Z r/(l+1)) (the series solution near a
/// point charge Z; Froese Fischer 1977, eq. 6.5), so that y = P/√r.
pub fn origin_ratio(grid: &RadialGrid, l: u32, z_origin: f64) -> f64 {
    let r = grid.r();
    let lp = l as f64 + 1.0;
    let series = |r: f64| 1.0 - z_origin * r / lp;
    (-(l as f64 + 0.5) * grid.step()).exp() * series(r[0]) / series(r[1])
}

/// The bound state nl of the potential energy `potential` (hartree, on `grid`), with
/// an optional first guess of the energy.
///
/// The charge seen at the origin is read from the potential (Z = −r₀V(r₀)).
pub fn solve_bound_state(
    grid: &RadialGrid,
    potential: &[f64],
    n: u32,
    l: u32,
    energy_guess: Option<f64>,
    options: ShootingOptions,
) -> Result<BoundState, RadialError> {
    if n == 0 || l >= n {
        return Err(RadialError::InvalidOrbital {
            n,
            l,
            problem: "n must exceed l".into(),
        });
    }
    let size = grid.len();
    if potential.len() != size {
        return Err(RadialError::InvalidGrid {
            problem: format!(
                "the potential has {} values for {size} grid points",
                potential.len()
            ),
        });
    }
    let r = grid.r();
    let h = grid.step();
    let h2 = h * h;
    let lh2 = (l as f64 + 0.5).powi(2);
    let centrifugal = |i: usize| (l * (l + 1)) as f64 / (2.0 * r[i] * r[i]);
    let target_nodes = n - l - 1;
    let z_origin = -potential[0] * r[0];
    let c0 = origin_ratio(grid, l, z_origin);

    let mut e_lo = (0..size)
        .map(|i| potential[i] + centrifugal(i))
        .fold(f64::INFINITY, f64::min);
    let mut e_hi = (potential[size - 1] + centrifugal(size - 1)).max(0.0);
    if e_lo.is_nan() || e_hi.is_nan() || e_lo >= e_hi {
        return Err(RadialError::NoBoundState {
            n,
            l,
            problem: "the potential has no well below its value at the grid's end".into(),
        });
    }
    let mut energy = match energy_guess {
        Some(e) if e > e_lo && e < e_hi => e,
        _ => {
            let z = z_origin.max(1.0);
            let guess = -(z * z) / (2.0 * (n * n) as f64);
            if guess > e_lo && guess < e_hi {
                guess
            } else {
                0.5 * (e_lo + e_hi)
            }
        }
    };

    let mut y = vec![0.0; size];
    let mut f = vec![0.0; size];
    for iteration in 1..=options.max_iterations {
        for i in 0..size {
            let g = 2.0 * r[i] * r[i] * (potential[i] - energy) + lh2;
            f[i] = 1.0 - h2 * g / 12.0;
        }
        // The outer classical turning point: the last point where g < 0.
        let Some(turning) = (0..size).rev().find(|&i| f[i] > 1.0) else {
            e_lo = energy;
            energy = 0.5 * (e_lo + e_hi);
            continue;
        };
        if turning + 4 >= size {
            e_hi = energy;
            energy = 0.5 * (e_lo + e_hi);
            continue;
        }
        let m = turning.max(3);

        // Outward, from the series start, to m + 1.
        y.iter_mut().for_each(|v| *v = 0.0);
        y[1] = 1e-20;
        y[0] = c0 * y[1];
        for i in 1..=m {
            y[i + 1] = ((12.0 - 10.0 * f[i]) * y[i] - f[i - 1] * y[i - 1]) / f[i + 1];
        }
        let y_out_m = y[m];
        let y_out_before = y[m - 1];
        if y_out_m == 0.0 || !y_out_m.is_finite() {
            return Err(RadialError::NoBoundState {
                n,
                l,
                problem: "the outward solution vanished or overflowed".into(),
            });
        }
        // Inward, from where the WKB exponent ∫√g dx exceeds 60.
        let mut exponent = 0.0;
        let mut end = size - 2;
        for (i, f) in f.iter().enumerate().take(size - 1).skip(m) {
            let g = (1.0 - f) * 12.0 / h2;
            exponent += h * g.max(0.0).sqrt();
            if exponent > 60.0 {
                end = i;
                break;
            }
        }
        let end = end.max(m + 2);
        let mut inward = vec![0.0; end + 2 - m];
        // inward[j] holds y at index m + j.
        let last = inward.len() - 1;
        inward[last] = 0.0;
        inward[last - 1] = 1e-30;
        for j in (1..last).rev() {
            let i = m + j;
            inward[j - 1] =
                ((12.0 - 10.0 * f[i]) * inward[j] - f[i + 1] * inward[j + 1]) / f[i - 1];
        }
        if inward[0] == 0.0 || !inward[0].is_finite() {
            return Err(RadialError::NoBoundState {
                n,
                l,
                problem: "the inward solution vanished or overflowed".into(),
            });
        }
        let scale = y_out_m / inward[0];
        for (j, v) in inward.iter().enumerate() {
            y[m + j] = v * scale;
        }
        for v in y.iter_mut().skip(end + 2) {
            *v = 0.0;
        }

        let nodes = count_nodes(&y[..=end]);
        if nodes != target_nodes {
            if nodes > target_nodes {
                e_hi = e_hi.min(energy);
            } else {
                e_lo = e_lo.max(energy);
            }
            energy = 0.5 * (e_lo + e_hi);
            if e_hi - e_lo < 1e-14 * e_lo.abs().max(1.0) {
                return Err(RadialError::NoBoundState {
                    n,
                    l,
                    problem: "the energy bracket closed without the right node count".into(),
                });
            }
            continue;
        }
        let mismatch =
            f[m + 1] * y[m + 1] - (12.0 - 10.0 * f[m]) * y_out_m + f[m - 1] * y_out_before;
        let weight: f64 = (0..=end).map(|i| 2.0 * r[i] * r[i] * y[i] * y[i]).sum();
        let correction = -mismatch * y_out_m / (h2 * weight);
        if correction > 0.0 {
            e_lo = e_lo.max(energy);
        } else {
            e_hi = e_hi.min(energy);
        }
        let tolerance = options.tolerance_hartree * energy.abs().max(1.0);
        if correction.abs() < tolerance {
            energy += correction;
            return finish(grid, n, l, energy, &y, iteration);
        }
        let proposed = energy + correction;
        energy = if proposed > e_lo && proposed < e_hi {
            proposed
        } else {
            0.5 * (e_lo + e_hi)
        };
    }
    Err(RadialError::NoBoundState {
        n,
        l,
        problem: format!(
            "the energy did not converge in {} iterations",
            options.max_iterations
        ),
    })
}

/// Sign changes of a sampled function, zeros skipped.
pub fn count_nodes(values: &[f64]) -> u32 {
    let mut nodes = 0;
    let mut last_sign = 0.0;
    for &v in values {
        if v != 0.0 {
            let sign = v.signum();
            if last_sign != 0.0 && sign != last_sign {
                nodes += 1;
            }
            last_sign = sign;
        }
    }
    nodes
}

fn finish(
    grid: &RadialGrid,
    n: u32,
    l: u32,
    energy: f64,
    y: &[f64],
    iterations: u32,
) -> Result<BoundState, RadialError> {
    let mut p: Vec<f64> = grid.r().iter().zip(y).map(|(r, y)| r.sqrt() * y).collect();
    let norm = grid.integrate_product(&p, &p).sqrt();
    let sign = p.iter().find(|v| **v != 0.0).map_or(1.0, |v| v.signum());
    p.iter_mut().for_each(|v| *v *= sign / norm);
    let tail = tail_fraction(grid, &p);
    Ok(BoundState {
        n,
        l,
        energy_hartree: energy,
        p,
        iterations,
        tail,
    })
}

/// The largest |P| beyond 0.7 r_max relative to the largest |P|.
pub fn tail_fraction(grid: &RadialGrid, p: &[f64]) -> f64 {
    let max = p.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let r = grid.r();
    let start = r.partition_point(|&x| x < 0.7 * r[r.len() - 1]);
    let tail = p[start..].iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if max > 0.0 { tail / max } else { 1.0 }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::radial::grid::GridSpec;
    use crate::radial::hydrogenic::{hydrogenic_energy_hartree, hydrogenic_mean_radius_bohr};
    use crate::radial::operator::NumerovKinetic;

    fn coulomb(z: f64) -> (RadialGrid, Vec<f64>) {
        let spec = GridSpec {
            r_max_bohr: 400.0 / z,
            ..GridSpec::default()
        };
        let grid = RadialGrid::new(z, spec).unwrap();
        let v = grid.r().iter().map(|r| -z / r).collect();
        (grid, v)
    }

    #[test]
    fn hydrogen_levels_and_mean_radii() {
        // E = −Z²/(2n²) to 1e-9 hartree (Bohr; the check the project asks for) and
        // ⟨r⟩ = [3n² − l(l+1)]/(2Z) (Bethe & Salpeter 1957, eq. 3.25) for n ≤ 5.
        for z in [1.0, 3.0] {
            let (grid, v) = coulomb(z);
            for n in 1..=5 {
                for l in 0..n {
                    let state =
                        solve_bound_state(&grid, &v, n, l, None, ShootingOptions::default())
                            .unwrap();
                    let exact = hydrogenic_energy_hartree(n, z);
                    let error = state.energy_hartree - exact;
                    assert!(error.abs() < 1e-9 * z * z, "Z={z} n={n} l={l}: {error:e}");
                    let mean_r = grid.integrate_product_power(&state.p, &state.p, 1);
                    let expected = hydrogenic_mean_radius_bohr(n, l, z);
                    assert!(
                        (mean_r / expected - 1.0).abs() < 1e-6,
                        "n={n} l={l}: {mean_r}"
                    );
                    let norm = grid.integrate_product(&state.p, &state.p);
                    assert!((norm - 1.0).abs() < 1e-12);
                    assert_eq!(count_nodes(&state.p), n - l - 1);
                    assert!(state.tail < 1e-6);
                }
            }
        }
    }

    #[test]
    fn energy_is_the_converged_eigenvalue_of_the_discrete_equations() {
        // The shooting solution satisfies Numerov's equations everywhere, so its
        // energy equals the Rayleigh quotient of the symmetric Numerov operator
        // (see `operator`) to within the 1e-10 hartree the solver promises.
        let (grid, v) = coulomb(2.0);
        let r = grid.r();
        let size = grid.len() - 2;
        for (n, l) in [(1, 0), (3, 1), (4, 3)] {
            let state =
                solve_bound_state(&grid, &v, n, l, None, ShootingOptions::default()).unwrap();
            let kinetic = NumerovKinetic::new(grid.step(), size, origin_ratio(&grid, l, 2.0));
            let u: Vec<f64> = (1..=size).map(|i| state.p[i] / r[i].sqrt()).collect();
            let mut ku = vec![0.0; size];
            kinetic.apply(&u, &mut ku);
            let lh2 = (l as f64 + 0.5).powi(2);
            let (mut numerator, mut denominator) = (0.0, 0.0);
            for j in 0..size {
                let i = j + 1;
                numerator += u[j] * (ku[j] + (lh2 + 2.0 * r[i] * r[i] * v[i]) * u[j]);
                denominator += 2.0 * r[i] * r[i] * u[j] * u[j];
            }
            let quotient = numerator / denominator;
            assert!(
                (quotient - state.energy_hartree).abs() < 1e-10,
                "n={n} l={l}"
            );
        }
    }

    #[test]
    fn impossible_requests_are_errors() {
        let (grid, v) = coulomb(1.0);
        let options = ShootingOptions::default();
        assert!(solve_bound_state(&grid, &v, 2, 2, None, options).is_err());
        assert!(solve_bound_state(&grid, &v[..10], 1, 0, None, options).is_err());
        // A repulsive potential binds nothing.
        let repulsive: Vec<f64> = grid.r().iter().map(|r| 1.0 / r).collect();
        assert!(solve_bound_state(&grid, &repulsive, 1, 0, None, options).is_err());
    }
}
