//! The cost of the compiled spectra: the binary's size, the start-up of `termsight
//! assign` on a 50-line list (a whole run of the binary, as a user sees it), loading
//! the compiled predictions in-process, and assigning 1 000 and 100 000 lines against
//! all compiled spectra (the candidate index built once per run, included).
//!
//! `cargo bench --bench compiled_spectra`. Prints its figures; each is the fastest and
//! the median of several runs. The 50-line list is the shipped example
//! (`examples/he-ne-teaching-tube/lines.csv`, 53 lines). The observed lines of the
//! in-process runs are spread evenly over 4 000–100 000 cm⁻¹ (100 nm – 2.5 µm), 0.05
//! cm⁻¹ each, the same in every run.

use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use termsight::assign::{MatchConfig, assign_lines};
use termsight::levels::{EMBEDDED_TABLES, EmbeddedTable, Predictions, compiled_predictions};
use termsight::linelist::{GivenPosition, ObservedLine};

/// All compiled spectra, read and predicted (100 nm – 2.5 µm, with their transition
/// probabilities), as `termsight assign` does by default.
fn compiled() -> Predictions {
    let all: Vec<&EmbeddedTable> = EMBEDDED_TABLES.iter().collect();
    compiled_predictions(&all).unwrap()
}

/// `runs` timings of `work`, sorted.
fn timings(runs: usize, mut work: impl FnMut()) -> Vec<Duration> {
    let mut times: Vec<Duration> = (0..runs)
        .map(|_| {
            let start = Instant::now();
            work();
            start.elapsed()
        })
        .collect();
    times.sort();
    times
}

fn summary(times: &[Duration]) -> String {
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    format!(
        "fastest {:.2} ms, median {:.2} ms ({} runs)",
        ms(times[0]),
        ms(times[times.len() / 2]),
        times.len()
    )
}

fn lines(n: usize) -> Vec<ObservedLine> {
    (0..n)
        .map(|i| {
            let sigma = 4_000.0 + 96_000.0 * (i as f64 + 0.5) / n as f64;
            ObservedLine {
                row: i + 1,
                source_line: i + 2,
                given: GivenPosition::Wavenumber { value: sigma },
                wavenumber_cm1: sigma,
                uncertainty_cm1: 0.05,
                intensity: None,
                extra: vec![],
            }
        })
        .collect()
}

fn main() {
    let binary = env!("CARGO_BIN_EXE_termsight");
    let size = std::fs::metadata(binary).map(|m| m.len()).unwrap_or(0);
    println!(
        "binary {binary}: {size} bytes ({:.1} MiB)",
        size as f64 / 1048576.0
    );
    let example =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/he-ne-teaching-tube/lines.csv");
    let run = || {
        let out = Command::new(binary)
            .arg("assign")
            .arg(&example)
            .output()
            .expect("run termsight");
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    };
    run();
    println!(
        "termsight assign on the 50-line example (whole run): {}",
        summary(&timings(20, run))
    );
    let predictions = compiled();
    println!(
        "compiled spectra: {} species, {} levels, {} predicted lines",
        predictions.species().len(),
        predictions.levels().len(),
        predictions.lines().len()
    );
    println!(
        "load and predict all compiled spectra (in-process): {}",
        summary(&timings(10, || {
            std::hint::black_box(compiled());
        }))
    );
    println!(
        "read the level tables alone (in-process): {}",
        summary(&timings(10, || {
            for t in EMBEDDED_TABLES {
                std::hint::black_box(t.load().unwrap());
            }
        }))
    );
    for n in [1_000usize, 100_000] {
        let observed = lines(n);
        let times = timings(5, || {
            std::hint::black_box(assign_lines(
                &observed,
                &predictions,
                &MatchConfig::default(),
            ));
        });
        println!(
            "assign {n} lines against all compiled spectra: {}",
            summary(&times)
        );
    }
}
