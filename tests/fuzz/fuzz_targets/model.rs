//! Fuzz target: see `termsight::fuzzing::model`.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::model(data));
