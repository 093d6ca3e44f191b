//! A cluster of candidate energies at a peak of the sweep, made into a candidate
//! level: one pair per line and per known level, the J values allowed, the weighted
//! mean energy and its chance probability.

use super::candidates::{Point, Problem, peak_density};
use super::jcompat::choose_j;
use super::significance::{cluster_probability, with_look_elsewhere};
use crate::notation::Parity;

/// A candidate level as the search keeps it.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Cluster {
    pub parity: Parity,
    /// The supporting pairs: one per line, one per known level, by increasing
    /// |E_c − E|/u_c at the sweep peak.
    pub points: Vec<Point>,
    /// Allowed J, twice.
    pub allowed_twice_j: Vec<u32>,
    /// Weighted mean energy, cm⁻¹.
    pub energy: f64,
    /// Its standard uncertainty, cm⁻¹.
    pub uncertainty: f64,
    /// Local density ρ of candidate energies, per cm⁻¹.
    pub density: f64,
    /// λ = 2tρ.
    pub expected: f64,
    /// The probability that a candidate energy of the null model starts a cluster
    /// as extreme ([`cluster_probability`]).
    pub local_probability: f64,
    /// With the look-elsewhere factor.
    pub chance_probability: f64,
}

/// The candidate level of the pairs `members` (all holding `peak` in their
/// intervals), or `None` when it has too few lines or too high a chance probability
/// to report. `sorted` holds every pair of the slab, by energy, for the density.
pub(crate) fn build(
    problem: &Problem,
    parity: Parity,
    members: Vec<Point>,
    peak: f64,
    sorted: &[Point],
) -> Option<Cluster> {
    let config = &problem.config;
    let k = config.tolerance_sigma();
    let u_min = members
        .iter()
        .map(|p| p.uncertainty)
        .fold(f64::MAX, f64::min);
    let rho = peak_density(problem, sorted, peak, members.len());

    // The most the cluster can achieve: every distinct line, the narrowest spread.
    let mut lines: Vec<u32> = members.iter().map(|p| p.line).collect();
    lines.sort_unstable();
    lines.dedup();
    // The span can shrink to nothing: the lower bound of the probability.
    let best_case = with_look_elsewhere(
        cluster_probability(lines.len(), 2.0 * k * u_min * rho, 0.0),
        problem.total_points,
    );
    if best_case > config.max_chance_probability() {
        return None;
    }

    let mut members = members;
    members.sort_by(|a, b| {
        let da = (a.energy - peak).abs() / a.uncertainty;
        let db = (b.energy - peak).abs() / b.uncertainty;
        da.total_cmp(&db)
    });
    let mut used_lines: Vec<u32> = Vec::new();
    let mut used_levels: Vec<u32> = Vec::new();
    let mut chosen = Vec::new();
    for p in members {
        if used_lines.contains(&p.line) || used_levels.contains(&p.level) {
            continue;
        }
        used_lines.push(p.line);
        used_levels.push(p.level);
        chosen.push(p);
    }
    finish(problem, parity, chosen, rho)
}

/// The candidate level of the chosen pairs with local density `rho`: the J values,
/// the weighted mean and the chance probability; `None` when too few lines are left
/// or the chance probability is above the reporting limit.
pub(crate) fn finish(
    problem: &Problem,
    parity: Parity,
    points: Vec<Point>,
    rho: f64,
) -> Option<Cluster> {
    let config = &problem.config;
    let (allowed, points) = choose_j(&problem.known, points);
    if points.len() < config.min_lines() || allowed.is_empty() {
        return None;
    }
    // Weighted mean (inverse-variance weights; e.g. Taylor 1997, *An Introduction to
    // Error Analysis*, § 7.2).
    let (sum_w, sum_we) = points.iter().fold((0.0, 0.0), |(w, we), p| {
        let weight = 1.0 / (p.uncertainty * p.uncertainty);
        (w + weight, we + weight * p.energy)
    });
    if !(sum_w > 0.0 && sum_w.is_finite()) {
        return None;
    }
    let energy = sum_we / sum_w;
    // The uncertainty of the weighted mean, scaled by the Birge ratio √(χ²/(n − 1))
    // where the lines scatter about it more than their uncertainties say (Birge
    // 1932, Phys. Rev. 40, 207; the scale factor of the Particle Data Group's
    // averages; cited from memory): a mean of many lines is then not claimed more
    // precise than their agreement shows.
    let chi2: f64 = points
        .iter()
        .map(|p| ((p.energy - energy) / p.uncertainty).powi(2))
        .sum();
    let birge = (chi2 / (points.len() - 1).max(1) as f64).sqrt().max(1.0);
    let uncertainty = sum_w.sqrt().recip() * birge;
    let u_max = points.iter().map(|p| p.uncertainty).fold(0.0, f64::max);
    let window = 2.0 * config.tolerance_sigma() * u_max;
    let (low, high) = points.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
        (lo.min(p.energy), hi.max(p.energy))
    });
    let expected = window * rho;
    let local = cluster_probability(points.len(), expected, (high - low) / window);
    let chance = with_look_elsewhere(local, problem.total_points);
    if chance > config.max_chance_probability() {
        return None;
    }
    Some(Cluster {
        parity,
        points,
        allowed_twice_j: allowed,
        energy,
        uncertainty,
        density: rho,
        expected,
        local_probability: local,
        chance_probability: chance,
    })
}

impl Cluster {
    /// The cluster without the pairs of the lines marked in `used` (indexed by
    /// [`Problem::lines`]), judged again; `None` when it no longer qualifies.
    pub(crate) fn without(&self, problem: &Problem, used: &[bool]) -> Option<Cluster> {
        let points = self
            .points
            .iter()
            .filter(|p| !used.get(p.line as usize).copied().unwrap_or(true))
            .copied()
            .collect();
        finish(problem, self.parity, points, self.density)
    }

    /// Whether any of its lines is marked in `used`.
    pub(crate) fn uses_any(&self, used: &[bool]) -> bool {
        self.points
            .iter()
            .any(|p| used.get(p.line as usize).copied().unwrap_or(true))
    }
}
