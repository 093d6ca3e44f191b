//! The logarithmic radial grid and integration on it.
//!
//! Points are equally spaced in x = ln(Z r): r_i = e^(x₀ + i h)/Z, i = 0 … N−1
//! (Froese Fischer 1977, "The Hartree–Fock Method for Atoms", §6.2). The grid is
//! dense near the nucleus, where the orbitals vary on the scale 1/Z, and sparse far
//! out, where they decay slowly; one grid in units of 1/Z serves every atom.
//!
//! Integrals over r become integrals over x with dr = r dx. For integrands that
//! vanish smoothly at both ends (products of bound orbitals), the trapezoidal sum on
//! the uniform x-grid converges faster than any power of h (the Euler–Maclaurin
//! correction terms vanish), so full-range integrals are taken that way.
//! Running integrals (∫₀^r, ∫_r^∞) use the six-point closed Newton–Cotes-type rule
//! of [`cumulative_weights`], with an error O(h⁶).

use super::RadialError;

/// How to build a grid: start, step and end in the scaled variable x = ln(Z r).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GridSpec {
    /// x₀ = ln(Z r₀), the first point. Default: −12 (Z r₀ = 6.1·10⁻⁶), where an
    /// orbital's weight inside r₀ is below 10⁻¹⁵.
    pub x_start: f64,
    /// Step h in x. Default: 1/96, which puts the Numerov error of the hydrogen
    /// levels n ≤ 5 below 3·10⁻¹⁰ hartree; the Numerov and running-integral errors
    /// scale as h⁴ and h⁶.
    pub step: f64,
    /// Largest radius, bohr. Default: 100.
    pub r_max_bohr: f64,
}

impl Default for GridSpec {
    fn default() -> Self {
        GridSpec {
            x_start: -12.0,
            step: 1.0 / 96.0,
            r_max_bohr: 100.0,
        }
    }
}

/// A logarithmic radial grid r_i = e^(x₀ + i h)/Z, bohr.
#[derive(Debug, Clone, PartialEq)]
pub struct RadialGrid {
    nuclear_charge: f64,
    x_start: f64,
    step: f64,
    r: Vec<f64>,
}

impl RadialGrid {
    /// A grid for nuclear charge `nuclear_charge` (> 0; an effective charge may be
    /// fractional) following `spec`.
    pub fn new(nuclear_charge: f64, spec: GridSpec) -> Result<RadialGrid, RadialError> {
        let bad = |what: &str| RadialError::InvalidGrid {
            problem: what.to_string(),
        };
        if !(nuclear_charge.is_finite() && nuclear_charge > 0.0) {
            return Err(bad("the nuclear charge must be positive"));
        }
        if !(spec.step.is_finite() && spec.step > 0.0 && spec.step <= 0.25) {
            return Err(bad("the step h must lie in (0, 0.25]"));
        }
        if !spec.x_start.is_finite() || spec.x_start > -4.0 {
            return Err(bad("the first point x₀ = ln(Z r₀) must be −4 or less"));
        }
        let x_end = (nuclear_charge * spec.r_max_bohr).ln();
        if !x_end.is_finite() || x_end < spec.x_start + 16.0 * spec.step {
            return Err(bad(
                "the largest radius must lie well beyond the first point",
            ));
        }
        let intervals = ((x_end - spec.x_start) / spec.step).ceil() as usize;
        if intervals > 2_000_000 {
            return Err(bad("the grid would have more than two million points"));
        }
        let r = (0..=intervals)
            .map(|i| (spec.x_start + i as f64 * spec.step).exp() / nuclear_charge)
            .collect();
        Ok(RadialGrid {
            nuclear_charge,
            x_start: spec.x_start,
            step: spec.step,
            r,
        })
    }

    /// The radii r_i, bohr.
    pub fn r(&self) -> &[f64] {
        &self.r
    }

    /// Number of points N.
    pub fn len(&self) -> usize {
        self.r.len()
    }

    /// Always false: a grid has at least 17 points.
    pub fn is_empty(&self) -> bool {
        self.r.is_empty()
    }

    /// The step h in x = ln(Z r).
    pub fn step(&self) -> f64 {
        self.step
    }

    /// The nuclear charge the grid is scaled with.
    pub fn nuclear_charge(&self) -> f64 {
        self.nuclear_charge
    }

    /// x₀ = ln(Z r₀).
    pub fn x_start(&self) -> f64 {
        self.x_start
    }

    /// ∫₀^∞ f(r) dr for `f` sampled on the grid, by the trapezoidal sum in x
    /// (h Σ r_i f_i; `f` must be negligible at both ends).
    pub fn integrate(&self, f: &[f64]) -> f64 {
        self.step * self.r.iter().zip(f).map(|(r, f)| r * f).sum::<f64>()
    }

    /// ∫₀^∞ f(r) g(r) dr, as [`RadialGrid::integrate`] of the product.
    pub fn integrate_product(&self, f: &[f64], g: &[f64]) -> f64 {
        self.step
            * self
                .r
                .iter()
                .zip(f)
                .zip(g)
                .map(|((r, f), g)| r * f * g)
                .sum::<f64>()
    }

    /// ∫₀^∞ f(r) g(r) rᵖ dr (p may be negative).
    pub fn integrate_product_power(&self, f: &[f64], g: &[f64], power: i32) -> f64 {
        self.step
            * self
                .r
                .iter()
                .zip(f)
                .zip(g)
                .map(|((r, f), g)| r.powi(power + 1) * f * g)
                .sum::<f64>()
    }
}

/// Weights, ×1/1440, of the six-point rule for ∫ over one unit interval of a
/// function given at six equally spaced points 0 … 5: row p integrates over
/// [p, p+1] (the interpolating quintic integrated exactly; derived with exact
/// rational arithmetic, checked by `cumulative_weights_are_exact_for_quintics`).
/// Row 2, (11, −93, 802, 802, −93, 11)/1440, is the centred rule; rows 0 and 4 are
/// the Adams–Moulton weights of order 6.
pub const CUMULATIVE_WEIGHTS_1440: [[f64; 6]; 5] = [
    [475.0, 1427.0, -798.0, 482.0, -173.0, 27.0],
    [-27.0, 637.0, 1022.0, -258.0, 77.0, -11.0],
    [11.0, -93.0, 802.0, 802.0, -93.0, 11.0],
    [-11.0, 77.0, -258.0, 1022.0, 637.0, -27.0],
    [27.0, -173.0, 482.0, -798.0, 1427.0, 475.0],
];

/// For the interval between points `i − 1` and `i` of an `n`-point grid (n ≥ 6):
/// the first point of the six-point window and the row of
/// [`CUMULATIVE_WEIGHTS_1440`] to use. The window is centred where it fits.
pub fn cumulative_weights(i: usize, n: usize) -> (usize, usize) {
    let centred_start = i.saturating_sub(3);
    let start = centred_start.min(n - 6);
    (start, i - 1 - start)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cumulative_weights_are_exact_for_quintics() {
        // A degree-5 polynomial is reproduced exactly by its six-point interpolant
        // (Lagrange interpolation, any numerical-analysis textbook).
        let poly = |x: f64| {
            0.3 - 1.2 * x + 0.7 * x * x - 0.05 * x.powi(3) + 0.01 * x.powi(4) - 0.002 * x.powi(5)
        };
        let antiderivative = |x: f64| {
            0.3 * x - 0.6 * x * x + 0.7 / 3.0 * x.powi(3) - 0.0125 * x.powi(4) + 0.002 * x.powi(5)
                - 0.002 / 6.0 * x.powi(6)
        };
        for (p, row) in CUMULATIVE_WEIGHTS_1440.iter().enumerate() {
            let approx: f64 = row
                .iter()
                .enumerate()
                .map(|(j, w)| w / 1440.0 * poly(j as f64))
                .sum();
            let exact = antiderivative(p as f64 + 1.0) - antiderivative(p as f64);
            assert!(
                (approx - exact).abs() < 1e-13,
                "row {p}: {approx} vs {exact}"
            );
            assert!((row.iter().sum::<f64>() - 1440.0).abs() < 1e-12);
        }
    }

    #[test]
    fn window_fits_the_grid() {
        let n = 20;
        for i in 1..n {
            let (start, row) = cumulative_weights(i, n);
            assert!(start + 6 <= n);
            assert_eq!(start + row, i - 1, "interval [{}, {i}]", i - 1);
        }
    }

    #[test]
    fn trapezoid_in_x_integrates_a_hydrogen_density_to_one() {
        // ∫ 4 r² e^(−2r) dr = 1 (hydrogen 1s, any quantum-mechanics textbook).
        let grid = RadialGrid::new(1.0, GridSpec::default()).unwrap();
        let f: Vec<f64> = grid
            .r()
            .iter()
            .map(|r| 4.0 * r * r * (-2.0 * r).exp())
            .collect();
        assert!((grid.integrate(&f) - 1.0).abs() < 1e-13);
    }

    #[test]
    fn rejects_bad_specifications() {
        let spec = GridSpec {
            step: 0.0,
            ..GridSpec::default()
        };
        assert!(RadialGrid::new(1.0, spec).is_err());
        assert!(RadialGrid::new(-1.0, GridSpec::default()).is_err());
        let short = GridSpec {
            r_max_bohr: 1e-6,
            ..GridSpec::default()
        };
        assert!(RadialGrid::new(1.0, short).is_err());
    }
}
