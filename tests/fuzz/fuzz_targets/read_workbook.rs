//! Arbitrary bytes to the workbook reader.
#![no_main]

#[path = "../bodies.rs"]
mod bodies;

libfuzzer_sys::fuzz_target!(|data: &[u8]| bodies::read_workbook(data));
