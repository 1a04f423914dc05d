//! Fuzz target: probe_set (see fuzz/harness.rs).
#![no_main]

#[path = "../harness.rs"]
mod harness;

libfuzzer_sys::fuzz_target!(|bytes: &[u8]| harness::run("probe_set", bytes));
