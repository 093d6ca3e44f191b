//! Fuzz target: see `termsight::fuzzing::level_table`. It checks no values, only
//! properties of any input (no panic, errors that name the file, what is read
//! round-trips), so it has no source of check values to name.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::level_table(data));
