//! `plumbline info`: the level's objects and warnings, and exit 2 with a one-line error for bad input;
//! `plumbline schema`: the formats' JSON Schemas.

use std::path::{Path, PathBuf};
use std::process::Command;

use super::support::plumbline;

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, bytes).unwrap();
    p
}

#[test]
fn info_exits_2_with_a_one_line_error() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(dir.path(), "a.obj", b"v 0 0 0\nf 1 2 3\n");
    let out = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .arg("info")
        .arg(&p)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(stderr.contains("a.obj: line 2, column 5"), "{stderr}");
    let out = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .args(["info", "--bogus"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
}

#[test]
fn info_lists_objects_and_warnings() {
    let dir = tempfile::tempdir().unwrap();
    let p = write(
        dir.path(),
        "a.obj",
        b"o crate\nv 0 0 0\nv 1 0 0\nv 0 1 0\nv 2 0 0\nf 1 2 3\nf 1 2 4\n",
    );
    let out = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .arg("info")
        .arg(&p)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let stdout = String::from_utf8(out.stdout).unwrap();
    assert!(stdout.contains("triangles 1"), "{stdout}");
    assert!(
        stdout.contains("crate") && stdout.contains("1 degenerate triangle(s)"),
        "{stdout}"
    );
}

#[test]
fn schema_prints_each_formats_schema_as_the_repository_holds_it() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for kind in ["level", "probes", "results", "partial-results"] {
        let run = plumbline(root, &["schema", kind]);
        assert_eq!(run.status.code(), Some(0));
        let file = std::fs::read(root.join(format!("schemas/{kind}.schema.json"))).unwrap();
        assert!(run.stdout == file, "{kind}");
    }
    let run = plumbline(root, &["schema", "lint"]);
    assert_eq!(run.status.code(), Some(2));
}

/// Given a probe set larger than the part checked up front, `info` (and `lint`) still check every
/// probe: a mistake near its end exits 2 naming the place.
#[test]
fn info_and_lint_check_every_probe_of_a_large_set() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "a.obj", b"v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n");
    let count = plumbline_core::probe::CHECKED_WHOLE + 10;
    let probes: Vec<String> = (0..count)
        .map(|k| {
            let x = if k == count - 2 { "\"x\"" } else { "0" };
            format!(r#"{{"id": "r{k}", "kind": "ray", "from": [{x}, 0, 1], "to": [0, 0, -1]}}"#)
        })
        .collect();
    let set = format!(
        "{{\"plumbline\": \"probes\", \"version\": 1, \"level\": \"a.obj\", \"probes\": [\n{}\n]}}\n",
        probes.join(",\n")
    );
    write(dir.path(), "big.probes.json", set.as_bytes());
    for command in ["info", "lint"] {
        let out = plumbline(dir.path(), &[command, "big.probes.json"]);
        let stderr = String::from_utf8(out.stderr).unwrap();
        assert_eq!(out.status.code(), Some(2), "{command}: {stderr}");
        assert!(
            // Probe k stands on line k + 2.
            stderr.contains(&format!("big.probes.json: line {count}, column 43")),
            "{command}: {stderr}"
        );
    }
}
