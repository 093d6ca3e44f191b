//! `termsight assign` end to end, side by side with a numpy baseline: wall time and
//! peak memory of whole runs of the release binary, at several sizes.
//!
//! `cargo bench --bench assign_end_to_end` (arguments: line counts, then `r=N` for N
//! runs of each case, `formats` to add JSON and the table at the sizes up to 10⁶:
//! `cargo bench --bench assign_end_to_end -- 100000 1000000 4000000 r=3 formats`;
//! `keep=DIR` leaves the generated files in DIR).
//!
//! The data come from a seeded generator and are the same in every run: a level
//! table of a made-up spectrum (1980 levels of `Fe I` in 36 configurations, half of
//! each parity, energies 0–70 000 cm⁻¹ with uncertainties 0.001–0.01 cm⁻¹, about
//! 4·10⁵ E1 lines by the parity and J rules), and line lists of vacuum wavenumbers,
//! half near a predicted line and half anywhere, uncertainties 0.002–0.02 cm⁻¹.
//! Each case is `termsight assign LINES --levels LEVELS --format F -o OUT`, every
//! candidate written; the baseline is `benches/numpy_assign.py` (see there), which
//! writes the best candidate per line, run with `python3` from the PATH.
//!
//! Wall time is measured around each child process; peak memory is the child's
//! maximum resident set from `wait4` (Linux, `ru_maxrss`). The load average before
//! each run is printed, since the machine may be shared: the spread of the runs and
//! the load say how far to trust the figures.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use rand::{Rng, SeedableRng, rngs::StdRng};

/// One level of the synthetic table.
struct Level {
    configuration: String,
    term: String,
    j: u32,
    odd: bool,
    energy_cm1: f64,
    uncertainty_cm1: f64,
}

/// At most 2000 levels (1980 in all): configurations 3d7.ns (even) and 3d7.np (odd), n = 4…21, every
/// term of multiplicity 1, 3, 5 and L = S…I with each of its J values.
fn levels(rng: &mut StdRng) -> Vec<Level> {
    const L_LETTERS: [char; 7] = ['S', 'P', 'D', 'F', 'G', 'H', 'I'];
    let mut levels = Vec::new();
    for n in 4..=21 {
        for (odd, shell) in [(false, 's'), (true, 'p')] {
            for two_s in [0u32, 2, 4] {
                for l in 0..7u32 {
                    let s = two_s / 2;
                    for j in l.abs_diff(s)..=l + s {
                        if levels.len() >= 2000 {
                            return levels;
                        }
                        let low = if odd { 15_000.0 } else { 0.0 };
                        levels.push(Level {
                            configuration: format!("3d7.{n}{shell}"),
                            term: format!(
                                "{}{}{}",
                                two_s + 1,
                                L_LETTERS[l as usize],
                                if odd { "°" } else { "" }
                            ),
                            j,
                            odd,
                            energy_cm1: low + 55_000.0 * rng.random::<f64>(),
                            uncertainty_cm1: 0.001 * 10f64.powf(rng.random::<f64>()),
                        });
                    }
                }
            }
        }
    }
    levels
}

fn level_table(levels: &[Level]) -> String {
    let mut text = String::from(
        "# Synthetic level table of the assign benchmark (made-up values).\n\
         species,configuration,term,J,energy_cm1,uncertainty_cm1,source\n",
    );
    for l in levels {
        let _ = writeln!(
            text,
            "Fe I,{},{},{},{:.4},{:.4},synthetic",
            l.configuration, l.term, l.j, l.energy_cm1, l.uncertainty_cm1
        );
    }
    text
}

/// A line list of `n` vacuum wavenumbers.
fn line_list(n: usize, levels: &[Level], rng: &mut StdRng) -> String {
    let even: Vec<&Level> = levels.iter().filter(|l| !l.odd).collect();
    let odd: Vec<&Level> = levels.iter().filter(|l| l.odd).collect();
    let mut text = String::with_capacity(n * 32);
    text.push_str("wavenumber_cm1,uncertainty_cm1,intensity\n");
    for i in 0..n {
        let u = 0.002 * 10f64.powf(rng.random::<f64>());
        let sigma = if i % 2 == 0 {
            loop {
                let a = even[rng.random_range(0..even.len())];
                let b = odd[rng.random_range(0..odd.len())];
                let allowed = a.j.abs_diff(b.j) <= 1 && !(a.j == 0 && b.j == 0);
                let sigma = (a.energy_cm1 - b.energy_cm1).abs();
                if allowed && sigma > 100.0 {
                    break sigma + u * (2.0 * rng.random::<f64>() - 1.0);
                }
            }
        } else {
            100.0 + 69_900.0 * rng.random::<f64>()
        };
        let _ = writeln!(text, "{sigma:.5},{u:.4},{}", rng.random_range(1..10_000));
    }
    text
}

/// Wall time (s), peak resident memory (MiB) and the load average before the run.
struct Run {
    seconds: f64,
    peak_mib: Option<f64>,
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
        peak_mib: (waited == pid).then(|| usage.ru_maxrss as f64 / 1024.0),
        load,
    }
}

/// The fastest, the median and the slowest of `runs`, and the largest peak memory.
fn summary(runs: &[Run]) -> (f64, f64, f64, f64, String) {
    let mut times: Vec<f64> = runs.iter().map(|r| r.seconds).collect();
    times.sort_by(f64::total_cmp);
    let peak = runs.iter().filter_map(|r| r.peak_mib).fold(0.0, f64::max);
    let loads: Vec<&str> = runs.iter().map(|r| r.load.as_str()).collect();
    (
        times[0],
        times[times.len() / 2],
        times[times.len() - 1],
        peak,
        loads.join("/"),
    )
}

fn termsight(lines: &Path, levels: &Path, format: &str, out: &Path) -> Command {
    let mut command = Command::new(env!("CARGO_BIN_EXE_termsight"));
    command
        .arg("assign")
        .arg(lines)
        .arg("--levels")
        .arg(levels)
        .args(["--format", format, "-o"])
        .arg(out)
        .stderr(std::process::Stdio::null());
    command
}

fn numpy(lines: &Path, levels: &Path, out: &Path) -> Command {
    let script = concat!(env!("CARGO_MANIFEST_DIR"), "/benches/numpy_assign.py");
    let mut command = Command::new("python3");
    command.arg(script).arg(levels).arg(lines).arg(out);
    command
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let mut sizes: Vec<usize> = args.iter().filter_map(|a| a.parse().ok()).collect();
    if sizes.is_empty() {
        sizes = vec![100_000, 1_000_000, 4_000_000];
    }
    let repeats: usize = args
        .iter()
        .find_map(|a| a.strip_prefix("r=")?.parse().ok())
        .unwrap_or(3);
    let formats = args.iter().any(|a| a == "formats");
    let mut rng = StdRng::seed_from_u64(15);
    let levels = levels(&mut rng);
    // `keep=DIR` writes the data into DIR and leaves them there (to profile a case).
    let kept = args
        .iter()
        .find_map(|a| a.strip_prefix("keep=").map(PathBuf::from));
    let temp = tempfile::tempdir().unwrap();
    let dir_path = kept.clone().unwrap_or_else(|| temp.path().to_path_buf());
    let dir = dir_path.as_path();
    let level_path: PathBuf = dir.join("levels.csv");
    std::fs::write(&level_path, level_table(&levels)).unwrap();
    let out = dir.join("out");
    println!(
        "{} levels; {repeats} runs of each case, interleaved; times fastest / median / slowest",
        levels.len()
    );
    println!(
        "| lines | case | wall s (min / median / max) | µs per line | peak MiB | numpy ÷ termsight (median) | load before each run |"
    );
    println!("|---|---|---|---|---|---|---|");
    for &n in &sizes {
        let lines_path = dir.join(format!("lines-{n}.csv"));
        std::fs::write(&lines_path, line_list(n, &levels, &mut rng)).unwrap();
        let mut cases: Vec<(&str, Vec<Run>)> = vec![("termsight CSV", vec![]), ("numpy", vec![])];
        if formats && n <= 1_000_000 {
            cases.push(("termsight JSON", vec![]));
            cases.push(("termsight table", vec![]));
        }
        for _ in 0..repeats {
            for (name, runs) in cases.iter_mut() {
                let mut command = match *name {
                    "termsight CSV" => termsight(&lines_path, &level_path, "csv", &out),
                    "termsight JSON" => termsight(&lines_path, &level_path, "json", &out),
                    "termsight table" => termsight(&lines_path, &level_path, "table", &out),
                    _ => numpy(&lines_path, &level_path, &out),
                };
                runs.push(run(&mut command));
                let _ = std::fs::remove_file(&out);
            }
        }
        let numpy_median = summary(&cases[1].1).1;
        let csv_median = summary(&cases[0].1).1;
        for (name, runs) in &cases {
            let (min, median, max, peak, load) = summary(runs);
            let ratio = if *name == "numpy" {
                "–".to_string()
            } else {
                format!(
                    "{:.2} (÷ CSV: {:.2})",
                    numpy_median / median,
                    median / csv_median
                )
            };
            println!(
                "| {n} | {name} | {min:.2} / {median:.2} / {max:.2} | {:.2} | {peak:.0} | {ratio} | {load} |",
                median / n as f64 * 1e6
            );
        }
        if kept.is_none() {
            let _ = std::fs::remove_file(&lines_path);
        }
    }
}
