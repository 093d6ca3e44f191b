//! Fuzz target: see `termsight::fuzzing::line_list`.
#![no_main]

libfuzzer_sys::fuzz_target!(|data: &[u8]| termsight::fuzzing::line_list(data));
