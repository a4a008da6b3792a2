//! Arbitrary bytes to the recording readers (COMTRADE single file, harmonic log).
#![no_main]

#[path = "../bodies.rs"]
mod bodies;

libfuzzer_sys::fuzz_target!(|data: &[u8]| bodies::read_recording(data));
