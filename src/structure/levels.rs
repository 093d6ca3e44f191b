//! Levels: diagonalisation of each (parity, J) block, LS composition, Landé g and
//! Hellmann–Feynman derivatives.

use nalgebra::SymmetricEigen;
use serde::Serialize;

use super::{LevelStructure, StructureError};
use crate::notation::{HalfInt, Parity};
use crate::units::constants::ELECTRON_SPIN_G;

/// One LS component of a level.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Component {
    /// The LS basis state (index into the parity block's basis).
    pub state: usize,
    /// 100·|⟨γLSJ|ψ⟩|².
    pub percent: f64,
}

/// What [`LevelStructure::levels_with_progress`] reports after each J block.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LevelsProgress {
    /// LS states of the J blocks diagonalised so far.
    pub states_done: usize,
    /// LS states of every J block.
    pub states_total: usize,
}

/// A level of the model.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Level {
    /// Energy in cm⁻¹ (the units of the parameters).
    pub energy_cm1: f64,
    /// Total angular momentum J.
    pub j: HalfInt,
    /// Parity.
    pub parity: Parity,
    /// Index of the parity block in [`LevelStructure::blocks`].
    pub block: usize,
    /// Index of the J block in that parity block.
    pub j_block: usize,
    /// Position among the eigenvalues of the J block, lowest first.
    pub root: usize,
    /// Eigenvector over the J block's LS states; its largest component is positive.
    pub eigenvector: Vec<f64>,
    /// LS composition, largest first; components below 1e-6 % are left out.
    pub composition: Vec<Component>,
    /// Model index of the configuration with the largest total share.
    pub configuration: usize,
    /// Landé g_J (g_s = 2.00231930436256, CODATA 2018).
    pub lande_g: f64,
    /// dE/dP_p = ⟨ψ|C_p|ψ⟩ for every parameter p (Hellmann–Feynman), indexed like
    /// [`LevelStructure::parameters`].
    pub derivatives: Vec<f64>,
}

/// Landé g of a pure LS state with the electron's g_s:
/// g = 1 + (g_s − 1)[J(J+1) − L(L+1) + S(S+1)]/[2J(J+1)] (Landé 1923; Condon &
/// Shortley 1935, §16⁵); 0 for J = 0, which has no magnetic moment.
pub fn lande_g_ls(l: u32, two_s: u32, two_j: u32) -> f64 {
    if two_j == 0 {
        return 0.0;
    }
    let j = two_j as f64 / 2.0;
    let s = two_s as f64 / 2.0;
    let l = l as f64;
    let jj = j * (j + 1.0);
    1.0 + (ELECTRON_SPIN_G - 1.0) * (jj - l * (l + 1.0) + s * (s + 1.0)) / (2.0 * jj)
}

impl LevelStructure {
    /// Every level for parameter `values` (indexed like [`Self::parameters`]),
    /// sorted by energy.
    ///
    /// The Zeeman operator L + g_s S is diagonal in the LS basis within one J, so
    /// g_J = Σ_i |c_i|² g(L_i S_i J) over the eigenvector's components.
    pub fn levels(&self, values: &[f64]) -> Result<Vec<Level>, StructureError> {
        self.levels_with_progress(values, |_| {})
    }

    /// [`Self::levels`], calling `progress` after each (parity, J) block.
    pub fn levels_with_progress(
        &self,
        values: &[f64],
        mut progress: impl FnMut(LevelsProgress),
    ) -> Result<Vec<Level>, StructureError> {
        if values.len() != self.parameters.len() {
            return Err(StructureError::ValueCount {
                expected: self.parameters.len(),
                found: values.len(),
            });
        }
        if let Some(i) = values.iter().position(|v| !v.is_finite()) {
            return Err(StructureError::NotFinite {
                parameter: self.parameters[i].full_name(&self.configurations),
            });
        }
        let mut levels = Vec::new();
        let states_total: usize = self
            .blocks
            .iter()
            .flat_map(|b| b.j_blocks.iter().map(|j| j.states.len()))
            .sum();
        let mut states_done = 0;
        for (b, block) in self.blocks.iter().enumerate() {
            for (jb, j_block) in block.j_blocks.iter().enumerate() {
                let h = j_block.hamiltonian(values);
                let eigen = SymmetricEigen::new(h);
                let mut order: Vec<usize> = (0..eigen.eigenvalues.len()).collect();
                order.sort_by(|&x, &y| eigen.eigenvalues[x].total_cmp(&eigen.eigenvalues[y]));
                // Eigenvectors as columns, lowest first, largest component positive.
                let mut vectors = eigen.eigenvectors.select_columns(&order);
                for mut column in vectors.column_iter_mut() {
                    let largest = column
                        .iter()
                        .copied()
                        .max_by(|a, b| a.abs().total_cmp(&b.abs()))
                        .unwrap_or(1.0);
                    if largest < 0.0 {
                        column.neg_mut();
                    }
                }
                // dE/dP_p for every root at once: diag(Vᵀ C_p V).
                let mut derivatives = vec![vec![0.0; self.parameters.len()]; order.len()];
                for (root, d) in derivatives.iter_mut().enumerate() {
                    let v: Vec<f64> = vectors.column(root).iter().copied().collect();
                    for (p, c) in &j_block.coefficients {
                        d[*p] = c.quadratic_form(&v);
                    }
                }
                for (root, (&e, d)) in order.iter().zip(derivatives).enumerate() {
                    let vector: Vec<f64> = vectors.column(root).iter().copied().collect();
                    levels.push(self.level(b, jb, root, eigen.eigenvalues[e], vector, d));
                }
                states_done += j_block.states.len();
                progress(LevelsProgress {
                    states_done,
                    states_total,
                });
            }
        }
        levels.sort_by(|a, b| a.energy_cm1.total_cmp(&b.energy_cm1));
        Ok(levels)
    }

    fn level(
        &self,
        b: usize,
        jb: usize,
        root: usize,
        energy: f64,
        vector: Vec<f64>,
        derivatives: Vec<f64>,
    ) -> Level {
        let block = &self.blocks[b];
        let j_block = &block.j_blocks[jb];
        let mut composition: Vec<Component> = j_block
            .states
            .iter()
            .zip(&vector)
            .map(|(&state, c)| Component {
                state,
                percent: 100.0 * c * c,
            })
            .filter(|c| c.percent > 1e-6)
            .collect();
        composition.sort_by(|a, b| b.percent.total_cmp(&a.percent));
        let lande_g = j_block
            .states
            .iter()
            .zip(&vector)
            .map(|(&s, c)| {
                c * c * lande_g_ls(block.basis[s].l, block.basis[s].two_s, j_block.two_j)
            })
            .sum();
        let mut shares: Vec<(usize, f64)> = Vec::new();
        for (&s, c) in j_block.states.iter().zip(&vector) {
            let config = block.basis[s].configuration;
            match shares.iter_mut().find(|(x, _)| *x == config) {
                Some((_, share)) => *share += c * c,
                None => shares.push((config, c * c)),
            }
        }
        let configuration = shares
            .iter()
            .max_by(|a, b| a.1.total_cmp(&b.1))
            .map_or(0, |s| s.0);
        Level {
            energy_cm1: energy,
            j: HalfInt::from_twice(j_block.two_j),
            parity: block.parity,
            block: b,
            j_block: jb,
            root,
            eigenvector: vector,
            composition,
            configuration,
            lande_g,
            derivatives,
        }
    }

    /// The level's eigenvector on the Slater determinants of its parity block, at
    /// M_J = J: Σ_i c_i Σ_{M_L} ⟨L M_L S (J−M_L)|J J⟩ |γ_i L S M_L (J−M_L)⟩.
    /// For line strengths (one-electron dipole matrix elements between determinants).
    pub fn level_in_determinants(&self, level: &Level) -> Vec<(super::Determinant, f64)> {
        let block = &self.blocks[level.block];
        let j_block = &block.j_blocks[level.j_block];
        let two_j = j_block.two_j as i32;
        let mut sum: std::collections::BTreeMap<super::Determinant, f64> = Default::default();
        for (&s, &c) in j_block.states.iter().zip(&level.eigenvector) {
            if c == 0.0 {
                continue;
            }
            let term = &block.basis[s];
            for m_l in -(term.l as i32)..=term.l as i32 {
                let two_ms = two_j - 2 * m_l;
                if two_ms.unsigned_abs() > term.two_s {
                    continue;
                }
                let cg = crate::angular::clebsch_gordan(
                    2 * term.l,
                    2 * m_l,
                    term.two_s,
                    two_ms,
                    j_block.two_j,
                    two_j,
                )
                .unwrap_or(0.0);
                if cg == 0.0 {
                    continue;
                }
                for (d, x) in block.state_in_determinants(s, m_l, two_ms) {
                    *sum.entry(d).or_default() += c * cg * x;
                }
            }
        }
        sum.into_iter().filter(|(_, x)| x.abs() > 1e-13).collect()
    }
}
