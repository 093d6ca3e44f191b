//! The Coulomb and spin–orbit matrices within one configuration by Racah algebra,
//! without Slater determinants of the whole configuration.
//!
//! - Each subshell lⁿ gets, once per process, the double-reduced matrix elements
//!   ⟨αLS‖W^(κt)‖α'L'S'⟩ of the one-electron double tensors w^(κt) = u^t v^κ
//!   (unit tensors in orbit and spin, ⟨l‖u^t‖l⟩ = ⟨½‖v^κ‖½⟩ = 1; κ = 0, 1 and
//!   t = 0…2l) between all its terms (Racah 1943; Judd 1963, ch. 5; Cowan 1981,
//!   §11-9). They come from one component of each pair of terms on the subshell's
//!   own determinants: W^(κt)₀₀ is diagonal there, and the Wigner–Eckart theorem
//!   gives the rest.
//! - An operator acting on two subshells a, b is written as Σ_κt x_κt
//!   (W^(κt)(a)·W^(κt)(b)): expanding each a†_x a_y of a subshell on the complete
//!   set of the w^(κt)_πq, a†_x a_y = Σ (2t+1)(2κ+1) ⟨x|w^(κt)_πq|y⟩ W^(κt)_πq, the
//!   coefficients x_κt of the direct part of 1/r₁₂ (coefficient of F^k) and of the
//!   exchange part (coefficient of G^k, a sign from reordering the operators) are
//!   sums over the m of the two subshells, computed here once per (l_a, l_b, k).
//!   Within one subshell the same expansion gives Σ_{i<j} = ½ Σ x_κt W·W less a
//!   one-body term that is a multiple of the electron number; W·W is summed over
//!   the intermediate terms of lⁿ.
//! - The subshells of a configuration are coupled one after another, ((l₁ⁿ¹ L₁S₁,
//!   l₂ⁿ² L₂S₂) L₁₂S₁₂, l₃ⁿ³ L₃S₃) …: a product of tensors acting on single
//!   subshells has, in that chain, the reduced matrix element Π_c √((2J_c+1)
//!   (2J'_c+1)(2K_c+1)) {J_(c−1) J'_(c−1) K_(c−1); j_c j'_c k_c; J_c J'_c K_c}
//!   times the subshells' own reduced elements, in orbit and in spin separately
//!   (Edmonds 1957, eq. 7.1.5; Cowan 1981, §11-4, from memory). Subshells the
//!   operator does not touch enter with rank 0 (⟨j‖1‖j⟩ = √(2j+1)).
//!
//! Closed subshells that are open elsewhere in the block are left out: they add
//! only the same constant to every term, which the configuration average removes.
//! The determinant route in [`super::hamiltonian`] gives the same matrices (the
//! tests compare both) and still makes the configuration-interaction elements.

use std::cell::RefCell;
use std::collections::BTreeMap;
use std::sync::{Arc, Mutex, OnceLock};

use rustc_hash::FxHashMap;

use super::basis::BasisTerm;
use super::orbital::Orbital;
use super::parameter::Radial;
use super::shell::{MAX_SHELL_L, ShellTerms, shared_shell_terms};
use crate::angular::{CkTable, nine_j, three_j, triangle};

/// Coefficients smaller than this are exact zeros blurred by rounding.
const ZERO: f64 = 1e-14;

/// (−1)^n.
fn phase(n: i64) -> f64 {
    if n.rem_euclid(2) == 0 { 1.0 } else { -1.0 }
}

/// ⟨l m σ|w^(κt)₀₀|l m σ⟩ = (−1)^(l−m) (l t l; −m 0 m) (−1)^(½−σ) (½ κ ½; −σ 0 σ)
/// (Wigner–Eckart with unit reduced elements; Edmonds 1957, eq. 5.4.1).
fn one_electron(l: u32, t: u32, kappa: u32, m: i32, two_sigma: i32) -> f64 {
    let orbit = phase(l as i64 - m as i64)
        * three_j([2 * l, 2 * t, 2 * l], [-2 * m, 0, 2 * m]).unwrap_or(0.0);
    let spin = phase(((1 - two_sigma) / 2) as i64)
        * three_j([1, 2 * kappa, 1], [-two_sigma, 0, two_sigma]).unwrap_or(0.0);
    orbit * spin
}

/// The spin-orbitals of a subshell as (m, 2σ), in the bit order of
/// [`super::shell`]: bit 2(l − m) + (0 up, 1 down).
fn spin_orbitals(l: u32) -> impl Iterator<Item = (i32, i32)> {
    (0..2 * (2 * l + 1)).map(move |b| {
        (
            l as i32 - (b / 2) as i32,
            if b.is_multiple_of(2) { 1 } else { -1 },
        )
    })
}

/// Angular tables of one subshell lⁿ, over its terms in [`ShellTerms`] order.
#[derive(Debug)]
pub(crate) struct ShellTables {
    /// Number of terms.
    size: usize,
    /// 2l + 1: the number of orbital ranks t.
    ranks: usize,
    /// ⟨α‖W^(κt)‖α'⟩ at index κ·(2l+1) + t, each a size × size matrix by rows.
    w: Vec<Vec<f64>>,
    /// Coefficient of F^k(ll) within the subshell, ⟨αLS|Σ_{i<j} c^k(i)·c^k(j)|α'LS⟩
    /// at index k (odd k and k = 0 empty), a size × size matrix, zero between
    /// terms of different (L, S).
    coulomb: Vec<Vec<f64>>,
}

impl ShellTables {
    /// ⟨α‖W^(κt)‖α'⟩.
    pub fn w(&self, kappa: u32, t: u32, bra: usize, ket: usize) -> f64 {
        self.w
            .get(kappa as usize * self.ranks + t as usize)
            .and_then(|m| m.get(bra * self.size + ket))
            .copied()
            .unwrap_or(0.0)
    }

    /// Coefficient of F^k within the subshell between terms `bra`, `ket`.
    pub fn coulomb(&self, k: u32, bra: usize, ket: usize) -> f64 {
        self.coulomb
            .get(k as usize)
            .and_then(|m| m.get(bra * self.size + ket))
            .copied()
            .unwrap_or(0.0)
    }

    fn new(shell: &ShellTerms) -> ShellTables {
        let l = shell.l;
        let size = shell.terms.len();
        let ranks = (2 * l + 1) as usize;
        let kinds = 2 * ranks;
        // Σ over the occupied spin-orbitals of w^(κt)₀₀, per determinant.
        let per_bit: Vec<Vec<f64>> = (0..kinds)
            .map(|kt| {
                let (kappa, t) = ((kt / ranks) as u32, (kt % ranks) as u32);
                spin_orbitals(l)
                    .map(|(m, s)| one_electron(l, t, kappa, m, s))
                    .collect()
            })
            .collect();
        let mut per_mask: FxHashMap<u32, Vec<f64>> = FxHashMap::default();
        let mut w = vec![vec![0.0; size * size]; kinds];
        let mut sums = vec![0.0; kinds];
        for (a, ta) in shell.terms.iter().enumerate() {
            for (b, tb) in shell.terms.iter().enumerate() {
                if ta.two_s.abs_diff(tb.two_s) > 2 {
                    continue;
                }
                let ml = ta.l_total.min(tb.l_total) as i32;
                let ms = ta.two_s.min(tb.two_s) as i32;
                let (va, vb) = (ta.state(ml, ms), tb.state(ml, ms));
                sums.iter_mut().for_each(|x| *x = 0.0);
                let (mut i, mut j) = (0, 0);
                while i < va.len() && j < vb.len() {
                    match va[i].0.cmp(&vb[j].0) {
                        std::cmp::Ordering::Less => i += 1,
                        std::cmp::Ordering::Greater => j += 1,
                        std::cmp::Ordering::Equal => {
                            let mask = va[i].0;
                            let product = va[i].1 * vb[j].1;
                            let values = per_mask.entry(mask).or_insert_with(|| {
                                per_bit
                                    .iter()
                                    .map(|bits| {
                                        (0..bits.len())
                                            .filter(|&bit| mask >> bit & 1 == 1)
                                            .map(|bit| bits[bit])
                                            .sum()
                                    })
                                    .collect()
                            });
                            for (s, v) in sums.iter_mut().zip(values.iter()) {
                                *s += product * v;
                            }
                            i += 1;
                            j += 1;
                        }
                    }
                }
                for (kt, &component) in sums.iter().enumerate() {
                    let (kappa, t) = ((kt / ranks) as u32, (kt % ranks) as u32);
                    if !triangle(2 * ta.l_total, 2 * t, 2 * tb.l_total)
                        || !triangle(ta.two_s, 2 * kappa, tb.two_s)
                    {
                        continue;
                    }
                    // (−1)^(L−M_L)(L t L'; −M_L 0 M_L) · (−1)^(S−M_S)(S κ S'; −M_S 0 M_S):
                    // with M = min(L, L') the 3j symbols are single-term Racah sums,
                    // never zero inside the triangle.
                    let factor = phase(ta.l_total as i64 - ml as i64)
                        * three_j(
                            [2 * ta.l_total, 2 * t, 2 * tb.l_total],
                            [-2 * ml, 0, 2 * ml],
                        )
                        .unwrap_or(0.0)
                        * phase((ta.two_s as i64 - ms as i64) / 2)
                        * three_j([ta.two_s, 2 * kappa, tb.two_s], [-ms, 0, ms]).unwrap_or(0.0);
                    if factor != 0.0 && component.abs() > ZERO {
                        w[kt][a * size + b] = component / factor;
                    }
                }
            }
        }
        let mut tables = ShellTables {
            size,
            ranks,
            w,
            coulomb: Vec::new(),
        };
        let coulomb = (0..=2 * l)
            .map(|k| {
                if k == 0 || !k.is_multiple_of(2) {
                    Vec::new()
                } else {
                    tables.within_subshell(shell, k)
                }
            })
            .collect();
        tables.coulomb = coulomb;
        tables
    }

    /// ⟨αLS|Σ_{i<j} c^k(i)·c^k(j)|α'LS⟩ = ½ Σ_κt x_κt ⟨αLS|W^(κt)·W^(κt)|α'LS⟩
    /// plus b_k n δ_αα', with ⟨αLS|W·W|α'LS⟩ = Σ_α'' (−1)^(L−L''+S−S'')
    /// ⟨α‖W‖α''⟩⟨α''‖W‖α'⟩ / ((2L+1)(2S+1)) (Edmonds 1957, eq. 7.1.1 applied in
    /// orbit and spin, from memory) and b_k = −½ Σ_m' c^k(l m, l m')² the one-body
    /// remainder of reordering a†a†aa into a†a a†a.
    fn within_subshell(&self, shell: &ShellTerms, k: u32) -> Vec<f64> {
        let l = shell.l;
        let ck = CkTable::new(l);
        let x = pair_coefficients(&ck, l, l, k, false);
        let one_body = -0.5
            * (-(l as i32)..=l as i32)
                .map(|m| ck.get(l, l as i32, l, m, k).powi(2))
                .sum::<f64>();
        let size = self.size;
        let mut out = vec![0.0; size * size];
        for (a, ta) in shell.terms.iter().enumerate() {
            for (b, tb) in shell.terms.iter().enumerate() {
                if (ta.l_total, ta.two_s) != (tb.l_total, tb.two_s) {
                    continue;
                }
                let weight = ((2 * ta.l_total + 1) * (ta.two_s + 1)) as f64;
                let mut value = if a == b {
                    one_body * shell.electrons as f64
                } else {
                    0.0
                };
                for &(kappa, t, coefficient) in &x {
                    let mut product = 0.0;
                    for (c, tc) in shell.terms.iter().enumerate() {
                        let left = self.w(kappa, t, a, c);
                        if left == 0.0 {
                            continue;
                        }
                        let sign = phase(
                            ta.l_total as i64 - tc.l_total as i64
                                + (ta.two_s as i64 - tc.two_s as i64) / 2,
                        );
                        product += sign * left * self.w(kappa, t, c, b);
                    }
                    value += 0.5 * coefficient * product / weight;
                }
                if value.abs() > ZERO {
                    out[a * size + b] = value;
                }
            }
        }
        out
    }
}

/// The tables of lⁿ, made once per process for each (l, n) and shared.
pub(crate) fn shared_shell_tables(l: u32, electrons: u32) -> Arc<ShellTables> {
    type Table = Mutex<BTreeMap<(u32, u32), Arc<ShellTables>>>;
    static TABLE: OnceLock<Table> = OnceLock::new();
    let table = TABLE.get_or_init(|| Mutex::new(BTreeMap::new()));
    if let Some(found) = table
        .lock()
        .ok()
        .and_then(|t| t.get(&(l, electrons)).cloned())
    {
        return found;
    }
    // Made outside the lock: two threads may both make it, with equal results.
    let tables = Arc::new(ShellTables::new(&shared_shell_terms(l, electrons)));
    if let Ok(mut t) = table.lock() {
        t.entry((l, electrons)).or_insert_with(|| tables.clone());
    }
    tables
}

/// The coefficients x_κt of Σ_{i∈a, j∈b} (part of 1/r_ij multiplying R^k) =
/// Σ_κt x_κt W^(κt)(a)·W^(κt)(b), as (κ, t, x) with x ≠ 0.
///
/// Direct (F^k): Σ ⟨αβ|g|γδ⟩ (a†_α a_γ)(a†_β a_δ), α, γ in a and β, δ in b.
/// Exchange (G^k): −Σ ⟨αβ|g|γδ⟩ (a†_α a_δ)(a†_β a_γ), α, δ in a and β, γ in b.
/// With ⟨αβ|g|γδ⟩ = δ(σ_α σ_γ) δ(σ_β σ_δ) c^k(α, γ) c^k(δ, β) R^k (Condon &
/// Shortley 1935, §6⁶) and the expansion of a†_x a_y on the w^(κt) (module doc),
/// x_κt is the coefficient of W^(κt)₀₀(a) W^(κt)₀₀(b), where only the diagonal
/// one-electron elements enter: x_κt = [(2t+1)(2κ+1)]² Σ A_{xx,yy} w_x w_y.
pub(crate) fn pair_coefficients(
    ck: &CkTable,
    la: u32,
    lb: u32,
    k: u32,
    exchange: bool,
) -> Vec<(u32, u32, f64)> {
    let mut out = Vec::new();
    for kappa in 0..2 {
        for t in 0..=2 * la.min(lb) {
            let norm = ((2 * t + 1) * (2 * kappa + 1)) as f64;
            let mut sum = 0.0;
            for (ma, sa) in spin_orbitals(la) {
                let wa = one_electron(la, t, kappa, ma, sa);
                if wa == 0.0 {
                    continue;
                }
                for (mb, sb) in spin_orbitals(lb) {
                    let coefficient = if exchange {
                        if sa != sb {
                            continue;
                        }
                        -ck.get(la, ma, lb, mb, k).powi(2)
                    } else {
                        ck.get(la, ma, la, ma, k) * ck.get(lb, mb, lb, mb, k)
                    };
                    if coefficient != 0.0 {
                        sum += coefficient * wa * one_electron(lb, t, kappa, mb, sb);
                    }
                }
            }
            let x = norm * norm * sum;
            if x.abs() > 1e-13 {
                out.push((kappa, t, x));
            }
        }
    }
    out
}

/// [`pair_coefficients`], computed once per process for each argument set
/// (`ck` must reach max(l_a, l_b)).
fn shared_pair_coefficients(
    ck: &CkTable,
    la: u32,
    lb: u32,
    k: u32,
    exchange: bool,
) -> Vec<(u32, u32, f64)> {
    type Key = (u32, u32, u32, bool);
    type Table = Mutex<BTreeMap<Key, Vec<(u32, u32, f64)>>>;
    static TABLE: OnceLock<Table> = OnceLock::new();
    let table = TABLE.get_or_init(|| Mutex::new(BTreeMap::new()));
    let key = (la, lb, k, exchange);
    if let Some(found) = table.lock().ok().and_then(|t| t.get(&key).cloned()) {
        return found;
    }
    let x = pair_coefficients(ck, la, lb, k, exchange);
    if let Ok(mut t) = table.lock() {
        t.entry(key).or_insert_with(|| x.clone());
    }
    x
}

/// One open subshell of a configuration, as the recoupling sees it.
struct OpenShellData {
    orbital: Orbital,
    terms: Arc<ShellTerms>,
    tables: Arc<ShellTables>,
}

/// (k, (κ, t, x) list) of the direct or exchange part between two subshells.
type PairParts = Vec<(u32, Vec<(u32, u32, f64)>)>;

/// The two-subshell coefficients of one pair: direct parts, exchange parts, and
/// every (κ, t) they use, once.
type PairData = (PairParts, PairParts, Vec<(u32, u32)>);

/// The recoupling of one configuration: its open subshells, the two-subshell
/// coefficients, and a memo of 9j symbols.
pub(crate) struct ConfigurationRacah {
    shells: Vec<OpenShellData>,
    /// For each pair a < b of open subshells: (direct parts, exchange parts).
    pairs: FxHashMap<(usize, usize), PairData>,
    nine_js: RefCell<FxHashMap<[u32; 9], f64>>,
}

/// Number of (κ, t) pairs of two-subshell operators: κ = 0, 1 and t ≤ 2·MAX_SHELL_L.
const KINDS: usize = 2 * (2 * MAX_SHELL_L as usize + 1);

/// Position of (κ, t) in an array of [`KINDS`].
fn kind_index(kappa: u32, t: u32) -> usize {
    kappa as usize * (2 * MAX_SHELL_L as usize + 1) + t as usize
}

/// Orbit or spin.
#[derive(Clone, Copy)]
enum Space {
    Orbit,
    Spin,
}

impl ConfigurationRacah {
    /// The recoupling data of a configuration whose open subshells are
    /// `open` (orbital, occupancy) in coupling order.
    pub fn new(open: &[(Orbital, u32)], ck: &CkTable) -> ConfigurationRacah {
        let shells: Vec<OpenShellData> = open
            .iter()
            .map(|&(orbital, n)| OpenShellData {
                orbital,
                terms: shared_shell_terms(orbital.l, n),
                tables: shared_shell_tables(orbital.l, n),
            })
            .collect();
        let mut pairs = FxHashMap::default();
        for a in 0..shells.len() {
            for b in a + 1..shells.len() {
                let (la, lb) = (shells[a].orbital.l, shells[b].orbital.l);
                let direct: PairParts = (1..=2 * la.min(lb))
                    .filter(|k| k.is_multiple_of(2))
                    .map(|k| (k, shared_pair_coefficients(ck, la, lb, k, false)))
                    .filter(|(_, x)| !x.is_empty())
                    .collect();
                let exchange: PairParts = (la.abs_diff(lb)..=la + lb)
                    .filter(|k| (la + lb + k).is_multiple_of(2))
                    .map(|k| (k, shared_pair_coefficients(ck, la, lb, k, true)))
                    .filter(|(_, x)| !x.is_empty())
                    .collect();
                let mut kinds: Vec<(u32, u32)> = direct
                    .iter()
                    .chain(exchange.iter())
                    .flat_map(|(_, x)| x.iter().map(|&(kappa, t, _)| (kappa, t)))
                    .collect();
                kinds.sort_unstable();
                kinds.dedup();
                pairs.insert((a, b), (direct, exchange, kinds));
            }
        }
        ConfigurationRacah {
            shells,
            pairs,
            nine_js: RefCell::new(FxHashMap::default()),
        }
    }

    fn nine(&self, args: [u32; 9]) -> f64 {
        *self
            .nine_js
            .borrow_mut()
            .entry(args)
            .or_insert_with(|| nine_j(args).unwrap_or(0.0))
    }

    /// Doubled (shell value, coupled value) of subshell `c` of `term` in `space`.
    fn values(&self, term: &BasisTerm, c: usize, space: Space) -> (u32, u32) {
        let shell = &self.shells[c].terms.terms[term.shell_terms[c]];
        let (l, s) = term.couplings[c];
        match space {
            Space::Orbit => (2 * shell.l_total, 2 * l),
            Space::Spin => (shell.two_s, s),
        }
    }

    /// The 9j chain of a product of single-subshell tensors in one space: rank
    /// `rank(c)` on subshell c, coupled rank `total(c)` after subshell c (all
    /// doubled). The subshells' own reduced elements are not included.
    fn chain(
        &self,
        bra: &BasisTerm,
        ket: &BasisTerm,
        space: Space,
        rank: impl Fn(usize) -> u32,
        total: impl Fn(usize) -> u32,
    ) -> f64 {
        let mut factor = 1.0;
        for c in 1..self.shells.len() {
            let (_, big_prev) = self.values(bra, c - 1, space);
            let (_, big_prev_ket) = self.values(ket, c - 1, space);
            let (j, big) = self.values(bra, c, space);
            let (j_ket, big_ket) = self.values(ket, c, space);
            let (k_prev, k, k_total) = (total(c - 1), rank(c), total(c));
            let symbol = self.nine([
                big_prev,
                big_prev_ket,
                k_prev,
                j,
                j_ket,
                k,
                big,
                big_ket,
                k_total,
            ]);
            if symbol == 0.0 {
                return 0.0;
            }
            factor *= (((big + 1) * (big_ket + 1) * (k_total + 1)) as f64).sqrt() * symbol;
        }
        factor
    }

    /// √((2L_c+1)(2S_c+1)) of the subshell terms the operator does not touch
    /// (0 if they differ between bra and ket), over subshells not in `acted`.
    fn spectators(&self, bra: &BasisTerm, ket: &BasisTerm, acted: &[usize]) -> f64 {
        let mut factor = 1.0;
        for c in 0..self.shells.len() {
            if acted.contains(&c) {
                continue;
            }
            if bra.shell_terms[c] != ket.shell_terms[c] {
                return 0.0;
            }
            let term = &self.shells[c].terms.terms[bra.shell_terms[c]];
            factor *= (((2 * term.l_total + 1) * (term.two_s + 1)) as f64).sqrt();
        }
        factor
    }

    /// The Coulomb coefficients between two LS terms of this configuration with
    /// the same (L, S), pushed as (radial parameter, value).
    pub fn coulomb(&self, bra: &BasisTerm, ket: &BasisTerm, out: &mut Vec<(Radial, f64)>) {
        let n = self.shells.len();
        // Within one subshell: a scalar of that subshell, diagonal in everything else.
        if bra.couplings == ket.couplings {
            for a in 0..n {
                if (0..n).any(|c| c != a && bra.shell_terms[c] != ket.shell_terms[c]) {
                    continue;
                }
                let shell = &self.shells[a];
                for k in (2..=2 * shell.orbital.l).step_by(2) {
                    let value = shell
                        .tables
                        .coulomb(k, bra.shell_terms[a], ket.shell_terms[a]);
                    if value != 0.0 {
                        out.push((
                            Radial::Direct {
                                k,
                                a: shell.orbital,
                                b: shell.orbital,
                            },
                            value,
                        ));
                    }
                }
            }
        }
        // Between two subshells a < b: Σ x_κt W(a)·W(b), W(a)·W(b) =
        // (−1)^(κ+t) √((2κ+1)(2t+1)) [W(a) × W(b)]^(00), whose matrix element is its
        // double-reduced element over √((2L+1)(2S+1)).
        let (big_l, two_s) = (bra.l, bra.two_s);
        let outer = (((2 * big_l + 1) * (two_s + 1)) as f64).sqrt();
        for a in 0..n {
            for b in a + 1..n {
                // Couplings before a and from b on are untouched by the operator.
                if bra.couplings[..a] != ket.couplings[..a]
                    || bra.couplings[b..] != ket.couplings[b..]
                {
                    continue;
                }
                let spectators = self.spectators(bra, ket, &[a, b]);
                if spectators == 0.0 {
                    continue;
                }
                let Some((direct, exchange, kinds)) = self.pairs.get(&(a, b)) else {
                    continue;
                };
                let (oa, ob) = (self.shells[a].orbital, self.shells[b].orbital);
                let (first, second) = (oa.min(ob), oa.max(ob));
                // The recoupled W(a)·W(b) of each (κ, t), at κ·(2·MAX_SHELL_L+1) + t.
                let mut products = [0.0; KINDS];
                for &(kappa, t) in kinds {
                    let wa =
                        self.shells[a]
                            .tables
                            .w(kappa, t, bra.shell_terms[a], ket.shell_terms[a]);
                    let wb =
                        self.shells[b]
                            .tables
                            .w(kappa, t, bra.shell_terms[b], ket.shell_terms[b]);
                    if wa == 0.0 || wb == 0.0 {
                        continue;
                    }
                    let inside = |c: usize| c >= a && c < b;
                    let orbit = self.chain(
                        bra,
                        ket,
                        Space::Orbit,
                        |c| if c == a || c == b { 2 * t } else { 0 },
                        |c| if inside(c) { 2 * t } else { 0 },
                    );
                    if orbit == 0.0 {
                        continue;
                    }
                    let spin = self.chain(
                        bra,
                        ket,
                        Space::Spin,
                        |c| if c == a || c == b { 2 * kappa } else { 0 },
                        |c| if inside(c) { 2 * kappa } else { 0 },
                    );
                    let scalar =
                        phase((kappa + t) as i64) * (((2 * kappa + 1) * (2 * t + 1)) as f64).sqrt();
                    products[kind_index(kappa, t)] =
                        scalar * wa * wb * spectators * orbit * spin / outer;
                }
                for (parts, is_exchange) in [(direct, false), (exchange, true)] {
                    for (k, x) in parts {
                        let value: f64 = x
                            .iter()
                            .map(|&(kappa, t, c)| c * products[kind_index(kappa, t)])
                            .sum();
                        if value.abs() > ZERO {
                            let radial = if is_exchange {
                                Radial::Exchange {
                                    k: *k,
                                    a: first,
                                    b: second,
                                }
                            } else {
                                Radial::Direct {
                                    k: *k,
                                    a: first,
                                    b: second,
                                }
                            };
                            out.push((radial, value));
                        }
                    }
                }
            }
        }
    }

    /// The double-reduced element ⟨γLS‖Σ_{i∈a} l_i s_i‖γ'L'S'⟩ (the (11) double
    /// tensor of subshell number `a`, with l and s themselves, not unit tensors):
    /// √(l(l+1)(2l+1)·3/2) ⟨α_a‖W^(11)‖α'_a⟩ recoupled along the chain, rank 1 in
    /// orbit and spin from subshell a on. Zero unless the other subshells' terms
    /// and the couplings before a agree.
    pub fn spin_orbit(&self, bra: &BasisTerm, ket: &BasisTerm, a: usize) -> f64 {
        if bra.couplings[..a] != ket.couplings[..a] {
            return 0.0;
        }
        let spectators = self.spectators(bra, ket, &[a]);
        if spectators == 0.0 {
            return 0.0;
        }
        let shell = &self.shells[a];
        let l = shell.orbital.l as f64;
        let w = shell.tables.w(1, 1, bra.shell_terms[a], ket.shell_terms[a]);
        if w == 0.0 {
            return 0.0;
        }
        let reduced = (l * (l + 1.0) * (2.0 * l + 1.0) * 1.5).sqrt() * w;
        let rank = |c: usize| if c == a { 2 } else { 0 };
        let total = |c: usize| if c >= a { 2 } else { 0 };
        let orbit = self.chain(bra, ket, Space::Orbit, rank, total);
        if orbit == 0.0 {
            return 0.0;
        }
        let spin = self.chain(bra, ket, Space::Spin, rank, total);
        reduced * spectators * orbit * spin
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exchange_with_an_s_electron_is_the_spin_coupling() {
        // Σ_{i∈d} exchange with one s electron = −G²/5 (n/2 + 2 S_d·s): for one d
        // electron ¹D − ³D = 2G²/5 (Condon & Shortley 1935, §7⁶; Slater 1960,
        // vol. 2, ch. 20; from memory). On the tensors: W^(00) = N/√(2(2l+1)) and
        // W^(10) = S/(√(2l+1) √(3/2)) (w^(00) = 1/√(2(2l+1)), v¹ = s/⟨½‖s‖½⟩), so
        // x_00 = −(1/10) √10 √2 and x_10 = −(2/5) · 1.5 √5.
        let ck = CkTable::new(2);
        let x = pair_coefficients(&ck, 2, 0, 2, true);
        let find = |kappa: u32| {
            x.iter()
                .find(|e| (e.0, e.1) == (kappa, 0))
                .map_or(0.0, |e| e.2)
        };
        assert_eq!(x.len(), 2, "{x:?}");
        assert!((find(0) + 0.1 * 20f64.sqrt()).abs() < 1e-13, "{x:?}");
        assert!((find(1) + 0.4 * 1.5 * 5f64.sqrt()).abs() < 1e-13, "{x:?}");
    }

    #[test]
    fn the_number_operator_is_diagonal_with_its_reduced_element() {
        // W^(00) = N/√(2(2l+1)) on lⁿ, so ⟨α‖W^(00)‖α⟩ = n √((2L+1)(2S+1)) /
        // √(2(2l+1)) and zero between different terms (Wigner–Eckart, with
        // ⟨j‖1‖j⟩ = √(2j+1); Edmonds 1957, eq. 5.4.1).
        let terms = shared_shell_terms(2, 3);
        let tables = shared_shell_tables(2, 3);
        for (a, term) in terms.terms.iter().enumerate() {
            let size = (((2 * term.l_total + 1) * (term.two_s + 1)) as f64).sqrt();
            let want = 3.0 / 10f64.sqrt() * size;
            assert!((tables.w(0, 0, a, a) - want).abs() < 1e-12);
            for b in 0..terms.terms.len() {
                if b != a {
                    assert!(tables.w(0, 0, a, b).abs() < 1e-12);
                }
            }
        }
    }

    #[test]
    fn p2_coulomb_coefficients_are_the_textbook_ones() {
        // p²: ³P = F0 − 5F2, ¹D = F0 + F2, ¹S = F0 + 10F2 with F2 = F²/25
        // (Condon & Shortley 1935, §7⁶, from memory); the terms of p² in order ³P,
        // ¹D, ¹S (see the subshell term tests).
        let tables = shared_shell_tables(1, 2);
        let want = [-5.0 / 25.0, 1.0 / 25.0, 10.0 / 25.0];
        for (a, w) in want.iter().enumerate() {
            assert!((tables.coulomb(2, a, a) - w).abs() < 1e-13, "{a}");
        }
        // d²: ³F = F0 − 8F2 − 9F4, F2 = F²/49, F4 = F⁴/441 (same source); ³F is
        // the first term of d².
        let d2 = shared_shell_tables(2, 2);
        assert!((d2.coulomb(2, 0, 0) + 8.0 / 49.0).abs() < 1e-13);
        assert!((d2.coulomb(4, 0, 0) + 9.0 / 441.0).abs() < 1e-13);
    }
}
