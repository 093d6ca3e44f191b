//! Build script: the compiled spectra of `reference-levels/`, read at build time.
//!
//! Every level table `reference-levels/<stem>.csv` and its line list
//! `<stem>-lines.csv` (when there is one) is read with the program's own readers,
//! compiled in from `src/` below, and written to `$OUT_DIR/<stem>.bin` in the
//! compact form of `src/levels/compiled_form.rs`; the citation (from the table's
//! first line) goes to `$OUT_DIR/<stem>.citation`. A table that cannot be read
//! stops the build with the reader's message, naming the file, line and column.
//!
//! The modules below are the library's own files; they use only each other, serde,
//! nom, csv, rustc-hash and thiserror (keep it so: the build script cannot see the rest).

// The codes are printed so (AAA, AA); the lint spares them in the library, where
// the enum is public.
#[allow(dead_code, unused_imports, clippy::upper_case_acronyms)]
#[path = "src/levels/accuracy.rs"]
mod accuracy;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/compiled_form.rs"]
mod compiled_form;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/csv_text.rs"]
mod csv_text;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/formable.rs"]
mod formable;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/label.rs"]
mod label;
#[allow(dead_code, unused_imports)]
#[path = "src/location.rs"]
mod location;
#[allow(dead_code, unused_imports)]
#[path = "src/notation/mod.rs"]
mod notation;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/rates.rs"]
mod rates;
#[allow(dead_code, unused_imports)]
#[path = "src/levels/table.rs"]
mod table;

use std::path::{Path, PathBuf};

use compiled_form::CompiledSpectrum;
use location::Field;

/// The files the modules above are made of.
const SOURCES: [&str; 12] = [
    "src/levels/accuracy.rs",
    "src/levels/compiled_form.rs",
    "src/levels/csv_text.rs",
    "src/levels/formable.rs",
    "src/levels/label.rs",
    "src/location.rs",
    "src/notation/mod.rs",
    "src/notation/parse.rs",
    "src/notation/element.rs",
    "src/levels/rates.rs",
    "src/levels/table.rs",
    "build.rs",
];

fn main() {
    if let Err(message) = run() {
        eprintln!("error: {message}");
        std::process::exit(1);
    }
}

fn run() -> Result<(), String> {
    let out = PathBuf::from(std::env::var("OUT_DIR").map_err(|e| format!("OUT_DIR: {e}"))?);
    let dir = Path::new("reference-levels");
    println!("cargo::rerun-if-changed={}", dir.display());
    for source in SOURCES {
        println!("cargo::rerun-if-changed={source}");
    }
    let mut stems: Vec<String> = std::fs::read_dir(dir)
        .map_err(|e| format!("{}: {e}", dir.display()))?
        .filter_map(|entry| entry.ok())
        .filter_map(|entry| entry.file_name().into_string().ok())
        .filter_map(|name| name.strip_suffix(".csv").map(String::from))
        .filter(|stem| !stem.ends_with("-lines"))
        .collect();
    stems.sort();
    for stem in stems {
        let path = dir.join(format!("{stem}.csv"));
        println!("cargo::rerun-if-changed={}", path.display());
        let name = path.display().to_string();
        let text = std::fs::read_to_string(&path).map_err(|e| format!("{name}: {e}"))?;
        let table = table::read_level_table(text.as_bytes(), &name).map_err(|e| e.to_string())?;
        let lines_path = dir.join(format!("{stem}-lines.csv"));
        let published = if lines_path.exists() {
            println!("cargo::rerun-if-changed={}", lines_path.display());
            let lines_name = lines_path.display().to_string();
            let text =
                std::fs::read_to_string(&lines_path).map_err(|e| format!("{lines_name}: {e}"))?;
            let published = rates::read_rates(&text, &lines_name).map_err(|e| e.to_string())?;
            if let Some(bad) = published
                .iter()
                .find(|l| l.lower.max(l.upper) >= table.levels.len())
            {
                return Err(format!(
                    "{lines_name}: a line between rows {} and {}, but {name} has {} levels",
                    bad.lower + 1,
                    bad.upper + 1,
                    table.levels.len()
                ));
            }
            published
        } else {
            Vec::new()
        };
        let warnings = table
            .warnings
            .iter()
            .map(|w| {
                let column = match &w.location.field {
                    Some(Field::Column(c) | Field::Key(c)) => Some(c.clone()),
                    None => None,
                };
                (w.location.line, column, w.problem.clone())
            })
            .collect();
        let compiled = CompiledSpectrum {
            levels: table.levels,
            warnings,
            published,
        };
        let bytes = compiled.encode().map_err(|e| format!("{name}: {e}"))?;
        let bin = out.join(format!("{stem}.bin"));
        std::fs::write(&bin, bytes).map_err(|e| format!("{}: {e}", bin.display()))?;
        let citation = text
            .lines()
            .next()
            .and_then(|l| l.split_once("Source: "))
            .map_or("", |(_, s)| s.trim_end_matches('.'));
        let cite = out.join(format!("{stem}.citation"));
        std::fs::write(&cite, citation).map_err(|e| format!("{}: {e}", cite.display()))?;
    }
    Ok(())
}
