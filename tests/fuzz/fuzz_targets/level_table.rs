//! Fuzz target: see `termsight::fuzzing::level_table`.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::level_table(data));
