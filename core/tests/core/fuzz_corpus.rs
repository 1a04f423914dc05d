//! The fuzzers' corpus replayed as an ordinary test, so CI guards every input the fuzzers kept
//! (fuzz/run) without running a fuzzer: none may panic.

#[path = "../../../fuzz/harness.rs"]
mod harness;

use std::path::Path;

#[test]
fn every_kept_fuzz_input_is_answered_without_a_panic() {
    let corpus = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/../fuzz/corpus"));
    let mut replayed = 0;
    for target in ["level_file", "obj", "gltf", "probe_set", "answer"] {
        let mut inputs: Vec<_> = std::fs::read_dir(corpus.join(target))
            .unwrap_or_else(|e| panic!("the corpus of {target}: {e}"))
            .map(|e| e.unwrap().path())
            .collect();
        inputs.sort();
        for input in inputs {
            let bytes = std::fs::read(&input).unwrap();
            let answered = std::panic::catch_unwind(|| harness::run(target, &bytes));
            assert!(answered.is_ok(), "{target}: {} panicked", input.display());
            replayed += 1;
        }
    }
    assert!(replayed >= 5, "the corpus holds the seeds at least");
}
