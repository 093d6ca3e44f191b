//! The predicted spectrum of a level model: labelled levels and every E1 line
//! between them with its strength, gf, A and flags.

use nalgebra::DMatrix;
use serde::Serialize;

use super::TransitionError;
use super::operator::{DipoleOperator, PairValue};
use super::rates::{transition_probability, weighted_oscillator_strength};
use crate::levels::{LevelLabel, SelectionRules, TransitionFlags, e1};
use crate::notation::Term;
use crate::structure::{Level, LevelStructure};

/// A level of the model with its label.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LabelledLevel {
    /// The level as the structure computed it (energy on the model's scale).
    pub level: Level,
    /// Its name: an LS basis state with J (see [`unique_labels`]).
    pub label: LevelLabel,
    /// The share of that LS state in the level, percent.
    pub label_percent: f64,
    /// Energy on the model's own scale, cm⁻¹: the zero of its E_av parameters, the
    /// scale of `termsight levels` and `fit` (not shifted to the lowest level).
    pub energy_cm1: f64,
}

/// One predicted E1 line of a level model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelLine {
    /// Index of the lower level in [`ModelSpectrum::levels`].
    pub lower: usize,
    /// Index of the upper level.
    pub upper: usize,
    /// Vacuum wavenumber σ = E_upper − E_lower, cm⁻¹ (> 0).
    pub wavenumber_cm1: f64,
    /// Line strength S = |⟨upper‖D‖lower⟩|², atomic units e²a₀².
    pub strength: f64,
    /// Weighted oscillator strength g_lower·f (see [`super::rates`]).
    pub gf: f64,
    /// Einstein A of spontaneous emission upper → lower, s⁻¹.
    pub a_per_s: f64,
    /// The LS and one-electron rules the line breaks, judged on the two labels
    /// (their leading components): [`TransitionFlags`].
    pub flags: TransitionFlags,
}

impl ModelLine {
    /// True when the labels break none of the LS and one-electron rules
    /// (the flag `LS-allowed`).
    pub fn is_ls_allowed(&self) -> bool {
        self.flags == TransitionFlags::default()
    }

    /// The names of the line's flags, for outputs: `LS-allowed`, or those of the
    /// rules broken (`intercombination`, `L-forbidden`, `jump-forbidden`,
    /// `two-electron-jump`).
    pub fn flag_names(&self) -> Vec<&'static str> {
        if self.is_ls_allowed() {
            return vec!["LS-allowed"];
        }
        self.flags.names()
    }
}

/// The levels and lines of a level model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelSpectrum {
    /// Every level, by energy.
    pub levels: Vec<LabelledLevel>,
    /// Every pair of levels of opposite parity with ΔJ = 0, ±1 (not 0–0) and
    /// different energies, by wavenumber, except between J blocks that the dipole
    /// operator does not connect at all (S = 0 exactly). Other lines the model
    /// gives no strength have S = 0 within rounding.
    pub lines: Vec<ModelLine>,
}

/// Names for the levels that are unique within the model: within each (parity, J)
/// block, the LS basis states are given to the levels in order of decreasing share
/// |c|², each state to one level. Every level so gets its leading component,
/// except where two levels share a leading component: the one with the larger
/// share keeps it, and the other takes its largest free component (the way level
/// tables keep labels unique; common practice, no source). Returns the label and
/// its share in percent, per level.
pub fn unique_labels(structure: &LevelStructure, levels: &[Level]) -> Vec<(LevelLabel, f64)> {
    let mut chosen: Vec<Option<(usize, f64)>> = vec![None; levels.len()];
    let mut groups: std::collections::BTreeMap<(usize, usize), Vec<usize>> = Default::default();
    for (i, level) in levels.iter().enumerate() {
        groups
            .entry((level.block, level.j_block))
            .or_default()
            .push(i);
    }
    for ((block, j_block), members) in groups {
        let states = &structure.blocks()[block].j_blocks[j_block].states;
        let mut shares: Vec<(f64, usize, usize)> = Vec::new();
        for &i in &members {
            for (local, c) in levels[i].eigenvector.iter().enumerate() {
                shares.push((c * c, i, local));
            }
        }
        shares.sort_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
        let mut taken = vec![false; states.len()];
        for (share, i, local) in shares {
            if chosen[i].is_none() && !taken[local] {
                taken[local] = true;
                chosen[i] = Some((states[local], 100.0 * share));
            }
        }
    }
    levels
        .iter()
        .zip(chosen)
        .map(|(level, choice)| {
            let (state, percent) = choice.unwrap_or((0, 0.0));
            let term = structure.state_label(level.block, state);
            let label = LevelLabel {
                configuration: term.configuration.clone(),
                term: Term::Ls(term.term),
                j: level.j,
            };
            (label, percent)
        })
        .collect()
}

/// The spectrum of `structure` for parameter values `values` (indexed like
/// [`LevelStructure::parameters`]) and dipole integrals `dipole` (bohr, indexed like
/// [`DipoleOperator::integrals`]).
pub fn model_spectrum(
    structure: &LevelStructure,
    operator: &DipoleOperator,
    values: &[f64],
    dipole: &[f64],
) -> Result<ModelSpectrum, TransitionError> {
    model_spectrum_with_pairs(structure, operator, values, dipole, &[])
}

/// [`model_spectrum`] with some integrals taking another value between single
/// configuration pairs ([`DipoleOperator::values_with_pairs_from`]): each
/// coefficient of an integral belongs to one LS state of each parity, so to one
/// configuration of each, and takes the value of that pair.
pub fn model_spectrum_with_pairs(
    structure: &LevelStructure,
    operator: &DipoleOperator,
    values: &[f64],
    dipole: &[f64],
    pair_values: &[PairValue],
) -> Result<ModelSpectrum, TransitionError> {
    if dipole.len() != operator.integrals().len() {
        return Err(TransitionError::DipoleCount {
            expected: operator.integrals().len(),
            found: dipole.len(),
        });
    }
    let levels = structure.levels(values)?;
    let labels = unique_labels(structure, &levels);
    let labelled: Vec<LabelledLevel> = levels
        .into_iter()
        .zip(labels)
        .map(|(level, (label, label_percent))| LabelledLevel {
            energy_cm1: level.energy_cm1,
            level,
            label,
            label_percent,
        })
        .collect();
    let mut lines = Vec::new();
    if let Some((even, odd)) = operator.blocks() {
        // Levels of each J block, ordered by root, and their eigenvectors as columns.
        let members = |block: usize, j_block: usize| -> (Vec<usize>, DMatrix<f64>) {
            let mut idx: Vec<usize> = (0..labelled.len())
                .filter(|&i| {
                    labelled[i].level.block == block && labelled[i].level.j_block == j_block
                })
                .collect();
            idx.sort_by_key(|&i| labelled[i].level.root);
            let n = structure.blocks()[block].j_blocks[j_block].states.len();
            let vectors =
                DMatrix::from_fn(n, idx.len(), |r, c| labelled[idx[c]].level.eigenvector[r]);
            (idx, vectors)
        };
        for pair in operator.pairs() {
            let (even_levels, even_vectors) = members(even, pair.even_j_block);
            let (odd_levels, odd_vectors) = members(odd, pair.odd_j_block);
            let mut operator_matrix = DMatrix::zeros(even_vectors.nrows(), odd_vectors.nrows());
            // The configuration of each J state of the two blocks.
            let configurations = |block: usize, j_block: usize| -> Vec<usize> {
                let b = &structure.blocks()[block];
                b.j_blocks[j_block]
                    .states
                    .iter()
                    .map(|&t| b.basis[t].configuration)
                    .collect()
            };
            let (even_configs, odd_configs) = if pair_values.is_empty() {
                (Vec::new(), Vec::new())
            } else {
                (
                    configurations(even, pair.even_j_block),
                    configurations(odd, pair.odd_j_block),
                )
            };
            for (k, matrix) in &pair.coefficients {
                operator_matrix += matrix * dipole[*k];
                for p in pair_values.iter().filter(|p| p.slot == *k) {
                    let change = p.value - dipole[*k];
                    for (i, &ce) in even_configs.iter().enumerate() {
                        for (j, &co) in odd_configs.iter().enumerate() {
                            if (ce, co) == (p.even, p.odd) {
                                operator_matrix[(i, j)] += change * matrix[(i, j)];
                            }
                        }
                    }
                }
            }
            let amplitudes = even_vectors.transpose() * operator_matrix * odd_vectors;
            for (a, &e) in even_levels.iter().enumerate() {
                for (b, &o) in odd_levels.iter().enumerate() {
                    let (ee, eo) = (labelled[e].energy_cm1, labelled[o].energy_cm1);
                    let sigma = (ee - eo).abs();
                    if sigma <= 0.0 {
                        continue;
                    }
                    let (lower, upper) = if ee < eo { (e, o) } else { (o, e) };
                    let strength = amplitudes[(a, b)].powi(2);
                    let g_upper = f64::from(labelled[upper].level.j.multiplicity());
                    let (_, flags) = e1::classify(&labelled[lower].label, &labelled[upper].label);
                    lines.push(ModelLine {
                        lower,
                        upper,
                        wavenumber_cm1: sigma,
                        strength,
                        gf: weighted_oscillator_strength(strength, sigma),
                        a_per_s: transition_probability(strength, sigma, g_upper),
                        flags,
                    });
                }
            }
        }
    }
    lines.sort_by(|a, b| {
        a.wavenumber_cm1
            .total_cmp(&b.wavenumber_cm1)
            .then(a.lower.cmp(&b.lower))
            .then(a.upper.cmp(&b.upper))
    });
    Ok(ModelSpectrum {
        levels: labelled,
        lines,
    })
}

/// The selection rules applied to model lines: the labels are LS labels, so always
/// [`SelectionRules::Ls`].
pub const MODEL_RULES: SelectionRules = SelectionRules::Ls;
