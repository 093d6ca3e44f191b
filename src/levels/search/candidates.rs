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
//! et al. 2008, *Computational Geometry*, ch. 10, cited from memory).
//!
//! The candidate energies are sorted once per slab by a distribution sort, O(P)
//! for P pairs; a linear pass over them with three moving bounds finds where a
//! cluster could be reported at all (enough pairs within 2t, a density low enough),
//! and only there are interval ends sorted and swept. In a large search this leaves
//! out nearly every pair: random pairs make many small peaks, none of them
//! reportable.
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

/// Line counts for which [`Problem::lambda_limits`] is tabulated at least (more in a
/// dense search); above, the probability is computed for each peak.
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
        // Tabulate past the line counts a window 2t holds on average (both parities
        // over the window, so about twice one parity's), with room for denser parts.
        let width = (range.1 - range.0).max(f64::MIN_POSITIVE);
        let mean_count = problem.total_points as f64 * 2.0 * problem.max_tolerance() / width;
        let up_to = if mean_count.is_finite() {
            (LIMITS_UP_TO as f64)
                .max(8.0 * mean_count + 64.0)
                .min(4096.0) as usize
        } else {
            LIMITS_UP_TO
        };
        problem.lambda_limits = (0..=up_to)
            .map(|n| lambda_limit(n, problem.total_points, config.max_chance_probability()))
            .collect();
        problem
    }

    /// Whether a peak of `lines` distinct lines at local density `rho` may give a
    /// candidate that is reported: false only when even the narrowest spread of
    /// pairs (the smallest u_c of the search) would be too likely by chance.
    pub(crate) fn may_report(&self, lines: usize, rho: f64) -> bool {
        use super::significance::{cluster_probability, with_look_elsewhere};
        let lambda = 2.0 * self.config.tolerance_sigma() * self.min_uncertainty * rho;
        match self.lambda_limits.get(lines) {
            Some(&limit) => lambda <= limit,
            // Past the table: the probability itself, at its lowest (span 0).
            None => {
                with_look_elsewhere(cluster_probability(lines, lambda, 0.0), self.total_points)
                    <= self.config.max_chance_probability()
            }
        }
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
                        uncertainty: (l.uncertainty * l.uncertainty
                            + known.uncertainty * known.uncertainty)
                            .sqrt(),
                        line: line as u32,
                        level: level as u32,
                        upper: sign > 0.0,
                    });
                }
            }
        }
        sort_by_energy(out)
    }
}

/// The points sorted by energy: distributed into about one bucket per four points
/// by energy, then each bucket sorted (distribution sorting; Knuth 1998, *The Art
/// of Computer Programming*, vol. 3, § 5.2.5, cited from memory). The candidate
/// energies of a slab spread fairly evenly over it, so the buckets stay small and
/// the sort takes O(P) rather than the O(P log P) of a comparison sort, which was
/// most of the time of a large search. Written here because the project's
/// dependencies have no sort of this kind.
fn sort_by_energy(points: Vec<Point>) -> Vec<Point> {
    let (low, high) = points.iter().fold((f64::MAX, f64::MIN), |(lo, hi), p| {
        (lo.min(p.energy), hi.max(p.energy))
    });
    let buckets = (points.len() / 4).max(1);
    let scale = if high > low {
        (buckets as f64 - 1.0) / (high - low)
    } else {
        0.0
    };
    let bucket = |e: f64| -> usize {
        let b = ((e - low) * scale).floor();
        if b.is_finite() && b > 0.0 {
            (b as usize).min(buckets - 1)
        } else {
            0
        }
    };
    // starts[b] = first place of bucket b in the output.
    let mut starts = vec![0usize; buckets + 1];
    for p in &points {
        if let Some(c) = starts.get_mut(bucket(p.energy) + 1) {
            *c += 1;
        }
    }
    for b in 1..starts.len() {
        let before = starts.get(b - 1).copied().unwrap_or(0);
        if let Some(c) = starts.get_mut(b) {
            *c += before;
        }
    }
    let mut next = starts.clone();
    let mut sorted = points.clone();
    for p in points {
        let b = bucket(p.energy);
        if let Some(at) = next.get_mut(b) {
            if let Some(slot) = sorted.get_mut(*at) {
                *slot = p;
            }
            *at += 1;
        }
    }
    for pair in starts.windows(2) {
        if let [a, b] = *pair
            && let Some(slice) = sorted.get_mut(a..b)
        {
            slice.sort_unstable_by(|x, y| x.energy.total_cmp(&y.energy));
        }
    }
    sorted
}

/// The largest λ at which `n` lines reach a chance probability of at most `max_p`
/// among `trials` candidate energies (bisection on log λ; the probability grows with
/// λ), made a little larger so that rounding never drops a reportable peak.
fn lambda_limit(n: usize, trials: usize, max_p: f64) -> f64 {
    use super::significance::{cluster_probability, with_look_elsewhere};
    // The tightest cluster (span 0) has the lowest probability.
    let p = |lambda: f64| with_look_elsewhere(cluster_probability(n, lambda, 0.0), trials);
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
///
/// Only the parts of the slab where a reportable cluster may sit are swept
/// ([`segments`]); in a large search almost every peak of chance pairs is far too
/// likely to be reported, and sorting the interval ends of every pair was most of
/// the time.
fn sweep(problem: &Problem, slab: &Slab) -> Vec<Cluster> {
    let config = &problem.config;
    let margin = problem.max_tolerance() * (1.0 + config.density_window_factor());
    let points = problem.points(slab.parity, slab.low - margin, slab.high + margin);
    let mut per_line = vec![0u32; problem.lines.len()];
    let mut out = Vec::new();
    for segment in segments(problem, &points, slab) {
        sweep_segment(problem, slab, &points, &segment, &mut per_line, &mut out);
    }
    out
}

/// A run of the sorted points to sweep: every point with an energy in
/// [`low`, `high`], of which the peaks in [low + 3t, high − t] are judged (t the
/// largest tolerance): there the run holds every interval that contains the peak
/// and every interval end just before it, so the sweep of the run sees the peak as
/// the sweep of the whole slab would.
#[derive(Debug, Clone, PartialEq)]
struct Segment {
    points: std::ops::Range<usize>,
    low: f64,
    high: f64,
}

/// The segments of `sorted` (the slab's points by energy) where a peak may give a
/// reported candidate. A peak at x has a lowest point i among the pairs holding x,
/// x within t of E_i; its pairs all lie in [E_i, E_i + 2t], so their number c_i
/// there bounds its lines, and its density window holds every point of
/// [E_i + t − H, E_i − t + H] (H the half-width of the density window), which bounds
/// its density from below. Where even c_i lines at that density and at the
/// narrowest spread of the search are too likely by chance, no peak with lowest
/// point i is reported; the others give the segment [E_i − 4.5t, E_i + 4.5t],
/// merged where they overlap.
fn segments(problem: &Problem, sorted: &[Point], slab: &Slab) -> Vec<Segment> {
    let t = problem.max_tolerance();
    let h = problem.density_half_window();
    let energy = |i: usize| sorted.get(i).map_or(f64::INFINITY, |p| p.energy);
    let (mut window_end, mut density_low, mut density_high) = (0usize, 0usize, 0usize);
    let reach = 4.5 * t;
    let mut out: Vec<Segment> = Vec::new();
    for (i, p) in sorted.iter().enumerate() {
        let e = p.energy;
        if e < slab.low - 2.0 * t || e > slab.high + t {
            continue;
        }
        window_end = window_end.max(i);
        while energy(window_end) <= e + 2.0 * t {
            window_end += 1;
        }
        let count = window_end - i;
        if count < problem.config.min_lines() {
            continue;
        }
        while energy(density_low) < e + t - h {
            density_low += 1;
        }
        density_high = density_high.max(density_low);
        while energy(density_high) <= e - t + h {
            density_high += 1;
        }
        let others = (density_high - density_low).saturating_sub(count) + 2;
        let rho = others as f64 / (2.0 * h);
        if !problem.may_report(count, rho) {
            continue;
        }
        match out.last_mut() {
            Some(last) if e - reach <= last.high => last.high = e + reach,
            _ => out.push(Segment {
                points: 0..0,
                low: e - reach,
                high: e + reach,
            }),
        }
    }
    for segment in &mut out {
        let start = sorted.partition_point(|p| p.energy < segment.low);
        let end = sorted.partition_point(|p| p.energy <= segment.high);
        segment.points = start..end.max(start);
    }
    out
}

/// Sweep one segment of the slab's sorted points, adding its clusters to `out`.
/// `per_line` (zero on entry, zero again on return) counts the active pairs per
/// line.
fn sweep_segment(
    problem: &Problem,
    slab: &Slab,
    points: &[Point],
    segment: &Segment,
    per_line: &mut [u32],
    out: &mut Vec<Cluster>,
) {
    let config = &problem.config;
    let k = config.tolerance_sigma();
    let t = problem.max_tolerance();
    let (judge_low, judge_high) = (segment.low + 3.0 * t, segment.high - t);
    let Some(run) = points.get(segment.points.clone()) else {
        return;
    };
    // Interval ends: (position, end?, point); starts sort before ends at one position
    // so that touching intervals overlap.
    let mut events: Vec<(f64, bool, u32)> = Vec::with_capacity(2 * run.len());
    for (i, p) in run.iter().enumerate() {
        let tol = k * p.uncertainty;
        events.push((p.energy - tol, false, i as u32));
        events.push((p.energy + tol, true, i as u32));
    }
    events.sort_unstable_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)).then(a.2.cmp(&b.2)));

    let mut distinct = 0usize;
    let mut active: Vec<u32> = Vec::new();
    let mut slot = vec![u32::MAX; run.len()];
    let mut rising = false;
    for &(position, end, i) in &events {
        let Some(point) = run.get(i as usize) else {
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
            && position >= judge_low
            && position <= judge_high
            && position >= slab.low
            && position < slab.high
            && position >= problem.range.0
            && position <= problem.range.1
            && problem.may_report(
                distinct,
                peak_density(problem, points, position, active.len()),
            )
        {
            let members: Vec<Point> = active
                .iter()
                .filter_map(|&a| run.get(a as usize).copied())
                .collect();
            if let Some(cluster) = build(problem, slab.parity, members, position, points) {
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
