//! Level optimisation: the level energies that best reproduce a set of assigned line
//! wavenumbers, by weighted linear least squares.
//!
//! Each assigned line i between levels l(i) and u(i) is an observation
//! σ_i = E_u − E_l ± u_i. The energies minimise
//!
//! χ² = Σ_i ((σ_i − (E_u − E_l)) / u_i)²,
//!
//! whose normal matrix N = AᵀWA (W = diag 1/u_i²) is the weighted Laplacian of the
//! graph whose vertices are levels and whose edges are lines. The Laplacian of a
//! connected graph has rank n − 1: the energies are fixed only relative to one level.
//! So the levels are split into *systems* (connected components of the graph, e.g.
//! the singlets and triplets of He I when no intercombination line joins them), and
//! in each system one reference level is held at its given energy; the rest follow
//! from the reduced normal equations. (Standard weighted least squares; see e.g.
//! Bevington & Robinson, *Data Reduction and Error Analysis*, 3rd ed., 2003, ch. 7.)
//!
//! Covariances: C = N_r⁻¹ of the reduced system gives each level's uncertainty
//! relative to its system's reference, u(E_k) = √C_kk, and each line's Ritz
//! wavenumber σ_Ritz = E_u − E_l its uncertainty
//! u(σ_Ritz) = √(C_uu + C_ll − 2C_ul), which includes the correlation of the two levels.
//! The uncertainties are those implied by the stated line uncertainties; they are not
//! rescaled by the fit's χ²/ν, which is reported so the user can judge.
//!
//! The normal matrix is sparse, but the line graph of a spectrum is close to a random
//! graph (a level combines with levels of opposite parity all over the energy range),
//! so any elimination order fills the Cholesky factor almost completely. The reduced
//! normal matrix of each system is therefore factored densely (Cholesky, `faer`), and
//! the covariance matrix is its inverse. The benchmark `benches/optimize.rs` measured
//! both: a sparse factorisation after a reverse Cuthill–McKee ordering took 1.8 s for
//! 1 000 levels and 7 000 lines; see the benchmark for the dense figures.

pub mod input;
pub mod spectrum;

pub use input::{
    ClassifiedLine, ClassifiedLines, ClassifiedReadError, classified_from_records,
    read_classified_lines,
};
pub use spectrum::{
    BlendLoss, BlendPolicy, LevelResult, LineResult, OptimizationReport, OptimizeOptions,
    Selection, SpeciesResult, SpectrumError, SystemResult, optimize_classified,
};

use faer::linalg::solvers::{DenseSolveCore, Solve};
use faer::{Mat, Side};

/// One assigned line: an observed vacuum wavenumber between two levels (by index).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineConstraint {
    /// Index of the lower level.
    pub lower: usize,
    /// Index of the upper level.
    pub upper: usize,
    /// Observed vacuum wavenumber σ in cm⁻¹ (E_upper − E_lower).
    pub wavenumber_cm1: f64,
    /// Standard uncertainty of σ in cm⁻¹ (> 0).
    pub uncertainty_cm1: f64,
}

/// What to optimise.
#[derive(Debug, Clone, PartialEq)]
pub struct OptimizeProblem {
    /// Known or tabulated energies of the levels (cm⁻¹), used to place each system's
    /// reference and to pick it; `None` for a level with no prior value.
    pub prior_energies_cm1: Vec<Option<f64>>,
    /// The assigned lines.
    pub lines: Vec<LineConstraint>,
    /// The level held fixed in its system. In the other systems, the level with the
    /// lowest prior energy (else the lowest index) is the reference. Default: the level
    /// with the lowest prior energy overall (the ground level).
    pub reference: Option<usize>,
    /// A line whose |residual|/u exceeds this is flagged as an outlier. Default 3.
    pub outlier_sigma: f64,
}

/// A connected set of levels with its own reference level.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelSystem {
    /// Index of the reference level (held at its prior energy, or 0 cm⁻¹ if none).
    pub reference: usize,
    /// Energy at which the reference is held, cm⁻¹.
    pub reference_energy_cm1: f64,
    /// All levels of the system, reference included, by index.
    pub levels: Vec<usize>,
    /// Number of lines within the system.
    pub line_count: usize,
}

/// The optimised energy of one level.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct OptimizedLevel {
    /// Energy in cm⁻¹.
    pub energy_cm1: f64,
    /// Standard uncertainty relative to the system's reference, cm⁻¹ (0 for the reference).
    pub uncertainty_cm1: f64,
    /// Number of lines that connect the level.
    pub line_count: usize,
    /// Index into [`OptimizedLevels::systems`].
    pub system: usize,
}

impl OptimizedLevel {
    /// True when a single line fixes the level: its value carries no check.
    pub fn single_line(&self) -> bool {
        self.line_count == 1
    }
}

/// The fit of one line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LineFit {
    /// Ritz wavenumber E_u − E_l from the optimised levels, cm⁻¹.
    pub ritz_cm1: f64,
    /// Its standard uncertainty from the covariance matrix, cm⁻¹.
    pub ritz_uncertainty_cm1: f64,
    /// Observed minus Ritz, cm⁻¹.
    pub residual_cm1: f64,
    /// Observed minus Ritz in units of the line's stated uncertainty.
    pub residual_sigma: f64,
    /// |residual_sigma| above the outlier threshold.
    pub outlier: bool,
}

/// Result of a level optimisation.
#[derive(Debug, Clone, PartialEq)]
pub struct OptimizedLevels {
    /// One entry per level of the problem; `None` for a level that no line touches.
    pub levels: Vec<Option<OptimizedLevel>>,
    /// One entry per line, in the order given.
    pub lines: Vec<LineFit>,
    /// The systems of levels joined by lines.
    pub systems: Vec<LevelSystem>,
    /// χ² = Σ (residual/u)².
    pub chi_squared: f64,
    /// Degrees of freedom ν = lines − (levels − systems).
    pub degrees_of_freedom: usize,
}

/// Why a level optimisation could not be done.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum OptimizeError {
    /// A line refers to a level index outside the problem.
    #[error("line {line} refers to level {level}, but there are only {count} levels")]
    LevelOutOfRange {
        /// 0-based line index.
        line: usize,
        /// The bad level index.
        level: usize,
        /// Number of levels.
        count: usize,
    },
    /// A line joins a level to itself.
    #[error("line {line} has the same lower and upper level")]
    SameLevel {
        /// 0-based line index.
        line: usize,
    },
    /// A line's wavenumber or uncertainty is not a finite number, or the uncertainty is
    /// not positive or so extreme that its weight 1/u² is not a finite non-zero number.
    #[error(
        "line {line} has a wavenumber or uncertainty that is not a finite positive number \
         (or an uncertainty whose weight 1/u² is out of range)"
    )]
    BadNumber {
        /// 0-based line index.
        line: usize,
    },
    /// The chosen reference level is outside the problem.
    #[error("the reference level {0} is not a level of the problem")]
    BadReference(usize),
    /// The factorisation failed (cannot happen for a valid problem; reported, not panicked).
    #[error("the normal equations could not be factored: {0}")]
    Factorization(String),
}

impl OptimizeProblem {
    /// A problem with the default reference choice and a 3σ outlier threshold.
    pub fn new(prior_energies_cm1: Vec<Option<f64>>, lines: Vec<LineConstraint>) -> Self {
        OptimizeProblem {
            prior_energies_cm1,
            lines,
            reference: None,
            outlier_sigma: 3.0,
        }
    }

    fn validate(&self) -> Result<(), OptimizeError> {
        let count = self.prior_energies_cm1.len();
        if let Some(r) = self.reference
            && r >= count
        {
            return Err(OptimizeError::BadReference(r));
        }
        for (i, line) in self.lines.iter().enumerate() {
            for level in [line.lower, line.upper] {
                if level >= count {
                    return Err(OptimizeError::LevelOutOfRange {
                        line: i,
                        level,
                        count,
                    });
                }
            }
            if line.lower == line.upper {
                return Err(OptimizeError::SameLevel { line: i });
            }
            if !line.wavenumber_cm1.is_finite()
                || !line.uncertainty_cm1.is_finite()
                || line.uncertainty_cm1 <= 0.0
                || !(1.0 / (line.uncertainty_cm1 * line.uncertainty_cm1)).is_normal()
            {
                return Err(OptimizeError::BadNumber { line: i });
            }
        }
        Ok(())
    }
}

/// Optimise the level energies of `problem`.
pub fn optimize_levels(problem: &OptimizeProblem) -> Result<OptimizedLevels, OptimizeError> {
    problem.validate()?;
    let n = problem.prior_energies_cm1.len();
    let adjacency = adjacency(n, &problem.lines);
    let component = components(&adjacency);
    let system_count = component
        .iter()
        .flatten()
        .map(|&c| c + 1)
        .max()
        .unwrap_or(0);

    let mut levels: Vec<Option<OptimizedLevel>> = vec![None; n];
    let mut systems = Vec::with_capacity(system_count);
    let mut line_fits = vec![None; problem.lines.len()];
    let mut lines_of_system: Vec<Vec<usize>> = vec![Vec::new(); system_count];
    for (i, line) in problem.lines.iter().enumerate() {
        if let Some(c) = component[line.lower] {
            lines_of_system[c].push(i);
        }
    }
    let mut members: Vec<Vec<usize>> = vec![Vec::new(); system_count];
    for (level, c) in component.iter().enumerate() {
        if let Some(c) = c {
            members[*c].push(level);
        }
    }
    let line_counts: Vec<usize> = adjacency.iter().map(|a| a.len()).collect();

    for (system_index, (system_levels, system_lines)) in
        members.into_iter().zip(lines_of_system).enumerate()
    {
        let reference = choose_reference(problem, &system_levels);
        let reference_energy = problem.prior_energies_cm1[reference].unwrap_or(0.0);
        let solved = solve_system(
            problem,
            &system_levels,
            &system_lines,
            reference,
            reference_energy,
        )?;
        for (k, &level) in system_levels.iter().enumerate() {
            levels[level] = Some(OptimizedLevel {
                energy_cm1: solved.energies[k],
                uncertainty_cm1: solved.covariance_diagonal[k].max(0.0).sqrt(),
                line_count: line_counts[level],
                system: system_index,
            });
        }
        for (j, &line_index) in system_lines.iter().enumerate() {
            line_fits[line_index] = Some(solved.line_fits[j]);
        }
        systems.push(LevelSystem {
            reference,
            reference_energy_cm1: reference_energy,
            levels: system_levels,
            line_count: system_lines.len(),
        });
    }

    let lines: Vec<LineFit> = line_fits
        .into_iter()
        .map(|fit| fit.expect("every line lies in the system of its levels"))
        .collect();
    let chi_squared = lines.iter().map(|l| l.residual_sigma.powi(2)).sum();
    let unknowns: usize = systems.iter().map(|s| s.levels.len() - 1).sum();
    Ok(OptimizedLevels {
        levels,
        lines,
        systems,
        chi_squared,
        degrees_of_freedom: problem.lines.len().saturating_sub(unknowns),
    })
}

/// The reference of a system: the problem's reference if it is in the system, else
/// the level with the lowest prior energy, else the lowest index.
fn choose_reference(problem: &OptimizeProblem, system_levels: &[usize]) -> usize {
    if let Some(r) = problem.reference
        && system_levels.contains(&r)
    {
        return r;
    }
    let with_prior = system_levels
        .iter()
        .filter_map(|&l| problem.prior_energies_cm1[l].map(|e| (e, l)))
        .min_by(|a, b| a.0.total_cmp(&b.0));
    match with_prior {
        Some((_, level)) => level,
        None => system_levels[0],
    }
}

/// For each level, the (neighbour, line index) pairs.
fn adjacency(n: usize, lines: &[LineConstraint]) -> Vec<Vec<(usize, usize)>> {
    let mut adjacency = vec![Vec::new(); n];
    for (i, line) in lines.iter().enumerate() {
        adjacency[line.lower].push((line.upper, i));
        adjacency[line.upper].push((line.lower, i));
    }
    adjacency
}

/// Connected component of each level (`None` for a level without lines), numbered
/// in order of the lowest level index.
fn components(adjacency: &[Vec<(usize, usize)>]) -> Vec<Option<usize>> {
    let mut component = vec![None; adjacency.len()];
    let mut next = 0;
    let mut stack = Vec::new();
    for start in 0..adjacency.len() {
        if component[start].is_some() || adjacency[start].is_empty() {
            continue;
        }
        component[start] = Some(next);
        stack.push(start);
        while let Some(level) = stack.pop() {
            for &(neighbour, _) in &adjacency[level] {
                if component[neighbour].is_none() {
                    component[neighbour] = Some(next);
                    stack.push(neighbour);
                }
            }
        }
        next += 1;
    }
    component
}

struct SolvedSystem {
    /// Energies of the system's levels, in the order of its level list.
    energies: Vec<f64>,
    /// Diagonal of the covariance matrix, same order (0 for the reference).
    covariance_diagonal: Vec<f64>,
    /// Fits of the system's lines, in the order of its line list.
    line_fits: Vec<LineFit>,
}

/// Solve the reduced normal equations of one connected system.
fn solve_system(
    problem: &OptimizeProblem,
    system_levels: &[usize],
    system_lines: &[usize],
    reference: usize,
    reference_energy: f64,
) -> Result<SolvedSystem, OptimizeError> {
    // Unknowns: every level of the system but the reference.
    let unknown_levels: Vec<usize> = system_levels
        .iter()
        .copied()
        .filter(|&l| l != reference)
        .collect();
    let m = unknown_levels.len();
    let slot = |level: usize| -> Option<usize> {
        (level != reference)
            .then(|| unknown_levels.binary_search(&level).ok())
            .flatten()
    };

    // Normal equations N x = b with N = AᵀWA, b = AᵀW(σ − reference terms).
    let mut normal = Mat::<f64>::zeros(m, m);
    let mut rhs = Mat::<f64>::zeros(m, 1);
    for &i in system_lines {
        let line = problem.lines[i];
        let w = line.uncertainty_cm1.powi(-2);
        let (lo, up) = (slot(line.lower), slot(line.upper));
        // σ = E_u − E_l; a fixed reference moves to the right-hand side.
        let mut target = line.wavenumber_cm1;
        if lo.is_none() {
            target += reference_energy;
        }
        if up.is_none() {
            target -= reference_energy;
        }
        if let Some(u) = up {
            normal[(u, u)] += w;
            rhs[(u, 0)] += w * target;
        }
        if let Some(l) = lo {
            normal[(l, l)] += w;
            rhs[(l, 0)] -= w * target;
        }
        if let (Some(u), Some(l)) = (up, lo) {
            normal[(u, l)] -= w;
            normal[(l, u)] -= w;
        }
    }
    let (solution, covariance) = if m > 0 {
        let cholesky = normal
            .llt(Side::Lower)
            .map_err(|e| OptimizeError::Factorization(format!("{e:?}")))?;
        (cholesky.solve(&rhs), cholesky.inverse())
    } else {
        (Mat::zeros(0, 1), Mat::zeros(0, 0))
    };

    let energy_of = |level: usize| slot(level).map_or(reference_energy, |s| solution[(s, 0)]);
    let variance_of = |level: usize| slot(level).map_or(0.0, |s| covariance[(s, s)]);
    let energies = system_levels.iter().map(|&l| energy_of(l)).collect();
    let covariance_diagonal = system_levels.iter().map(|&l| variance_of(l)).collect();
    let line_fits = system_lines
        .iter()
        .map(|&i| {
            let line = problem.lines[i];
            let ritz = energy_of(line.upper) - energy_of(line.lower);
            let covariance_pair = match (slot(line.lower), slot(line.upper)) {
                (Some(l), Some(u)) => covariance[(l, u)],
                _ => 0.0,
            };
            let variance =
                variance_of(line.lower) + variance_of(line.upper) - 2.0 * covariance_pair;
            let residual = line.wavenumber_cm1 - ritz;
            let residual_sigma = residual / line.uncertainty_cm1;
            LineFit {
                ritz_cm1: ritz,
                ritz_uncertainty_cm1: variance.max(0.0).sqrt(),
                residual_cm1: residual,
                residual_sigma,
                outlier: residual_sigma.abs() > problem.outlier_sigma,
            }
        })
        .collect();
    Ok(SolvedSystem {
        energies,
        covariance_diagonal,
        line_fits,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(lower: usize, upper: usize, sigma: f64, u: f64) -> LineConstraint {
        LineConstraint {
            lower,
            upper,
            wavenumber_cm1: sigma,
            uncertainty_cm1: u,
        }
    }

    #[test]
    fn a_single_line_fixes_the_upper_level_exactly() {
        let problem =
            OptimizeProblem::new(vec![Some(0.0), Some(99.0)], vec![line(0, 1, 100.0, 0.1)]);
        let result = optimize_levels(&problem).unwrap();
        let upper = result.levels[1].unwrap();
        assert!((upper.energy_cm1 - 100.0).abs() < 1e-12);
        assert!((upper.uncertainty_cm1 - 0.1).abs() < 1e-12);
        assert!(upper.single_line());
        assert_eq!(result.degrees_of_freedom, 0);
        assert!(result.lines[0].residual_cm1.abs() < 1e-12);
    }

    #[test]
    fn a_closed_loop_is_the_weighted_mean() {
        // Levels 0, 1, 2: lines 0→1, 1→2 and 0→2. The loop sum disagrees by 0.3 cm⁻¹;
        // with equal weights each line absorbs a third (weighted least squares,
        // common practice, no source).
        let lines = vec![
            line(0, 1, 100.0, 0.1),
            line(1, 2, 50.0, 0.1),
            line(0, 2, 150.3, 0.1),
        ];
        let problem = OptimizeProblem::new(vec![Some(0.0), None, None], lines);
        let result = optimize_levels(&problem).unwrap();
        for fit in &result.lines {
            assert!((fit.residual_cm1.abs() - 0.1).abs() < 1e-9, "{fit:?}");
        }
        assert_eq!(result.degrees_of_freedom, 1);
        // Ritz uncertainty of a line in a triangle of equal weights: √(2/3)·u.
        assert!((result.lines[2].ritz_uncertainty_cm1 - 0.1 * (2.0f64 / 3.0).sqrt()).abs() < 1e-12);
    }

    #[test]
    fn separate_systems_get_their_own_reference() {
        // Two groups joined by no line, like the singlets and triplets of He I.
        let lines = vec![line(0, 1, 10.0, 0.1), line(2, 3, 20.0, 0.1)];
        let priors = vec![Some(0.0), Some(10.1), Some(500.0), Some(520.2)];
        let result = optimize_levels(&OptimizeProblem::new(priors, lines)).unwrap();
        assert_eq!(result.systems.len(), 2);
        assert_eq!(result.systems[1].reference, 2);
        assert!((result.levels[3].unwrap().energy_cm1 - 520.0).abs() < 1e-12);
        assert_eq!(result.levels[2].unwrap().uncertainty_cm1, 0.0);
    }

    #[test]
    fn bad_lines_are_errors_not_panics() {
        let priors = vec![Some(0.0), None];
        for bad in [
            line(0, 5, 1.0, 0.1),
            line(1, 1, 1.0, 0.1),
            line(0, 1, f64::NAN, 0.1),
            line(0, 1, 1.0, 0.0),
        ] {
            assert!(optimize_levels(&OptimizeProblem::new(priors.clone(), vec![bad])).is_err());
        }
    }
}

#[cfg(test)]
mod statistical_tests {
    use super::*;
    use rand::{Rng, SeedableRng, rngs::StdRng};
    use rand_distr::{Distribution, Normal};

    /// A synthetic spectrum: `level_count` levels with known energies, `line_count`
    /// lines between random pairs of them (each level joined to the ground level by a
    /// first line so the graph is connected), each measured with Gaussian noise of a
    /// known standard deviation.
    fn synthetic(
        rng: &mut StdRng,
        level_count: usize,
        line_count: usize,
    ) -> (Vec<f64>, Vec<LineConstraint>) {
        let truth: Vec<f64> = (0..level_count)
            .map(|i| {
                if i == 0 {
                    0.0
                } else {
                    rng.random_range(10_000.0..100_000.0)
                }
            })
            .collect();
        let mut lines = Vec::with_capacity(line_count);
        for k in 0..line_count {
            let (a, b) = if k + 1 < level_count {
                (rng.random_range(0..=k), k + 1)
            } else {
                let a = rng.random_range(0..level_count);
                let mut b = rng.random_range(0..level_count);
                while b == a {
                    b = rng.random_range(0..level_count);
                }
                (a, b)
            };
            let (lower, upper) = if truth[a] < truth[b] { (a, b) } else { (b, a) };
            let u = rng.random_range(0.005..0.05);
            let noise = Normal::new(0.0, u).unwrap().sample(rng);
            lines.push(LineConstraint {
                lower,
                upper,
                wavenumber_cm1: truth[upper] - truth[lower] + noise,
                uncertainty_cm1: u,
            });
        }
        (truth, lines)
    }

    #[test]
    fn recovered_levels_agree_with_the_truth_within_their_uncertainties() {
        // For Gaussian errors and a linear model, each estimate lies within 1.96 of its
        // standard uncertainties of the truth with probability 0.95, and the weighted
        // residual sum of squares χ² has expectation ν (standard least-squares theory,
        // e.g. Bevington & Robinson 2003, ch. 7 and 11).
        let mut rng = StdRng::seed_from_u64(20261202);
        let (mut inside, mut total) = (0usize, 0usize);
        let (mut chi2_sum, mut dof_sum) = (0.0, 0usize);
        for _ in 0..200 {
            let (truth, lines) = synthetic(&mut rng, 40, 160);
            let priors = truth.iter().map(|&e| Some(e)).collect();
            let result = optimize_levels(&OptimizeProblem::new(priors, lines)).unwrap();
            assert_eq!(result.systems.len(), 1);
            for (level, fitted) in result.levels.iter().enumerate().skip(1) {
                let fitted = fitted.unwrap();
                total += 1;
                if (fitted.energy_cm1 - truth[level]).abs() < 1.96 * fitted.uncertainty_cm1 {
                    inside += 1;
                }
            }
            chi2_sum += result.chi_squared;
            dof_sum += result.degrees_of_freedom;
        }
        let coverage = inside as f64 / total as f64;
        // 7800 level estimates: the binomial standard error of 0.95 is 0.0025 (the
        // estimates of one trial are correlated, so allow about four times that).
        assert!((coverage - 0.95).abs() < 0.01, "coverage {coverage}");
        // Σχ² over 200 trials with Σν = 24 200: relative standard error √(2/Σν) ≈ 0.009.
        let variance = chi2_sum / dof_sum as f64;
        assert!(
            (variance - 1.0).abs() < 0.04,
            "normalised residual variance {variance}"
        );
    }
}
