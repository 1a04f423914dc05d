//! Probe-set files: load → save → load gives the same probe set, with order, labels and every field kept.

use std::path::Path;

use plumbline_core::probe::{parse_probe_set, probe_set_to_json};

#[test]
fn save_and_reload_is_identical() {
    let path = Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/check/lane.probes.json"
    ));
    let text = std::fs::read_to_string(path).unwrap();
    let set = parse_probe_set(path, &text).unwrap();
    let saved = probe_set_to_json(&set);
    let again = parse_probe_set(path, &saved).unwrap();
    assert_eq!(set, again);
    assert_eq!(saved, probe_set_to_json(&again), "saving is stable");
    let ids: Vec<&str> = again.probes.iter().map(|p| &*p.id).collect();
    assert_eq!(
        ids,
        [
            "gate-sees-shed",
            "pane-blocks",
            "lane-camera",
            "walk-to-shed",
            "crate-grounded",
            "spawn-by-bollard",
            "no-expectation"
        ]
    );
    assert!(saved.contains("\"label\": \"Crate 1 rests on the ground\""));
    assert!(
        saved.contains("\"path\": [[-8.0, 3.5, -6.0], [0.0, 3.5, -6.0], [8.0, 3.5, -6.0]]"),
        "{saved}"
    );
}

#[test]
fn numbers_that_need_seventeen_digits_are_read_back_exactly() {
    // A probe set written by the program and read back is the same value (and the same text): each
    // number is read to the nearest double, as IEEE 754-2008 §5.12 requires of conversions from
    // decimal, not to a neighbour of it.
    let text = r#"{"plumbline": "probes", "version": 1, "level": "l.level.json", "probes": [
        {"id": "p", "kind": "closest", "shape": {"type": "point"},
         "at": [-20.0, 1.8246433040922059, 30.62720809678395], "max_distance": 1}]}"#;
    let path = Path::new("t.probes.json");
    let set = parse_probe_set(path, text).unwrap();
    assert_eq!(set.probes[0].query.points()[0].y, 1.8246433040922059);
    let written = probe_set_to_json(&set);
    assert!(written.contains("1.8246433040922059"), "{written}");
    assert_eq!(parse_probe_set(path, &written).unwrap(), set);
}

#[test]
fn of_many_bad_probes_the_first_in_the_file_is_named() {
    // Probes are checked in parallel batches; the error must not depend on which thread finishes
    // first. Probe 5 and probe 9,000 (in another batch) are both bad; only probe 5 is named.
    let probes: Vec<String> = (0..10_000)
        .map(|k| match k {
            5 => r#"{"id": "bad-5", "kind": "ray", "from": [0, 0, 0]}"#.to_string(),
            9_000 => r#"{"id": "bad-9000", "kind": "ray", "to": [0, 0, 0]}"#.to_string(),
            k => format!(r#"{{"id": "p{k}", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0]}}"#),
        })
        .collect();
    let text = format!(
        "{{\"plumbline\": \"probes\", \"version\": 1, \"level\": \"l.level.json\", \"probes\": [\n{}\n]}}",
        probes.join(",\n")
    );
    for _ in 0..5 {
        let err = parse_probe_set(Path::new("many.probes.json"), &text).unwrap_err();
        let message = err.to_string();
        assert!(
            message.contains("line 7") && message.contains("bad-5"),
            "{message}"
        );
    }
}

#[test]
fn a_set_of_many_chunks_is_answered_in_order_for_any_thread_count() {
    // A check answers a chunk of probes while it hands out the one before (with two threads or
    // more): results must still come out in file order, the same as on one thread, whole and in
    // shards. Common practice for a streaming pipeline; the reference is the one-thread run.
    use plumbline_core::check::{Runner, Shard, entries_text};
    use plumbline_core::session::{HandOut, OpenOptions, open};
    let root = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/.."));
    let probes: Vec<String> = (0..20_000)
        .map(|k| {
            let (x, z) = ((k % 200) as f64 * 0.7 - 70.0, (k / 200) as f64 * 1.3 - 60.0);
            format!(
                r#"{{"id": "r{k}", "kind": "ray", "from": [{x}, 6.0, {z}], "to": [{}, -1.0, {}], "expect": "clear"}}"#,
                x + 3.0,
                z - 2.0
            )
        })
        .collect();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("many.probes.json");
    let text = format!(
        "{{\"plumbline\": \"probes\", \"version\": 1, \"level\": \"l.level.json\", \"probes\": [\n{}\n]}}",
        probes.join(",\n")
    );
    std::fs::write(&path, text).unwrap();
    let options = OpenOptions {
        level: Some(root.join("scenes/saltfen-quay.level.json")),
        ..OpenOptions::default()
    };
    let opened = open(&path, &options).unwrap();
    // The answers in probe order, and the results-file text laid out for them by the answering
    // threads, which must be the text of those results laid out one by one.
    let answers = |jobs: usize, only: Option<&[usize]>| {
        let mut found = Vec::new();
        let (mut text, mut counted) = (String::new(), 0);
        opened
            .answer_each(
                &Runner::new(Some(jobs)).unwrap(),
                only,
                None,
                HandOut {
                    each: &mut |probe, result, _| {
                        assert_eq!(probe.id, result.id);
                        found.push(result);
                        Ok(())
                    },
                    laid_out: Some(&mut |block, count| {
                        text.push_str(block);
                        counted += count;
                        Ok(())
                    }),
                },
            )
            .unwrap();
        assert_eq!(counted, found.len());
        assert!(text == entries_text(&found, 0), "{jobs} thread(s)");
        found
    };
    // Two threads first: that run builds the ray index, with later chunks parsed beside it.
    let two = answers(2, None);
    let one = answers(1, None);
    let ids: Vec<String> = (0..20_000).map(|k| format!("r{k}")).collect();
    assert_eq!(
        one.iter().map(|r| r.id.to_string()).collect::<Vec<_>>(),
        ids
    );
    assert!(
        one.iter().any(|r| !r.hits.is_empty()),
        "some rays hit the level"
    );
    assert_eq!(two, one);
    let shard = opened
        .shard_positions(Shard { index: 2, count: 3 })
        .unwrap();
    let expected: Vec<_> = shard.iter().map(|&p| one[p].clone()).collect();
    assert_eq!(answers(2, Some(&shard)), expected);
    // Answers are timed (for `--timings`) only when the runner is asked to time them.
    let times = |runner: Runner| {
        let mut took = Vec::new();
        let first: Vec<usize> = (0..200).collect();
        opened
            .answer_each(
                &runner,
                Some(&first),
                None,
                HandOut::each(&mut |_, _, t| {
                    took.push(t);
                    Ok(())
                }),
            )
            .unwrap();
        took
    };
    let untimed = times(Runner::new(Some(1)).unwrap());
    assert!(untimed.iter().all(|t| t.is_zero()), "{untimed:?}");
    let timed = times(Runner::new(Some(1)).unwrap().timing(true));
    assert_eq!(timed.len(), 200);
    assert!(timed.iter().all(|t| !t.is_zero()), "{timed:?}");
    // A hand-out that fails (say, a full disk) ends the run with its error on one thread or two:
    // nothing is handed out after it, and the answering thread does not wait on a queue no one
    // takes from (the test would hang).
    for jobs in [1, 2] {
        let mut handed = 0;
        let failed = opened.answer_each(
            &Runner::new(Some(jobs)).unwrap(),
            None,
            None,
            HandOut::each(&mut |_, _, _| {
                handed += 1;
                if handed < 100 {
                    Ok(())
                } else {
                    Err(plumbline_core::error::Error::Write {
                        path: "full.json".into(),
                        source: std::io::Error::other("no space left"),
                    })
                }
            }),
        );
        assert!(
            matches!(failed, Err(plumbline_core::error::Error::Write { .. })),
            "{jobs} thread(s)"
        );
        assert_eq!(handed, 100, "{jobs} thread(s)");
    }
}
