//! The electric-dipole operator of a level model, built once per structure as
//! coefficient matrices of the radial dipole integrals, like the Hamiltonian.
//!
//! # How
//!
//! 1. Both parity blocks are written on one common set of spin-orbitals (the
//!    orbitals open in either block). A block's own determinants leave out the
//!    subshells closed in all its configurations; here those are put back in front,
//!    |core⟩|open⟩, and reordered into ascending spin-orbital order with the
//!    permutation's sign, so that every determinant of a block carries the same
//!    convention the block's Hamiltonian was built with.
//! 2. D_q = Σ_i r_i C¹_q(i) acts on one electron: between spin-orbitals of equal
//!    spin, ⟨n l m|r C¹_q|n' l' m'⟩ = ⟨nl|r|n'l'⟩ c¹(l m, l' m'), with q = m − m'
//!    and c¹ the Condon–Shortley coefficient (Condon & Shortley 1935, §6⁹). Applied
//!    to a determinant it gives the determinants with one electron moved, with the
//!    anticommutation sign.
//! 3. For each pair of LS basis states |γLS⟩ (even) and |γ'L'S⟩ (odd), one matrix
//!    element between the stretched states M_L = L, M_L' = L', M_S = S, with
//!    q = L − L', gives the reduced element by the Wigner–Eckart theorem (spin is a
//!    spectator): ⟨γLS M_L|D_q|γ'L'S M_L'⟩ = (−1)^(L−M_L) (L 1 L'; −M_L q M_L')
//!    ⟨γLS‖D‖γ'L'S⟩ (Edmonds 1957, eq. 5.4.1). This is done per radial integral.
//! 4. Coupling with S to J (L coupled first, as in the level model's basis):
//!    ⟨γLSJ‖D‖γ'L'SJ'⟩ = (−1)^(L+S+J'+1) √((2J+1)(2J'+1)) {L J S; J' L' 1}
//!    ⟨γLS‖D‖γ'L'S⟩ (Edmonds 1957, eq. 7.1.7). These are the coefficient matrices
//!    of every (even J, odd J') pair with |J − J'| ≤ 1, not 0–0.
//!
//! For parameter values and dipole integrals, the reduced elements between levels
//! are V_evenᵀ (Σ_P P·C_P) V_odd, and the line strength is their square:
//! S = Σ_{M,M',q} |⟨γJM|D_q|γ'J'M'⟩|² = |⟨γJ‖D‖γ'J'⟩|², in e²a₀² when P is in bohr.

use std::collections::HashMap;

use nalgebra::DMatrix;

use super::TransitionError;
use crate::angular::{CkTable, six_j, three_j};
use crate::notation::Parity;
use crate::structure::{
    Determinant, DipoleIntegral, LevelStructure, Orbital, ParityBlock, SpinOrbitalLayout,
};

/// Coefficients smaller than this are zeros blurred by rounding.
const ZERO: f64 = 1e-12;

/// What [`DipoleOperator::build_with_progress`] reports: LS states of the odd
/// block done, of all.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DipoleProgress {
    /// Odd LS states whose matrix elements are done.
    pub done: usize,
    /// Odd LS states in all.
    pub total: usize,
}

/// The dipole coefficient matrices of one (even J, odd J') pair.
#[derive(Debug, Clone)]
pub struct JPair {
    /// Index of the J block in the even parity block.
    pub even_j_block: usize,
    /// Index of the J block in the odd parity block.
    pub odd_j_block: usize,
    /// (integral index, matrix over even J states × odd J states) of the reduced
    /// elements ⟨γLSJ‖D‖γ'L'SJ'⟩ per bohr of that integral.
    pub coefficients: Vec<(usize, DMatrix<f64>)>,
}

/// A configuration pair whose lines need a dipole integral (model indices).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct IntegralUse {
    /// The even configuration.
    pub even: usize,
    /// The odd configuration.
    pub odd: usize,
}

/// The value of integral `slot` of [`DipoleOperator::integrals`] for the lines
/// between configurations `even` and `odd` only (model indices).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PairValue {
    /// Index in [`DipoleOperator::integrals`].
    pub slot: usize,
    /// The even configuration.
    pub even: usize,
    /// The odd configuration.
    pub odd: usize,
    /// ⟨a|r|b⟩, bohr.
    pub value: f64,
}

/// The E1 operator between the two parity blocks of a level structure.
#[derive(Debug, Clone)]
pub struct DipoleOperator {
    blocks: Option<(usize, usize)>,
    integrals: Vec<DipoleIntegral>,
    uses: Vec<IntegralUse>,
    /// Per integral, every configuration pair whose lines need it.
    all_uses: Vec<Vec<IntegralUse>>,
    pairs: Vec<JPair>,
}

/// Both blocks on a common spin-orbital layout.
pub(crate) struct CommonLayout {
    pub layout: SpinOrbitalLayout,
    /// Per block: local spin-orbital index → common index.
    maps: [Vec<usize>; 2],
    /// Per block: its closed core on the common layout.
    cores: [Determinant; 2],
}

impl CommonLayout {
    /// The common layout of `blocks` (even, odd) of `structure`.
    pub(crate) fn new(
        structure: &LevelStructure,
        blocks: [&ParityBlock; 2],
    ) -> Result<CommonLayout, TransitionError> {
        let mut orbitals: Vec<Orbital> = blocks
            .iter()
            .flat_map(|b| b.layout().orbitals().iter().copied())
            .collect();
        orbitals.sort();
        orbitals.dedup();
        let layout = SpinOrbitalLayout::new(orbitals.clone()).ok_or_else(|| {
            TransitionError::TooManyOrbitals {
                spin_orbitals: orbitals.iter().map(|o| 2 * (2 * o.l as usize + 1)).sum(),
            }
        })?;
        let mut maps: [Vec<usize>; 2] = [Vec::new(), Vec::new()];
        let mut cores = [Determinant::empty(); 2];
        for (side, block) in blocks.iter().enumerate() {
            let local = block.layout();
            maps[side] = (0..local.len())
                .map(|i| {
                    let s = local.spin_orbital(i);
                    let orbital = local.orbitals()[s.shell];
                    let shell = layout.shell_index(orbital).unwrap_or(0);
                    layout.index(shell, s.m_l, s.two_m_s)
                })
                .collect();
            // Orbitals open in the other block only: closed here in every
            // configuration, or absent from every one.
            let first = &structure.configurations()[block.configurations[0]];
            for (shell, orbital) in layout.orbitals().iter().enumerate() {
                if local.shell_index(*orbital).is_some() {
                    continue;
                }
                let closed = first
                    .subshells()
                    .any(|s| s.n == orbital.n && s.l == orbital.l && s.is_closed());
                if closed {
                    for i in 0..2 * (2 * orbital.l as usize + 1) {
                        cores[side].insert(layout.offset(shell) + i);
                    }
                }
            }
        }
        Ok(CommonLayout {
            layout,
            maps,
            cores,
        })
    }

    /// A determinant of block `side` (0 even, 1 odd) on the common layout, with the
    /// sign of reordering |core⟩|open⟩ into ascending order.
    pub(crate) fn to_common(&self, side: usize, det: &Determinant) -> (Determinant, f64) {
        let mut open = Determinant::empty();
        for i in det.occupied() {
            open.insert(self.maps[side][i]);
        }
        let core = &self.cores[side];
        let swaps: u32 = core.occupied().map(|c| open.count_below(c)).sum();
        let sign = if swaps.is_multiple_of(2) { 1.0 } else { -1.0 };
        (open.union(core), sign)
    }

    /// A vector of block `side` on the common layout, sorted by determinant.
    pub(crate) fn vector_to_common(
        &self,
        side: usize,
        vector: &[(Determinant, f64)],
    ) -> Vec<(Determinant, f64)> {
        let mut out: Vec<(Determinant, f64)> = vector
            .iter()
            .map(|(d, c)| {
                let (d, sign) = self.to_common(side, d);
                (d, sign * c)
            })
            .collect();
        out.sort_by_key(|a| a.0);
        out
    }
}

/// One step of D_q on a spin-orbital: to `target`, through radial integral
/// `integral`, with angular factor `angular` = c¹(l m, l' m').
#[derive(Debug, Clone, Copy)]
pub(crate) struct Hop {
    pub target: usize,
    pub integral: usize,
    pub angular: f64,
}

/// For every spin-orbital r and q ∈ {−1, 0, 1} (index q + 1), the spin-orbitals p
/// that D_q takes it to, and the integral list.
pub(crate) fn hops(layout: &SpinOrbitalLayout) -> (Vec<[Vec<Hop>; 3]>, Vec<DipoleIntegral>) {
    let orbitals = layout.orbitals();
    let mut integrals: Vec<DipoleIntegral> = Vec::new();
    for (i, a) in orbitals.iter().enumerate() {
        for b in &orbitals[i + 1..] {
            if let Some(p) = DipoleIntegral::new(*a, *b) {
                integrals.push(p);
            }
        }
    }
    integrals.sort();
    let max_l = orbitals.iter().map(|o| o.l).max().unwrap_or(0);
    let ck = CkTable::new(max_l);
    let table = (0..layout.len())
        .map(|r| {
            let from = layout.spin_orbital(r);
            let mut by_q: [Vec<Hop>; 3] = [Vec::new(), Vec::new(), Vec::new()];
            for (q_index, hops) in by_q.iter_mut().enumerate() {
                let q = q_index as i32 - 1;
                let m = from.m_l + q;
                for (shell, orbital) in orbitals.iter().enumerate() {
                    let Some(integral) = DipoleIntegral::new(orbitals[from.shell], *orbital) else {
                        continue;
                    };
                    if m.unsigned_abs() > orbital.l {
                        continue;
                    }
                    let angular = ck.get(orbital.l, m, from.l, from.m_l, 1);
                    if angular.abs() < ZERO {
                        continue;
                    }
                    hops.push(Hop {
                        target: layout.index(shell, m, from.two_m_s),
                        integral: integrals.binary_search(&integral).unwrap_or(0),
                        angular,
                    });
                }
            }
            by_q
        })
        .collect();
    (table, integrals)
}

/// D_q applied to `vector`: determinant → coefficient of each integral (stride
/// `n_integrals`).
pub(crate) fn apply(
    vector: &[(Determinant, f64)],
    hops: &[[Vec<Hop>; 3]],
    q: i32,
    n_integrals: usize,
) -> (HashMap<Determinant, usize>, Vec<f64>) {
    let mut index: HashMap<Determinant, usize> = HashMap::new();
    let mut values: Vec<f64> = Vec::new();
    let q_index = (q + 1) as usize;
    for (det, c) in vector {
        for r in det.occupied() {
            for hop in &hops[r][q_index] {
                let Some((sign, moved)) = det.excite(r, hop.target) else {
                    continue;
                };
                let row = *index.entry(moved).or_insert_with(|| {
                    values.extend(std::iter::repeat_n(0.0, n_integrals));
                    values.len() / n_integrals - 1
                });
                values[row * n_integrals + hop.integral] += c * sign * hop.angular;
            }
        }
    }
    (index, values)
}

impl DipoleOperator {
    /// Build the operator of `structure` (no parameter values needed).
    pub fn build(structure: &LevelStructure) -> Result<DipoleOperator, TransitionError> {
        Self::build_with_progress(structure, |_| {})
    }

    /// [`Self::build`], calling `progress` as the odd LS states are done.
    pub fn build_with_progress(
        structure: &LevelStructure,
        mut progress: impl FnMut(DipoleProgress),
    ) -> Result<DipoleOperator, TransitionError> {
        let find = |parity| structure.blocks().iter().position(|b| b.parity == parity);
        let (Some(even), Some(odd)) = (find(Parity::Even), find(Parity::Odd)) else {
            return Ok(DipoleOperator {
                blocks: None,
                integrals: Vec::new(),
                uses: Vec::new(),
                all_uses: Vec::new(),
                pairs: Vec::new(),
            });
        };
        let blocks = [&structure.blocks()[even], &structure.blocks()[odd]];
        let common = CommonLayout::new(structure, blocks)?;
        let (hops, all_integrals) = hops(&common.layout);
        let n_int = all_integrals.len().max(1);

        // Stretched LS states (M_L = L, M_S = S) of both blocks on common determinants.
        let stretched = |side: usize| -> Vec<Vec<(Determinant, f64)>> {
            let block = blocks[side];
            let requests: Vec<(usize, i32, i32)> = block
                .basis
                .iter()
                .enumerate()
                .map(|(t, term)| (t, term.l as i32, term.two_s as i32))
                .collect();
            block
                .states_in_determinants(&requests)
                .iter()
                .map(|v| common.vector_to_common(side, v))
                .collect()
        };
        let even_states = stretched(0);
        let odd_states = stretched(1);
        let (even_basis, odd_basis) = (&blocks[0].basis, &blocks[1].basis);

        // Reduced LS elements per integral: reduced[k][(even, odd)].
        let mut reduced: Vec<DMatrix<f64>> =
            vec![DMatrix::zeros(even_basis.len(), odd_basis.len()); n_int];
        let mut by_ls: HashMap<(u32, u32), Vec<usize>> = HashMap::new();
        for (t, term) in even_basis.iter().enumerate() {
            by_ls.entry((term.l, term.two_s)).or_default().push(t);
        }
        for (o, odd_term) in odd_basis.iter().enumerate() {
            for q in -1..=1 {
                let l_even = odd_term.l as i32 + q;
                if l_even < 0 || (l_even == 0 && odd_term.l == 0) {
                    continue;
                }
                let Some(partners) = by_ls.get(&(l_even as u32, odd_term.two_s)) else {
                    continue;
                };
                let (index, image) = apply(&odd_states[o], &hops, q, n_int);
                if index.is_empty() {
                    continue;
                }
                let l_even = l_even as u32;
                // (L 1 L'; −L q L'), the Wigner–Eckart factor at M_L = L.
                let factor = three_j(
                    [2 * l_even, 2, 2 * odd_term.l],
                    [-2 * l_even as i32, 2 * q, 2 * odd_term.l as i32],
                )
                .unwrap_or(0.0);
                if factor.abs() < ZERO {
                    continue;
                }
                for &e in partners {
                    let mut sums = vec![0.0; n_int];
                    for (det, c) in &even_states[e] {
                        if let Some(&row) = index.get(det) {
                            for (s, v) in sums.iter_mut().zip(&image[row * n_int..]) {
                                *s += c * v;
                            }
                        }
                    }
                    for (k, s) in sums.iter().enumerate() {
                        if s.abs() > ZERO {
                            reduced[k][(e, o)] = s / factor;
                        }
                    }
                }
            }
            progress(DipoleProgress {
                done: o + 1,
                total: odd_basis.len(),
            });
        }

        // Which integrals act, and between which configurations.
        let mut used: Vec<usize> = Vec::new();
        let mut uses: Vec<IntegralUse> = Vec::new();
        let mut all_uses: Vec<Vec<IntegralUse>> = Vec::new();
        for (k, matrix) in reduced.iter().enumerate() {
            let mut pairs: Vec<IntegralUse> = Vec::new();
            for (position, _) in matrix.iter().enumerate().filter(|(_, x)| x.abs() > ZERO) {
                let (e, o) = (position % matrix.nrows(), position / matrix.nrows());
                let pair = IntegralUse {
                    even: even_basis[e].configuration,
                    odd: odd_basis[o].configuration,
                };
                if !pairs.contains(&pair) {
                    pairs.push(pair);
                }
            }
            if let Some(first) = pairs.first() {
                used.push(k);
                uses.push(*first);
                all_uses.push(pairs);
            }
        }
        let integrals: Vec<DipoleIntegral> = used.iter().map(|&k| all_integrals[k]).collect();

        // Couple to J.
        let mut pairs = Vec::new();
        for (je, even_j) in blocks[0].j_blocks.iter().enumerate() {
            for (jo, odd_j) in blocks[1].j_blocks.iter().enumerate() {
                let (two_je, two_jo) = (even_j.two_j, odd_j.two_j);
                if two_je.abs_diff(two_jo) > 2 || (two_je == 0 && two_jo == 0) {
                    continue;
                }
                let weight = (((two_je + 1) * (two_jo + 1)) as f64).sqrt();
                let mut coefficients = Vec::new();
                for (slot, &k) in used.iter().enumerate() {
                    let mut matrix = DMatrix::zeros(even_j.states.len(), odd_j.states.len());
                    let mut any = false;
                    for (i, &e) in even_j.states.iter().enumerate() {
                        for (j, &o) in odd_j.states.iter().enumerate() {
                            let r = reduced[k][(e, o)];
                            if r == 0.0 {
                                continue;
                            }
                            let (te, to) = (&even_basis[e], &odd_basis[o]);
                            if te.two_s != to.two_s {
                                continue;
                            }
                            let two_s = te.two_s;
                            let symbol = six_j([2 * te.l, two_je, two_s, two_jo, 2 * to.l, 2])
                                .unwrap_or(0.0);
                            if symbol == 0.0 {
                                continue;
                            }
                            // (−1)^(L+S+J'+1); L + S + J' is an integer.
                            let exponent = (2 * te.l + two_s + two_jo + 2) / 2;
                            let phase = if exponent % 2 == 0 { 1.0 } else { -1.0 };
                            matrix[(i, j)] = phase * weight * symbol * r;
                            any = true;
                        }
                    }
                    if any {
                        coefficients.push((slot, matrix));
                    }
                }
                if !coefficients.is_empty() {
                    pairs.push(JPair {
                        even_j_block: je,
                        odd_j_block: jo,
                        coefficients,
                    });
                }
            }
        }
        Ok(DipoleOperator {
            blocks: Some((even, odd)),
            integrals,
            uses,
            all_uses,
            pairs,
        })
    }

    /// The (even, odd) parity block indices in [`LevelStructure::blocks`], or `None`
    /// when the model has configurations of one parity only (no E1 lines).
    pub fn blocks(&self) -> Option<(usize, usize)> {
        self.blocks
    }

    /// The radial dipole integrals the lines need, in order.
    pub fn integrals(&self) -> &[DipoleIntegral] {
        &self.integrals
    }

    /// For each integral of [`Self::integrals`], one pair of configurations whose
    /// lines need it (for messages).
    pub fn uses(&self) -> &[IntegralUse] {
        &self.uses
    }

    /// For each integral of [`Self::integrals`], every pair of configurations whose
    /// lines need it.
    pub fn all_uses(&self) -> &[Vec<IntegralUse>] {
        &self.all_uses
    }

    /// [`Self::values_from`] with values for single configuration pairs too
    /// (`pairs`: integral, configuration pair in either order, bohr). An integral
    /// needs its plain value only when some pair that needs it has no value of its
    /// own (else the plain value is unused and 0 stands for it); values for pairs
    /// whose lines do not need the integral are left out.
    pub fn values_with_pairs_from(
        &self,
        structure: &LevelStructure,
        given: &[(DipoleIntegral, f64)],
        pairs: &[(DipoleIntegral, (usize, usize), f64)],
    ) -> Result<(Vec<f64>, Vec<PairValue>), TransitionError> {
        let mut pair_values = Vec::new();
        for &(integral, (a, b), value) in pairs {
            let Some(slot) = self.integrals.iter().position(|i| *i == integral) else {
                continue;
            };
            let Some(used) = self.all_uses[slot]
                .iter()
                .find(|u| (u.even, u.odd) == (a, b) || (u.even, u.odd) == (b, a))
            else {
                continue;
            };
            if !value.is_finite() {
                return Err(TransitionError::NotFinite { integral, value });
            }
            pair_values.push(PairValue {
                slot,
                even: used.even,
                odd: used.odd,
                value,
            });
        }
        let covered = |slot: usize| {
            self.all_uses[slot].iter().all(|u| {
                pair_values
                    .iter()
                    .any(|p| p.slot == slot && (p.even, p.odd) == (u.even, u.odd))
            })
        };
        let plain: Vec<(DipoleIntegral, f64)> = self
            .integrals
            .iter()
            .enumerate()
            .filter(|(slot, i)| covered(*slot) && !given.iter().any(|(g, _)| g == *i))
            .map(|(_, i)| (*i, 0.0))
            .chain(given.iter().copied())
            .collect();
        Ok((self.values_from(structure, &plain)?, pair_values))
    }

    /// The coefficient matrices of every (even J, odd J') pair that has any.
    pub fn pairs(&self) -> &[JPair] {
        &self.pairs
    }

    /// The values of [`Self::integrals`] taken from `given` (bohr); an error names
    /// the first integral missing and a configuration pair that needs it.
    pub fn values_from(
        &self,
        structure: &LevelStructure,
        given: &[(DipoleIntegral, f64)],
    ) -> Result<Vec<f64>, TransitionError> {
        self.integrals
            .iter()
            .zip(&self.uses)
            .map(|(integral, used)| {
                let found = given.iter().find(|(i, _)| i == integral).map(|(_, v)| *v);
                match found {
                    Some(v) if v.is_finite() => Ok(v),
                    Some(v) => Err(TransitionError::NotFinite {
                        integral: *integral,
                        value: v,
                    }),
                    None => Err(TransitionError::MissingDipole {
                        integral: *integral,
                        even: structure.configurations()[used.even].to_string(),
                        odd: structure.configurations()[used.odd].to_string(),
                    }),
                }
            })
            .collect()
    }
}
