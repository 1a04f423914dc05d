//! Fuzz target: gltf (see fuzz/harness.rs).
#![no_main]

#[path = "../harness.rs"]
mod harness;

libfuzzer_sys::fuzz_target!(|bytes: &[u8]| harness::run("gltf", bytes));
