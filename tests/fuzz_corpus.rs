//! Replays the committed fuzz corpora (`tests/fuzz/corpus/<target>/`) and crash
//! reproducers (`tests/fuzz/reproducers/<target>/`) through the entry points the
//! fuzz targets run (`termsight::fuzzing`), so that `cargo test` catches a reader
//! that panics again on an input the fuzzer once found, without the long fuzzing
//! (`tests/fuzz/README.md` says how to run that).
//!
//! The check is the readers' promise (common practice, no source): for any bytes,
//! a value or an error naming the file, never a panic; each entry point also
//! checks what the reader returns (see `src/fuzzing.rs`).

use std::path::PathBuf;

fn fuzz_dir(kind: &str, target: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fuzz")
        .join(kind)
        .join(target)
}

/// Every file of `tests/fuzz/<kind>/<target>/`, sorted by name.
fn inputs(kind: &str, target: &str) -> Vec<(String, Vec<u8>)> {
    let dir = fuzz_dir(kind, target);
    let Ok(entries) = std::fs::read_dir(&dir) else {
        return Vec::new();
    };
    let mut files: Vec<(String, Vec<u8>)> = entries
        .map(|entry| {
            let path = entry
                .unwrap_or_else(|e| panic!("{}: {e}", dir.display()))
                .path();
            let bytes = std::fs::read(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            (path.display().to_string(), bytes)
        })
        .collect();
    files.sort();
    files
}

/// Run `entry` on the corpus and the reproducers of `target`; the corpus must not
/// be empty (a replay of nothing would pass without checking anything).
fn replay(target: &str, entry: fn(&[u8])) {
    let corpus = inputs("corpus", target);
    assert!(
        corpus.len() >= 10,
        "{}: the committed corpus is missing or nearly empty",
        fuzz_dir("corpus", target).display()
    );
    for (name, bytes) in corpus.iter().chain(&inputs("reproducers", target)) {
        let outcome = std::panic::catch_unwind(|| entry(bytes));
        assert!(outcome.is_ok(), "{name}: the {target} entry point panicked");
    }
}

#[test]
fn line_list_corpus_replays() {
    replay("line_list", termsight::fuzzing::line_list);
}

#[test]
fn level_table_corpus_replays() {
    replay("level_table", termsight::fuzzing::level_table);
}

#[test]
fn model_corpus_replays() {
    replay("model", termsight::fuzzing::model);
}

#[test]
fn notation_corpus_replays() {
    replay("notation", termsight::fuzzing::notation);
}

#[test]
fn assignments_corpus_replays() {
    replay("assignments", termsight::fuzzing::assignments);
}
