//! `plumbline check` and `plumbline diff` from the outside: exit codes, the results file against a
//! reviewed golden file, reports, determinism across thread counts, and baselines.

use std::path::{Path, PathBuf};
use std::process::Command;

use super::support::plumbline;

const FIXTURE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/core/tests/fixtures/check");

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).unwrap()
}

/// A copy of the fixture folder, so tests can edit files without touching the repository.
fn fixture_copy() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for name in ["lane.level.json", "lane.probes.json"] {
        std::fs::copy(Path::new(FIXTURE).join(name), dir.path().join(name)).unwrap();
    }
    dir
}

fn out(dir: &Path, name: &str) -> PathBuf {
    dir.join(name)
}

#[test]
fn results_match_the_reviewed_golden_file() {
    let dir = fixture_copy();
    let run = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--out",
            "r.json",
            "--jobs",
            "1",
        ],
    );
    assert_eq!(run.status.code(), Some(1), "{}", text(&run.stderr));
    let golden = std::fs::read_to_string(Path::new(FIXTURE).join("lane.results.json")).unwrap();
    assert_eq!(
        std::fs::read_to_string(out(dir.path(), "r.json")).unwrap(),
        golden
    );
    let stdout = text(&run.stdout);
    assert!(
        stdout.contains("FAIL   spawn-by-bollard  Expected clear; overlaps bollard by 0.100 m"),
        "{stdout}"
    );
    assert!(
        stdout.contains("7 probes: 5 pass, 1 fail, 0 error, 1 unchecked"),
        "{stdout}"
    );
}

#[test]
fn results_are_byte_identical_across_thread_counts() {
    let dir = fixture_copy();
    plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--out",
            "one.json",
            "--jobs",
            "1",
        ],
    );
    plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--out",
            "two.json",
            "--jobs",
            "2",
        ],
    );
    let one = std::fs::read(out(dir.path(), "one.json")).unwrap();
    assert!(!one.is_empty());
    assert_eq!(one, std::fs::read(out(dir.path(), "two.json")).unwrap());
}

#[test]
fn timings_list_each_kind_and_the_slowest_probes_and_leave_the_results_alone() {
    let dir = fixture_copy();
    plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "plain.json"],
    );
    let run = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--out",
            "timed.json",
            "--timings",
        ],
    );
    let stdout = text(&run.stdout);
    assert!(stdout.contains("Answering took "), "{stdout}");
    let kinds = stdout
        .lines()
        .filter(|l| l.contains(" probes ") || l.contains(" probe "))
        .count();
    assert!(kinds >= 2, "{stdout}");
    let slowest: Vec<&str> = stdout
        .lines()
        .skip_while(|l| *l != "Slowest:")
        .skip(1)
        .collect();
    assert!(!slowest.is_empty() && slowest.len() <= 10, "{stdout}");
    assert_eq!(
        std::fs::read(out(dir.path(), "plain.json")).unwrap(),
        std::fs::read(out(dir.path(), "timed.json")).unwrap()
    );
}

#[test]
fn exit_0_when_every_expectation_holds() {
    let dir = fixture_copy();
    let probes = std::fs::read_to_string(dir.path().join("lane.probes.json")).unwrap();
    // Give the failing spawn probe room: one metre further from the bollard.
    std::fs::write(
        dir.path().join("lane.probes.json"),
        probes.replace("[-1.4, 0.95, -2]", "[-2.4, 0.95, -2]"),
    )
    .unwrap();
    let run = plumbline(dir.path(), &["check", "lane.probes.json", "--brief"]);
    assert_eq!(run.status.code(), Some(0), "{}", text(&run.stdout));
    assert!(
        !text(&run.stdout).contains("pass  "),
        "--brief lists no passes"
    );
}

#[test]
fn junit_xml_reads_back_with_an_xml_parser() {
    let dir = fixture_copy();
    plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--junit", "j.xml"],
    );
    let xml = std::fs::read_to_string(out(dir.path(), "j.xml")).unwrap();
    let doc = roxmltree::Document::parse(&xml).expect("well-formed XML");
    let suites = doc.root_element();
    assert_eq!(suites.tag_name().name(), "testsuites");
    assert_eq!(suites.attribute("tests"), Some("7"));
    assert_eq!(suites.attribute("failures"), Some("1"));
    let cases: Vec<_> = doc
        .descendants()
        .filter(|n| n.has_tag_name("testcase"))
        .collect();
    assert_eq!(cases.len(), 7);
    let failing = cases
        .iter()
        .find(|c| c.attribute("name") == Some("spawn-by-bollard"))
        .unwrap();
    let failure = failing
        .children()
        .find(|n| n.has_tag_name("failure"))
        .expect("a failure element");
    assert_eq!(
        failure.attribute("message"),
        Some("Expected clear; overlaps bollard by 0.100 m")
    );
    let skipped = cases
        .iter()
        .find(|c| c.attribute("name") == Some("no-expectation"))
        .unwrap();
    assert!(skipped.children().any(|n| n.has_tag_name("skipped")));
}

#[test]
fn markdown_summary_lists_failures_and_changes() {
    let dir = fixture_copy();
    plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "base.json"],
    );
    let level = std::fs::read_to_string(dir.path().join("lane.level.json")).unwrap();
    std::fs::write(
        dir.path().join("lane.level.json"),
        level.replace(
            "\"translation\": [5, 1.5, 0]",
            "\"translation\": [6, 1.5, 0]",
        ),
    )
    .unwrap();
    plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--baseline",
            "base.json",
            "--markdown",
            "m.md",
        ],
    );
    let md = std::fs::read_to_string(out(dir.path(), "m.md")).unwrap();
    assert!(
        md.starts_with("### Plumbline check: 5 of 7 probes pass"),
        "{md}"
    );
    assert!(md.contains("| `spawn-by-bollard` Spawn beside the bollard is clear | overlap | fail | Expected clear; overlaps bollard by 0.100 m |"), "{md}");
    assert!(md.contains("#### Changed since the baseline"), "{md}");
    assert!(md.contains("| `gate-sees-shed` Gate lookout sees the shed wall through the pane | distance 10.900 m -> 11.900 m (+1.000 m) |"), "{md}");
}

#[test]
fn a_baseline_reports_exactly_the_edited_probes() {
    let dir = fixture_copy();
    plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "base.json"],
    );
    // Move the bollard 1 m away: only the spawn probe beside it changes.
    let level = std::fs::read_to_string(dir.path().join("lane.level.json")).unwrap();
    std::fs::write(
        dir.path().join("lane.level.json"),
        level.replace("[-1, 0.5, -2]", "[0, 0.5, -2]"),
    )
    .unwrap();
    let run = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--baseline",
            "base.json",
            "--out",
            "new.json",
        ],
    );
    let stdout = text(&run.stdout);
    assert!(
        stdout.contains("warning: the baseline was computed on different level geometry"),
        "{stdout}"
    );
    assert!(
        stdout.contains("Changed since the baseline (1):"),
        "{stdout}"
    );
    assert!(stdout.contains("spawn-by-bollard  verdict fail -> pass; blocked -> clear; first object bollard -> nothing"), "{stdout}");
    assert_eq!(run.status.code(), Some(0), "every expectation holds now");
    let strict = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--baseline",
            "base.json",
            "--fail-on-change",
        ],
    );
    assert_eq!(strict.status.code(), Some(1));
    // diff says the same, and exits 1 on changes, 0 on none.
    let diff = plumbline(dir.path(), &["diff", "base.json", "new.json"]);
    assert_eq!(diff.status.code(), Some(1));
    assert!(text(&diff.stdout).contains("spawn-by-bollard  verdict fail -> pass"));
    assert_eq!(
        plumbline(dir.path(), &["diff", "new.json", "new.json"])
            .status
            .code(),
        Some(0)
    );
    // A distance change under the tolerance is not a change.
    let within = plumbline(
        dir.path(),
        &["diff", "base.json", "new.json", "--tolerance", "5"],
    );
    assert!(text(&within.stdout).contains("Changed since the baseline (1):"));
}

#[test]
fn level_override_takes_another_level() {
    let dir = fixture_copy();
    let level = std::fs::read_to_string(dir.path().join("lane.level.json")).unwrap();
    std::fs::write(
        dir.path().join("other.level.json"),
        level.replace("\"name\": \"bollard\"", "\"name\": \"post\""),
    )
    .unwrap();
    let run = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--level", "other.level.json"],
    );
    assert!(text(&run.stdout).contains("overlaps post by 0.100 m"));
}

/// Each bad probe file exits 2 with one line naming the file and the place.
#[test]
fn bad_probe_files_exit_2_with_a_clear_message() {
    let dir = fixture_copy();
    let cases = [
        (
            r#"{"id": "a", "kind": "ray", "from": [0, 0, "x"], "to": [1, 0, 0]}"#,
            "line 4, column 49",
            "invalid type",
        ),
        (
            r#"{"id": "a", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0]}, {"id": "a", "kind": "ray", "from": [0, 0, 0], "to": [2, 0, 0]}"#,
            "line 4, column 69",
            "used twice",
        ),
        (
            r#"{"id": "a", "kind": "laser", "from": [0, 0, 0], "to": [1, 0, 0]}"#,
            "line 4, column 5",
            "unknown kind \"laser\"",
        ),
        (
            r#"{"id": "a", "kind": "ray", "from": [0, 0, NaN], "to": [1, 0, 0]}"#,
            "line 4, column 47",
            "expected value",
        ),
        (
            r#"{"id": "a", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0], "expect": {"blocked": true, "frist_object": "x"}}"#,
            "line 4, column 109",
            "unknown field `frist_object`",
        ),
        (
            r#"{"id": "a", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0], "path": [[0, 0, 0]]}"#,
            "line 4, column 5",
            "field \"path\" does not apply to a ray probe",
        ),
        (
            r#"{"id": "a b", "kind": "ray", "from": [0, 0, 0], "to": [1, 0, 0]}"#,
            "line 4, column 5",
            "must be letters",
        ),
        (
            r#"{"id": "a", "kind": "sweep", "shape": {"type": "point"}, "path": [[0, 0, 0], [1, 0, 0]]}"#,
            "line 4, column 5",
            "cannot be a point",
        ),
        (
            r#"{"id": "a", "kind": "overlap", "shape": {"type": "sphere", "radius": 0}, "at": [0, 0, 0]}"#,
            "line 4, column 5",
            "radius must be a positive number",
        ),
        (
            r#"{"id": "a", "kind": "closest", "shape": {"type": "point"}, "at": [0, 0, 0]}"#,
            "line 4, column 5",
            "needs \"max_distance\"",
        ),
    ];
    for (k, (probe, place, message)) in cases.iter().enumerate() {
        let name = format!("bad{k}.probes.json");
        let file = format!(
            "{{\n  \"plumbline\": \"probes\", \"version\": 1, \"level\": \"lane.level.json\",\n  \"probes\": [\n    {probe}\n  ]\n}}\n"
        );
        std::fs::write(dir.path().join(&name), file).unwrap();
        let run = plumbline(dir.path(), &["check", &name]);
        let stderr = text(&run.stderr);
        assert_eq!(run.status.code(), Some(2), "case {k}: {stderr}");
        assert_eq!(stderr.lines().count(), 1, "case {k}: {stderr}");
        assert!(
            stderr.contains(&format!("{name}: {place}")) && stderr.contains(message),
            "case {k}: {stderr}"
        );
    }
    std::fs::write(
        dir.path().join("nolevel.probes.json"),
        r#"{"plumbline": "probes", "version": 1, "level": "gone.level.json", "probes": []}"#,
    )
    .unwrap();
    let run = plumbline(dir.path(), &["check", "nolevel.probes.json"]);
    assert_eq!(run.status.code(), Some(2));
    assert!(text(&run.stderr).contains("gone.level.json: cannot read the file"));
    assert_eq!(
        plumbline(dir.path(), &["check", "missing.probes.json"])
            .status
            .code(),
        Some(2)
    );
    assert_eq!(
        plumbline(
            dir.path(),
            &["check", "lane.probes.json", "--tolerance", "-1"]
        )
        .status
        .code(),
        Some(2)
    );
    assert_eq!(
        plumbline(dir.path(), &["check", "lane.probes.json", "--jobs", "0"])
            .status
            .code(),
        Some(2)
    );
}

/// A set larger than the part checked whole up front: a mistake past that part still exits 2
/// naming its place, and no results file is written (one from an earlier run is left as it was);
/// a repeated id past it is found before anything is answered.
#[test]
fn a_mistake_deep_in_a_large_set_stops_the_check_and_writes_nothing() {
    let dir = fixture_copy();
    let count = plumbline_core::probe::CHECKED_WHOLE + 100;
    let ray = |k: usize, from: &str| {
        format!(r#"    {{"id": "r{k}", "kind": "ray", "from": {from}, "to": [1, 0, 0]}}"#)
    };
    let set = |bad: usize, id_of_bad: Option<usize>| {
        let probes: Vec<String> = (0..count)
            .map(|k| match (k == bad, id_of_bad) {
                (true, None) => ray(k, r#"[0, 0, "x"]"#),
                (true, Some(same)) => ray(same, "[0, 0, 0]"),
                _ => ray(k, "[0, 0, 0]"),
            })
            .collect();
        format!(
            "{{\n  \"plumbline\": \"probes\", \"version\": 1, \"level\": \"lane.level.json\",\n  \"probes\": [\n{}\n  ]\n}}\n",
            probes.join(",\n")
        )
    };
    let results = out(dir.path(), "big.results.json");
    std::fs::write(&results, "earlier results").unwrap();
    let bad = count - 3;
    std::fs::write(dir.path().join("big.probes.json"), set(bad, None)).unwrap();
    let args = [
        "check",
        "big.probes.json",
        "--out",
        "big.results.json",
        "--junit",
        "big.junit.xml",
        "--markdown",
        "big.md",
        "--brief",
    ];
    let files = || {
        let mut names: Vec<String> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    };
    let before = files();
    let run = plumbline(dir.path(), &args);
    let stderr = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{stderr}");
    // The probe's line in the file: the set's three lines of top, then one probe a line.
    let place = format!("big.probes.json: line {}, column 53", bad + 4);
    assert!(
        stderr.contains(&place) && stderr.contains("invalid type"),
        "{stderr}"
    );
    assert_eq!(
        std::fs::read_to_string(&results).unwrap(),
        "earlier results"
    );
    // No report written, no scratch file left.
    assert_eq!(files(), before);

    std::fs::write(dir.path().join("big.probes.json"), set(bad, Some(5))).unwrap();
    let run = plumbline(dir.path(), &args);
    let stderr = text(&run.stderr);
    assert_eq!(run.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("\"r5\" is used twice"), "{stderr}");
    assert!(
        text(&run.stdout).is_empty(),
        "nothing answered before the error"
    );
    assert_eq!(
        std::fs::read_to_string(&results).unwrap(),
        "earlier results"
    );

    // The same set without the mistake is answered whole.
    std::fs::write(dir.path().join("big.probes.json"), set(count, None)).unwrap();
    let run = plumbline(dir.path(), &args);
    assert_eq!(run.status.code(), Some(0), "{}", text(&run.stderr));
    let written = plumbline_core::check::load_results(&results).unwrap();
    assert_eq!(written.results.len(), count);
}

/// `check --watch` re-runs when the level changes on disk and prints what changed since the last run.
#[test]
fn watch_reruns_on_a_level_edit() {
    use std::io::{BufRead, BufReader};
    use std::sync::mpsc;
    use std::time::Duration;
    let dir = fixture_copy();
    let mut child = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .current_dir(dir.path())
        .args(["check", "lane.probes.json", "--watch"])
        .env("NO_COLOR", "1")
        .stdout(std::process::Stdio::piped())
        .spawn()
        .unwrap();
    let (tx, rx) = mpsc::channel();
    let stdout = child.stdout.take().unwrap();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines().map_while(Result::ok) {
            if tx.send(line).is_err() {
                break;
            }
        }
    });
    let wait_for = |needle: &str| -> bool {
        // A generous limit only so a broken watcher cannot hang the suite; not a speed check.
        while let Ok(line) = rx.recv_timeout(Duration::from_secs(60)) {
            if line.contains(needle) {
                return true;
            }
        }
        false
    };
    assert!(wait_for("watching for changes"), "first run finished");
    let level = std::fs::read_to_string(dir.path().join("lane.level.json")).unwrap();
    std::fs::write(
        dir.path().join("lane.level.json"),
        level.replace("[-1, 0.5, -2]", "[0, 0.5, -2]"),
    )
    .unwrap();
    let saw_change = wait_for("spawn-by-bollard  verdict fail -> pass");
    let _ = child.kill();
    let _ = child.wait();
    assert!(saw_change, "the edit was picked up and reported");
}

#[test]
fn the_demo_with_rules_matrix_and_coverage_gives_the_same_bytes_for_any_jobs() {
    let scenes = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenes");
    let dir = tempfile::tempdir().unwrap();
    let mut files = Vec::new();
    for jobs in ["1", "2"] {
        let out = dir.path().join(format!("jobs-{jobs}.results.json"));
        let run = plumbline(
            &scenes,
            &[
                "check",
                "saltfen-quay.probes.json",
                "--jobs",
                jobs,
                "--out",
                out.to_str().unwrap(),
            ],
        );
        assert_eq!(run.status.code(), Some(1), "{}", text(&run.stderr));
        files.push(std::fs::read(out).unwrap());
    }
    assert_eq!(files[0], files[1]);
    let results: serde_json::Value = serde_json::from_slice(&files[0]).unwrap();
    let ids: Vec<&str> = results["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["id"].as_str().unwrap())
        .collect();
    assert!(ids.contains(&"props-rest/crate-7"));
    assert!(ids.contains(&"lookout-matrix"));
}
