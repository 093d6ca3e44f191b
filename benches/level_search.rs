//! The level search at the sizes of issue 12: 10 000 unassigned lines against
//! 1 000 known levels, and 100 000 against 3 000; time and peak memory of each.
//!
//! `cargo bench --bench level_search`. Each size runs in a child process (this
//! binary, started again with `LEVEL_SEARCH_SIZE` set) so that its peak resident
//! memory (`getrusage`, `ru_maxrss`) is its own. Invented data, seeded: levels at
//! random energies 0–100 000 cm⁻¹ (half odd, J 0 to 4, 0.001 cm⁻¹), lines at random
//! wavenumbers 5 000–50 000 cm⁻¹ (0.005 cm⁻¹); default settings (k = 3, at least 3
//! lines, P ≤ 0.01).

use std::process::Command;
use std::time::Instant;

use rand::rngs::StdRng;
use rand::{Rng, SeedableRng};
use termsight::levels::search::{SearchConfig, SearchLine, find_levels};
use termsight::levels::{EnergyStatus, Level, LevelLabel};
use termsight::notation::Species;

fn levels(n: usize, rng: &mut StdRng) -> Vec<Level> {
    (0..n)
        .map(|i| {
            let energy: f64 = rng.random_range(0.0..100_000.0);
            let term = format!(
                "{}{}",
                energy.floor() as u32,
                if i % 2 == 1 { "°" } else { "e" }
            );
            let j = rng.random_range(0..5u32).to_string();
            Level {
                species: Species {
                    atomic_number: 26,
                    charge: 0,
                },
                label: LevelLabel::from_fields("", &term, &j).unwrap(),
                energy_cm1: energy,
                uncertainty_cm1: 0.001,
                source: "bench".into(),
                energy_status: EnergyStatus::MEASURED,
            }
        })
        .collect()
}

fn lines(n: usize, rng: &mut StdRng) -> Vec<SearchLine> {
    (0..n)
        .map(|i| SearchLine {
            row: i + 1,
            wavenumber_cm1: rng.random_range(5_000.0..50_000.0),
            uncertainty_cm1: 0.005,
            intensity: None,
        })
        .collect()
}

/// Run one size in this process and print its figures.
fn child(lines_n: usize, levels_n: usize) {
    let mut rng = StdRng::seed_from_u64(12);
    let known = levels(levels_n, &mut rng);
    let observed = lines(lines_n, &mut rng);
    let start = Instant::now();
    let found = find_levels(&observed, &known, &SearchConfig::default(), &mut |_| {});
    let seconds = start.elapsed().as_secs_f64();
    // SAFETY: rusage is plain data, zeroed is valid; getrusage fills it.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    let peak_mib = if unsafe { libc::getrusage(libc::RUSAGE_SELF, &mut usage) } == 0 {
        usage.ru_maxrss as f64 / 1024.0 // KiB on Linux
    } else {
        f64::NAN
    };
    println!(
        "{lines_n} lines × {levels_n} levels: {seconds:.2} s, peak {peak_mib:.0} MiB, \
         {} candidate energies, {} candidates at P ≤ 0.01",
        found.candidate_energies,
        found.candidates.len()
    );
}

fn main() {
    if let Ok(size) = std::env::var("LEVEL_SEARCH_SIZE") {
        let mut parts = size.split('x').map(|p| p.parse::<usize>().unwrap());
        child(parts.next().unwrap(), parts.next().unwrap());
        return;
    }
    let only: Option<String> = std::env::args().skip(1).find(|a| a.contains('x'));
    let exe = std::env::current_exe().unwrap();
    for size in ["10000x1000", "100000x3000"] {
        if only.as_deref().is_some_and(|o| o != size) {
            continue;
        }
        let status = Command::new(&exe)
            .env("LEVEL_SEARCH_SIZE", size)
            .status()
            .unwrap();
        assert!(status.success(), "{size}: {status}");
    }
}
