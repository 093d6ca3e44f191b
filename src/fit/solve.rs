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
use super::matching::{MatchedBy, match_levels, track};
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

    /// ∂E/∂x (unweighted), targets × variables.
    fn derivatives(&self, evaluation: &Evaluation) -> DMatrix<f64> {
        derivative_matrix(self.map, self.targets.len(), |t| {
            &evaluation.state(t).derivatives
        })
    }

    fn weighted_jacobian(&self, evaluation: &Evaluation) -> DMatrix<f64> {
        let mut j = self.derivatives(evaluation);
        for (mut row, target) in j.row_iter_mut().zip(self.targets) {
            row *= target.weight;
        }
        j
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
    let (assignments, unmatched) = match_levels(structure, &initial_levels, &of_species);
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
    let targets: Vec<Target> = assignments
        .iter()
        .map(|a| {
            let level = &initial_levels[a.level];
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

    // Can the levels determine the free parameters?
    let names: Vec<String> = map
        .leaders
        .iter()
        .map(|&s| structure.parameters()[s].full_name(structure.configurations()))
        .collect();
    let weights: Vec<f64> = targets.iter().map(|t| t.weight).collect();
    let initial = Evaluation {
        chosen: assignments.iter().map(|a| a.level).collect(),
        levels: initial_levels,
    };
    let variable_configuration: Vec<Option<usize>> = map
        .leaders
        .iter()
        .map(|&s| match structure.parameters()[s].scope {
            Scope::Configuration(c) => Some(c),
            Scope::Interaction(..) => None,
        })
        .collect();
    let level_configuration: Vec<usize> = (0..targets.len())
        .map(|t| initial.state(t).configuration)
        .collect();
    let configuration_names: Vec<String> = structure
        .configurations()
        .iter()
        .map(ToString::to_string)
        .collect();
    let start_derivatives =
        derivative_matrix(&map, targets.len(), |t| &initial.state(t).derivatives);
    check_determined(
        &start_derivatives,
        &weights,
        &CheckContext {
            names: &names,
            variable_configuration: &variable_configuration,
            level_configuration: &level_configuration,
            configuration_names: &configuration_names,
        },
    )?;

    // Iterate.
    let p = map.variable_count();
    let start = DVector::from_vec(map.start());
    let progress: &mut dyn FnMut(FitProgress) = &mut progress;
    let mut problem = Problem {
        structure,
        map: &map,
        targets: &targets,
        blocks: targets.iter().map(|t| t.block).collect(),
        x: start,
        reference: RefCell::new(
            (0..targets.len())
                .map(|t| initial.state(t).eigenvector.clone())
                .collect(),
        ),
        current: Some(initial),
        iterations: Cell::new(0),
        evaluations: Cell::new(1),
        progress: RefCell::new(progress),
    };
    let convergence = if p == 0 {
        if let Some(evaluation) = problem.current.clone() {
            problem.accept(&evaluation);
        }
        Convergence::NothingToFit
    } else {
        let mut lm = LevenbergMarquardt::new();
        if let Some(limit) = options.max_evaluations() {
            lm = lm.with_patience(limit.div_ceil(p + 1).max(1));
        }
        let (solved, report) = lm.minimize(problem);
        problem = solved;
        match report.termination {
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
            other => {
                return Err(FitError::Diverged {
                    problem: format!("the minimiser stopped: {other:?}"),
                });
            }
        }
    };
    let Some(evaluation) = problem.current.clone() else {
        return Err(FitError::Diverged {
            problem: "the levels could not be computed at the final parameters".into(),
        });
    };
    let x: Vec<f64> = problem.x.iter().copied().collect();

    // Statistics.
    let n = targets.len();
    let degrees_of_freedom = n - p;
    let jacobian = problem.weighted_jacobian(&evaluation);
    let covariance = if p > 0 {
        Some(inverse_normal_matrix(&jacobian).ok_or_else(|| {
            let derivatives = problem.derivatives(&evaluation);
            FitError::Undetermined {
                combinations: null_directions(&derivatives, &weights)
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
        iterations: problem.iterations.get(),
        evaluations: problem.evaluations.get(),
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
