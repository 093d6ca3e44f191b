//! Fuzz target: see `termsight::fuzzing::assignments`.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::assignments(data));
