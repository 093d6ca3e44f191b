//! The LS terms of one open subshell lⁿ, with their seniority, as combinations
//! of the subshell's Slater determinants at every (M_L, M_S).
//!
//! A determinant of the subshell is a bitmask: bit 2(l − m_l) + (0 up, 1 down),
//! the same order as [`super::orbital::SpinOrbitalLayout`] uses inside an orbital.

use std::collections::{BTreeMap, HashMap};

use nalgebra::{DMatrix, SymmetricEigen};

/// A sparse vector over subshell determinants, sorted by mask.
pub type ShellVector = Vec<(u32, f64)>;

/// Largest l handled for an open subshell (2(2l+1) spin-orbitals fit in a `u32`).
pub const MAX_SHELL_L: u32 = 7;

/// Coefficients below this are dropped from vectors (they are rounding noise of
/// values that are exactly zero).
const NOISE: f64 = 1e-12;

/// One LS term of lⁿ.
#[derive(Debug, Clone)]
pub struct ShellTerm {
    /// Total orbital angular momentum L.
    pub l_total: u32,
    /// Twice the total spin, 2S.
    pub two_s: u32,
    /// Seniority v: the number of electrons not in ¹S-coupled pairs (Racah 1943).
    pub seniority: u32,
    /// 1, 2, … among terms with the same L and S, ordered by seniority; `None`
    /// when the term occurs once in lⁿ.
    pub index: Option<u32>,
    /// The state at each (M_L, 2M_S).
    states: HashMap<(i32, i32), ShellVector>,
}

impl ShellTerm {
    /// The state |lⁿ v L S M_L M_S⟩ (empty when M_L or M_S is out of range).
    pub fn state(&self, m_l: i32, two_m_s: i32) -> &[(u32, f64)] {
        self.states.get(&(m_l, two_m_s)).map_or(&[], Vec::as_slice)
    }
}

/// The terms of lⁿ, 1 ≤ n < 2(2l+1).
#[derive(Debug, Clone)]
pub struct ShellTerms {
    /// l of the subshell.
    pub l: u32,
    /// Number of electrons n.
    pub electrons: u32,
    /// The terms, by decreasing 2S+1, then decreasing L, then seniority.
    pub terms: Vec<ShellTerm>,
}

/// Bit of (m_l, 2m_s) in a subshell mask.
fn bit(l: u32, m: i32, two_ms: i32) -> u32 {
    2 * (l as i32 - m) as u32 + u32::from(two_ms < 0)
}

fn m_of_bit(l: u32, b: u32) -> (i32, i32) {
    (
        l as i32 - (b / 2) as i32,
        if b.is_multiple_of(2) { 1 } else { -1 },
    )
}

/// a_b on a mask: sign and result, or `None` if b is empty.
fn annihilate(mask: u32, b: u32) -> Option<(f64, u32)> {
    if mask >> b & 1 == 0 {
        return None;
    }
    let below = (mask & ((1u32 << b) - 1)).count_ones();
    Some((
        if below.is_multiple_of(2) { 1.0 } else { -1.0 },
        mask & !(1 << b),
    ))
}

/// a†_b on a mask: sign and result, or `None` if b is occupied.
fn create(mask: u32, b: u32) -> Option<(f64, u32)> {
    if mask >> b & 1 == 1 {
        return None;
    }
    let below = (mask & ((1u32 << b) - 1)).count_ones();
    Some((
        if below.is_multiple_of(2) { 1.0 } else { -1.0 },
        mask | 1 << b,
    ))
}

/// Apply a one-body operator Σ coefficient · a†_to a_from, given as a list of
/// (from, to, coefficient), to a sparse vector.
fn apply_one_body(vector: &[(u32, f64)], moves: &[(u32, u32, f64)]) -> ShellVector {
    let mut out: BTreeMap<u32, f64> = BTreeMap::new();
    for &(mask, c) in vector {
        for &(from, to, coefficient) in moves {
            if let Some((s1, m1)) = annihilate(mask, from)
                && let Some((s2, m2)) = create(m1, to)
            {
                *out.entry(m2).or_default() += s1 * s2 * coefficient * c;
            }
        }
    }
    out.into_iter().filter(|(_, c)| c.abs() > NOISE).collect()
}

/// The moves of L₊ (`raise`) or L₋ in lⁿ: a†_{m±1,σ} a_{m,σ} √(l(l+1) − m(m±1)).
fn orbital_ladder(l: u32, raise: bool) -> Vec<(u32, u32, f64)> {
    let li = l as i32;
    let mut moves = Vec::new();
    for m in -li..=li {
        let target = if raise { m + 1 } else { m - 1 };
        if target.abs() > li {
            continue;
        }
        let c = ((li * (li + 1) - m * target) as f64).sqrt();
        for two_ms in [1, -1] {
            moves.push((bit(l, m, two_ms), bit(l, target, two_ms), c));
        }
    }
    moves
}

/// The moves of S₊ (`raise`) or S₋: a†_{m,±} a_{m,∓}.
fn spin_ladder(l: u32, raise: bool) -> Vec<(u32, u32, f64)> {
    let li = l as i32;
    (-li..=li)
        .map(|m| {
            let (from, to) = if raise { (-1, 1) } else { (1, -1) };
            (bit(l, m, from), bit(l, m, to), 1.0)
        })
        .collect()
}

/// The pairing operator P = A†A with A† = Σ_m (−1)^(l−m) a†_{m↑} a†_{−m↓}, the
/// creation operator of a ¹S pair (Racah 1943; quasi-spin, Kerman 1961). In lⁿ
/// with seniority v its eigenvalue is (n − v)(4l + 4 − n − v)/4.
fn pairing(l: u32, vector: &[(u32, f64)]) -> ShellVector {
    let li = l as i32;
    let pairs: Vec<(f64, u32, u32)> = (-li..=li)
        .map(|m| {
            let phase = if (li - m) % 2 == 0 { 1.0 } else { -1.0 };
            (phase, bit(l, m, 1), bit(l, -m, -1))
        })
        .collect();
    // A = Σ phase a_{−m↓} a_{m↑} (the adjoint of a†_{m↑} a†_{−m↓}).
    let mut lowered: BTreeMap<u32, f64> = BTreeMap::new();
    for &(mask, c) in vector {
        for &(phase, up, down) in &pairs {
            if let Some((s1, m1)) = annihilate(mask, up)
                && let Some((s2, m2)) = annihilate(m1, down)
            {
                *lowered.entry(m2).or_default() += phase * s1 * s2 * c;
            }
        }
    }
    let mut out: BTreeMap<u32, f64> = BTreeMap::new();
    for (mask, c) in lowered {
        for &(phase, up, down) in &pairs {
            if let Some((s1, m1)) = create(mask, down)
                && let Some((s2, m2)) = create(m1, up)
            {
                *out.entry(m2).or_default() += phase * s1 * s2 * c;
            }
        }
    }
    out.into_iter().filter(|(_, c)| c.abs() > NOISE).collect()
}

#[cfg(test)]
fn norm(vector: &[(u32, f64)]) -> f64 {
    vector.iter().map(|(_, c)| c * c).sum::<f64>().sqrt()
}

fn scaled(vector: ShellVector, factor: f64) -> ShellVector {
    vector.into_iter().map(|(m, c)| (m, c * factor)).collect()
}

/// Orthonormal basis of the null space of the symmetric positive semi-definite
/// `gram` (eigenvalues below 1e-9).
fn null_space(gram: &DMatrix<f64>) -> DMatrix<f64> {
    let eigen = SymmetricEigen::new(gram.clone());
    let columns: Vec<_> = (0..gram.nrows())
        .filter(|&i| eigen.eigenvalues[i].abs() < 1e-9)
        .map(|i| eigen.eigenvectors.column(i).into_owned())
        .collect();
    if columns.is_empty() {
        DMatrix::zeros(gram.nrows(), 0)
    } else {
        DMatrix::from_columns(&columns)
    }
}

/// A basis of the column space of `basis` (orthonormal columns) that does not depend
/// on how the columns were chosen: the projections of the unit vectors e₀, e₁, …
/// onto the space, Gram–Schmidt orthonormalised in that order. This makes labels
/// of repeated terms and phases reproducible.
fn canonical_basis(basis: &DMatrix<f64>) -> Vec<Vec<f64>> {
    let dim = basis.ncols();
    let mut chosen: Vec<Vec<f64>> = Vec::new();
    for i in 0..basis.nrows() {
        if chosen.len() == dim {
            break;
        }
        // Projection of e_i: Σ_c basis[i, c] · column c.
        let mut v: Vec<f64> = (0..basis.nrows())
            .map(|r| (0..dim).map(|c| basis[(i, c)] * basis[(r, c)]).sum())
            .collect();
        for u in &chosen {
            let dot: f64 = u.iter().zip(&v).map(|(a, b)| a * b).sum();
            for (x, a) in v.iter_mut().zip(u) {
                *x -= dot * a;
            }
        }
        let n = v.iter().map(|x| x * x).sum::<f64>().sqrt();
        if n > 1e-6 {
            chosen.push(v.into_iter().map(|x| x / n).collect());
        }
    }
    chosen
}

/// The terms of lⁿ, derived once per process for each (l, n) and shared: they
/// are angular data of the subshell alone, and deriving them (diagonalisations
/// over the subshell's determinants) is most of the cost of building a model of
/// f⁶ or f⁷.
pub(crate) fn shared_shell_terms(l: u32, electrons: u32) -> std::sync::Arc<ShellTerms> {
    use std::sync::{Arc, Mutex, OnceLock};
    type Table = Mutex<BTreeMap<(u32, u32), Arc<ShellTerms>>>;
    static TABLE: OnceLock<Table> = OnceLock::new();
    let table = TABLE.get_or_init(|| Mutex::new(BTreeMap::new()));
    if let Some(found) = table
        .lock()
        .ok()
        .and_then(|t| t.get(&(l, electrons)).cloned())
    {
        return found;
    }
    // Derived outside the lock: two threads may both derive it, with equal results.
    let terms = Arc::new(ShellTerms::new(l, electrons));
    if let Ok(mut t) = table.lock() {
        t.entry((l, electrons)).or_insert_with(|| terms.clone());
    }
    terms
}

impl ShellTerms {
    /// Derive the terms of lⁿ: in each (M_L = L, M_S = S) block the states killed by
    /// L₊ and S₊ (Condon & Shortley 1935, §8³), separated by the eigenvalue of the
    /// pairing operator (seniority), then lowered to every M_L, M_S.
    ///
    /// Panics never; `l` ≤ [`MAX_SHELL_L`] and 1 ≤ `electrons` < 2(2l+1) are
    /// checked by the caller.
    pub fn new(l: u32, electrons: u32) -> ShellTerms {
        let bits = 2 * (2 * l + 1);
        // Determinants grouped by (M_L, 2M_S).
        let mut blocks: BTreeMap<(i32, i32), Vec<u32>> = BTreeMap::new();
        // Every mask with `electrons` bits set among `bits`, in increasing order
        // (Gosper's hack; Knuth, TAOCP 4A, §7.1.3).
        let masks = std::iter::successors(Some((1u64 << electrons) - 1), |&x| {
            let c = x & x.wrapping_neg();
            let r = x + c;
            let next = (((r ^ x) >> 2) / c) | r;
            (next < 1u64 << bits).then_some(next)
        });
        for mask in masks.map(|m| m as u32) {
            let (mut ml, mut ms) = (0, 0);
            for b in 0..bits {
                if mask >> b & 1 == 1 {
                    let (m, s) = m_of_bit(l, b);
                    ml += m;
                    ms += s;
                }
            }
            blocks.entry((ml, ms)).or_default().push(mask);
        }
        let raise_l = orbital_ladder(l, true);
        let raise_s = spin_ladder(l, true);
        let mut found: Vec<(u32, u32, u32, ShellVector)> = Vec::new();
        for (&(ml, ms), dets) in &blocks {
            if ml < 0 || ms < 0 {
                continue;
            }
            // Rows of L₊ and S₊ applied to each determinant of the block.
            let images: Vec<(ShellVector, ShellVector)> = dets
                .iter()
                .map(|&d| {
                    (
                        apply_one_body(&[(d, 1.0)], &raise_l),
                        apply_one_body(&[(d, 1.0)], &raise_s),
                    )
                })
                .collect();
            let n = dets.len();
            let mut gram = DMatrix::zeros(n, n);
            for i in 0..n {
                for j in 0..n {
                    gram[(i, j)] =
                        dot(&images[i].0, &images[j].0) + dot(&images[i].1, &images[j].1);
                }
            }
            let kernel = null_space(&gram);
            if kernel.ncols() == 0 {
                continue;
            }
            // Seniority: diagonalise the pairing operator inside the kernel.
            let kernel_vectors: Vec<ShellVector> = (0..kernel.ncols())
                .map(|c| {
                    dets.iter()
                        .enumerate()
                        .map(|(i, &d)| (d, kernel[(i, c)]))
                        .filter(|(_, x)| x.abs() > NOISE)
                        .collect()
                })
                .collect();
            let k = kernel.ncols();
            let mut p = DMatrix::zeros(k, k);
            for a in 0..k {
                let pa = pairing(l, &kernel_vectors[a]);
                for b in 0..k {
                    p[(a, b)] = dot(&pa, &kernel_vectors[b]);
                }
            }
            let eigen = SymmetricEigen::new(p);
            let mut by_seniority: BTreeMap<u32, Vec<usize>> = BTreeMap::new();
            for (i, &lambda) in eigen.eigenvalues.iter().enumerate() {
                by_seniority
                    .entry(seniority_of(l, electrons, lambda))
                    .or_default()
                    .push(i);
            }
            for (v, columns) in by_seniority {
                // The subspace of this seniority, in determinant coordinates.
                let sub = DMatrix::from_fn(n, columns.len(), |r, c| {
                    (0..k)
                        .map(|a| kernel[(r, a)] * eigen.eigenvectors[(a, columns[c])])
                        .sum()
                });
                for vector in canonical_basis(&sub) {
                    let state: ShellVector = dets
                        .iter()
                        .zip(vector)
                        .map(|(&d, x)| (d, x))
                        .filter(|(_, x)| x.abs() > NOISE)
                        .collect();
                    found.push((ml as u32, ms as u32, v, state));
                }
            }
        }
        // Order: 2S+1 descending, L descending, seniority ascending (Hund-like order
        // of the trade's term lists).
        found.sort_by(|a, b| (b.1, b.0, a.2).cmp(&(a.1, a.0, b.2)));
        let lower_l = orbital_ladder(l, false);
        let lower_s = spin_ladder(l, false);
        let mut terms = Vec::new();
        for (i, (l_total, two_s, seniority, top)) in found.iter().enumerate() {
            let repeats = found
                .iter()
                .filter(|t| t.0 == *l_total && t.1 == *two_s)
                .count();
            let index = (repeats > 1).then(|| {
                found[..i]
                    .iter()
                    .filter(|t| t.0 == *l_total && t.1 == *two_s)
                    .count() as u32
                    + 1
            });
            let mut states = HashMap::new();
            let (big_l, two_s_i) = (*l_total as i32, *two_s as i32);
            let mut spin_state = top.clone();
            let mut two_ms = two_s_i;
            loop {
                let mut orbital_state = spin_state.clone();
                let mut ml = big_l;
                loop {
                    states.insert((ml, two_ms), orbital_state.clone());
                    if ml == -big_l {
                        break;
                    }
                    let c = ((big_l * (big_l + 1) - ml * (ml - 1)) as f64).sqrt();
                    orbital_state = scaled(apply_one_body(&orbital_state, &lower_l), 1.0 / c);
                    ml -= 1;
                }
                if two_ms == -two_s_i {
                    break;
                }
                // S₋|S M⟩ = √(S(S+1) − M(M−1)) |S M−1⟩, in doubled units /4.
                let c = (((two_s_i * (two_s_i + 2)) - two_ms * (two_ms - 2)) as f64 / 4.0).sqrt();
                spin_state = scaled(apply_one_body(&spin_state, &lower_s), 1.0 / c);
                two_ms -= 2;
            }
            terms.push(ShellTerm {
                l_total: *l_total,
                two_s: *two_s,
                seniority: *seniority,
                index,
                states,
            });
        }
        ShellTerms {
            l,
            electrons,
            terms,
        }
    }
}

/// Seniority v from the pairing eigenvalue λ = (n − v)(4l + 4 − n − v)/4.
fn seniority_of(l: u32, n: u32, lambda: f64) -> u32 {
    let mut best = (f64::INFINITY, n);
    let mut v = n % 2;
    while v <= n {
        let value = (n as f64 - v as f64) * (4.0 * l as f64 + 4.0 - n as f64 - v as f64) / 4.0;
        let distance = (value - lambda).abs();
        if distance < best.0 {
            best = (distance, v);
        }
        v += 2;
    }
    best.1
}

/// Dot product of two sorted sparse vectors.
pub fn dot(a: &[(u32, f64)], b: &[(u32, f64)]) -> f64 {
    let (mut i, mut j, mut sum) = (0, 0, 0.0);
    while i < a.len() && j < b.len() {
        match a[i].0.cmp(&b[j].0) {
            std::cmp::Ordering::Less => i += 1,
            std::cmp::Ordering::Greater => j += 1,
            std::cmp::Ordering::Equal => {
                sum += a[i].1 * b[j].1;
                i += 1;
                j += 1;
            }
        }
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;

    fn summary(l: u32, n: u32) -> Vec<(u32, u32, u32, Option<u32>)> {
        ShellTerms::new(l, n)
            .terms
            .iter()
            .map(|t| (t.two_s + 1, t.l_total, t.seniority, t.index))
            .collect()
    }

    #[test]
    fn terms_of_equivalent_electrons() {
        // Term lists of p², p³, d³ with seniorities (Condon & Shortley 1935, table 1⁷;
        // seniorities from Racah 1943; common practice, no source for the order).
        assert_eq!(
            summary(1, 2),
            vec![(3, 1, 2, None), (1, 2, 2, None), (1, 0, 0, None)]
        );
        assert_eq!(
            summary(1, 3),
            vec![(4, 0, 3, None), (2, 2, 3, None), (2, 1, 1, None)]
        );
        let d3 = summary(2, 3);
        let labels: Vec<_> = d3.iter().map(|t| (t.0, t.1)).collect();
        assert_eq!(
            labels,
            vec![
                (4, 3),
                (4, 1),
                (2, 5),
                (2, 4),
                (2, 3),
                (2, 2),
                (2, 2),
                (2, 1)
            ]
        );
        // The two ²D of d³: seniority 1 then 3, indexed #1, #2.
        assert_eq!(d3[5], (2, 2, 1, Some(1)));
        assert_eq!(d3[6], (2, 2, 3, Some(2)));
    }

    #[test]
    fn f3_has_repeated_terms_of_equal_seniority() {
        // f³: ²D, ²F, ²G, ²H each occur twice (Nielson & Koster 1963); the two ²G
        // both have seniority 3, the two ²F seniorities 1 and 3.
        let f3 = summary(3, 3);
        let g: Vec<_> = f3.iter().filter(|t| t.0 == 2 && t.1 == 4).collect();
        assert_eq!(g.len(), 2);
        assert!(g.iter().all(|t| t.2 == 3));
        let f: Vec<_> = f3
            .iter()
            .filter(|t| t.0 == 2 && t.1 == 3)
            .map(|t| t.2)
            .collect();
        assert_eq!(f, vec![1, 3]);
        // Number of states: C(14, 3) = 364.
        let states: u32 = f3.iter().map(|t| t.0 * (2 * t.1 + 1)).sum();
        assert_eq!(states, 364);
    }

    #[test]
    fn lowered_states_are_normalised_and_complete() {
        let shell = ShellTerms::new(2, 2);
        for term in &shell.terms {
            let (l, s) = (term.l_total as i32, term.two_s as i32);
            for ml in -l..=l {
                let mut ms = -s;
                while ms <= s {
                    assert!((norm(term.state(ml, ms)) - 1.0).abs() < 1e-12);
                    ms += 2;
                }
            }
        }
    }
}
