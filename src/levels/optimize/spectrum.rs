//! Level optimisation of labelled spectra: selects the accepted lines, numbers the
//! levels of each species, runs [`super::optimize_levels`] per species and gives
//! the results back by label.

use std::collections::HashMap;

use super::input::{ClassifiedLine, ClassifiedLines};
use super::{LineConstraint, LineFit, OptimizeError, OptimizeProblem, optimize_levels};
use crate::levels::LevelLabel;
use crate::location::Location;
use crate::notation::Species;

/// What to do with accepted lines that carry the `blend` flag.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum BlendPolicy {
    /// Leave them out.
    Omit,
    /// Keep them with their uncertainty multiplied by this factor (> 1).
    Widen(f64),
}

/// Settings of a level optimisation.
#[derive(Debug, Clone, PartialEq)]
pub struct OptimizeOptions {
    /// The level held fixed at its tabulated energy. Default: in each system, the
    /// level with the lowest tabulated energy.
    pub reference: Option<LevelLabel>,
    /// Blended lines. Default: [`BlendPolicy::Omit`].
    pub blends: BlendPolicy,
    /// |residual|/u above which a line is flagged as an outlier. Default: 3.
    pub outlier_sigma: f64,
}

impl Default for OptimizeOptions {
    fn default() -> Self {
        OptimizeOptions {
            reference: None,
            blends: BlendPolicy::Omit,
            outlier_sigma: 3.0,
        }
    }
}

/// One optimised level.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelResult {
    /// The level.
    pub label: LevelLabel,
    /// Optimised energy, cm⁻¹.
    pub energy_cm1: f64,
    /// Standard uncertainty relative to the system's reference, cm⁻¹.
    pub uncertainty_cm1: f64,
    /// Tabulated energy from the input, cm⁻¹, if any.
    pub prior_energy_cm1: Option<f64>,
    /// Number of lines that determine the level.
    pub line_count: usize,
    /// Index into [`SpeciesResult::systems`].
    pub system: usize,
    /// True for the system's reference level.
    pub is_reference: bool,
}

impl LevelResult {
    /// A level fixed by one line only: its value carries no check.
    pub fn single_line(&self) -> bool {
        self.line_count == 1
    }
}

/// One line used in the optimisation.
#[derive(Debug, Clone, PartialEq)]
pub struct LineResult {
    /// The line's number in the measured list.
    pub line: usize,
    /// Lower level.
    pub lower: LevelLabel,
    /// Upper level.
    pub upper: LevelLabel,
    /// Observed vacuum wavenumber, cm⁻¹.
    pub observed_cm1: f64,
    /// Uncertainty used in the fit, cm⁻¹ (widened for a kept blend).
    pub uncertainty_cm1: f64,
    /// True when the line is a blend kept with a widened uncertainty.
    pub widened: bool,
    /// Ritz wavenumber and residuals.
    pub fit: LineFit,
}

/// A system of levels joined by lines, by label.
#[derive(Debug, Clone, PartialEq)]
pub struct SystemResult {
    /// The reference level.
    pub reference: LevelLabel,
    /// Its fixed energy, cm⁻¹.
    pub reference_energy_cm1: f64,
    /// Number of levels, reference included.
    pub level_count: usize,
    /// Number of lines.
    pub line_count: usize,
}

/// The optimisation of one spectrum.
#[derive(Debug, Clone, PartialEq)]
pub struct SpeciesResult {
    /// The spectrum.
    pub species: Species,
    /// Levels sorted by energy.
    pub levels: Vec<LevelResult>,
    /// Lines in input order.
    pub lines: Vec<LineResult>,
    /// The systems.
    pub systems: Vec<SystemResult>,
    /// χ² = Σ (residual/u)².
    pub chi_squared: f64,
    /// Degrees of freedom.
    pub degrees_of_freedom: usize,
}

/// How the input rows were selected.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct Selection {
    /// Rows with both level labels.
    pub classified_rows: usize,
    /// Rows without labels (unassigned lines).
    pub unassigned_rows: usize,
    /// Rows not accepted (a lower rank, or `accept` = no).
    pub not_accepted: usize,
    /// Accepted blends left out.
    pub blends_omitted: usize,
    /// Accepted blends kept with a widened uncertainty.
    pub blends_widened: usize,
    /// Lines used.
    pub used: usize,
}

impl std::fmt::Display for Selection {
    /// In words, for messages: "3 classified rows and 1 unassigned: 1 not
    /// accepted, 2 accepted blends left out".
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} classified rows and {} unassigned: {} not accepted, {} accepted blends left out",
            self.classified_rows, self.unassigned_rows, self.not_accepted, self.blends_omitted
        )
    }
}

/// The whole optimisation.
#[derive(Debug, Clone, PartialEq)]
pub struct OptimizationReport {
    /// Per species, in order of first appearance.
    pub species: Vec<SpeciesResult>,
    /// How the rows were selected.
    pub selection: Selection,
    /// True when the input had an `accept` column.
    pub by_accept_column: bool,
    /// The species and levels whose every accepted line was a blend left out, so
    /// that they are missing from the results (empty when blends are kept).
    pub lost_to_blends: Vec<BlendLoss>,
}

/// A species, or some levels of one, left without any line because every accepted
/// line they are in is a blend left out (`--blends omit`).
#[derive(Debug, Clone, PartialEq)]
pub struct BlendLoss {
    /// The spectrum.
    pub species: Species,
    /// True when the species has no line left at all.
    pub whole_species: bool,
    /// The levels left without a line, in order of first appearance.
    pub levels: Vec<LevelLabel>,
    /// The blends of the species left out.
    pub blends: usize,
}

/// What leaving out `omitted` (accepted blends) took away from the results made of
/// `chosen`: the species without any line, and the levels without any line.
fn blend_losses(omitted: &[&ClassifiedLine], chosen: &[(&ClassifiedLine, bool)]) -> Vec<BlendLoss> {
    let mut losses: Vec<BlendLoss> = Vec::new();
    for line in omitted {
        let kept: Vec<&ClassifiedLine> = chosen
            .iter()
            .map(|(l, _)| *l)
            .filter(|l| l.species == line.species)
            .collect();
        let position = match losses.iter().position(|l| l.species == line.species) {
            Some(position) => position,
            None => {
                losses.push(BlendLoss {
                    species: line.species,
                    whole_species: kept.is_empty(),
                    levels: Vec::new(),
                    blends: 0,
                });
                losses.len() - 1
            }
        };
        let Some(loss) = losses.get_mut(position) else {
            continue;
        };
        loss.blends += 1;
        for level in [&line.lower, &line.upper] {
            let still_there = kept.iter().any(|l| &l.lower == level || &l.upper == level);
            if !still_there && !loss.levels.contains(level) {
                loss.levels.push(level.clone());
            }
        }
    }
    losses.retain(|l| l.whole_species || !l.levels.is_empty());
    losses
}

/// Why a labelled optimisation failed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SpectrumError {
    /// Nothing left after selection.
    #[error(
        "no line is left to optimise ({0}); accept rows (rank 1, or an `accept` column), \
         or keep blends with --blends widen"
    )]
    NothingSelected(Selection),
    /// The named reference level is in no line.
    #[error("the reference level {0} is not a level of any accepted line")]
    UnknownReference(LevelLabel),
    /// A blend's uncertainty, widened by the blend factor, is so large that its
    /// weight 1/u² vanishes.
    #[error(
        "{location}: the blend's uncertainty {uncertainty_cm1} cm-1 widened by \
         --blend-factor {factor:e} has a weight 1/u² that is not a finite non-zero number; \
         give a smaller factor"
    )]
    WidenedTooFar {
        /// File, line and column of the blend.
        location: Location,
        /// Its uncertainty as read.
        uncertainty_cm1: f64,
        /// The blend factor.
        factor: f64,
    },
    /// The optimisation itself failed.
    #[error(transparent)]
    Optimize(#[from] OptimizeError),
}

/// Optimise the levels of every species in `input`.
pub fn optimize_classified(
    input: &ClassifiedLines,
    options: &OptimizeOptions,
) -> Result<OptimizationReport, SpectrumError> {
    let mut selection = Selection {
        classified_rows: input.lines.len(),
        unassigned_rows: input.unassigned_rows,
        ..Selection::default()
    };
    let mut chosen: Vec<(&ClassifiedLine, bool)> = Vec::new();
    let mut omitted: Vec<&ClassifiedLine> = Vec::new();
    for line in &input.lines {
        if !line.accepted() {
            selection.not_accepted += 1;
        } else if line.blend {
            match options.blends {
                BlendPolicy::Omit => {
                    selection.blends_omitted += 1;
                    omitted.push(line);
                }
                BlendPolicy::Widen(factor) => {
                    let widened = line.uncertainty_cm1 * factor;
                    if !(1.0 / (widened * widened)).is_normal() {
                        return Err(SpectrumError::WidenedTooFar {
                            location: Location::line(input.source.clone(), line.source_line)
                                .column("observed_uncertainty_cm1"),
                            uncertainty_cm1: line.uncertainty_cm1,
                            factor,
                        });
                    }
                    selection.blends_widened += 1;
                    chosen.push((line, true));
                }
            }
        } else {
            chosen.push((line, false));
        }
    }
    selection.used = chosen.len();
    if chosen.is_empty() {
        return Err(SpectrumError::NothingSelected(selection));
    }

    let mut species_order: Vec<Species> = Vec::new();
    for (line, _) in &chosen {
        if !species_order.contains(&line.species) {
            species_order.push(line.species);
        }
    }
    if let Some(reference) = &options.reference
        && !chosen
            .iter()
            .any(|(l, _)| &l.lower == reference || &l.upper == reference)
    {
        return Err(SpectrumError::UnknownReference(reference.clone()));
    }
    let widen = match options.blends {
        BlendPolicy::Widen(factor) => factor,
        BlendPolicy::Omit => 1.0,
    };
    let species = species_order
        .into_iter()
        .map(|species| {
            let lines: Vec<(&ClassifiedLine, bool)> = chosen
                .iter()
                .copied()
                .filter(|(l, _)| l.species == species)
                .collect();
            optimize_species(species, &lines, options, widen)
        })
        .collect::<Result<_, _>>()?;
    Ok(OptimizationReport {
        species,
        selection,
        by_accept_column: input.has_accept_column,
        lost_to_blends: blend_losses(&omitted, &chosen),
    })
}

fn optimize_species(
    species: Species,
    lines: &[(&ClassifiedLine, bool)],
    options: &OptimizeOptions,
    widen: f64,
) -> Result<SpeciesResult, SpectrumError> {
    // Number the levels in order of first appearance; keep the first prior energy.
    let mut index: HashMap<&LevelLabel, usize> = HashMap::new();
    let mut labels: Vec<&LevelLabel> = Vec::new();
    let mut priors: Vec<Option<f64>> = Vec::new();
    for (line, _) in lines {
        for (label, prior) in [
            (&line.lower, line.lower_energy_cm1),
            (&line.upper, line.upper_energy_cm1),
        ] {
            let i = *index.entry(label).or_insert_with(|| {
                labels.push(label);
                priors.push(None);
                labels.len() - 1
            });
            if priors[i].is_none() {
                priors[i] = prior;
            }
        }
    }
    let constraints = lines
        .iter()
        .map(|(line, widened)| LineConstraint {
            lower: index[&line.lower],
            upper: index[&line.upper],
            wavenumber_cm1: line.wavenumber_cm1,
            uncertainty_cm1: line.uncertainty_cm1 * if *widened { widen } else { 1.0 },
        })
        .collect::<Vec<_>>();
    let mut problem = OptimizeProblem::new(priors.clone(), constraints.clone());
    problem.outlier_sigma = options.outlier_sigma;
    problem.reference = options
        .reference
        .as_ref()
        .and_then(|r| index.get(r).copied());
    let solved = optimize_levels(&problem)?;

    let mut levels: Vec<LevelResult> = solved
        .levels
        .iter()
        .enumerate()
        .filter_map(|(i, level)| {
            let level = level.as_ref()?;
            Some(LevelResult {
                label: labels[i].clone(),
                energy_cm1: level.energy_cm1,
                uncertainty_cm1: level.uncertainty_cm1,
                prior_energy_cm1: priors[i],
                line_count: level.line_count,
                system: level.system,
                is_reference: solved.systems[level.system].reference == i,
            })
        })
        .collect();
    levels.sort_by(|a, b| a.energy_cm1.total_cmp(&b.energy_cm1));
    let line_results = lines
        .iter()
        .zip(&constraints)
        .zip(&solved.lines)
        .map(|(((line, widened), constraint), fit)| LineResult {
            line: line.line,
            lower: line.lower.clone(),
            upper: line.upper.clone(),
            observed_cm1: line.wavenumber_cm1,
            uncertainty_cm1: constraint.uncertainty_cm1,
            widened: *widened,
            fit: *fit,
        })
        .collect();
    let systems = solved
        .systems
        .iter()
        .map(|s| SystemResult {
            reference: labels[s.reference].clone(),
            reference_energy_cm1: s.reference_energy_cm1,
            level_count: s.levels.len(),
            line_count: s.line_count,
        })
        .collect();
    Ok(SpeciesResult {
        species,
        levels,
        lines: line_results,
        systems,
        chi_squared: solved.chi_squared,
        degrees_of_freedom: solved.degrees_of_freedom,
    })
}
