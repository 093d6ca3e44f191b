//! The Levenberg–Marquardt fit of the free parameters to the matched levels.
//!
//! Residuals r_i = w_i (E_calc,i − E_exp,i), w_i from [`Weighting`]; the Jacobian
//! ∂r_i/∂x_j = w_i Σ_p ratio_p ∂E_i/∂P_p comes from the Hellmann–Feynman derivatives
//! ∂E/∂P = ⟨ψ|C_P|ψ⟩ of the level model (Hellmann 1937; Feynman 1939), exact for an
//! energy linear in the parameters. The minimiser is the `levenberg-marquardt`
//! crate (a port of MINPACK's `lmder`: Moré 1978, trust region with scaled
//! variables, so E_av of 10⁵ cm⁻¹ and ζ of 1 cm⁻¹ are stepped alike). The crate
//! asks for the Jacobian only at accepted points; that is where the eigenvectors
//! used to follow each matched state are renewed ([`super::matching::track`]) and
//! where the progress callback is called.
//!
//! After convergence, with N matched levels and p free parameters, ν = N − p:
//!
//! ```text
//! s² = Σ r_i² / ν,   C = s² (JᵀJ)⁻¹,   σ(x_j) = √C_jj,   ρ_jk = C_jk / √(C_jj C_kk)
//! ```
//!
//! (the usual linearised estimates of non-linear least squares, e.g. Bevington &
//! Robinson 2003, §§7.2 and 8.5; with equal weights s is the standard deviation of
//! the fit). (JᵀJ)⁻¹ comes from the singular value decomposition of J with unit
//! columns, which stays accurate when the parameters differ by orders of magnitude.

use std::cell::{Cell, RefCell};

use levenberg_marquardt::{LeastSquaresProblem, LevenbergMarquardt, TerminationReason};
use nalgebra::storage::Owned;
use nalgebra::{DMatrix, DVector, Dyn};

use super::FitError;
use super::checks::{
    CheckContext, RANK_TOLERANCE, check_determined, null_directions, scaled_columns,
};
use super::matching::{Assignment, MatchedBy, match_levels, track};
use super::options::{FitOptions, Weighting};
use super::parameters::{Link, ParameterMap};
use super::result::{
    Convergence, Correlation, FitResult, FittedLevel, FittedParameter, ParameterKind, Share,
    UnmatchedLevel,
};
use crate::levels;
use crate::structure::model::{LevelModel, Vary};
use crate::structure::{Level, LevelStructure, Scope};

/// What the fit reports after each accepted step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitProgress {
    /// Accepted steps so far (0 at the starting values).
    pub iteration: usize,
    /// Evaluations of the levels so far.
    pub evaluations: usize,
    /// Root mean square of E_exp − E_calc over the matched levels, cm⁻¹.
    pub rms_cm1: f64,
}

/// One matched level as the fit sees it.
#[derive(Debug, Clone)]
struct Target {
    /// Index into the species' experimental levels.
    experimental: usize,
    /// Parity block and J block of its state.
    block: (usize, usize),
    energy_cm1: f64,
    weight: f64,
    matched_by: MatchedBy,
}

/// The levels at one set of variables, and which state each target is.
#[derive(Debug, Clone)]
struct Evaluation {
    levels: Vec<Level>,
    chosen: Vec<usize>,
}

impl Evaluation {
    fn state(&self, target: usize) -> &Level {
        &self.levels[self.chosen[target]]
    }
}

/// The least-squares problem handed to the minimiser.
struct Problem<'a> {
    structure: &'a LevelStructure,
    map: &'a ParameterMap,
    targets: &'a [Target],
    blocks: Vec<(usize, usize)>,
    x: DVector<f64>,
    current: Option<Evaluation>,
    /// Eigenvectors of the targets' states at the last accepted point.
    reference: RefCell<Vec<Vec<f64>>>,
    iterations: Cell<usize>,
    evaluations: Cell<usize>,
    /// The most evaluations allowed (`--max-evaluations`), counted over all passes.
    limit: Option<usize>,
    /// Set when an evaluation was refused because the limit was reached.
    hit_limit: Cell<bool>,
    /// The last accepted point and its evaluation: where a run stopped by the limit
    /// ends (the minimiser's trial point after it is not a result).
    accepted: RefCell<Option<(DVector<f64>, Evaluation)>>,
    progress: RefCell<&'a mut dyn FnMut(FitProgress)>,
}

impl Problem<'_> {
    fn evaluate(&self, x: &[f64]) -> Option<Evaluation> {
        self.evaluations.set(self.evaluations.get() + 1);
        let levels = self.structure.levels(&self.map.values(x)).ok()?;
        let chosen = track(&levels, &self.blocks, &self.reference.borrow());
        if chosen.contains(&usize::MAX) {
            return None;
        }
        Some(Evaluation { levels, chosen })
    }

    fn residual_vector(&self, evaluation: &Evaluation) -> DVector<f64> {
        DVector::from_iterator(
            self.targets.len(),
            self.targets.iter().enumerate().map(|(t, target)| {
                target.weight * (evaluation.state(t).energy_cm1 - target.energy_cm1)
            }),
        )
    }

    fn weighted_jacobian(&self, evaluation: &Evaluation) -> DMatrix<f64> {
        let weights: Vec<f64> = self.targets.iter().map(|t| t.weight).collect();
        weighted(derivatives(self.map, evaluation), &weights)
    }

    fn rms(&self, evaluation: &Evaluation) -> f64 {
        let sum: f64 = self
            .targets
            .iter()
            .enumerate()
            .map(|(t, target)| (evaluation.state(t).energy_cm1 - target.energy_cm1).powi(2))
            .sum();
        (sum / self.targets.len() as f64).sqrt()
    }

    /// Mark the current point as accepted: its eigenvectors become the reference,
    /// and the progress callback hears of it.
    fn accept(&self, evaluation: &Evaluation) {
        *self.accepted.borrow_mut() = Some((self.x.clone(), evaluation.clone()));
        *self.reference.borrow_mut() = (0..self.targets.len())
            .map(|t| evaluation.state(t).eigenvector.clone())
            .collect();
        let progress = FitProgress {
            iteration: self.iterations.get(),
            evaluations: self.evaluations.get(),
            rms_cm1: self.rms(evaluation),
        };
        self.iterations.set(self.iterations.get() + 1);
        (self.progress.borrow_mut())(progress);
    }
}

impl LeastSquaresProblem<f64, Dyn, Dyn> for Problem<'_> {
    type ResidualStorage = Owned<f64, Dyn>;
    type JacobianStorage = Owned<f64, Dyn, Dyn>;
    type ParameterStorage = Owned<f64, Dyn>;

    fn set_params(&mut self, x: &DVector<f64>) {
        // The limit holds: no evaluation beyond it. Without levels the residuals
        // are `None` and the minimiser stops (see `fit_levels`).
        if self
            .limit
            .is_some_and(|limit| self.evaluations.get() >= limit)
        {
            self.hit_limit.set(true);
            self.current = None;
            return;
        }
        self.x.copy_from(x);
        self.current = self.evaluate(x.as_slice());
    }

    fn params(&self) -> DVector<f64> {
        self.x.clone()
    }

    fn residuals(&self) -> Option<DVector<f64>> {
        self.current.as_ref().map(|e| self.residual_vector(e))
    }

    fn jacobian(&self) -> Option<DMatrix<f64>> {
        let evaluation = self.current.as_ref()?;
        self.accept(evaluation);
        Some(self.weighted_jacobian(evaluation))
    }
}

/// The fit is repeated with the levels matched afresh at most this many times.
const MAX_PASSES: usize = 10;

/// ∂E/∂x (unweighted) of the evaluation's targets, targets × variables.
fn derivatives(map: &ParameterMap, evaluation: &Evaluation) -> DMatrix<f64> {
    derivative_matrix(map, evaluation.chosen.len(), |t| {
        &evaluation.state(t).derivatives
    })
}

/// The rows of `matrix` times `weights`.
fn weighted(mut matrix: DMatrix<f64>, weights: &[f64]) -> DMatrix<f64> {
    for (mut row, w) in matrix.row_iter_mut().zip(weights) {
        row *= *w;
    }
    matrix
}

/// Targets × variables matrix of ∂E/∂x from each target's ∂E/∂P.
fn derivative_matrix<'a>(
    map: &ParameterMap,
    targets: usize,
    derivatives_of: impl Fn(usize) -> &'a Vec<f64>,
) -> DMatrix<f64> {
    let p = map.variable_count();
    let mut matrix = DMatrix::zeros(targets, p);
    let mut row = vec![0.0; p];
    for t in 0..targets {
        map.chain(derivatives_of(t), &mut row);
        for (j, value) in row.iter().enumerate() {
            matrix[(t, j)] = *value;
        }
    }
    matrix
}

/// Fit the free parameters of `model` (whose structure is `structure`) to the
/// levels of its species in `experimental`; levels of other species are counted
/// and left alone. `progress` hears of every accepted step.
///
/// After convergence the LS-labelled levels are matched afresh at the fitted
/// values (see [`super::matching`]); while that changes an assignment the fit is
/// repeated from the fitted values, at most ten times in all
/// ([`FitResult::passes`], [`FitResult::assignment_settled`]).
///
/// Fails, before iterating, when the matched levels cannot determine the free
/// parameters (see [`super::checks`]), naming the parameters.
pub fn fit_levels(
    model: &LevelModel,
    structure: &LevelStructure,
    experimental: &[levels::Level],
    options: &FitOptions,
    mut progress: impl FnMut(FitProgress),
) -> Result<FitResult, FitError> {
    let map = ParameterMap::new(model, structure)?;
    let of_species: Vec<&levels::Level> = experimental
        .iter()
        .filter(|l| l.species == model.species)
        .collect();
    if of_species.is_empty() {
        let mut found: Vec<_> = experimental.iter().map(|l| l.species).collect();
        found.sort();
        found.dedup();
        return Err(FitError::NoLevels {
            species: model.species,
            found,
        });
    }
    let initial_levels = structure.levels(&map.initial)?;
    let (mut assignments, mut unmatched) =
        match_levels(structure, &initial_levels, &of_species, &[]);
    if assignments.is_empty() {
        return Err(FitError::NothingMatched {
            species: model.species,
            levels: of_species.len(),
            example: unmatched.first().map(|&(e, reason)| {
                (
                    of_species[e].label.to_string(),
                    reason.describe().to_string(),
                )
            }),
        });
    }
    let weighting = options.weighting();
    let names: Vec<String> = map
        .leaders
        .iter()
        .map(|&s| structure.parameters()[s].full_name(structure.configurations()))
        .collect();
    let variable_configuration: Vec<Option<usize>> = map
        .leaders
        .iter()
        .map(|&s| match structure.parameters()[s].scope {
            Scope::Configuration(c) => Some(c),
            Scope::Interaction(..) => None,
        })
        .collect();
    let configuration_names: Vec<String> = structure
        .configurations()
        .iter()
        .map(ToString::to_string)
        .collect();
    let p = map.variable_count();
    let progress: &mut dyn FnMut(FitProgress) = &mut progress;
    let mut x = DVector::from_vec(map.start());
    let mut levels_now = initial_levels;
    let mut iterations = 0;
    let mut evaluations = 1;
    let mut passes = 0;
    let (targets, evaluation, convergence, assignment_settled) = loop {
        passes += 1;
        let targets: Vec<Target> = assignments
            .iter()
            .map(|a| {
                let level = &levels_now[a.level];
                let experimental = of_species[a.experimental];
                Target {
                    experimental: a.experimental,
                    block: (level.block, level.j_block),
                    energy_cm1: experimental.energy_cm1,
                    weight: weighting.factor(experimental.uncertainty_cm1),
                    matched_by: a.matched_by,
                }
            })
            .collect();
        let start = Evaluation {
            chosen: assignments.iter().map(|a| a.level).collect(),
            levels: levels_now,
        };

        // Can the levels determine the free parameters? Asked before the first
        // pass only: later passes start at fitted values, where an interaction
        // parameter driven near 0 has no first-order effect yet is determined.
        if passes == 1 {
            let weights: Vec<f64> = targets.iter().map(|t| t.weight).collect();
            let level_configuration: Vec<usize> = (0..targets.len())
                .map(|t| start.state(t).configuration)
                .collect();
            check_determined(
                &derivatives(&map, &start),
                &weights,
                &CheckContext {
                    names: &names,
                    variable_configuration: &variable_configuration,
                    level_configuration: &level_configuration,
                    configuration_names: &configuration_names,
                },
            )?;
        }

        // Iterate.
        let mut problem = Problem {
            structure,
            map: &map,
            targets: &targets,
            blocks: targets.iter().map(|t| t.block).collect(),
            x: x.clone(),
            reference: RefCell::new(
                (0..targets.len())
                    .map(|t| start.state(t).eigenvector.clone())
                    .collect(),
            ),
            current: Some(start),
            iterations: Cell::new(iterations),
            evaluations: Cell::new(evaluations),
            limit: options.max_evaluations(),
            hit_limit: Cell::new(false),
            accepted: RefCell::new(None),
            progress: RefCell::new(&mut *progress),
        };
        let convergence = if p == 0 {
            if let Some(evaluation) = problem.current.clone() {
                problem.accept(&evaluation);
            }
            Convergence::NothingToFit
        } else {
            let mut lm = LevenbergMarquardt::new();
            if let Some(limit) = options.max_evaluations() {
                let left = limit.saturating_sub(evaluations).max(1);
                lm = lm.with_patience(left.div_ceil(p + 1).max(1));
            }
            let (solved, report) = lm.minimize(problem);
            problem = solved;
            if problem.hit_limit.get()
                && let Some((x, evaluation)) = problem.accepted.take()
            {
                // Back to the last accepted point, the best found.
                problem.x = x;
                problem.current = Some(evaluation);
            }
            match report.termination {
                TerminationReason::User(_) if problem.hit_limit.get() => {
                    Convergence::StoppedAtLimit
                }
                TerminationReason::ResidualsZero
                | TerminationReason::Orthogonal
                | TerminationReason::Converged { .. }
                | TerminationReason::NoImprovementPossible(_) => Convergence::Converged,
                TerminationReason::LostPatience => Convergence::StoppedAtLimit,
                TerminationReason::User(_) => {
                    return Err(FitError::Diverged {
                        problem: "the levels could not be computed at the parameters the fit \
                                  reached (values not finite)"
                            .into(),
                    });
                }
                TerminationReason::Numerical(step) => {
                    // Name the largest free parameter at the start: the usual cause
                    // is a starting value so large that the residuals overflow.
                    let largest = x
                        .iter()
                        .zip(&names)
                        .max_by(|a, b| a.0.abs().total_cmp(&b.0.abs()))
                        .map(|(value, name)| {
                            format!("; the largest free parameter is {name} = {value:e}")
                        })
                        .unwrap_or_default();
                    return Err(FitError::Diverged {
                        problem: format!(
                            "the residuals or their derivatives are not finite numbers \
                             (in the minimiser's {step} step): check the model's starting \
                             values for absurdly large ones{largest}"
                        ),
                    });
                }
                other => {
                    return Err(FitError::Diverged {
                        problem: format!("the minimiser stopped: {other:?}"),
                    });
                }
            }
        };
        iterations = problem.iterations.get();
        evaluations = problem.evaluations.get();
        x = problem.x.clone();
        let Some(evaluation) = problem.current.take() else {
            return Err(FitError::Diverged {
                problem: "the levels could not be computed at the final parameters".into(),
            });
        };
        drop(problem);
        if convergence != Convergence::Converged {
            break (targets, evaluation, convergence, true);
        }
        // Match the LS-labelled levels afresh at the fitted values; the energy-order
        // ones keep the states they were tracked to.
        let keep: Vec<Assignment> = targets
            .iter()
            .enumerate()
            .filter(|(_, t)| t.matched_by == MatchedBy::EnergyOrder)
            .map(|(i, t)| Assignment {
                experimental: t.experimental,
                level: evaluation.chosen[i],
                matched_by: MatchedBy::EnergyOrder,
            })
            .collect();
        let (again, again_unmatched) =
            match_levels(structure, &evaluation.levels, &of_species, &keep);
        let now: Vec<(usize, usize)> = targets
            .iter()
            .enumerate()
            .map(|(i, t)| (t.experimental, evaluation.chosen[i]))
            .collect();
        let settled = again.len() == now.len()
            && again
                .iter()
                .zip(&now)
                .all(|(a, &(e, l))| a.experimental == e && a.level == l);
        if settled || passes == MAX_PASSES || again.len() < p {
            // Fewer matched levels than free parameters afresh: keep the last fit.
            break (targets, evaluation, convergence, settled);
        }
        assignments = again;
        unmatched = again_unmatched;
        levels_now = evaluation.levels;
    };
    let x: Vec<f64> = x.iter().copied().collect();
    let weights: Vec<f64> = targets.iter().map(|t| t.weight).collect();

    // Statistics.
    let n = targets.len();
    let degrees_of_freedom = n.saturating_sub(p);
    let jacobian = weighted(derivatives(&map, &evaluation), &weights);
    let covariance = if p > 0 {
        Some(inverse_normal_matrix(&jacobian).ok_or_else(|| {
            FitError::Undetermined {
                combinations: null_directions(&derivatives(&map, &evaluation), &weights)
                    .into_iter()
                    .map(|d| d.into_iter().map(|(j, v)| (names[j].clone(), v)).collect())
                    .collect(),
            }
        })?)
    } else {
        None
    };
    let differences: Vec<f64> = targets
        .iter()
        .enumerate()
        .map(|(t, target)| target.energy_cm1 - evaluation.state(t).energy_cm1)
        .collect();
    let sum_squares: f64 = differences.iter().map(|d| d * d).sum();
    let weighted_sum: f64 = differences
        .iter()
        .zip(&targets)
        .map(|(d, t)| (d * t.weight).powi(2))
        .sum();
    let (sigma_cm1, scale) = if degrees_of_freedom > 0 {
        let nu = degrees_of_freedom as f64;
        (Some((sum_squares / nu).sqrt()), Some(weighted_sum / nu))
    } else {
        (None, None)
    };
    let reduced_chi_square = match weighting {
        Weighting::Equal => None,
        Weighting::Uncertainty { .. } => scale,
    };
    let standard_errors: Vec<Option<f64>> = (0..p)
        .map(|j| {
            let c = covariance.as_ref()?;
            scale.map(|s| (s * c[(j, j)]).sqrt())
        })
        .collect();
    let correlation = Correlation {
        parameters: names.clone(),
        matrix: (0..p)
            .map(|i| {
                (0..p)
                    .map(|j| {
                        covariance
                            .as_ref()
                            .map_or(0.0, |c| c[(i, j)] / (c[(i, i)] * c[(j, j)]).sqrt())
                    })
                    .collect()
            })
            .collect(),
    };

    // Parameters, in model order.
    let values = map.values(&x);
    let parameters = model
        .parameters
        .iter()
        .map(|parameter| {
            let s = structure.parameter_index(&parameter.id).unwrap_or_default();
            let kind = match parameter.vary {
                Vary::Free => ParameterKind::Free,
                Vary::Fixed => ParameterKind::Fixed,
                Vary::Tied { to, ratio } => ParameterKind::Tied {
                    to: model.full_name(&to),
                    ratio,
                },
            };
            let (adjusted, standard_error) = match map.links[s] {
                Link::Variable { variable, ratio } => {
                    (true, standard_errors[variable].map(|e| (ratio * e).abs()))
                }
                Link::Fixed(_) => (false, None),
            };
            FittedParameter {
                id: parameter.id,
                name: model.full_name(&parameter.id),
                kind,
                adjusted,
                initial_cm1: map.initial[s],
                fitted_cm1: values[s],
                standard_error_cm1: standard_error,
            }
        })
        .collect();

    let levels = targets
        .iter()
        .enumerate()
        .map(|(t, target)| {
            let state = evaluation.state(t);
            FittedLevel {
                experimental: of_species[target.experimental].clone(),
                calculated_cm1: state.energy_cm1,
                difference_cm1: differences[t],
                weight: target.weight,
                matched_by: target.matched_by,
                composition: state
                    .composition
                    .iter()
                    .filter(|c| c.percent >= 0.01)
                    .map(|c| Share {
                        label: structure.state_label(state.block, c.state).to_string(),
                        percent: c.percent,
                    })
                    .collect(),
                lande_g: state.lande_g,
            }
        })
        .collect();
    let unmatched = unmatched
        .into_iter()
        .map(|(e, reason)| UnmatchedLevel {
            experimental: of_species[e].clone(),
            reason,
        })
        .collect();

    Ok(FitResult {
        species: model.species,
        weighting,
        parameters,
        correlation,
        correlation_warning: options.correlation_warning(),
        levels,
        unmatched,
        other_species_levels: experimental.len() - of_species.len(),
        free_parameters: p,
        degrees_of_freedom,
        sigma_cm1,
        rms_cm1: (sum_squares / n as f64).sqrt(),
        reduced_chi_square,
        iterations: if p == 0 { 0 } else { iterations },
        evaluations,
        passes,
        assignment_settled,
        convergence,
    })
}

/// (JᵀJ)⁻¹ by the singular value decomposition of J with unit columns:
/// J D⁻¹ = U S Vᵀ gives (JᵀJ)⁻¹ = D⁻¹ V S⁻² Vᵀ D⁻¹. `None` when J is rank-deficient.
pub(crate) fn inverse_normal_matrix(jacobian: &DMatrix<f64>) -> Option<DMatrix<f64>> {
    let p = jacobian.ncols();
    let ones = vec![1.0; jacobian.nrows()];
    let (scaled, norms) = scaled_columns(jacobian, &ones);
    let svd = scaled.svd(false, true);
    let v_t = svd.v_t?;
    let largest = svd.singular_values.max();
    if svd.singular_values.len() < p
        || svd
            .singular_values
            .iter()
            .any(|&s| s <= RANK_TOLERANCE * largest)
    {
        return None;
    }
    let mut c = DMatrix::zeros(p, p);
    for (k, &s) in svd.singular_values.iter().enumerate() {
        let row = v_t.row(k);
        for i in 0..p {
            for j in 0..p {
                c[(i, j)] += row[i] * row[j] / (s * s);
            }
        }
    }
    for i in 0..p {
        for j in 0..p {
            c[(i, j)] /= norms[i] * norms[j];
        }
    }
    Some(c)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::structure::model::parse_model;

    /// Mg-like 3s² + 3s3p + 3p² with configuration interaction and ties: every kind
    /// of parameter and link.
    const MG: &str = r#"species = "Mg I"
[[configuration]]
label = "3s2"
Eav = { value = 0.0, vary = "fixed" }
[[configuration]]
label = "3s.3p"
Eav = 30000.0
"G1(3s,3p)" = 12000.0
"zeta(3p)" = 60.0
[[configuration]]
label = "3p2"
Eav = 60000.0
"F2(3p)" = { tie = "G1(3s,3p)", ratio = 2.5 }
"zeta(3p)" = { tie = "zeta(3p)@3s.3p", ratio = 1.1 }
[[interaction]]
between = ["3s2", "3p2"]
"R1(3s3s,3p3p)" = 15000.0
"#;

    #[test]
    fn hellmann_feynman_jacobian_matches_finite_differences() {
        // ∂E/∂x by the chain rule over ties against central differences
        // [E(x + h) − E(x − h)]/2h, whose error is O(h²) (any numerical-analysis
        // text); the levels are identified by (block, J block, root), which do not
        // change over ±h here.
        let loaded = parse_model(MG, "mg.toml").unwrap();
        let structure = &loaded.structure;
        let map = ParameterMap::new(&loaded.model, structure).unwrap();
        let x = map.start();
        let levels = structure.levels(&map.values(&x)).unwrap();
        let analytic = derivative_matrix(&map, levels.len(), |i| &levels[i].derivatives);
        let key = |l: &Level| (l.block, l.j_block, l.root);
        for j in 0..map.variable_count() {
            let h = 1e-3 * x[j].abs().max(1.0);
            let mut up = x.clone();
            up[j] += h;
            let mut down = x.clone();
            down[j] -= h;
            let e_up = structure.levels(&map.values(&up)).unwrap();
            let e_down = structure.levels(&map.values(&down)).unwrap();
            for (i, level) in levels.iter().enumerate() {
                let find = |set: &[Level]| {
                    set.iter()
                        .find(|l| key(l) == key(level))
                        .map(|l| l.energy_cm1)
                        .unwrap()
                };
                let numeric = (find(&e_up) - find(&e_down)) / (2.0 * h);
                assert!(
                    (numeric - analytic[(i, j)]).abs() < 1e-6,
                    "level {i}, variable {j}: {numeric} vs {}",
                    analytic[(i, j)]
                );
            }
        }
    }

    #[test]
    fn tracking_follows_a_state_through_a_crossing() {
        // 1s3s and 1s4s without interaction: their ³S₁ states are the basis states
        // themselves whatever the energies (common practice, no source). Moving
        // E_av(1s3s) above E_av(1s4s) swaps their energy order; the overlap must still
        // find the 1s3s state.
        let text = "species = \"He I\"\n[[configuration]]\nlabel = \"1s.3s\"\nEav = 184000.0\n\
                    \"G0(1s,3s)\" = 800.0\n[[configuration]]\nlabel = \"1s.4s\"\nEav = 190600.0\n\
                    \"G0(1s,4s)\" = 300.0\n";
        let loaded = parse_model(text, "he.toml").unwrap();
        let structure = &loaded.structure;
        let map = ParameterMap::new(&loaded.model, structure).unwrap();
        let before = structure.levels(&map.values(&map.start())).unwrap();
        let is_3s = |l: &Level| {
            structure
                .state_label(l.block, l.composition[0].state)
                .to_string()
                == "1s.3s 3S"
        };
        let start = before
            .iter()
            .position(|l| l.j.twice == 2 && is_3s(l))
            .unwrap();
        let mut x = map.start();
        x[0] = 195000.0; // E_av(1s3s) now above 1s4s
        let after = structure.levels(&map.values(&x)).unwrap();
        let chosen = track(
            &after,
            &[(before[start].block, before[start].j_block)],
            &[before[start].eigenvector.clone()],
        );
        assert!(is_3s(&after[chosen[0]]));
        assert_ne!(
            after[chosen[0]].root, before[start].root,
            "the energy order did change"
        );
    }

    #[test]
    fn a_fit_through_a_crossing_keeps_the_labels() {
        // An invented level set in which 1s3s lies above 1s4s: the fit must carry
        // E_av(1s3s) through E_av(1s4s). Four levels, four free parameters: in each
        // configuration E(¹S) − E(³S) = 2G⁰ (Condon & Shortley 1935, §7⁶) and E_av is
        // the centre of gravity [3E(³S) + E(¹S)]/4 (Slater 1960, vol. 1, §14-3), so
        // the fit is exact: E_av(1s3s) = (3·195000 + 196000)/4 = 195250.
        let text = "species = \"He I\"\n[[configuration]]\nlabel = \"1s.3s\"\nEav = 184000.0\n\
                    \"G0(1s,3s)\" = 800.0\n[[configuration]]\nlabel = \"1s.4s\"\nEav = 190600.0\n\
                    \"G0(1s,4s)\" = 300.0\n";
        let loaded = parse_model(text, "he.toml").unwrap();
        let table = crate::levels::read_level_table(
            "species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n\
             He I,1s.3s,3S,1,195000,0.01,invented\nHe I,1s.3s,1S,0,196000,0.01,invented\n\
             He I,1s.4s,3S,1,190300,0.01,invented\nHe I,1s.4s,1S,0,190900,0.01,invented\n"
                .as_bytes(),
            "crossing.csv",
        )
        .unwrap();
        let result = fit_levels(
            &loaded.model,
            &loaded.structure,
            &table.levels,
            &FitOptions::default(),
            |_| {},
        )
        .unwrap();
        assert_eq!(result.convergence, Convergence::Converged);
        for level in &result.levels {
            assert!(level.difference_cm1.abs() < 1e-6, "{level:?}");
            let label = &level.experimental.label;
            assert_eq!(
                level.composition[0].label,
                format!("{} {}", label.configuration, label.term)
            );
        }
        let value = |name: &str| {
            result
                .parameters
                .iter()
                .find(|p| p.name == name)
                .unwrap()
                .fitted_cm1
        };
        assert!((value("Eav@1s.3s") - 195250.0).abs() < 1e-6);
        assert!((value("G0(1s,4s)@1s.4s") - 300.0).abs() < 1e-6);
    }

    #[test]
    fn progress_hears_every_accepted_step() {
        let loaded = parse_model(MG, "mg.toml").unwrap();
        let truth = loaded.model.values_for(&loaded.structure);
        let levels = loaded.structure.levels(&truth).unwrap();
        // Levels computed from the model itself, then labelled by their leading
        // component; the fit starts 5 % off in G¹.
        let table: Vec<crate::levels::Level> = levels
            .iter()
            .map(|l| {
                let lead = loaded
                    .structure
                    .state_label(l.block, l.composition[0].state);
                crate::levels::Level {
                    species: loaded.model.species,
                    label: format!("{lead} {}", l.j).parse().unwrap(),
                    energy_cm1: l.energy_cm1,
                    uncertainty_cm1: 0.01,
                    source: "computed".into(),
                    energy_status: Default::default(),
                }
            })
            .collect();
        let mut model = loaded.model.clone();
        for p in &mut model.parameters {
            if p.id.radial.to_string() == "G1(3s,3p)" {
                p.value *= 1.05;
            }
        }
        let mut heard = Vec::new();
        let result = fit_levels(
            &model,
            &loaded.structure,
            &table,
            &FitOptions::default(),
            |p| heard.push(p),
        )
        .unwrap();
        assert_eq!(heard.len(), result.iterations);
        assert_eq!(heard[0].iteration, 0);
        assert!(heard[0].rms_cm1 > 1.0 && result.rms_cm1 < 1e-6, "{heard:?}");
    }
}
