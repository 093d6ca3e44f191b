//! Weighted least-squares straight lines with their covariance: one line through a
//! set of points, or several parallel lines (one intercept per group, a common
//! slope), the shape of a Boltzmann plot (one group) and of a Saha–Boltzmann plot
//! (one group per ionisation stage before the stages are merged).
//!
//! Hand-written: the normal equations of a common-slope line have a closed form
//! (weighted centred sums, e.g. Bevington & Robinson 2003, *Data Reduction and Error
//! Analysis*, ch. 6, extended to one intercept per group), which is shorter and
//! clearer than setting up a general linear solver for a 2×2 or 3×3 problem.

/// One point of a fit: abscissa, ordinate and weight (1/σ² of the ordinate, or a
/// relative weight when the scatter sets the scale).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WeightedPoint {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// Weight, > 0.
    pub weight: f64,
}

/// How the covariance is scaled.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// The weights are only relative: the covariance is multiplied by χ²/ν (the
    /// scatter of the points about the line sets the uncertainties).
    Residual,
    /// The weights are 1/σ² of known standard uncertainties; the covariance is
    /// multiplied by max(1, χ²/ν) (Birge ratio: a scatter larger than the stated
    /// uncertainties widens them, a smaller one does not narrow them).
    Stated,
}

/// A fitted set of parallel lines y = a_g + b x.
#[derive(Debug, Clone, PartialEq)]
pub struct LineFit {
    /// The intercepts a_g, one per group, in the order of the groups.
    pub intercepts: Vec<f64>,
    /// The common slope b.
    pub slope: f64,
    /// Covariance of (a_1, …, a_G, b), row-major, (G+1)×(G+1); the slope row and
    /// column are zero when the slope was held fixed.
    pub covariance: Vec<Vec<f64>>,
    /// Σ w (y − a_g − b x)².
    pub chi_square: f64,
    /// Points minus fitted parameters.
    pub degrees_of_freedom: usize,
    /// The factor the covariance of the weights was multiplied by.
    pub covariance_scale: f64,
}

impl LineFit {
    /// Standard uncertainty of the slope.
    pub fn slope_sigma(&self) -> f64 {
        let g = self.intercepts.len();
        self.variance(g, g).sqrt()
    }

    /// Element (i, j) of the covariance (0 outside).
    pub fn variance(&self, i: usize, j: usize) -> f64 {
        self.covariance
            .get(i)
            .and_then(|row| row.get(j))
            .copied()
            .unwrap_or(0.0)
    }

    /// χ²/ν (NaN when ν = 0).
    pub fn reduced_chi_square(&self) -> f64 {
        self.chi_square / self.degrees_of_freedom as f64
    }
}

/// Why a line cannot be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum LineFitError {
    /// Too few points for the parameters and an uncertainty from their scatter.
    #[error("{points} points for {parameters} parameters: at least {needed} are needed")]
    TooFewPoints {
        /// Points given.
        points: usize,
        /// Parameters fitted.
        parameters: usize,
        /// Points needed.
        needed: usize,
    },
    /// All points of every group at one abscissa: no slope.
    #[error("every point of a group has the same abscissa: the slope is not determined")]
    NoSpread,
    /// A point with a non-finite value or a weight that is not positive.
    #[error("a point with a non-finite coordinate or a weight that is not positive")]
    BadPoint,
    /// A group without points.
    #[error("a group has no points")]
    EmptyGroup,
}

/// Weighted sums of one group.
struct Sums {
    w: f64,
    x_mean: f64,
    y_mean: f64,
    sxx: f64,
    sxy: f64,
}

fn sums(points: &[WeightedPoint]) -> Result<Sums, LineFitError> {
    if points.is_empty() {
        return Err(LineFitError::EmptyGroup);
    }
    if points
        .iter()
        .any(|p| !(p.x.is_finite() && p.y.is_finite() && p.weight.is_finite() && p.weight > 0.0))
    {
        return Err(LineFitError::BadPoint);
    }
    let w: f64 = points.iter().map(|p| p.weight).sum();
    let x_mean = points.iter().map(|p| p.weight * p.x).sum::<f64>() / w;
    let y_mean = points.iter().map(|p| p.weight * p.y).sum::<f64>() / w;
    // Centred sums: no cancellation when the abscissae are large (energies in cm⁻¹).
    let sxx = points
        .iter()
        .map(|p| p.weight * (p.x - x_mean).powi(2))
        .sum();
    let sxy = points
        .iter()
        .map(|p| p.weight * (p.x - x_mean) * (p.y - y_mean))
        .sum();
    Ok(Sums {
        w,
        x_mean,
        y_mean,
        sxx,
        sxy,
    })
}

fn scale_factor(scale: Scale, chi_square: f64, dof: usize) -> f64 {
    let reduced = chi_square / dof as f64;
    match scale {
        Scale::Residual => reduced,
        Scale::Stated => reduced.max(1.0),
    }
}

/// Fit parallel lines y = a_g + b x (one intercept per group, one slope) by weighted
/// least squares. With one group this is the ordinary weighted straight line.
///
/// b = Σ_g S_xy,g / Σ_g S_xx,g and a_g = ȳ_g − b x̄_g (weighted means and centred
/// sums within each group); var b = 1/Σ S_xx, var a_g = 1/W_g + x̄_g² var b,
/// cov(a_g, b) = −x̄_g var b, cov(a_g, a_h) = x̄_g x̄_h var b (g ≠ h), all times the
/// [`Scale`] factor. At least one point more than the parameters is required, so that
/// the scatter can be judged.
pub fn fit_parallel_lines(
    groups: &[&[WeightedPoint]],
    scale: Scale,
) -> Result<LineFit, LineFitError> {
    let stats = groups
        .iter()
        .map(|g| sums(g))
        .collect::<Result<Vec<_>, _>>()?;
    let points: usize = groups.iter().map(|g| g.len()).sum();
    let parameters = groups.len() + 1;
    if points <= parameters {
        return Err(LineFitError::TooFewPoints {
            points,
            parameters,
            needed: parameters + 1,
        });
    }
    let sxx: f64 = stats.iter().map(|s| s.sxx).sum();
    let sxy: f64 = stats.iter().map(|s| s.sxy).sum();
    let x_spread = groups
        .iter()
        .flat_map(|g| g.iter())
        .map(|p| p.x)
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| {
            (lo.min(x), hi.max(x))
        });
    if sxx.is_nan() || sxx <= 0.0 || x_spread.1 - x_spread.0 <= 1e-12 * x_spread.1.abs().max(1.0) {
        return Err(LineFitError::NoSpread);
    }
    let slope = sxy / sxx;
    let intercepts: Vec<f64> = stats.iter().map(|s| s.y_mean - slope * s.x_mean).collect();
    let chi_square = chi_square(groups, &intercepts, slope);
    let dof = points - parameters;
    let factor = scale_factor(scale, chi_square, dof);
    let var_b = 1.0 / sxx;
    let g = groups.len();
    let mut covariance = vec![vec![0.0; g + 1]; g + 1];
    for (i, si) in stats.iter().enumerate() {
        for (j, sj) in stats.iter().enumerate() {
            let own = if i == j { 1.0 / si.w } else { 0.0 };
            covariance[i][j] = factor * (own + si.x_mean * sj.x_mean * var_b);
        }
        covariance[i][g] = -factor * si.x_mean * var_b;
        covariance[g][i] = covariance[i][g];
    }
    covariance[g][g] = factor * var_b;
    Ok(LineFit {
        intercepts,
        slope,
        covariance,
        chi_square,
        degrees_of_freedom: dof,
        covariance_scale: factor,
    })
}

/// Fit the intercepts of parallel lines of a given slope b: a_g = Σ w (y − b x) / W_g,
/// var a_g = 1/W_g times the [`Scale`] factor, groups uncorrelated. At least one
/// point more than the groups is required.
pub fn fit_intercepts(
    groups: &[&[WeightedPoint]],
    slope: f64,
    scale: Scale,
) -> Result<LineFit, LineFitError> {
    let stats = groups
        .iter()
        .map(|g| sums(g))
        .collect::<Result<Vec<_>, _>>()?;
    let points: usize = groups.iter().map(|g| g.len()).sum();
    let parameters = groups.len();
    if points <= parameters {
        return Err(LineFitError::TooFewPoints {
            points,
            parameters,
            needed: parameters + 1,
        });
    }
    let intercepts: Vec<f64> = stats.iter().map(|s| s.y_mean - slope * s.x_mean).collect();
    let chi_square = chi_square(groups, &intercepts, slope);
    let dof = points - parameters;
    let factor = scale_factor(scale, chi_square, dof);
    let g = groups.len();
    let mut covariance = vec![vec![0.0; g + 1]; g + 1];
    for (i, s) in stats.iter().enumerate() {
        covariance[i][i] = factor / s.w;
    }
    Ok(LineFit {
        intercepts,
        slope,
        covariance,
        chi_square,
        degrees_of_freedom: dof,
        covariance_scale: factor,
    })
}

fn chi_square(groups: &[&[WeightedPoint]], intercepts: &[f64], slope: f64) -> f64 {
    groups
        .iter()
        .zip(intercepts)
        .flat_map(|(g, a)| {
            g.iter()
                .map(move |p| p.weight * (p.y - a - slope * p.x).powi(2))
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn points(xy: &[(f64, f64)]) -> Vec<WeightedPoint> {
        xy.iter()
            .map(|&(x, y)| WeightedPoint { x, y, weight: 1.0 })
            .collect()
    }

    #[test]
    fn ordinary_line_matches_the_textbook_formulas() {
        // Values from scipy.stats.linregress(x, y) for x = 0..4,
        // y = [1.0, 2.9, 5.2, 7.1, 8.8]: slope 1.98, intercept 1.04,
        // stderr 0.0565685424949238, intercept_stderr 0.13856406460551018.
        let p = points(&[(0.0, 1.0), (1.0, 2.9), (2.0, 5.2), (3.0, 7.1), (4.0, 8.8)]);
        let fit = fit_parallel_lines(&[&p], Scale::Residual).unwrap();
        assert!((fit.slope - 1.98).abs() < 1e-12);
        assert!((fit.intercepts[0] - 1.04).abs() < 1e-12);
        assert!((fit.slope_sigma() - 0.0565685424949238).abs() < 1e-12);
        assert!((fit.variance(0, 0).sqrt() - 0.13856406460551018).abs() < 1e-12);
        assert_eq!(fit.degrees_of_freedom, 3);
    }

    #[test]
    fn parallel_lines_recover_exact_offsets_and_slope() {
        // Common practice, no source: points exactly on y = 2 − 0.5 x and
        // y = 7 − 0.5 x give those lines and χ² = 0.
        let a = points(&[(0.0, 2.0), (2.0, 1.0), (4.0, 0.0)]);
        let b = points(&[(10.0, 2.0), (12.0, 1.0)]);
        let fit = fit_parallel_lines(&[&a, &b], Scale::Stated).unwrap();
        assert!((fit.slope + 0.5).abs() < 1e-12);
        assert!((fit.intercepts[0] - 2.0).abs() < 1e-12);
        assert!((fit.intercepts[1] - 7.0).abs() < 1e-12);
        assert!(fit.chi_square < 1e-20);
        // Stated weights 1: the covariance is not narrowed below (X'WX)⁻¹.
        assert_eq!(fit.covariance_scale, 1.0);
        // var b = 1/Σ S_xx = 1/(8 + 2).
        assert!((fit.variance(2, 2) - 0.1).abs() < 1e-12);
    }

    #[test]
    fn the_covariance_is_the_inverse_of_the_normal_matrix() {
        // Common practice, no source: for unit weights and Stated scale with χ²/ν ≤ 1
        // the covariance is (XᵀX)⁻¹; check C·(XᵀX) = I for two groups.
        let a = points(&[(1.0, 0.1), (2.0, -0.9), (4.0, -3.0)]);
        let b = points(&[(3.0, 5.0), (7.0, 1.1), (8.0, 0.0)]);
        let fit = fit_parallel_lines(&[&a, &b], Scale::Stated).unwrap();
        assert!(fit.reduced_chi_square() < 1.0);
        let mut normal = [[0.0; 3]; 3];
        for (g, group) in [&a, &b].iter().enumerate() {
            for p in group.iter() {
                let row = [
                    if g == 0 { 1.0 } else { 0.0 },
                    if g == 1 { 1.0 } else { 0.0 },
                    p.x,
                ];
                for (i, normal_row) in normal.iter_mut().enumerate() {
                    for (j, cell) in normal_row.iter_mut().enumerate() {
                        *cell += row[i] * row[j];
                    }
                }
            }
        }
        for i in 0..3 {
            for j in 0..3 {
                let product: f64 = normal
                    .iter()
                    .enumerate()
                    .map(|(k, row)| fit.variance(i, k) * row[j])
                    .sum();
                let identity = if i == j { 1.0 } else { 0.0 };
                assert!((product - identity).abs() < 1e-12, "{i} {j} {product}");
            }
        }
    }

    #[test]
    fn fixed_slope_gives_weighted_means() {
        // Common practice, no source: with b fixed, a = mean(y − b x) and
        // var a = s²/n with s² = Σ(r²)/(n − 1).
        let p = points(&[(0.0, 1.0), (1.0, 0.0), (2.0, -0.8)]);
        let fit = fit_intercepts(&[&p], -1.0, Scale::Residual).unwrap();
        let shifted = [1.0, 1.0, 1.2];
        let mean = shifted.iter().sum::<f64>() / 3.0;
        let s2 = shifted.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / 2.0;
        assert!((fit.intercepts[0] - mean).abs() < 1e-12);
        assert!((fit.variance(0, 0) - s2 / 3.0).abs() < 1e-12);
        assert_eq!(fit.slope_sigma(), 0.0);
    }

    #[test]
    fn degenerate_inputs_are_refused() {
        let two = points(&[(0.0, 1.0), (1.0, 2.0)]);
        assert!(matches!(
            fit_parallel_lines(&[&two], Scale::Residual),
            Err(LineFitError::TooFewPoints { needed: 3, .. })
        ));
        let flat = points(&[(1.0, 1.0), (1.0, 2.0), (1.0, 3.0)]);
        assert_eq!(
            fit_parallel_lines(&[&flat], Scale::Residual),
            Err(LineFitError::NoSpread)
        );
        let mut bad = points(&[(0.0, 1.0), (1.0, 2.0), (2.0, 3.0)]);
        bad[1].weight = 0.0;
        assert_eq!(
            fit_parallel_lines(&[&bad], Scale::Residual),
            Err(LineFitError::BadPoint)
        );
        assert_eq!(
            fit_parallel_lines(&[&bad[..0], &two], Scale::Residual),
            Err(LineFitError::EmptyGroup)
        );
    }
}
