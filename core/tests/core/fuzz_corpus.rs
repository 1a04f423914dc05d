//! The fuzzers' seeds and the corpus they kept (fuzz/run) replayed as an ordinary test, so CI guards
//! every input the fuzzers found interesting without running a fuzzer: none may panic.

#[path = "../../../fuzz/harness.rs"]
mod harness;

use std::path::Path;

const TARGETS: [&str; 5] = ["level_file", "obj", "gltf", "probe_set", "answer"];

/// The inputs packed in a kept corpus file (fuzz/corpus.py: each input's length as 8 little-endian
/// bytes, then the input).
fn unpacked(bytes: &[u8]) -> Vec<Vec<u8>> {
    let mut inputs = Vec::new();
    let mut at = 0;
    while at + 8 <= bytes.len() {
        let length = u64::from_le_bytes(bytes[at..at + 8].try_into().unwrap()) as usize;
        inputs.push(bytes[at + 8..at + 8 + length].to_vec());
        at += 8 + length;
    }
    inputs
}

#[test]
fn every_seed_and_kept_fuzz_input_is_answered_without_a_panic() {
    let fuzz = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/../fuzz"));
    let mut replayed = 0;
    for target in TARGETS {
        let mut inputs: Vec<Vec<u8>> = std::fs::read_dir(fuzz.join("seeds").join(target))
            .unwrap_or_else(|e| panic!("the seeds of {target}: {e}"))
            .map(|e| std::fs::read(e.unwrap().path()).unwrap())
            .collect();
        if let Ok(kept) = std::fs::read(fuzz.join("kept").join(format!("{target}.corpus"))) {
            inputs.extend(unpacked(&kept));
        }
        for (k, input) in inputs.iter().enumerate() {
            let answered = std::panic::catch_unwind(|| harness::run(target, input));
            assert!(answered.is_ok(), "{target}: input {k} panicked");
            replayed += 1;
        }
    }
    assert!(replayed >= 15, "the seeds at least");
}
