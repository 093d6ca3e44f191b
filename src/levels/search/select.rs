//! The candidates ranked by chance probability, each line given to one candidate.
//!
//! Greedy with re-judging: the most significant candidate is taken; a candidate that
//! shares lines with one taken loses those lines and is judged again on the rest
//! (fewer lines only raise its chance probability, so it is put back in the queue at
//! its new place, or dropped). The outcome: no line supports two candidates.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use super::candidates::Problem;
use super::cluster::Cluster;
use super::{CandidateLevel, Support};
use crate::notation::HalfInt;

/// A cluster in the queue: the most significant first.
struct Queued(Cluster);

impl Queued {
    fn key(&self) -> (f64, f64, usize) {
        (
            self.0.chance_probability,
            self.0.local_probability,
            self.0.points.len(),
        )
    }
}

impl PartialEq for Queued {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}
impl Eq for Queued {}
impl PartialOrd for Queued {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl Ord for Queued {
    /// Greater = more significant: lower chance, then lower local probability, then
    /// more lines, then lower energy (a fixed order for ties).
    fn cmp(&self, other: &Self) -> Ordering {
        let (a, b) = (self.key(), other.key());
        b.0.total_cmp(&a.0)
            .then(b.1.total_cmp(&a.1))
            .then(a.2.cmp(&b.2))
            .then(other.0.energy.total_cmp(&self.0.energy))
    }
}

/// Rank the clusters and give each line to one candidate.
pub(crate) fn select(problem: &Problem, clusters: Vec<Cluster>) -> Vec<CandidateLevel> {
    let mut queue: BinaryHeap<Queued> = clusters.into_iter().map(Queued).collect();
    let mut used = vec![false; problem.lines.len()];
    let mut out = Vec::new();
    while let Some(Queued(cluster)) = queue.pop() {
        if cluster.uses_any(&used) {
            if let Some(rest) = cluster.without(problem, &used) {
                queue.push(Queued(rest));
            }
            continue;
        }
        for p in &cluster.points {
            if let Some(u) = used.get_mut(p.line as usize) {
                *u = true;
            }
        }
        out.push(candidate(problem, &cluster));
    }
    out
}

/// The public form of a cluster: indices into the caller's lines and levels.
fn candidate(problem: &Problem, cluster: &Cluster) -> CandidateLevel {
    let k = problem.config.tolerance_sigma();
    let supports = cluster
        .points
        .iter()
        .filter_map(|p| {
            let line = problem.lines.get(p.line as usize)?;
            let level = problem.known.get(p.level as usize)?;
            Some(Support {
                line: line.index,
                level: level.index,
                new_level_is_upper: p.upper,
                residual_cm1: line.sigma - (cluster.energy - level.energy).abs(),
                combined_uncertainty_cm1: p.uncertainty,
            })
        })
        .collect();
    let coincides_with = problem
        .known
        .iter()
        .filter(|l| l.parity == cluster.parity)
        .filter(|l| {
            (l.energy - cluster.energy).abs() <= k * l.uncertainty.hypot(cluster.uncertainty)
        })
        .min_by(|a, b| {
            (a.energy - cluster.energy)
                .abs()
                .total_cmp(&(b.energy - cluster.energy).abs())
        })
        .map(|l| l.index);
    CandidateLevel {
        energy_cm1: cluster.energy,
        uncertainty_cm1: cluster.uncertainty,
        parity: cluster.parity,
        allowed_j: cluster
            .allowed_twice_j
            .iter()
            .map(|&t| HalfInt::from_twice(t))
            .collect(),
        supports,
        expected_by_chance: cluster.expected,
        local_probability: cluster.local_probability,
        chance_probability: cluster.chance_probability,
        spin: super::jcompat::spin_check(&problem.known, &cluster.points),
        coincides_with,
    }
}
