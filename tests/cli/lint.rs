//! `plumbline lint` from the outside: exit codes, the findings on the demo, the files it writes,
//! and what it refuses.

use std::path::Path;

use super::support::plumbline;

const SCENES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/scenes");

/// A copy of the demo level (level file and meshes) in a scratch folder.
fn demo_copy() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for name in ["saltfen-quay.level.json", "saltfen-quay.glb"] {
        std::fs::copy(Path::new(SCENES).join(name), dir.path().join(name)).unwrap();
    }
    dir
}

#[test]
fn the_demo_lints_to_its_planted_findings_and_writes_every_report() {
    let dir = demo_copy();
    let run = plumbline(
        dir.path(),
        &[
            "lint",
            "saltfen-quay.level.json",
            "--out",
            "lint.json",
            "--junit",
            "lint.xml",
            "--markdown",
            "lint.md",
        ],
    );
    assert_eq!(run.status.code(), Some(1), "findings exit 1");
    let stdout = String::from_utf8(run.stdout).unwrap();
    assert!(stdout.contains("8 finding(s), 87 accepted"), "{stdout}");
    assert!(
        stdout.contains("crate-7 floats 0.250 m above yard/terrain"),
        "{stdout}"
    );
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("lint.json")).unwrap())
            .unwrap();
    assert_eq!(json["plumbline"], "lint");
    assert_eq!(json["findings"].as_array().unwrap().len(), 8);
    assert_eq!(json["allowed"].as_array().unwrap().len(), 87);
    let junit = std::fs::read_to_string(dir.path().join("lint.xml")).unwrap();
    assert!(junit.contains("failures=\"8\""), "{junit}");
    assert!(junit.contains("<testcase name=\"slivers\" classname=\"plumbline.lint\"/>"));
    let markdown = std::fs::read_to_string(dir.path().join("lint.md")).unwrap();
    assert!(
        markdown.starts_with("### Plumbline lint: 8 finding(s)"),
        "{markdown}"
    );
}

#[test]
fn a_clean_level_exits_0_and_thresholds_are_options() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("pair.level.json"),
        r#"{"plumbline": "level", "version": 1, "objects": [
            {"name": "a", "translation": [0, 0.5, 0], "shape": {"type": "box", "half_extents": [0.5, 0.5, 0.5]}},
            {"name": "b", "translation": [1.2, 0.5, 0], "shape": {"type": "box", "half_extents": [0.5, 0.5, 0.5]}}]}"#,
    )
    .unwrap();
    // 0.2 m apart: a narrow gap under the default 0.3 m, none under 0.1 m.
    let found = plumbline(dir.path(), &["lint", "pair.level.json"]);
    assert_eq!(found.status.code(), Some(1));
    let clean = plumbline(
        dir.path(),
        &["lint", "pair.level.json", "--narrow-gap", "0.1"],
    );
    assert_eq!(clean.status.code(), Some(0));
    assert!(
        String::from_utf8(clean.stdout)
            .unwrap()
            .contains("0 finding(s)")
    );
}

#[test]
fn lint_refuses_bad_input_and_outputs_over_its_inputs_with_exit_2() {
    let dir = demo_copy();
    let over = plumbline(
        dir.path(),
        &[
            "lint",
            "saltfen-quay.level.json",
            "--out",
            "saltfen-quay.glb",
        ],
    );
    assert_eq!(over.status.code(), Some(2));
    assert!(String::from_utf8(over.stderr).unwrap().contains("input"));
    let glb = std::fs::read(dir.path().join("saltfen-quay.glb")).unwrap();
    assert_eq!(
        glb,
        std::fs::read(Path::new(SCENES).join("saltfen-quay.glb")).unwrap()
    );

    std::fs::write(
        dir.path().join("typo.level.json"),
        r#"{"plumbline": "level", "version": 1, "objects": [],
            "lint": {"allow": [{"finding": "overlaps", "objects": ["a"]}]}}"#,
    )
    .unwrap();
    let typo = plumbline(dir.path(), &["lint", "typo.level.json"]);
    assert_eq!(typo.status.code(), Some(2));
    let message = String::from_utf8(typo.stderr).unwrap();
    assert!(
        message.contains("lint.allow[0]") && message.contains("\"overlaps\""),
        "{message}"
    );
    let angle = plumbline(
        dir.path(),
        &["lint", "saltfen-quay.level.json", "--sliver-angle", "90"],
    );
    assert_eq!(angle.status.code(), Some(2));
}
