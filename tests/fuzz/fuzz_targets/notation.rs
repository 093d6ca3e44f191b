//! Fuzz target: see `termsight::fuzzing::notation`.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::notation(data));
