//! Numerov's discretisation of the radial kinetic operator as a symmetric matrix,
//! and the banded solvers it needs.
//!
//! Numerov's formula for y'' = g y on a uniform grid, D y = (h²/12) T (g y) with
//! D = tridiag(1, −2, 1) and T = tridiag(1, 10, 1), is the same as the matrix
//! equation [−(12/h²) T⁻¹D + diag(g)] y = 0. T⁻¹D is symmetric (D and T commute,
//! both being polynomials in tridiag(1, 0, 1)), so −(12/h²) T⁻¹D is a symmetric,
//! fourth-order accurate −d²/dx²: the local part of a radial equation becomes a
//! symmetric generalised eigenproblem whose eigenvalues are exactly those of the
//! Numerov shooting solution, and non-local (exchange) terms can be added to it.
//!
//! Unknowns are the interior points 1 … N−2 of the grid; the boundary values are
//! y₀ = c₀ y₁ (the series solution at the origin) and y_{N−1} = 0. Folding c₀ into
//! the first diagonal element of both D and T keeps them commuting.

/// The kinetic operator −d²/dx² ≈ −(12/h²) T⁻¹D on the interior points.
#[derive(Debug, Clone)]
pub(crate) struct NumerovKinetic {
    step: f64,
    size: usize,
    origin_ratio: f64,
}

impl NumerovKinetic {
    /// For `size` interior points, step `step`, and y₀ = `origin_ratio` · y₁.
    pub(crate) fn new(step: f64, size: usize, origin_ratio: f64) -> NumerovKinetic {
        NumerovKinetic {
            step,
            size,
            origin_ratio,
        }
    }

    /// The boundary ratio c₀.
    pub(crate) fn origin_ratio(&self) -> f64 {
        self.origin_ratio
    }

    /// out = −(12/h²) T⁻¹ D u.
    pub(crate) fn apply(&self, u: &[f64], out: &mut [f64]) {
        let n = self.size;
        let c0 = self.origin_ratio;
        let at = |j: isize| -> f64 {
            if j < 0 {
                c0 * u[0]
            } else if j as usize >= n {
                0.0
            } else {
                u[j as usize]
            }
        };
        let factor = -12.0 / (self.step * self.step);
        for j in 0..n {
            let ji = j as isize;
            out[j] = factor * (at(ji - 1) - 2.0 * u[j] + at(ji + 1));
        }
        // Solve T z = out in place (T is diagonally dominant: no pivoting needed).
        let diag = |j: usize| if j == 0 { 10.0 + c0 } else { 10.0 };
        let mut c_prime = vec![0.0; n];
        let mut denominator = diag(0);
        c_prime[0] = 1.0 / denominator;
        out[0] /= denominator;
        for j in 1..n {
            denominator = diag(j) - c_prime[j - 1];
            c_prime[j] = 1.0 / denominator;
            out[j] = (out[j] - out[j - 1]) / denominator;
        }
        for j in (0..n - 1).rev() {
            out[j] -= c_prime[j] * out[j + 1];
        }
    }

    /// Solve [−(12/h²) T⁻¹D + diag(e)] t = b, by multiplying through by T:
    /// [−(12/h²) D + T diag(e)] t = T b, a tridiagonal system. `None` if singular.
    pub(crate) fn solve_shifted(&self, e: &[f64], b: &[f64]) -> Option<Vec<f64>> {
        let n = self.size;
        let c0 = self.origin_ratio;
        let k = 12.0 / (self.step * self.step);
        let t_diag = |j: usize| if j == 0 { 10.0 + c0 } else { 10.0 };
        let d_diag = |j: usize| if j == 0 { -2.0 + c0 } else { -2.0 };
        let mut sub = vec![0.0; n];
        let mut diag = vec![0.0; n];
        let mut sup = vec![0.0; n];
        let mut rhs = vec![0.0; n];
        for j in 0..n {
            diag[j] = -k * d_diag(j) + t_diag(j) * e[j];
            rhs[j] = t_diag(j) * b[j];
            if j > 0 {
                sub[j] = -k + e[j - 1];
                rhs[j] += b[j - 1];
            }
            if j + 1 < n {
                sup[j] = -k + e[j + 1];
                rhs[j] += b[j + 1];
            }
        }
        solve_tridiagonal(&sub, &diag, &sup, &rhs)
    }
}

/// Solve a tridiagonal system (sub-, main and super-diagonal; sub[0] and
/// sup[n−1] unused) by Gaussian elimination with partial pivoting, as LAPACK's
/// `dgtsv` does (Anderson et al. 1999, LAPACK Users' Guide). Written by hand:
/// nalgebra offers no banded solver. `None` if the matrix is singular.
pub(crate) fn solve_tridiagonal(
    sub: &[f64],
    diag: &[f64],
    sup: &[f64],
    rhs: &[f64],
) -> Option<Vec<f64>> {
    let n = diag.len();
    // Row j holds (d[j], u1[j], u2[j]) in columns j, j+1, j+2 after elimination.
    let mut d = diag.to_vec();
    let mut u1: Vec<f64> = (0..n)
        .map(|j| if j + 1 < n { sup[j] } else { 0.0 })
        .collect();
    let mut u2 = vec![0.0; n];
    let mut x = rhs.to_vec();
    let mut lower: Vec<f64> = (0..n)
        .map(|j| if j + 1 < n { sub[j + 1] } else { 0.0 })
        .collect();
    for j in 0..n.saturating_sub(1) {
        // Row j+1 currently: lower[j] in column j, d[j+1] in column j+1, u1[j+1] in j+2.
        if lower[j].abs() > d[j].abs() {
            // Swap rows j and j+1.
            let (a0, a1, a2, ax) = (d[j], u1[j], u2[j], x[j]);
            d[j] = lower[j];
            u1[j] = d[j + 1];
            u2[j] = u1[j + 1];
            x[j] = x[j + 1];
            // The old row j becomes row j+1 and is eliminated with the new pivot row.
            let factor = a0 / d[j];
            d[j + 1] = a1 - factor * u1[j];
            u1[j + 1] = a2 - factor * u2[j];
            x[j + 1] = ax - factor * x[j];
        } else {
            if d[j] == 0.0 {
                return None;
            }
            let factor = lower[j] / d[j];
            d[j + 1] -= factor * u1[j];
            u1[j + 1] -= factor * u2[j];
            x[j + 1] -= factor * x[j];
        }
        lower[j] = 0.0;
    }
    if n > 0 && d[n - 1] == 0.0 {
        return None;
    }
    for j in (0..n).rev() {
        let mut value = x[j];
        if j + 1 < n {
            value -= u1[j] * x[j + 1];
        }
        if j + 2 < n {
            value -= u2[j] * x[j + 2];
        }
        x[j] = value / d[j];
        if !x[j].is_finite() {
            return None;
        }
    }
    Some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn dense_solve(a: &[Vec<f64>], b: &[f64]) -> Vec<f64> {
        let n = b.len();
        let m = nalgebra::DMatrix::from_fn(n, n, |i, j| a[i][j]);
        let v = nalgebra::DVector::from_column_slice(b);
        m.lu().solve(&v).unwrap().iter().copied().collect()
    }

    #[test]
    fn tridiagonal_solver_agrees_with_dense_lu_including_pivoting() {
        // A matrix with small diagonal elements forces row exchanges.
        let n = 9;
        let sub: Vec<f64> = (0..n).map(|j| 1.0 + j as f64 * 0.3).collect();
        let diag: Vec<f64> = (0..n)
            .map(|j| {
                if j % 3 == 0 {
                    1e-3
                } else {
                    -0.5 + j as f64 * 0.1
                }
            })
            .collect();
        let sup: Vec<f64> = (0..n).map(|j| 2.0 - j as f64 * 0.2).collect();
        let rhs: Vec<f64> = (0..n).map(|j| (j as f64).sin() + 0.5).collect();
        let mut dense = vec![vec![0.0; n]; n];
        for j in 0..n {
            dense[j][j] = diag[j];
            if j > 0 {
                dense[j][j - 1] = sub[j];
            }
            if j + 1 < n {
                dense[j][j + 1] = sup[j];
            }
        }
        let ours = solve_tridiagonal(&sub, &diag, &sup, &rhs).unwrap();
        let reference = dense_solve(&dense, &rhs);
        for (a, b) in ours.iter().zip(&reference) {
            assert!((a - b).abs() < 1e-12 * b.abs().max(1.0), "{a} vs {b}");
        }
    }

    #[test]
    fn kinetic_operator_is_symmetric_and_its_shifted_inverse_inverts_it() {
        let (n, h, c0) = (12, 0.1, 0.8);
        let kin = NumerovKinetic::new(h, n, c0);
        let column = |j: usize| {
            let mut e = vec![0.0; n];
            e[j] = 1.0;
            let mut out = vec![0.0; n];
            kin.apply(&e, &mut out);
            out
        };
        let matrix: Vec<Vec<f64>> = (0..n).map(column).collect(); // matrix[j] = column j
        for (i, row) in matrix.iter().enumerate() {
            for (j, value) in row.iter().enumerate() {
                assert!((matrix[j][i] - value).abs() < 1e-10 * row[i].abs());
            }
        }
        // (K + diag(e)) t = b solved, then checked by applying K.
        let e: Vec<f64> = (0..n).map(|j| 3.0 + j as f64).collect();
        let b: Vec<f64> = (0..n).map(|j| (j as f64 * 0.7).cos()).collect();
        let t = kin.solve_shifted(&e, &b).unwrap();
        let mut kt = vec![0.0; n];
        kin.apply(&t, &mut kt);
        for j in 0..n {
            assert!((kt[j] + e[j] * t[j] - b[j]).abs() < 1e-10);
        }
    }
}
