//! Integration tests, built as one binary: one module per topic, shared helpers in
//! `util`. This file holds no checks; each module names the source of its check
//! values beside each check.

mod angular_tables;
mod assign_chance;
mod assign_cli;
mod assign_intensity;
mod assign_plasma;
mod assign_reference;
mod browser;
mod compiled_spectra;
mod digits_roundtrip;
mod figures;
mod find_levels_cli;
mod fit_cli;
mod fit_physics;
mod fit_roundtrip;
mod fuzz_corpus;
mod level_search;
mod levels_cli;
mod lines_cli;
mod optimize_cli;
mod optimize_reference;
mod plasma_cli;
mod plasma_synthetic;
mod radial;
mod radial_rydberg;
mod structure_physics;
mod structure_tables;
mod trust_cli;
mod units;
mod util;
