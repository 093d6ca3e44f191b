//! The Hamiltonian of a level model as Σ_p P_p · C_p: one coefficient matrix per
//! parameter, per (parity, J) block, in the LS basis.
//!
//! - Coulomb within a configuration: Racah algebra (module `racah`): unit-tensor
//!   tables of each subshell lⁿ, recoupled along the chain of subshells with 9j
//!   symbols. Coulomb is diagonal in L and S and independent of J, so each (L, S)
//!   matrix serves every J (Condon & Shortley 1935, §7⁶).
//! - Configuration interaction: Slater–Condon rules on the determinants with
//!   M_L = L, M_S = S of each (L, S), projected on the LS states of the
//!   interacting configurations only. `Route::Determinants` does the same for the
//!   Coulomb matrices within configurations: the reference the tests compare the
//!   Racah route with.
//! - Spin–orbit: the double-reduced matrix element ⟨γLS‖Σ l_i s_i‖γ'L'S'⟩ of each
//!   subshell, from its W^(11) table recoupled with 9j symbols (in the determinant
//!   route: from one component, l_z s_z, diagonal in determinants, by the
//!   Wigner–Eckart theorem), and ⟨γLSJ|ζ Σ l·s|γ'L'S'J⟩ =
//!   ζ (−1)^(L'+S+J) {L S J; S' L' 1} ⟨γLS‖V^(11)‖γ'L'S'⟩ (Edmonds 1957, eq. 7.1.6).
//! - Configuration average: each configuration's F^k (k > 0) and G^k matrices have
//!   their trace over the configuration's determinants removed, so that E_av is the
//!   centre of gravity Σ(2J+1)E / N_det (Slater 1960, vol. 1, §14-3); F^0 is
//!   absorbed into E_av. Spin–orbit is traceless by itself.
//! - Between configurations only the two-electron integrals of the open (active)
//!   subshells enter, as R^k; the one-electron part and the passive core are left
//!   out (Brillouin's theorem for Hartree–Fock orbitals; common practice).

use std::collections::{BTreeMap, BTreeSet, HashSet};
use std::sync::Arc;

use nalgebra::DMatrix;
use rustc_hash::FxHashMap;

use super::StructureError;
use super::basis::{BasisTerm, Coupler, DeterminantVector, StateCache, weighted_dot};
use super::orbital::{Determinant, Orbital, SpinOrbitalLayout};
use super::parameter::{ParameterId, Radial, Scope};
use super::racah::ConfigurationRacah;
use crate::angular::{CkTable, six_j, three_j};
use crate::notation::{Configuration, Parity};

/// Coefficients smaller than this are exact zeros blurred by rounding.
const ZERO: f64 = 1e-10;

/// The coefficient matrix of one parameter in one J block, kept sparse: its
/// non-zero elements (both triangles), sorted by (row, column). Coulomb matrices
/// are block-diagonal in (L, S), so most elements of a large block are zero.
#[derive(Debug, Clone, PartialEq)]
pub struct CoefficientMatrix {
    size: usize,
    entries: Vec<(u32, u32, f64)>,
}

/// What indexing returns for an element that is not stored.
static NO_ELEMENT: f64 = 0.0;

impl CoefficientMatrix {
    /// The non-zero elements of a square matrix.
    pub fn from_dense(m: &DMatrix<f64>) -> CoefficientMatrix {
        let mut entries = Vec::new();
        for r in 0..m.nrows() {
            for c in 0..m.ncols() {
                let x = m[(r, c)];
                if x != 0.0 {
                    entries.push((r as u32, c as u32, x));
                }
            }
        }
        CoefficientMatrix {
            size: m.nrows(),
            entries,
        }
    }

    /// From elements (row, column, value) in any order, each given once (of an
    /// element given twice one is kept), zeros left out.
    pub(crate) fn from_elements(size: usize, list: Vec<(u32, u32, f64)>) -> CoefficientMatrix {
        // Rows by counting (every row index is below `size`), then the few
        // columns of each row by sorting.
        let mut starts = vec![0usize; size + 1];
        for &(r, _, _) in &list {
            if let Some(s) = starts.get_mut(r as usize + 1) {
                *s += 1;
            }
        }
        for r in 0..size {
            starts[r + 1] += starts[r];
        }
        let mut next = starts.clone();
        let mut placed = vec![(0, 0, 0.0); starts[size]];
        for e in list {
            if let Some(slot) = next.get_mut(e.0 as usize) {
                placed[*slot] = e;
                *slot += 1;
            }
        }
        for r in 0..size {
            placed[starts[r]..starts[r + 1]].sort_unstable_by_key(|e| e.1);
        }
        let mut entries: Vec<(u32, u32, f64)> = Vec::with_capacity(placed.len());
        for e in placed {
            match entries.last_mut() {
                Some(last) if (last.0, last.1) == (e.0, e.1) => *last = e,
                _ => entries.push(e),
            }
        }
        entries.retain(|e| e.2 != 0.0);
        CoefficientMatrix { size, entries }
    }

    /// The largest |element|.
    pub fn largest(&self) -> f64 {
        self.entries.iter().map(|e| e.2.abs()).fold(0.0, f64::max)
    }

    /// Number of rows (= columns).
    pub fn size(&self) -> usize {
        self.size
    }

    /// The stored elements (row, column, value), sorted by (row, column).
    pub fn entries(&self) -> &[(u32, u32, f64)] {
        &self.entries
    }

    /// The element at (row, column), 0 if not stored.
    pub fn get(&self, row: usize, column: usize) -> f64 {
        self[(row, column)]
    }

    /// The matrix written out in full.
    pub fn to_dense(&self) -> DMatrix<f64> {
        let mut m = DMatrix::zeros(self.size, self.size);
        for &(r, c, x) in &self.entries {
            m[(r as usize, c as usize)] = x;
        }
        m
    }

    /// h += value · C.
    pub fn add_scaled_to(&self, value: f64, h: &mut DMatrix<f64>) {
        for &(r, c, x) in &self.entries {
            h[(r as usize, c as usize)] += value * x;
        }
    }

    /// vᵀ C v.
    pub fn quadratic_form(&self, v: &[f64]) -> f64 {
        self.entries
            .iter()
            .map(|&(r, c, x)| x * v[r as usize] * v[c as usize])
            .sum()
    }
}

impl std::ops::Index<(usize, usize)> for CoefficientMatrix {
    type Output = f64;

    fn index(&self, (row, column): (usize, usize)) -> &f64 {
        self.entries
            .binary_search_by(|&(r, c, _)| (r as usize, c as usize).cmp(&(row, column)))
            .map_or(&NO_ELEMENT, |i| &self.entries[i].2)
    }
}

/// One (parity, J) block of the Hamiltonian.
#[derive(Debug, Clone)]
pub struct JBlock {
    /// Twice J.
    pub two_j: u32,
    /// The LS basis states of the block (indices into [`ParityBlock::basis`]).
    pub states: Vec<usize>,
    /// (parameter index, coefficient matrix) for every parameter that acts here.
    pub coefficients: Vec<(usize, CoefficientMatrix)>,
}

impl JBlock {
    /// H = Σ_p P_p C_p for parameter values `values` (indexed like
    /// [`super::LevelStructure::parameters`]).
    pub fn hamiltonian(&self, values: &[f64]) -> DMatrix<f64> {
        let n = self.states.len();
        let mut h = DMatrix::zeros(n, n);
        for (p, c) in &self.coefficients {
            let value = values[*p];
            if value != 0.0 {
                c.add_scaled_to(value, &mut h);
            }
        }
        h
    }
}

/// The configurations of one parity, their LS basis and their J blocks.
#[derive(Debug, Clone)]
pub struct ParityBlock {
    /// Parity of every configuration here.
    pub parity: Parity,
    /// Model indices of the configurations.
    pub configurations: Vec<usize>,
    /// The LS basis states γLS.
    pub basis: Vec<BasisTerm>,
    /// One block per J, by increasing J.
    pub j_blocks: Vec<JBlock>,
    pub(crate) coupler: Coupler,
}

impl ParityBlock {
    /// The spin-orbitals of the block's open subshells (the determinant basis).
    pub fn layout(&self) -> &SpinOrbitalLayout {
        &self.coupler.layout
    }

    /// Number of Slater determinants of model configuration `configuration`.
    pub fn determinant_count(&self, configuration: usize) -> Option<f64> {
        self.coupler
            .configurations
            .iter()
            .find(|c| c.configuration == configuration)
            .map(|c| c.determinant_count)
    }

    /// The LS state `state` at (M_L, 2M_S) on the block's determinants.
    pub fn state_in_determinants(
        &self,
        state: usize,
        m_l: i32,
        two_m_s: i32,
    ) -> Vec<(Determinant, f64)> {
        let mut cache = StateCache::default();
        self.coupler
            .state(&self.basis[state], m_l, two_m_s, &mut cache)
            .as_ref()
            .clone()
    }

    /// Several LS states on the block's determinants, each given as (state, M_L,
    /// 2M_S), sharing one memo of partial couplings (much faster than calling
    /// [`Self::state_in_determinants`] for each). Each vector is sorted by
    /// determinant.
    pub fn states_in_determinants(
        &self,
        requests: &[(usize, i32, i32)],
    ) -> Vec<Vec<(Determinant, f64)>> {
        let mut cache = StateCache::default();
        requests
            .iter()
            .map(|&(state, m_l, two_m_s)| {
                self.coupler
                    .state(&self.basis[state], m_l, two_m_s, &mut cache)
                    .as_ref()
                    .clone()
            })
            .collect()
    }
}

/// A two-electron radial integral R^k(ab, cd) over block orbital numbers.
type RadialKey = (u32, [usize; 4]);

/// ⟨pq|1/r₁₂|rs⟩ over spin-orbitals = δ(σp,σr) δ(σq,σs) Σ_k c^k(l_p m_p, l_r m_r)
/// c^k(l_s m_s, l_q m_q) R^k(pq, rs) (Condon & Shortley 1935, §6⁶), pushed as
/// (k, orbitals, factor·coefficient).
fn coulomb_integral(
    layout: &SpinOrbitalLayout,
    ck: &CkTable,
    [p, q, r, s]: [usize; 4],
    factor: f64,
    out: &mut Vec<(RadialKey, f64)>,
) {
    let (p, q, r, s) = (
        layout.spin_orbital(p),
        layout.spin_orbital(q),
        layout.spin_orbital(r),
        layout.spin_orbital(s),
    );
    if p.two_m_s != r.two_m_s || q.two_m_s != s.two_m_s || p.m_l + q.m_l != r.m_l + s.m_l {
        return;
    }
    let k_min = p.l.abs_diff(r.l).max(q.l.abs_diff(s.l));
    let k_max = (p.l + r.l).min(q.l + s.l);
    for k in k_min..=k_max {
        if (p.l + r.l + k) % 2 != 0 || (q.l + s.l + k) % 2 != 0 {
            continue;
        }
        let c = ck.get(p.l, p.m_l, r.l, r.m_l, k) * ck.get(s.l, s.m_l, q.l, q.m_l, k);
        if c != 0.0 {
            out.push(((k, [p.shell, q.shell, r.shell, s.shell]), factor * c));
        }
    }
}

/// ⟨D_i|Σ_{i<j} 1/r_ij|D_j⟩ as radial integrals, by the Slater–Condon rules
/// (Slater 1929; Condon 1930).
fn slater_condon(
    layout: &SpinOrbitalLayout,
    ck: &CkTable,
    di: &Determinant,
    dj: &Determinant,
    out: &mut Vec<(RadialKey, f64)>,
) {
    match di.difference_count(dj) {
        0 => {
            let occupied: Vec<usize> = di.occupied().collect();
            for (x, &a) in occupied.iter().enumerate() {
                for &b in &occupied[x + 1..] {
                    coulomb_integral(layout, ck, [a, b, a, b], 1.0, out);
                    coulomb_integral(layout, ck, [a, b, b, a], -1.0, out);
                }
            }
        }
        2 => {
            let (Some(a), Some(c)) = (di.minus(dj).next(), dj.minus(di).next()) else {
                return;
            };
            let Some((sign, _)) = di.excite(a, c) else {
                return;
            };
            for b in di.occupied().filter(|&b| b != a) {
                coulomb_integral(layout, ck, [a, b, c, b], sign, out);
                coulomb_integral(layout, ck, [a, b, b, c], -sign, out);
            }
        }
        4 => {
            let from: Vec<usize> = di.minus(dj).collect();
            let to: Vec<usize> = dj.minus(di).collect();
            let (&[a, b], &[c, d]) = (from.as_slice(), to.as_slice()) else {
                return;
            };
            let Some((s1, step)) = di.excite(a, c) else {
                return;
            };
            let Some((s2, _)) = step.excite(b, d) else {
                return;
            };
            coulomb_integral(layout, ck, [a, b, c, d], s1 * s2, out);
            coulomb_integral(layout, ck, [a, b, d, c], -s1 * s2, out);
        }
        _ => {}
    }
}

/// The parameter a radial integral belongs to, between configurations `ci` and
/// `cj` (model indices); `None` for F^0 within a configuration (absorbed into E_av).
fn parameter_of(key: RadialKey, orbitals: &[Orbital], ci: usize, cj: usize) -> Option<ParameterId> {
    let (k, [p, q, r, s]) = key;
    let o = |i: usize| orbitals[i];
    if ci == cj {
        let radial = if p == r && q == s {
            if k == 0 {
                return None;
            }
            Radial::Direct {
                k,
                a: o(p).min(o(q)),
                b: o(p).max(o(q)),
            }
        } else if p == s && q == r {
            Radial::Exchange {
                k,
                a: o(p).min(o(q)),
                b: o(p).max(o(q)),
            }
        } else {
            // Determinants of one configuration share their subshell occupations,
            // so every integral among them is direct or exchange.
            return None;
        };
        return Some(ParameterId {
            scope: Scope::Configuration(ci),
            radial,
        });
    }
    Some(ParameterId {
        scope: Scope::Interaction(ci.min(cj), ci.max(cj)),
        radial: Radial::interaction(k, o(p), o(q), o(r), o(s)),
    })
}

/// The states of one (L, 2S) and each parameter's matrix over them.
type LsMatrices = (Vec<usize>, BTreeMap<ParameterId, DMatrix<f64>>);

/// Coefficient matrices of one block, keyed by parameter, before indexing.
pub(crate) struct BlockMatrices {
    pub block: ParityBlock,
    pub j_coefficients: Vec<BTreeMap<ParameterId, CoefficientMatrix>>,
}

/// How the matrices within a configuration are made.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Route {
    /// Racah algebra on the subshells' tables ([`super::racah`]); configuration
    /// interaction from determinants.
    Racah,
    /// Everything from the Slater determinants of the whole configuration: the
    /// reference the tests compare the Racah route with.
    #[cfg_attr(not(test), allow(dead_code))]
    Determinants,
}

/// The Coulomb matrices of the states `terms` (basis indices, all of one (L, 2S)),
/// projected from their determinants at M_L = L, M_S = S by the Slater–Condon
/// rules, for the pairs of configurations `keep` accepts: (parameter, matrix over
/// `terms`).
#[allow(clippy::too_many_arguments)]
fn project_on_determinants(
    coupler: &Coupler,
    basis: &[BasisTerm],
    ck: &CkTable,
    orbitals: &[Orbital],
    cache: &mut StateCache,
    (l, two_s): (u32, u32),
    terms: &[usize],
    keep: &dyn Fn(usize, usize) -> bool,
) -> FxHashMap<ParameterId, DMatrix<f64>> {
    let mut entries = Vec::new();
    let mut index: FxHashMap<Determinant, usize> = FxHashMap::default();
    let mut dets: Vec<(Determinant, usize)> = Vec::new();
    let vectors: Vec<_> = terms
        .iter()
        .map(|&t| coupler.state(&basis[t], l as i32, two_s as i32, cache))
        .collect();
    for (&t, v) in terms.iter().zip(&vectors) {
        for (d, _) in v.iter() {
            index.entry(*d).or_insert_with(|| {
                dets.push((*d, basis[t].configuration));
                dets.len() - 1
            });
        }
    }
    let mut v = DMatrix::zeros(dets.len(), terms.len());
    // The non-zero coefficients of each determinant: (term column, value).
    let mut in_terms: Vec<Vec<(usize, f64)>> = vec![Vec::new(); dets.len()];
    for (col, vector) in vectors.iter().enumerate() {
        for (d, c) in vector.iter() {
            v[(index[d], col)] = *c;
            in_terms[index[d]].push((col, *c));
        }
    }
    let mut images: FxHashMap<ParameterId, DMatrix<f64>> = FxHashMap::default();
    for i in 0..dets.len() {
        for j in i..dets.len() {
            let (di, ci) = dets[i];
            let (dj, cj) = dets[j];
            if !keep(ci, cj) {
                continue;
            }
            if di.difference_count(&dj) > 4 {
                continue;
            }
            entries.clear();
            slater_condon(&coupler.layout, ck, &di, &dj, &mut entries);
            for &(key, c) in &entries {
                let Some(id) = parameter_of(key, orbitals, ci, cj) else {
                    continue;
                };
                let w = images
                    .entry(id)
                    .or_insert_with(|| DMatrix::zeros(dets.len(), terms.len()));
                // Only the terms that contain the determinant: the others
                // have an exact zero there.
                for &(col, x) in &in_terms[j] {
                    w[(i, col)] += c * x;
                }
                if i != j {
                    for &(col, x) in &in_terms[i] {
                        w[(j, col)] += c * x;
                    }
                }
            }
        }
    }
    images
        .into_iter()
        .map(|(id, w)| (id, v.transpose() * w))
        .collect()
}

/// Build the basis and coefficient matrices of one parity block.
pub(crate) fn build_block(
    parity: Parity,
    configurations: &[Configuration],
    members: &[usize],
    interactions: &HashSet<(usize, usize)>,
    route: Route,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<BlockMatrices, StructureError> {
    // Active orbitals: every orbital of the block's configurations that is not
    // closed in all of them (those form the common core).
    let mut all: BTreeSet<Orbital> = BTreeSet::new();
    for &c in members {
        for s in configurations[c].subshells() {
            all.insert(Orbital { n: s.n, l: s.l });
        }
    }
    let active: Vec<Orbital> = all
        .into_iter()
        .filter(|o| {
            !members.iter().all(|&c| {
                configurations[c]
                    .subshells()
                    .any(|s| s.n == o.n && s.l == o.l && s.is_closed())
            })
        })
        .collect();
    if let Some(o) = active.iter().find(|o| o.l > super::shell::MAX_SHELL_L) {
        return Err(StructureError::OrbitalTooHigh { orbital: *o });
    }
    let layout = SpinOrbitalLayout::new(active.clone()).ok_or(StructureError::TooManyOrbitals {
        parity,
        spin_orbitals: active.iter().map(|o| 2 * (2 * o.l as usize + 1)).sum(),
    })?;
    let pairs: Vec<(usize, &Configuration)> =
        members.iter().map(|&c| (c, &configurations[c])).collect();
    let coupler = Coupler::new(layout, &pairs);
    let mut basis = Vec::new();
    for local in 0..members.len() {
        basis.extend(coupler.terms(local, parity));
    }
    let orbitals = coupler.layout.orbitals().to_vec();
    let max_l = orbitals.iter().map(|o| o.l).max().unwrap_or(0);
    let ck = CkTable::shared(max_l);
    let mut cache = StateCache::default();

    // Coulomb and configuration interaction per (L, 2S).
    let mut groups: BTreeMap<(u32, u32), Vec<usize>> = BTreeMap::new();
    for (t, term) in basis.iter().enumerate() {
        groups.entry((term.l, term.two_s)).or_default().push(t);
    }
    // ls_matrices[(L,2S)] = (terms, parameter → matrix over those terms).
    let mut ls_matrices: BTreeMap<(u32, u32), LsMatrices> = BTreeMap::new();
    let mut two_js: BTreeSet<u32> = BTreeSet::new();
    for term in &basis {
        let mut j = (2 * term.l).abs_diff(term.two_s);
        while j <= 2 * term.l + term.two_s {
            two_js.insert(j);
            j += 2;
        }
    }
    let steps = groups.len() + two_js.len();
    let mut step = 0;
    // Configurations of the block that interact with another one.
    let interacting: HashSet<usize> = members
        .iter()
        .copied()
        .filter(|&c| {
            members
                .iter()
                .any(|&d| d != c && interactions.contains(&(c.min(d), c.max(d))))
        })
        .collect();
    let racah: Vec<ConfigurationRacah> = match route {
        Route::Racah => coupler
            .configurations
            .iter()
            .map(|c| {
                let open: Vec<(Orbital, u32)> = c
                    .open
                    .iter()
                    .map(|s| (orbitals[s.shell], s.subshell.occupancy))
                    .collect();
                ConfigurationRacah::new(&open, &ck)
            })
            .collect(),
        Route::Determinants => Vec::new(),
    };
    let mut pushed = Vec::new();
    for (&(l, two_s), terms) in &groups {
        step += 1;
        progress(step, steps);
        let size = terms.len();
        let mut matrices: FxHashMap<ParameterId, DMatrix<f64>> = FxHashMap::default();
        if route == Route::Racah {
            for x in 0..size {
                let a = &basis[terms[x]];
                for y in x..size {
                    let b = &basis[terms[y]];
                    if a.local_configuration != b.local_configuration {
                        continue;
                    }
                    pushed.clear();
                    racah[a.local_configuration].coulomb(a, b, &mut pushed);
                    for &(radial, value) in &pushed {
                        let id = ParameterId {
                            scope: Scope::Configuration(a.configuration),
                            radial,
                        };
                        let m = matrices
                            .entry(id)
                            .or_insert_with(|| DMatrix::zeros(size, size));
                        m[(x, y)] += value;
                        if x != y {
                            m[(y, x)] += value;
                        }
                    }
                }
            }
        }
        // The states whose determinants are needed, and which pairs of
        // configurations they serve.
        let projected: Vec<usize> = match route {
            Route::Determinants => (0..size).collect(),
            Route::Racah => (0..size)
                .filter(|&x| interacting.contains(&basis[terms[x]].configuration))
                .collect(),
        };
        let configurations_here: BTreeSet<usize> = projected
            .iter()
            .map(|&x| basis[terms[x]].configuration)
            .collect();
        let needed = match route {
            Route::Determinants => !projected.is_empty(),
            Route::Racah => configurations_here.len() > 1,
        };
        if needed {
            let keep = |ci: usize, cj: usize| {
                let pair = interactions.contains(&(ci.min(cj), ci.max(cj)));
                match route {
                    Route::Determinants => ci == cj || pair,
                    Route::Racah => ci != cj && pair,
                }
            };
            let subset: Vec<usize> = projected.iter().map(|&x| terms[x]).collect();
            let images = project_on_determinants(
                &coupler,
                &basis,
                &ck,
                &orbitals,
                &mut cache,
                (l, two_s),
                &subset,
                &keep,
            );
            for (id, m) in images {
                let target = matrices
                    .entry(id)
                    .or_insert_with(|| DMatrix::zeros(size, size));
                for (i, &x) in projected.iter().enumerate() {
                    for (j, &y) in projected.iter().enumerate() {
                        target[(x, y)] += m[(i, j)];
                    }
                }
            }
        }
        ls_matrices.insert((l, two_s), (terms.clone(), matrices.into_iter().collect()));
    }

    // Configuration averages of F^k and G^k: Σ_t (2L+1)(2S+1) C_tt / N_det.
    let mut averages: FxHashMap<ParameterId, f64> = FxHashMap::default();
    for (&(l, two_s), (terms, matrices)) in &ls_matrices {
        let weight = ((2 * l + 1) * (two_s + 1)) as f64;
        for (id, m) in matrices {
            if let Scope::Configuration(c) = id.scope {
                let trace: f64 = terms
                    .iter()
                    .enumerate()
                    .filter(|(_, t)| basis[**t].configuration == c)
                    .map(|(x, _)| m[(x, x)])
                    .sum();
                *averages.entry(*id).or_default() += weight * trace;
            }
        }
    }
    // Every state of the configuration moves by the average, also in the (L, S)
    // groups where the parameter has no element.
    let mut averages: Vec<(ParameterId, f64)> = averages.into_iter().collect();
    averages.sort_by_key(|a| a.0);
    for (id, sum) in averages {
        let Scope::Configuration(c) = id.scope else {
            continue;
        };
        let n_det = coupler
            .configurations
            .iter()
            .find(|x| x.configuration == c)
            .map_or(1.0, |x| x.determinant_count);
        let average = sum / n_det;
        for (terms, matrices) in ls_matrices.values_mut() {
            if !terms.iter().any(|&t| basis[t].configuration == c) {
                continue;
            }
            let size = terms.len();
            let m = matrices
                .entry(id)
                .or_insert_with(|| DMatrix::zeros(size, size));
            for (x, t) in terms.iter().enumerate() {
                if basis[*t].configuration == c {
                    m[(x, x)] -= average;
                }
            }
        }
    }

    // Spin–orbit double-reduced matrix elements, per configuration and subshell.
    let mut spin_orbit: Vec<(usize, usize, ParameterId, f64)> = Vec::new();
    let mut three_js: FxHashMap<(u32, u32, i32), f64> = FxHashMap::default();
    for (local, config) in coupler.configurations.iter().enumerate() {
        let terms: Vec<usize> = (0..basis.len())
            .filter(|&t| basis[t].local_configuration == local)
            .collect();
        for (position, shell) in config
            .open
            .iter()
            .enumerate()
            .filter(|(_, s)| s.subshell.l > 0)
        {
            let id = ParameterId {
                scope: Scope::Configuration(config.configuration),
                radial: Radial::SpinOrbit {
                    a: orbitals[shell.shell],
                },
            };
            let layout = &coupler.layout;
            let weight = |d: &Determinant| -> f64 {
                d.occupied()
                    .map(|i| layout.spin_orbital(i))
                    .filter(|s| s.shell == shell.shell)
                    .map(|s| s.m_l as f64 * s.two_m_s as f64 / 2.0)
                    .sum()
            };
            // Each state at each (M_L, 2M_S) asked, plain and weighted by l_z s_z
            // of this subshell, made once.
            let mut plain: FxHashMap<(usize, i32, i32), Arc<DeterminantVector>> =
                FxHashMap::default();
            let mut weighted: FxHashMap<(usize, i32, i32), DeterminantVector> =
                FxHashMap::default();
            for (x, &t) in terms.iter().enumerate() {
                for &u in &terms[x..] {
                    let (a, b) = (&basis[t], &basis[u]);
                    if a.l.abs_diff(b.l) > 1 || a.two_s.abs_diff(b.two_s) > 2 {
                        continue;
                    }
                    // An operator of this subshell alone keeps the terms of the other
                    // subshells and the couplings made before this one (Edmonds
                    // 1957, eqs. 7.1.7–7.1.8): the element is exactly zero otherwise.
                    let others_differ = (0..config.open.len())
                        .any(|o| o != position && a.shell_terms[o] != b.shell_terms[o])
                        || a.couplings[..position] != b.couplings[..position];
                    if others_differ {
                        continue;
                    }
                    if route == Route::Racah {
                        let reduced = racah[local].spin_orbit(a, b, position);
                        if reduced.abs() > ZERO {
                            spin_orbit.push((t, u, id, reduced));
                        }
                        continue;
                    }
                    let ml = a.l.min(b.l) as i32;
                    let ms = a.two_s.min(b.two_s) as i32;
                    let mut three = |j1: u32, j3: u32, m: i32| {
                        *three_js
                            .entry((j1, j3, m))
                            .or_insert_with(|| three_j([j1, 2, j3], [-m, 0, m]).unwrap_or(0.0))
                    };
                    let factor = phase((a.l as i32 - ml) as i64)
                        * three(2 * a.l, 2 * b.l, 2 * ml)
                        * phase(((a.two_s as i32 - ms) / 2) as i64)
                        * three(a.two_s, b.two_s, ms);
                    if factor.abs() < 1e-14 {
                        continue;
                    }
                    let va = weighted.entry((t, ml, ms)).or_insert_with(|| {
                        coupler
                            .state(a, ml, ms, &mut cache)
                            .iter()
                            .map(|&(d, c)| (d, c * weight(&d)))
                            .collect()
                    });
                    let vb = plain
                        .entry((u, ml, ms))
                        .or_insert_with(|| coupler.state(b, ml, ms, &mut cache));
                    let component = weighted_dot(va, vb, |_| 1.0);
                    let reduced = component / factor;
                    if reduced.abs() > ZERO {
                        spin_orbit.push((t, u, id, reduced));
                    }
                }
            }
        }
    }

    // J blocks.
    let mut j_blocks = Vec::new();
    let mut j_coefficients = Vec::new();
    // Every parameter of the block, indexed: elements are gathered per index.
    let mut ids: Vec<ParameterId> = coupler
        .configurations
        .iter()
        .map(|c| ParameterId {
            scope: Scope::Configuration(c.configuration),
            radial: Radial::Average,
        })
        .chain(ls_matrices.values().flat_map(|(_, m)| m.keys().copied()))
        .chain(spin_orbit.iter().map(|e| e.2))
        .collect();
    ids.sort_unstable();
    ids.dedup();
    let index_of = |id: &ParameterId| ids.binary_search(id).ok();
    // The 6j symbol {L S J; S' L' 1} of a spin–orbit element depends on J and on
    // the class (L, S, S', L') of its pair of states: one value per class and J.
    let mut class_of: FxHashMap<[u32; 4], usize> = FxHashMap::default();
    let mut classes: Vec<[u32; 4]> = Vec::new();
    // (row state, column state, parameter index, class, reduced element).
    let mut spin_orbit_elements: Vec<(usize, usize, usize, usize, f64)> = Vec::new();
    for &(t, u, id, reduced) in &spin_orbit {
        let (a, b) = (&basis[t], &basis[u]);
        let key = [2 * a.l, a.two_s, b.two_s, 2 * b.l];
        let class = *class_of.entry(key).or_insert_with(|| {
            classes.push(key);
            classes.len() - 1
        });
        if let Some(p) = index_of(&id) {
            spin_orbit_elements.push((t, u, p, class, reduced));
        }
    }
    let mut six_js: Vec<f64> = vec![f64::NAN; classes.len()];
    // Position of each basis state in the current J block.
    let mut local: Vec<Option<u32>> = vec![None; basis.len()];
    for two_j in two_js {
        step += 1;
        progress(step, steps);
        let states: Vec<usize> = (0..basis.len())
            .filter(|&t| crate::angular::triangle(2 * basis[t].l, basis[t].two_s, two_j))
            .collect();
        let n = states.len();
        local.iter_mut().for_each(|x| *x = None);
        for (x, &t) in states.iter().enumerate() {
            local[t] = Some(x as u32);
        }
        six_js.iter_mut().for_each(|x| *x = f64::NAN);
        // Elements (row, column, value) of each parameter, each given once.
        let mut elements: Vec<Vec<(u32, u32, f64)>> = vec![Vec::new(); ids.len()];
        // E_av: the identity on each configuration's states.
        for (x, &t) in states.iter().enumerate() {
            let id = ParameterId {
                scope: Scope::Configuration(basis[t].configuration),
                radial: Radial::Average,
            };
            if let Some(p) = index_of(&id) {
                elements[p].push((x as u32, x as u32, 1.0));
            }
        }
        // Coulomb, CI: copy the (L, S) matrices, group by group.
        for (terms, matrices) in ls_matrices.values() {
            let here: Vec<(usize, u32)> = terms
                .iter()
                .enumerate()
                .filter_map(|(xt, &t)| local[t].map(|x| (xt, x)))
                .collect();
            if here.is_empty() {
                continue;
            }
            for (id, m) in matrices {
                let Some(p) = index_of(id) else {
                    continue;
                };
                let list = &mut elements[p];
                for &(xt, x) in &here {
                    for &(xu, y) in &here {
                        let value = m[(xt, xu)];
                        if value.abs() > ZERO {
                            list.push((x, y, value));
                        }
                    }
                }
            }
        }
        // Spin–orbit.
        for &(t, u, p, class, reduced) in &spin_orbit_elements {
            let (Some(x), Some(y)) = (local[t], local[u]) else {
                continue;
            };
            let [two_l, two_s, two_s_ket, two_l_ket] = classes[class];
            if six_js[class].is_nan() {
                six_js[class] =
                    six_j([two_l, two_s, two_j, two_s_ket, two_l_ket, 2]).unwrap_or(0.0);
            }
            let sign = phase(((two_l_ket + two_s + two_j) / 2) as i64);
            let value = sign * six_js[class] * reduced;
            if value.abs() > ZERO {
                let list = &mut elements[p];
                list.push((x, y, value));
                if x != y {
                    list.push((y, x, value));
                }
            }
        }
        let matrices: BTreeMap<ParameterId, CoefficientMatrix> = elements
            .into_iter()
            .enumerate()
            .filter(|(_, list)| !list.is_empty())
            .filter_map(|(p, list)| {
                let m = CoefficientMatrix::from_elements(n, list);
                (m.largest() > ZERO).then_some((ids[p], m))
            })
            .collect();
        j_blocks.push(JBlock {
            two_j,
            states,
            coefficients: Vec::new(),
        });
        j_coefficients.push(matrices);
    }
    Ok(BlockMatrices {
        block: ParityBlock {
            parity,
            configurations: members.to_vec(),
            basis,
            j_blocks,
            coupler,
        },
        j_coefficients,
    })
}

/// (−1)^n.
fn phase(n: i64) -> f64 {
    if n.rem_euclid(2) == 0 { 1.0 } else { -1.0 }
}

/// A slow, plain reference: the whole Hamiltonian of one M_J in the determinant
/// basis (Slater–Condon for Coulomb, ζ l·s = ζ[l_z s_z + ½(l₊s₋ + l₋s₊)] applied to
/// each determinant, configuration averages from every determinant), diagonalised
/// as is. The fast path (LS coupling, 6j spin–orbit, J blocks) must give the same
/// eigenvalues.
#[cfg(test)]
mod reference {
    use std::collections::HashMap;

    use nalgebra::{DMatrix, SymmetricEigen};

    use super::*;
    use crate::structure::LevelStructure;

    /// Every determinant of each configuration of block `b`, with its configuration.
    fn determinants(structure: &LevelStructure, b: usize) -> Vec<(Determinant, usize)> {
        let block = &structure.blocks()[b];
        let layout = block.layout();
        let mut out = Vec::new();
        for &c in &block.configurations {
            let mut partial = vec![Determinant::empty()];
            for s in structure.configurations()[c].subshells() {
                let Some(shell) = layout.shell_index(Orbital { n: s.n, l: s.l }) else {
                    continue;
                };
                let offset = layout.offset(shell);
                let size = s.capacity() as usize;
                let mut next = Vec::new();
                for d in &partial {
                    for mask in 0u32..(1 << size) {
                        if mask.count_ones() == s.occupancy {
                            let mut e = *d;
                            (0..size)
                                .filter(|i| mask >> i & 1 == 1)
                                .for_each(|i| e.insert(offset + i));
                            next.push(e);
                        }
                    }
                }
                partial = next;
            }
            out.extend(partial.into_iter().map(|d| (d, c)));
        }
        out
    }

    fn reference_eigenvalues(
        structure: &LevelStructure,
        b: usize,
        values: &[f64],
        two_m: i32,
    ) -> Vec<f64> {
        let block = &structure.blocks()[b];
        let layout = block.layout();
        let orbitals = layout.orbitals().to_vec();
        let ck = CkTable::new(orbitals.iter().map(|o| o.l).max().unwrap_or(0));
        let value = |id: ParameterId| structure.parameter_index(&id).map_or(0.0, |p| values[p]);
        let all = determinants(structure, b);
        let interacting: HashSet<(usize, usize)> = structure
            .parameters()
            .iter()
            .filter_map(|p| match p.scope {
                Scope::Interaction(a, c) => Some((a, c)),
                _ => None,
            })
            .collect();
        // Configuration averages of the Coulomb diagonal, over all determinants.
        let mut entries = Vec::new();
        let mut sums: HashMap<usize, (f64, f64)> = HashMap::new();
        for (d, c) in &all {
            entries.clear();
            slater_condon(layout, &ck, d, d, &mut entries);
            let e: f64 = entries
                .iter()
                .filter_map(|&(key, x)| {
                    parameter_of(key, &orbitals, *c, *c).map(|id| x * value(id))
                })
                .sum();
            let s = sums.entry(*c).or_default();
            s.0 += e;
            s.1 += 1.0;
        }
        let dets: Vec<(Determinant, usize)> = all
            .into_iter()
            .filter(|(d, _)| 2 * layout.total_m_l(d) + layout.total_two_m_s(d) == two_m)
            .collect();
        let index: HashMap<Determinant, usize> =
            dets.iter().enumerate().map(|(i, (d, _))| (*d, i)).collect();
        let n = dets.len();
        let mut h = DMatrix::<f64>::zeros(n, n);
        for i in 0..n {
            let (di, ci) = dets[i];
            for j in 0..n {
                let (dj, cj) = dets[j];
                if ci != cj && !interacting.contains(&(ci.min(cj), ci.max(cj))) {
                    continue;
                }
                entries.clear();
                slater_condon(layout, &ck, &di, &dj, &mut entries);
                for &(key, x) in &entries {
                    if let Some(id) = parameter_of(key, &orbitals, ci, cj) {
                        h[(i, j)] += x * value(id);
                    }
                }
            }
            let (sum, count) = sums[&ci];
            h[(i, i)] += value(ParameterId {
                scope: Scope::Configuration(ci),
                radial: Radial::Average,
            }) - sum / count;
            // Spin–orbit of the open subshells of this configuration.
            for a in di.occupied() {
                let so = layout.spin_orbital(a);
                let zeta = value(ParameterId {
                    scope: Scope::Configuration(ci),
                    radial: Radial::SpinOrbit {
                        a: orbitals[so.shell],
                    },
                });
                if zeta == 0.0 {
                    continue;
                }
                let l = so.l as i32;
                h[(i, i)] += zeta * so.m_l as f64 * so.two_m_s as f64 / 2.0;
                // l₊s₋ takes (m, ↑) to (m+1, ↓); l₋s₊ takes (m, ↓) to (m−1, ↑).
                let (target, factor) = if so.two_m_s > 0 {
                    (
                        so.m_l + 1,
                        ((l * (l + 1) - so.m_l * (so.m_l + 1)) as f64).sqrt(),
                    )
                } else {
                    (
                        so.m_l - 1,
                        ((l * (l + 1) - so.m_l * (so.m_l - 1)) as f64).sqrt(),
                    )
                };
                if target.abs() > l {
                    continue;
                }
                let to = layout.index(so.shell, target, -so.two_m_s);
                if let Some((sign, e)) = di.excite(a, to)
                    && let Some(&k) = index.get(&e)
                {
                    h[(k, i)] += 0.5 * zeta * factor * sign;
                }
            }
        }
        let mut eigen: Vec<f64> = SymmetricEigen::new(h).eigenvalues.iter().copied().collect();
        eigen.sort_by(f64::total_cmp);
        eigen
    }

    fn check(labels: &[&str], interactions: &[(usize, usize)], seed: u64) {
        check_kinds(labels, interactions, seed, |_| true);
    }

    fn check_kinds(
        labels: &[&str],
        interactions: &[(usize, usize)],
        seed: u64,
        keep: impl Fn(&Radial) -> bool,
    ) {
        let configurations: Vec<Configuration> =
            labels.iter().map(|l| l.parse().unwrap()).collect();
        let structure = LevelStructure::build(&configurations, interactions).unwrap();
        let mut state = seed;
        let values: Vec<f64> = structure
            .parameters()
            .iter()
            .map(|p| {
                state = state
                    .wrapping_mul(6364136223846793005)
                    .wrapping_add(1442695040888963407);
                let u = (state >> 11) as f64 / (1u64 << 53) as f64;
                if !keep(&p.radial) {
                    return 0.0;
                }
                match p.radial {
                    Radial::Average => 20000.0 * u,
                    Radial::SpinOrbit { .. } => 3000.0 * u,
                    _ => 40000.0 * (u - 0.3),
                }
            })
            .collect();
        let levels = structure.levels(&values).unwrap();
        for b in 0..structure.blocks().len() {
            let two_m = (structure.blocks()[b].j_blocks[0].two_j % 2) as i32;
            let mut fast: Vec<f64> = levels
                .iter()
                .filter(|l| l.block == b)
                .flat_map(|l| {
                    // A level of J appears once in every M_J block with |M_J| ≤ J.
                    std::iter::repeat_n(l.energy_cm1, usize::from(l.j.twice as i32 >= two_m))
                })
                .collect();
            fast.sort_by(f64::total_cmp);
            let slow = reference_eigenvalues(&structure, b, &values, two_m);
            assert_eq!(fast.len(), slow.len(), "{labels:?}");
            for (f, s) in fast.iter().zip(&slow) {
                assert!(
                    (f - s).abs() < 1e-7 * s.abs().max(1e3),
                    "{labels:?}: {f} vs {s}"
                );
            }
        }
    }

    #[test]
    fn fast_levels_equal_the_plain_determinant_hamiltonian() {
        check(&["3d2.4p"], &[], 1);
        check(&["3d4.4s"], &[], 2);
        check(&["2p2.3s.3p"], &[], 3);
        check(&["3d2.4s", "3d.4s2", "3d3"], &[(0, 1), (0, 2), (1, 2)], 4);
        check(
            &["2p5.3s", "2p5.3d", "2p5.4s"],
            &[(0, 1), (0, 2), (1, 2)],
            5,
        );
        check(&["3s2.3d", "3s.3p2", "3s.3p.4s"], &[(0, 1)], 6);
        check(&["4f2", "4f.5p"], &[], 7);
        // Spin–orbit alone, between terms of different parents (6j route).
        check_kinds(&["3d2.4p", "3d3"], &[], 8, |r| {
            matches!(r, Radial::SpinOrbit { .. })
        });
    }
}

#[cfg(test)]
mod sparse_tests {
    use nalgebra::DMatrix;

    use super::CoefficientMatrix;
    use crate::notation::Configuration;
    use crate::structure::LevelStructure;

    #[test]
    fn sparse_matrices_hold_exactly_the_dense_elements() {
        // Every element of every block, stored or not, reads back as written
        // (common practice, no source: a storage format must not change values).
        let dense = DMatrix::from_row_slice(3, 3, &[1.5, 0.0, -2.0, 0.0, 0.0, 0.0, -2.0, 0.0, 7.0]);
        let sparse = CoefficientMatrix::from_dense(&dense);
        assert_eq!(sparse.entries().len(), 4);
        assert_eq!(sparse.to_dense(), dense);
        for r in 0..3 {
            for c in 0..3 {
                assert_eq!(sparse[(r, c)], dense[(r, c)]);
            }
        }
        // vᵀCv against the dense product.
        let v = [0.3, -1.1, 0.8];
        let vector = nalgebra::DVector::from_row_slice(&v);
        let want = vector.dot(&(&dense * &vector));
        assert!((sparse.quadratic_form(&v) - want).abs() < 1e-15);
    }

    #[test]
    fn elements_in_any_order_give_the_sorted_matrix() {
        // The same elements given scrambled, with zeros, read back as the dense
        // matrix they make (common practice, no source: the order of writing
        // must not matter).
        let dense = DMatrix::from_row_slice(3, 3, &[0.0, 4.0, -2.0, 4.0, 0.5, 0.0, -2.0, 0.0, 3.0]);
        let list = vec![
            (2, 2, 3.0),
            (0, 2, -2.0),
            (1, 1, 0.5),
            (2, 0, -2.0),
            (1, 2, 0.0),
            (1, 0, 4.0),
            (0, 1, 4.0),
        ];
        let sparse = CoefficientMatrix::from_elements(3, list);
        assert_eq!(sparse, CoefficientMatrix::from_dense(&dense));
    }

    #[test]
    fn a_second_build_equals_the_first() {
        // The second build takes the subshell terms from the process-wide table
        // filled by the first: the matrices must be bit for bit the same (a
        // regression pin of the shared table, no outside source).
        let configs: Vec<Configuration> = ["3d2.4s", "3d.4s2", "3d3"]
            .iter()
            .map(|l| l.parse().unwrap())
            .collect();
        let first = LevelStructure::build(&configs, &[(0, 1)]).unwrap();
        let second = LevelStructure::build(&configs, &[(0, 1)]).unwrap();
        for (a, b) in first.blocks().iter().zip(second.blocks()) {
            assert_eq!(a.j_blocks.len(), b.j_blocks.len());
            for (x, y) in a.j_blocks.iter().zip(&b.j_blocks) {
                assert_eq!(x.coefficients, y.coefficients);
            }
        }
    }
}

#[cfg(test)]
mod route_tests {
    use super::Route;
    use crate::notation::Configuration;
    use crate::structure::LevelStructure;

    /// Build `labels` by both routes and require the same parameters and the same
    /// coefficient matrix of every parameter in every J block, to 1e-12 (relative
    /// to the larger of 1 and the element). The determinant route is the
    /// Slater–Condon projection (Condon & Shortley 1935, §6⁶); the Racah route
    /// must reproduce it, not approximate it.
    fn same_matrices(labels: &[&str], interactions: &[(usize, usize)]) {
        let configurations: Vec<Configuration> =
            labels.iter().map(|l| l.parse().unwrap()).collect();
        let racah =
            LevelStructure::build_by(&configurations, interactions, Route::Racah, |_| {}).unwrap();
        let reference =
            LevelStructure::build_by(&configurations, interactions, Route::Determinants, |_| {})
                .unwrap();
        assert_eq!(racah.parameters(), reference.parameters(), "{labels:?}");
        let mut compared = 0;
        for (a, b) in racah.blocks().iter().zip(reference.blocks()) {
            assert_eq!(a.j_blocks.len(), b.j_blocks.len());
            for (x, y) in a.j_blocks.iter().zip(&b.j_blocks) {
                assert_eq!(x.states, y.states);
                let ids =
                    |j: &super::JBlock| j.coefficients.iter().map(|c| c.0).collect::<Vec<_>>();
                assert_eq!(ids(x), ids(y), "{labels:?} J = {}/2", x.two_j);
                for ((p, m), (_, n)) in x.coefficients.iter().zip(&y.coefficients) {
                    let (m, n) = (m.to_dense(), n.to_dense());
                    for (u, v) in m.iter().zip(n.iter()) {
                        assert!(
                            (u - v).abs() <= 1e-12 * u.abs().max(1.0),
                            "{labels:?} J = {}/2, {}: {u} vs {v}",
                            x.two_j,
                            racah.parameters()[*p].full_name(racah.configurations())
                        );
                    }
                    compared += 1;
                }
            }
        }
        assert!(compared > 0, "{labels:?}: nothing compared");
    }

    #[test]
    fn racah_matrices_equal_the_determinant_matrices() {
        // One open subshell, with repeated terms of equal seniority (f³).
        same_matrices(&["3d3"], &[]);
        same_matrices(&["4f3"], &[]);
        // Two open subshells: direct and exchange, s, p, d and f partners.
        same_matrices(&["3d2.4p"], &[]);
        same_matrices(&["3d4.4s"], &[]);
        same_matrices(&["4f2.5d"], &[]);
        // Three open subshells (the chain with a subshell between the pair).
        same_matrices(&["2p2.3s.3p"], &[]);
        same_matrices(&["4f.5d.6s"], &[]);
        // Configuration interaction, direct and exchange type (3d.4s ~ 3d.5s has
        // R^k(3d4s,3d5s) and R^k(3d4s,5s3d)), with closed subshells open elsewhere.
        same_matrices(&["3d.4s", "3d.5s"], &[(0, 1)]);
        same_matrices(&["3d2.4s", "3d.4s2", "3d3"], &[(0, 1), (0, 2), (1, 2)]);
        same_matrices(&["3s2.3d", "3s.3p2", "3s.3p.4s"], &[(0, 1)]);
        same_matrices(&["2p5.3s", "2p5.3d", "2p5.4s"], &[(0, 1), (0, 2), (1, 2)]);
    }
}
