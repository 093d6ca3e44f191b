//! Speed and memory of the level model: building the coefficient matrices once,
//! and evaluating levels (Σ P·C per block, then diagonalisation) as a fit does on
//! every iteration. `cargo bench --bench structure [-- MODEL...]`.
//!
//! A plain harness rather than criterion: the largest models build in seconds on
//! the old code, and each figure here is a median of a few runs fitted into about
//! two seconds. "first build" is the first in the process (it fills the
//! process-wide tables of subshell terms and angular coefficients); "build" is
//! the median of the later ones. "diagonalise" is `SymmetricEigen` alone on every
//! (parity, J) block; "levels" is one full evaluation (assemble, diagonalise,
//! composition, Landé g, dE/dP). Memory is the peak of bytes allocated on the
//! heap during the first build, above what was allocated before it, counted by a
//! wrapper around the system allocator.

use std::alloc::{GlobalAlloc, Layout, System};
use std::hint::black_box;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

use nalgebra::SymmetricEigen;
use termsight::notation::Configuration;
use termsight::structure::LevelStructure;

mod common;
use common::values;

/// Counts the bytes on the heap and their peak.
struct Counting;

static CURRENT: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

// SAFETY: every call is forwarded to the system allocator unchanged.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            let now = CURRENT.fetch_add(layout.size(), Ordering::Relaxed) + layout.size();
            PEAK.fetch_max(now, Ordering::Relaxed);
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        CURRENT.fetch_sub(layout.size(), Ordering::Relaxed);
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let p = unsafe { System.realloc(ptr, layout, new_size) };
        if !p.is_null() {
            if new_size >= layout.size() {
                let grow = new_size - layout.size();
                let now = CURRENT.fetch_add(grow, Ordering::Relaxed) + grow;
                PEAK.fetch_max(now, Ordering::Relaxed);
            } else {
                CURRENT.fetch_sub(layout.size() - new_size, Ordering::Relaxed);
            }
        }
        p
    }
}

#[global_allocator]
static ALLOCATOR: Counting = Counting;

/// A benchmark model: name, configurations, interacting pairs.
type Model = (
    &'static str,
    &'static [&'static str],
    &'static [(usize, usize)],
);

/// The benchmark models.
const MODELS: &[Model] = &[
    ("3d5", &["3d5"], &[]),
    (
        "3d4.4s+3d3.4s2+3d4.4p",
        &["3d4.4s", "3d3.4s2", "3d4.4p"],
        &[(0, 1)],
    ),
    ("4f3", &["4f3"], &[]),
    ("4f6", &["4f6"], &[]),
    ("4f7", &["4f7"], &[]),
    ("3d5.4s+3d5.4p+3d6", &["3d5.4s", "3d5.4p", "3d6"], &[(0, 2)]),
    (
        "4f6.6s+4f6.5d+4f5.5d.6s",
        &["4f6.6s", "4f6.5d", "4f5.5d.6s"],
        &[],
    ),
];

/// Median time of `f`, run at least once and otherwise for about `budget`.
fn median(budget: Duration, mut f: impl FnMut()) -> Duration {
    let mut times = Vec::new();
    let start = Instant::now();
    while times.is_empty() || (start.elapsed() < budget && times.len() < 50) {
        let t = Instant::now();
        f();
        times.push(t.elapsed());
    }
    times.sort();
    times[times.len() / 2]
}

fn ms(d: Duration) -> String {
    let x = d.as_secs_f64() * 1e3;
    if x >= 100.0 {
        format!("{x:.0} ms")
    } else if x >= 1.0 {
        format!("{x:.2} ms")
    } else {
        format!("{:.1} µs", x * 1e3)
    }
}

fn main() {
    let wanted: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with('-'))
        .collect();
    println!(
        "| model | levels | parameters | largest J block | first build | build | peak heap of build | diagonalise | levels | build / diagonalise |"
    );
    println!("|---|---|---|---|---|---|---|---|---|---|");
    for (name, labels, interactions) in MODELS {
        if !wanted.is_empty() && !wanted.iter().any(|w| w == name) {
            continue;
        }
        let configs: Vec<Configuration> = labels.iter().map(|l| l.parse().unwrap()).collect();
        let before = CURRENT.load(Ordering::Relaxed);
        PEAK.store(before, Ordering::Relaxed);
        let start = Instant::now();
        let structure = LevelStructure::build(&configs, interactions).unwrap();
        let first_build = start.elapsed();
        let peak = PEAK.load(Ordering::Relaxed) - before;
        let budget = Duration::from_secs(2);
        let build = if first_build > budget {
            first_build
        } else {
            median(budget, || {
                black_box(LevelStructure::build(black_box(&configs), interactions).unwrap());
            })
        };
        let v = values(&structure);
        let matrices: Vec<_> = structure
            .blocks()
            .iter()
            .flat_map(|b| b.j_blocks.iter().map(|j| j.hamiltonian(&v)))
            .collect();
        let largest = matrices.iter().map(|m| m.nrows()).max().unwrap_or(0);
        let diagonalise = median(budget, || {
            for h in &matrices {
                black_box(SymmetricEigen::new(h.clone()));
            }
        });
        let mut count = 0;
        let levels = median(budget, || {
            count = black_box(structure.levels(black_box(&v)).unwrap()).len();
        });
        println!(
            "| {name} | {count} | {} | {largest} | {} | {} | {:.1} MiB | {} | {} | {:.2} |",
            structure.parameters().len(),
            ms(first_build),
            ms(build),
            peak as f64 / (1024.0 * 1024.0),
            ms(diagonalise),
            ms(levels),
            build.as_secs_f64() / diagonalise.as_secs_f64()
        );
    }
}
