//! `termsight assign` with intensities against every compiled spectrum, beside
//! `--position-only`: wall time and peak memory of whole runs of the release binary,
//! and the time per line, to show that the intensity-aware assignment (rounds of
//! scoring, the joint resolution, the Boltzmann fits) stays linear in the lines.
//!
//! `cargo bench --bench assign_intensity` (arguments: line counts, default 100000
//! and 1000000, then `r=N` for N runs of each case, default 2).
//!
//! The line lists come from a seeded generator and are the same in every run:
//! half the lines at a compiled line with a published transition probability
//! (chosen at random among them, 200–1000 nm, position noise of its uncertainty),
//! with an intensity gA·exp(−E_k/kT) at 8000 K times a log-normal scatter of 30 %;
//! half at random positions in 10 000–50 000 cm⁻¹ with intensities log-uniform over
//! four decades. Uncertainties 0.01–0.1 cm⁻¹. Each case is
//! `termsight assign LINES --format csv -o OUT` (every compiled spectrum, every
//! candidate written), with or without `--position-only`.
//!
//! Wall time is measured around each child process; peak memory is the child's
//! maximum resident set from `wait4` (Linux, `ru_maxrss`). The load average before
//! each run is printed, since the machine may be shared.

use std::fmt::Write as _;
use std::path::Path;
use std::process::Command;
use std::time::Instant;

use rand::{Rng, SeedableRng, rngs::StdRng};
use rand_distr::{Distribution, Normal};
use termsight::levels::{EMBEDDED_TABLES, compiled_predictions};

/// c₂ = hc/k, cm K (CODATA 2018, exact).
const C2: f64 = 1.438_776_877_503_933_8;

/// A line list of `n` vacuum wavenumbers with intensities.
fn line_list(n: usize, rng: &mut StdRng) -> String {
    let tables: Vec<_> = EMBEDDED_TABLES.iter().collect();
    let predictions = compiled_predictions(&tables).unwrap();
    let levels = predictions.levels();
    let with_a: Vec<(f64, f64)> = predictions
        .lines()
        .iter()
        .filter(|l| (10_000.0..50_000.0).contains(&l.wavenumber_cm1))
        .filter_map(|l| {
            let tp = l.transition_probability?;
            let upper = levels.get(l.upper)?.energy_cm1;
            Some((l.wavenumber_cm1, tp.ga_s1() * (-C2 * upper / 8000.0).exp()))
        })
        .collect();
    let scatter = Normal::new(0.0, 0.3).unwrap();
    let strongest = with_a.iter().map(|l| l.1).fold(0.0, f64::max);
    let mut text = String::with_capacity(n * 40);
    text.push_str("wavenumber_cm1,uncertainty_cm1,intensity\n");
    for i in 0..n {
        let u = 0.01 * 10f64.powf(rng.random::<f64>());
        let (sigma, intensity) = if i % 2 == 0 {
            let (sigma, intensity) = with_a[rng.random_range(0..with_a.len())];
            (
                sigma + u * scatter.sample(rng) / 0.3,
                1e6 * intensity / strongest * scatter.sample(rng).exp(),
            )
        } else {
            (
                rng.random_range(10_000.0..50_000.0),
                10f64.powf(rng.random_range(-2.0..2.0)),
            )
        };
        let _ = writeln!(text, "{sigma:.5},{u:.4},{intensity:.4e}");
    }
    text
}

/// Wall time (s), peak resident memory (MiB) and the load average before the run.
struct Run {
    seconds: f64,
    peak_mib: f64,
    load: String,
}

fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .ok()
        .and_then(|t| t.split_whitespace().next().map(str::to_string))
        .unwrap_or_else(|| "?".into())
}

/// Run `command` to its end, with its peak resident memory from `wait4`.
// The child is waited for by wait4, which std's Child cannot do.
#[allow(clippy::zombie_processes)]
fn run(command: &mut Command) -> Run {
    let load = load_average();
    let start = Instant::now();
    let child = command.spawn().expect("the command starts");
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: rusage is plain data, zeroed is a valid value; wait4 fills it for our
    // own child, whose Child handle is not waited on elsewhere.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    let waited = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    let seconds = start.elapsed().as_secs_f64();
    assert!(
        waited == pid && libc::WIFEXITED(status) && libc::WEXITSTATUS(status) == 0,
        "{command:?} failed"
    );
    Run {
        seconds,
        // ru_maxrss is in KiB on Linux.
        peak_mib: usage.ru_maxrss as f64 / 1024.0,
        load,
    }
}

fn termsight(lines: &Path, position_only: bool, out: &Path) -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_termsight"));
    command
        .arg("assign")
        .arg(lines)
        .args(["--format", "csv", "-o"])
        .arg(out)
        .stderr(std::process::Stdio::null());
    if position_only {
        command.arg("--position-only");
    }
    command
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    if sizes.is_empty() {
        sizes = vec![100_000, 1_000_000];
    }
    let repeats: usize = args
        .iter()
        .find_map(|a| a.strip_prefix("r=")?.parse().ok())
        .unwrap_or(2);
    let mut rng = StdRng::seed_from_u64(11);
    let temp = tempfile::tempdir().unwrap();
    let out = temp.path().join("out.csv");
    println!("{repeats} runs of each case, interleaved; times fastest / median / slowest");
    println!(
        "| lines | case | wall s (min / median / max) | µs per line | peak MiB | ÷ position-only (median) | load before each run |"
    );
    println!("|---|---|---|---|---|---|---|");
    for &n in &sizes {
        let lines_path = temp.path().join(format!("lines-{n}.csv"));
        std::fs::write(&lines_path, line_list(n, &mut rng)).unwrap();
        let mut cases: Vec<(&str, bool, Vec<Run>)> = vec![
            ("--position-only", true, vec![]),
            ("with intensities", false, vec![]),
        ];
        for _ in 0..repeats {
            for (_, position_only, runs) in cases.iter_mut() {
                runs.push(run(&mut termsight(&lines_path, *position_only, &out)));
                let _ = std::fs::remove_file(&out);
            }
        }
        let median = |runs: &[Run]| {
            let mut t: Vec<f64> = runs.iter().map(|r| r.seconds).collect();
            t.sort_by(f64::total_cmp);
            (t[0], t[t.len() / 2], t[t.len() - 1])
        };
        let base = median(&cases[0].2).1;
        for (name, _, runs) in &cases {
            let (min, mid, max) = median(runs);
            let peak = runs.iter().map(|r| r.peak_mib).fold(0.0, f64::max);
            let loads: Vec<&str> = runs.iter().map(|r| r.load.as_str()).collect();
            println!(
                "| {n} | {name} | {min:.2} / {mid:.2} / {max:.2} | {:.2} | {peak:.0} | {:.2} | {} |",
                mid / n as f64 * 1e6,
                mid / base,
                loads.join("/")
            );
        }
    }
}
