//! "Expect this answer": the expectation taken from a probe's answer must hold for that answer, for
//! every probe of the demo, on the level as it was and after the edits.

use std::path::PathBuf;

use plumbline_core::check::{Verdict, answer_probe, expectation_from};
use plumbline_core::demo::files;
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{LoadedLevel, load_level};
use plumbline_core::probe::load_probe_set;
use plumbline_core::query::World;

#[test]
fn an_expectation_taken_from_an_answer_passes_on_that_answer() {
    let scenes = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../scenes");
    let set = load_probe_set(&scenes.join(files::PROBES)).unwrap();
    for level in [files::LEVEL, files::EDITED_LEVEL] {
        let LoadedLevel { level, .. } =
            load_level(&scenes.join(level), PathPolicy::default()).unwrap();
        let world = World::new(&level).unwrap();
        for probe in &set.probes {
            let result = answer_probe(&world, probe);
            let mut fixed = probe.clone();
            fixed.expect = expectation_from(&result);
            assert!(fixed.expect.is_some(), "{}", probe.id);
            let again = answer_probe(&world, &fixed);
            assert_eq!(
                again.verdict,
                Verdict::Pass,
                "{}: {}",
                probe.id,
                again.reason
            );
            assert_eq!(again.hits, result.hits, "{}", probe.id);
        }
    }
}
