//! Candidate energies E = E_k ± σ of every line–level pair, formed slab by slab
//! over the energy window, sorted, and swept for the energies that many of them
//! support.
//!
//! Each pair gives an interval E_c ± k·u_c (u_c the line's and the level's
//! uncertainties in quadrature): the trial energies it supports. A sweep over the
//! sorted ends of the intervals keeps the set of intervals that hold the sweep
//! position and, per line, how many of them it has; at each peak of the count of
//! distinct lines (the last start before an end) the set is a cluster to judge.
//! The sweep is the classic one for the deepest overlap of intervals (e.g. de Berg
//! et al. 2008, *Computational Geometry*, ch. 10, cited from memory); sorting makes
//! it O(P log P) for P pairs.
//!
//! The window is cut into slabs so that the pairs of one slab (a few million)
//! are in memory at a time; each slab also forms the pairs within a margin around
//! it, wide enough for every interval that reaches into it and for the density
//! window, and keeps only the clusters whose peak lies inside it. Slabs are
//! searched on every core (rayon).

use rayon::prelude::*;

use super::cluster::{Cluster, build};
use super::{SearchConfig, SearchLine, SearchProgress};
use crate::levels::table::Level;
use crate::notation::{Parity, Term};

/// Pairs formed per slab, about: keeps a slab to some 100 MB at the peak.
const POINTS_PER_SLAB: usize = 2_000_000;

/// A known level, as the search needs it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Known {
    pub energy: f64,
    pub uncertainty: f64,
    pub parity: Parity,
    pub twice_j: u32,
    /// Multiplicity 2S + 1 of an LS term.
    pub multiplicity: Option<u32>,
    /// Index in the levels given.
    pub index: usize,
}

/// A line, as the search needs it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Line {
    pub sigma: f64,
    pub uncertainty: f64,
    /// Index in the lines given.
    pub index: usize,
}

/// One candidate energy: a line and a known level.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Point {
    /// E_k + σ or E_k − σ, cm⁻¹.
    pub energy: f64,
    /// u_c, cm⁻¹.
    pub uncertainty: f64,
    /// Index in [`Problem::lines`].
    pub line: u32,
    /// Index in [`Problem::known`].
    pub level: u32,
    /// The new level is the upper one (E = E_k + σ).
    pub upper: bool,
}

/// The search, prepared: lines sorted by wavenumber, known levels with absolute
/// energies, the window and the number of pairs in it.
#[derive(Debug)]
pub struct Problem {
    pub(crate) lines: Vec<Line>,
    pub(crate) known: Vec<Known>,
    pub(crate) range: (f64, f64),
    pub(crate) total_points: usize,
    pub(crate) offset_levels: usize,
    pub(crate) config: SearchConfig,
    /// Largest u_c of any pair, cm⁻¹.
    pub(crate) max_uncertainty: f64,
    /// Pairs per slab, about ([`POINTS_PER_SLAB`]; tests make it small).
    pub(crate) points_per_slab: usize,
    /// Smallest u_c of any pair, cm⁻¹.
    min_uncertainty: f64,
    /// For n lines (the index), the largest λ at which n lines can still be
    /// reported: a quick test that spares most sweep peaks the full judgement.
    lambda_limits: Vec<f64>,
}

/// Line counts for which [`Problem::lambda_limits`] is tabulated; above, every peak
/// is judged in full.
const LIMITS_UP_TO: usize = 64;

impl Problem {
    /// Prepare a search.
    pub fn new(lines: &[SearchLine], levels: &[Level], config: &SearchConfig) -> Problem {
        let mut sorted: Vec<Line> = lines
            .iter()
            .enumerate()
            .filter(|(_, l)| {
                l.wavenumber_cm1.is_finite()
                    && l.wavenumber_cm1 > 0.0
                    && l.uncertainty_cm1.is_finite()
                    && l.uncertainty_cm1 > 0.0
            })
            .map(|(index, l)| Line {
                sigma: l.wavenumber_cm1,
                uncertainty: l.uncertainty_cm1,
                index,
            })
            .collect();
        sorted.sort_by(|a, b| a.sigma.total_cmp(&b.sigma));
        let offset_levels = levels
            .iter()
            .filter(|l| l.energy_status.offset.is_some())
            .count();
        let known: Vec<Known> = levels
            .iter()
            .enumerate()
            .filter(|(_, l)| {
                l.energy_status.offset.is_none()
                    && l.energy_cm1.is_finite()
                    && l.uncertainty_cm1.is_finite()
            })
            .map(|(index, l)| Known {
                energy: l.energy_cm1,
                uncertainty: l.uncertainty_cm1,
                parity: l.label.parity(),
                twice_j: l.label.j.twice,
                multiplicity: match &l.label.term {
                    Term::Ls(t) => Some(t.multiplicity),
                    _ => None,
                },
                index,
            })
            .collect();
        let max_line_u = sorted.iter().map(|l| l.uncertainty).fold(0.0, f64::max);
        let max_level_u = known.iter().map(|l| l.uncertainty).fold(0.0, f64::max);
        let range = config.energy_range_cm1().unwrap_or_else(|| {
            let top = known.iter().map(|l| l.energy).fold(0.0, f64::max);
            let sigma = sorted.last().map_or(0.0, |l| l.sigma);
            (0.0, top + sigma + 1.0)
        });
        let min_uncertainty = sorted
            .iter()
            .map(|l| l.uncertainty)
            .fold(f64::MAX, f64::min)
            .hypot(known.iter().map(|l| l.uncertainty).fold(f64::MAX, f64::min));
        let mut problem = Problem {
            lines: sorted,
            known,
            range,
            total_points: 0,
            offset_levels,
            config: *config,
            max_uncertainty: max_line_u.hypot(max_level_u),
            points_per_slab: POINTS_PER_SLAB,
            min_uncertainty,
            lambda_limits: Vec::new(),
        };
        problem.total_points = [Parity::Even, Parity::Odd]
            .iter()
            .map(|&p| problem.count_points(p, range.0, range.1))
            .sum();
        problem.lambda_limits = (0..=LIMITS_UP_TO)
            .map(|n| lambda_limit(n, problem.total_points, config.max_chance_probability()))
            .collect();
        problem
    }

    /// Whether a peak of `lines` distinct lines at local density `rho` may give a
    /// candidate that is reported: false only when even the narrowest spread of
    /// pairs (the smallest u_c of the search) would be too likely by chance.
    pub(crate) fn may_report(&self, lines: usize, rho: f64) -> bool {
        let lambda = 2.0 * self.config.tolerance_sigma() * self.min_uncertainty * rho;
        self.lambda_limits
            .get(lines)
            .is_none_or(|&limit| lambda <= limit)
    }

    /// The largest tolerance k·u_c of any pair, cm⁻¹.
    fn max_tolerance(&self) -> f64 {
        self.config.tolerance_sigma() * self.max_uncertainty
    }

    /// The half-width of the density window: F times the largest tolerance, cm⁻¹.
    pub(crate) fn density_half_window(&self) -> f64 {
        self.config.density_window_factor() * self.max_tolerance()
    }

    /// Indices into the sorted lines with σ in [low, high].
    fn line_span(&self, low: f64, high: f64) -> std::ops::Range<usize> {
        let start = self.lines.partition_point(|l| l.sigma < low);
        let end = self.lines.partition_point(|l| l.sigma <= high);
        start..end.max(start)
    }

    /// The known levels a new level of `parity` combines with (the opposite parity),
    /// with their index in [`Problem::known`].
    fn partners(&self, parity: Parity) -> impl Iterator<Item = (usize, &Known)> + '_ {
        self.known
            .iter()
            .enumerate()
            .filter(move |(_, k)| k.parity != parity)
    }

    /// For each partner level, the lines whose pair puts a new level of `parity`
    /// in [low, high]: as upper level (σ = E − E_k) and as lower (σ = E_k − E).
    fn spans(
        &self,
        parity: Parity,
        low: f64,
        high: f64,
    ) -> impl Iterator<
        Item = (
            usize,
            &Known,
            std::ops::Range<usize>,
            std::ops::Range<usize>,
        ),
    > + '_ {
        let low = low.max(0.0);
        self.partners(parity).map(move |(i, k)| {
            let upper = self.line_span(low - k.energy, high - k.energy);
            let lower = self.line_span(k.energy - high, k.energy - low);
            (i, k, upper, lower)
        })
    }

    /// The number of pairs that put a new level of `parity` in [low, high].
    fn count_points(&self, parity: Parity, low: f64, high: f64) -> usize {
        self.spans(parity, low, high)
            .map(|(_, _, upper, lower)| upper.len() + lower.len())
            .sum()
    }

    /// The pairs that put a new level of `parity` in [low, high], sorted by energy.
    fn points(&self, parity: Parity, low: f64, high: f64) -> Vec<Point> {
        let mut out = Vec::with_capacity(self.count_points(parity, low, high));
        for (level, known, upper, lower) in self.spans(parity, low, high) {
            for (span, sign) in [(upper, 1.0), (lower, -1.0)] {
                for line in span {
                    let Some(l) = self.lines.get(line) else {
                        continue;
                    };
                    out.push(Point {
                        energy: known.energy + sign * l.sigma,
                        uncertainty: l.uncertainty.hypot(known.uncertainty),
                        line: line as u32,
                        level: level as u32,
                        upper: sign > 0.0,
                    });
                }
            }
        }
        out.sort_unstable_by(|a, b| a.energy.total_cmp(&b.energy));
        out
    }
}

/// The largest λ at which `n` lines reach a chance probability of at most `max_p`
/// among `trials` candidate energies (bisection on log λ; the probability grows with
/// λ), made a little larger so that rounding never drops a reportable peak.
fn lambda_limit(n: usize, trials: usize, max_p: f64) -> f64 {
    use super::significance::{local_probability, with_look_elsewhere};
    let p = |lambda: f64| with_look_elsewhere(local_probability(n, lambda), trials);
    let (mut low, mut high) = (-700.0f64, 30.0f64); // ln λ
    if p(high.exp()) <= max_p {
        return f64::INFINITY;
    }
    if p(low.exp()) > max_p {
        return 0.0;
    }
    for _ in 0..80 {
        let mid = 0.5 * (low + high);
        if p(mid.exp()) <= max_p {
            low = mid;
        } else {
            high = mid;
        }
    }
    high.exp() * 1.001
}

/// One slab to sweep: a parity and the energies [low, high) whose peaks it owns.
#[derive(Debug, Clone, Copy)]
struct Slab {
    parity: Parity,
    low: f64,
    high: f64,
}

/// The slabs of the window, for both parities, each with about
/// [`Problem::points_per_slab`] pairs or fewer.
fn slabs(problem: &Problem) -> Vec<Slab> {
    let (low, high) = problem.range;
    let mut out = Vec::new();
    for parity in [Parity::Even, Parity::Odd] {
        let points = problem.count_points(parity, low, high);
        let count = points.div_ceil(problem.points_per_slab.max(1)).max(1);
        let width = (high - low) / count as f64;
        for i in 0..count {
            let a = low + width * i as f64;
            let b = if i + 1 == count {
                high
            } else {
                low + width * (i + 1) as f64
            };
            out.push(Slab {
                parity,
                low: a,
                high: b,
            });
        }
    }
    out
}

/// Sweep every slab (on every core), calling `progress` after each group of
/// slabs; the clusters found, in slab order.
pub(crate) fn sweep_all(
    problem: &Problem,
    progress: &mut dyn FnMut(SearchProgress),
) -> Vec<Cluster> {
    let slabs = slabs(problem);
    let group = rayon::current_num_threads().max(1) * 2;
    let mut out = Vec::new();
    let mut done = 0;
    for chunk in slabs.chunks(group) {
        let found: Vec<Vec<Cluster>> = chunk.par_iter().map(|s| sweep(problem, s)).collect();
        out.extend(found.into_iter().flatten());
        done += chunk.len();
        progress(SearchProgress {
            done,
            total: slabs.len(),
        });
    }
    out
}

/// Sweep one slab: the clusters whose peak lies in it.
fn sweep(problem: &Problem, slab: &Slab) -> Vec<Cluster> {
    let config = &problem.config;
    let k = config.tolerance_sigma();
    let margin = problem.max_tolerance() * (1.0 + config.density_window_factor());
    let points = problem.points(slab.parity, slab.low - margin, slab.high + margin);
    // Interval ends: (position, end?, point); starts sort before ends at one position
    // so that touching intervals overlap.
    let mut events: Vec<(f64, bool, u32)> = Vec::with_capacity(2 * points.len());
    for (i, p) in points.iter().enumerate() {
        let t = k * p.uncertainty;
        events.push((p.energy - t, false, i as u32));
        events.push((p.energy + t, true, i as u32));
    }
    events.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));

    let mut per_line = vec![0u32; problem.lines.len()];
    let mut distinct = 0usize;
    let mut active: Vec<u32> = Vec::new();
    let mut slot = vec![u32::MAX; points.len()];
    let mut rising = false;
    let mut out = Vec::new();
    for &(position, end, i) in &events {
        let Some(point) = points.get(i as usize) else {
            continue;
        };
        let line = point.line as usize;
        if !end {
            if let Some(count) = per_line.get_mut(line) {
                if *count == 0 {
                    distinct += 1;
                }
                *count += 1;
            }
            if let Some(s) = slot.get_mut(i as usize) {
                *s = active.len() as u32;
            }
            active.push(i);
            rising = true;
            continue;
        }
        if rising
            && distinct >= config.min_lines()
            && position >= slab.low
            && position < slab.high
            && position >= problem.range.0
            && position <= problem.range.1
            && problem.may_report(
                distinct,
                peak_density(problem, &points, position, active.len()),
            )
        {
            let members: Vec<Point> = active
                .iter()
                .filter_map(|&a| points.get(a as usize).copied())
                .collect();
            if let Some(cluster) = build(problem, slab.parity, members, position, &points) {
                out.push(cluster);
            }
        }
        rising = false;
        if let Some(count) = per_line.get_mut(line) {
            *count = count.saturating_sub(1);
            if *count == 0 {
                distinct = distinct.saturating_sub(1);
            }
        }
        // Remove point i from the active set (swap with the last).
        let Some(&at) = slot.get(i as usize) else {
            continue;
        };
        let at = at as usize;
        if at < active.len() {
            active.swap_remove(at);
            if let Some(&moved) = active.get(at)
                && let Some(s) = slot.get_mut(moved as usize)
            {
                *s = at as u32;
            }
        }
    }
    out
}

/// The density of pairs around `peak`, the `own` pairs of the peak left out: as
/// [`super::cluster::build`] counts it.
pub(crate) fn peak_density(problem: &Problem, sorted: &[Point], peak: f64, own: usize) -> f64 {
    let half_window = problem.density_half_window();
    super::significance::density(
        count_between(sorted, peak - half_window, peak + half_window),
        own,
        peak,
        half_window,
    )
}

/// The number of points of `sorted` (by energy) in [low, high].
pub(crate) fn count_between(sorted: &[Point], low: f64, high: f64) -> usize {
    let start = sorted.partition_point(|p| p.energy < low);
    let end = sorted.partition_point(|p| p.energy <= high);
    end.saturating_sub(start)
}
