//! One transition, one line: the joint resolution of the whole list.
//!
//! Each observed line is to be explained by one primary prediction, and each
//! prediction may be the primary of one observed line only (blends are added
//! afterwards, see [`super::evidence`]). Among all such choices we want the one of
//! largest total log-likelihood: a maximum-weight bipartite matching between lines
//! and predictions, edge weights ℓ_ij − ℓ_null,i (ℓ_null the log-likelihood of a
//! line that no prediction explains; an edge of weight ≤ 0 is never taken).
//!
//! Algorithm. A single Hungarian method over the whole list would cost
//! O(n²·m); instead the candidate graph (lines and predictions joined by candidate
//! edges) is split into connected components with a union–find (Tarjan 1975,
//! J. ACM 22, 215: path halving and union by size, near-linear). Components are
//! independent, and nearly all are a single line. A component of up to
//! [`EXACT_LINES`] lines and [`EXACT_PREDICTIONS`] predictions is solved exactly by
//! the Hungarian method in its shortest-augmenting-path form (Kuhn 1955; Jonker &
//! Volgenant 1987, Computing 38, 325), O(r²c) for r lines and c columns, on a
//! rectangular cost matrix where each line has a column of its own for "left
//! unmatched" (cost 0). A larger component (a dense forest of overlapping lines) is
//! resolved greedily: edges by decreasing weight, each taken when both its line and
//! its prediction are still free (a ½-approximation of the optimum, Avis 1983,
//! Networks 13, 475), so the whole resolution stays O(E log E) at worst.
//!
//! Hand-written rather than taken from a crate: the well-kept matching crates want
//! integer (`Ord`) weights and square matrices; here the weights are log-likelihoods
//! and the matrices small and rectangular.

/// Largest component solved exactly, in lines.
pub const EXACT_LINES: usize = 60;
/// Largest component solved exactly, in predictions.
pub const EXACT_PREDICTIONS: usize = 600;

/// For each line, its candidates as (prediction, weight); returns for each line the
/// index of its primary candidate, or `None` when it is left unmatched.
pub fn resolve(lines: &[Vec<(usize, f64)>], predictions: usize) -> Vec<Option<usize>> {
    let n = lines.len();
    let mut sets = UnionFind::new(n + predictions);
    for (i, candidates) in lines.iter().enumerate() {
        for &(p, w) in candidates {
            if w > 0.0 && p < predictions {
                sets.union(i, n + p);
            }
        }
    }
    // Lines grouped by component root.
    let mut root_of_line: Vec<(usize, usize)> = (0..n).map(|i| (sets.find(i), i)).collect();
    root_of_line.sort_unstable();
    let mut chosen = vec![None; n];
    let mut start = 0;
    while start < root_of_line.len() {
        let root = root_of_line[start].0;
        let mut end = start;
        while end < root_of_line.len() && root_of_line[end].0 == root {
            end += 1;
        }
        let members: Vec<usize> = root_of_line[start..end].iter().map(|&(_, i)| i).collect();
        solve_component(lines, &members, &mut chosen);
        start = end;
    }
    chosen
}

fn solve_component(lines: &[Vec<(usize, f64)>], members: &[usize], chosen: &mut [Option<usize>]) {
    if let [only] = members {
        let best = lines.get(*only).and_then(|c| {
            c.iter()
                .enumerate()
                .filter(|(_, (_, w))| *w > 0.0)
                .max_by(|a, b| a.1.1.total_cmp(&b.1.1).then(b.0.cmp(&a.0)))
                .map(|(k, _)| k)
        });
        if let Some(slot) = chosen.get_mut(*only) {
            *slot = best;
        }
        return;
    }
    let mut columns: Vec<usize> = members
        .iter()
        .flat_map(|&i| lines.get(i).into_iter().flatten().map(|&(p, _)| p))
        .collect();
    columns.sort_unstable();
    columns.dedup();
    if members.len() <= EXACT_LINES && columns.len() <= EXACT_PREDICTIONS {
        hungarian_component(lines, members, &columns, chosen);
    } else {
        greedy_component(lines, members, chosen);
    }
}

/// Cost of a missing edge: far above any −weight, so never chosen while a dummy is
/// free (every line has its own).
const FORBIDDEN: f64 = 1e12;

fn hungarian_component(
    lines: &[Vec<(usize, f64)>],
    members: &[usize],
    columns: &[usize],
    chosen: &mut [Option<usize>],
) {
    let r = members.len();
    let c = columns.len() + r;
    // cost[i][j]: −weight for a candidate edge, 0 for the line's own dummy column.
    let mut cost = vec![FORBIDDEN; r * c];
    for (row, &i) in members.iter().enumerate() {
        for &(p, w) in lines.get(i).into_iter().flatten() {
            if w > 0.0
                && let Ok(col) = columns.binary_search(&p)
                && let Some(cell) = cost.get_mut(row * c + col)
            {
                *cell = cell.min(-w);
            }
        }
        if let Some(cell) = cost.get_mut(row * c + columns.len() + row) {
            *cell = 0.0;
        }
    }
    let assignment = min_cost_assignment(&cost, r, c);
    for (row, &i) in members.iter().enumerate() {
        let col = assignment.get(row).copied().flatten();
        let pick = col.filter(|&col| col < columns.len()).and_then(|col| {
            let p = columns.get(col)?;
            let candidates = lines.get(i)?;
            // The best-weighted candidate entry of that prediction.
            candidates
                .iter()
                .enumerate()
                .filter(|(_, (q, w))| q == p && *w > 0.0)
                .max_by(|a, b| a.1.1.total_cmp(&b.1.1))
                .map(|(k, _)| k)
        });
        if let Some(slot) = chosen.get_mut(i) {
            *slot = pick;
        }
    }
}

/// The Hungarian method, shortest augmenting paths with potentials, for an r × c
/// cost matrix (row-major), r ≤ c: returns the column of each row.
fn min_cost_assignment(cost: &[f64], r: usize, c: usize) -> Vec<Option<usize>> {
    let at = |i: usize, j: usize| cost.get(i * c + j).copied().unwrap_or(FORBIDDEN);
    // 1-based arrays as in the classical formulation; index 0 is the virtual row.
    let mut u = vec![0.0; r + 1];
    let mut v = vec![0.0; c + 1];
    let mut row_of = vec![0usize; c + 1];
    let mut way = vec![0usize; c + 1];
    for i in 1..=r {
        row_of[0] = i;
        let mut j0 = 0;
        let mut min_to = vec![f64::INFINITY; c + 1];
        let mut used = vec![false; c + 1];
        loop {
            used[j0] = true;
            let i0 = row_of[j0];
            let mut delta = f64::INFINITY;
            let mut j1 = 0;
            for j in 1..=c {
                if !used[j] {
                    let reduced = at(i0 - 1, j - 1) - u[i0] - v[j];
                    if reduced < min_to[j] {
                        min_to[j] = reduced;
                        way[j] = j0;
                    }
                    if min_to[j] < delta {
                        delta = min_to[j];
                        j1 = j;
                    }
                }
            }
            if j1 == 0 {
                break; // cannot happen: every row has a dummy column
            }
            for j in 0..=c {
                if used[j] {
                    u[row_of[j]] += delta;
                    v[j] -= delta;
                } else {
                    min_to[j] -= delta;
                }
            }
            j0 = j1;
            if row_of[j0] == 0 {
                break;
            }
        }
        loop {
            let j1 = way[j0];
            row_of[j0] = row_of[j1];
            j0 = j1;
            if j0 == 0 {
                break;
            }
        }
    }
    let mut column_of = vec![None; r];
    for (j, &i) in row_of.iter().enumerate().skip(1) {
        if i > 0
            && let Some(slot) = column_of.get_mut(i - 1)
        {
            *slot = Some(j - 1);
        }
    }
    column_of
}

fn greedy_component(lines: &[Vec<(usize, f64)>], members: &[usize], chosen: &mut [Option<usize>]) {
    let mut edges: Vec<(f64, usize, usize, usize)> = members
        .iter()
        .flat_map(|&i| {
            lines
                .get(i)
                .into_iter()
                .flatten()
                .enumerate()
                .filter(|(_, (_, w))| *w > 0.0)
                .map(move |(k, &(p, w))| (w, i, k, p))
        })
        .collect();
    edges.sort_unstable_by(|a, b| b.0.total_cmp(&a.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));
    let mut taken = std::collections::HashSet::new();
    for (_, i, k, p) in edges {
        if chosen.get(i).is_some_and(|c| c.is_none()) && !taken.contains(&p) {
            taken.insert(p);
            if let Some(slot) = chosen.get_mut(i) {
                *slot = Some(k);
            }
        }
    }
}

/// Disjoint sets with path halving and union by size.
struct UnionFind {
    parent: Vec<usize>,
    size: Vec<u32>,
}

impl UnionFind {
    fn new(n: usize) -> UnionFind {
        UnionFind {
            parent: (0..n).collect(),
            size: vec![1; n],
        }
    }

    fn find(&mut self, mut x: usize) -> usize {
        while let Some(&p) = self.parent.get(x) {
            if p == x {
                break;
            }
            let grand = self.parent.get(p).copied().unwrap_or(p);
            if let Some(slot) = self.parent.get_mut(x) {
                *slot = grand;
            }
            x = grand;
        }
        x
    }

    fn union(&mut self, a: usize, b: usize) {
        let (mut a, mut b) = (self.find(a), self.find(b));
        if a == b {
            return;
        }
        if self.size.get(a) < self.size.get(b) {
            std::mem::swap(&mut a, &mut b);
        }
        if let Some(slot) = self.parent.get_mut(b) {
            *slot = a;
        }
        let sb = self.size.get(b).copied().unwrap_or(1);
        if let Some(slot) = self.size.get_mut(a) {
            *slot += sb;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn one_transition_cannot_explain_two_lines_while_a_third_is_left_over() {
        // Two lines both prefer prediction 0; line 1 has prediction 1 as well.
        // Per line, both would take 0; jointly, line 1 takes 1 (total 10 + 4 > 9 + 1).
        let lines = vec![vec![(0, 10.0)], vec![(0, 9.0), (1, 4.0)]];
        assert_eq!(resolve(&lines, 2), vec![Some(0), Some(1)]);
    }

    /// The best total weight by trying every assignment (small cases).
    fn brute(lines: &[Vec<(usize, f64)>]) -> f64 {
        fn go(lines: &[Vec<(usize, f64)>], i: usize, used: &mut Vec<usize>) -> f64 {
            let Some(c) = lines.get(i) else { return 0.0 };
            let mut best = go(lines, i + 1, used);
            for &(p, w) in c {
                if w > 0.0 && !used.contains(&p) {
                    used.push(p);
                    best = best.max(w + go(lines, i + 1, used));
                    used.pop();
                }
            }
            best
        }
        go(lines, 0, &mut Vec::new())
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 200, rng_seed: proptest::test_runner::RngSeed::Fixed(11), ..ProptestConfig::default() })]
        // The exact method's optimum equals exhaustive search (the definition of a
        // maximum-weight matching).
        #[test]
        fn hungarian_matches_exhaustive_search(
            lines in proptest::collection::vec(
                proptest::collection::vec((0usize..5, -1.0f64..10.0), 0..4), 1..6)
        ) {
            let chosen = resolve(&lines, 5);
            let mut used = Vec::new();
            let mut total = 0.0;
            for (i, pick) in chosen.iter().enumerate() {
                if let Some(k) = pick {
                    let (p, w) = lines[i][*k];
                    prop_assert!(w > 0.0);
                    prop_assert!(!used.contains(&p));
                    used.push(p);
                    total += w;
                }
            }
            prop_assert!((total - brute(&lines)).abs() < 1e-9);
        }
    }
}
