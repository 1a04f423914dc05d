//! The command line against hostile input and mistakes that could lose files: every case exits 2
//! with one line naming the file, never a panic; no output can replace an input; an interrupted run
//! leaves nothing behind; no generated input makes any command exit other than 0, 1 or 2.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use proptest::prelude::*;

use super::support::plumbline;

const FIXTURE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/core/tests/fixtures/check");

/// The fixture's lane level and probes, copied into a fresh folder.
fn lane() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for name in ["lane.level.json", "lane.probes.json", "lane.results.json"] {
        std::fs::copy(Path::new(FIXTURE).join(name), dir.path().join(name)).unwrap();
    }
    dir
}

/// Asserts exit 2 with exactly one line on stderr containing `expected`; returns that line.
fn refused(out: &Output, expected: &str) -> String {
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(stderr.contains(expected), "{stderr}");
    stderr
}

#[test]
fn no_output_may_replace_an_input_or_another_output() {
    let dir = lane();
    let probes = std::fs::read(dir.path().join("lane.probes.json")).unwrap();
    let level = std::fs::read(dir.path().join("lane.level.json")).unwrap();
    let out = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "lane.probes.json"],
    );
    refused(
        &out,
        "lane.probes.json: the results file (--out) would overwrite one of this run's inputs",
    );
    let out = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--junit", "./lane.level.json"],
    );
    refused(&out, "would overwrite one of this run's inputs");
    let out = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--baseline",
            "lane.results.json",
            "--out",
            "lane.results.json",
        ],
    );
    refused(&out, "one of this run's inputs");
    let out = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--out",
            "r.json",
            "--markdown",
            "r.json",
        ],
    );
    refused(&out, "would overwrite the results file (--out)");
    assert_eq!(
        std::fs::read(dir.path().join("lane.probes.json")).unwrap(),
        probes
    );
    assert_eq!(
        std::fs::read(dir.path().join("lane.level.json")).unwrap(),
        level
    );
    assert!(!dir.path().join("r.json").exists());
}

#[cfg(unix)]
#[test]
fn an_output_that_is_a_device_or_a_folder_is_refused_and_left_alone() {
    // Run as root (as CI containers often are), the atomic rename once put a results file in
    // place of /dev/null.
    let dir = lane();
    let out = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "/dev/null"],
    );
    refused(&out, "/dev/null: cannot write the file: not a regular file");
    use std::os::unix::fs::FileTypeExt;
    assert!(
        std::fs::metadata("/dev/null")
            .unwrap()
            .file_type()
            .is_char_device()
    );
    std::fs::create_dir(dir.path().join("reports")).unwrap();
    let out = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--junit", "reports"],
    );
    refused(&out, "not a regular file");
    assert!(dir.path().join("reports").is_dir());
}

#[test]
fn long_names_empty_paths_and_odd_keys_give_one_line() {
    let dir = lane();
    let long_id = "p".repeat(70_000);
    let set = |probes: &str, level: &str| {
        format!(
            r#"{{"plumbline": "probes", "version": 1, "level": "{level}", "probes": [{probes}]}}"#
        )
    };
    let ray = |id: &str| {
        format!(r#"{{"id": "{id}", "kind": "ray", "from": [0, 1, 0], "to": [1, 1, 0]}}"#)
    };
    std::fs::write(
        dir.path().join("long.probes.json"),
        set(&ray(&long_id), "lane.level.json"),
    )
    .unwrap();
    let line = refused(
        &plumbline(dir.path(), &["check", "long.probes.json"]),
        "70000 characters long",
    );
    assert!(line.len() < 400);
    std::fs::write(dir.path().join("empty.probes.json"), set(&ray("a"), "")).unwrap();
    refused(
        &plumbline(dir.path(), &["check", "empty.probes.json"]),
        "empty.probes.json: field \"level\": the path is empty",
    );
    let odd = r#"{"plumbline": "probes", "version": 1, "level": "lane.level.json", "probes": [], "a\nb": 1}"#;
    std::fs::write(dir.path().join("odd.probes.json"), odd).unwrap();
    refused(
        &plumbline(dir.path(), &["check", "odd.probes.json"]),
        "a\\nb",
    );
}

#[test]
fn a_pipe_given_as_the_probe_set_is_refused_without_waiting() {
    let dir = lane();
    let fifo = dir.path().join("pipe.probes.json");
    assert!(
        Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .unwrap()
            .success()
    );
    let started = Instant::now();
    refused(
        &plumbline(dir.path(), &["check", "pipe.probes.json"]),
        "not a regular file",
    );
    assert!(started.elapsed() < Duration::from_secs(10));
}

/// Many capsule sweeps over the lane: a run that takes a few seconds on one thread.
fn slow_probe_set(dir: &Path) -> PathBuf {
    let probes: Vec<String> = (0..40_000)
        .map(|k| {
            let x = (k % 97) as f64 * 0.1;
            format!(
                r#"{{"id": "s{k}", "kind": "sweep", "shape": {{"type": "capsule", "radius": 0.3, "half_height": 0.6}},
                   "path": [[{x}, 1, -20], [{x}, 1.5, 20], [{}, 1, 25]], "clearance": true}}"#,
                x + 3.0
            )
        })
        .collect();
    let path = dir.join("slow.probes.json");
    std::fs::write(
        &path,
        format!(
            r#"{{"plumbline": "probes", "version": 1, "level": "lane.level.json", "probes": [{}]}}"#,
            probes.join(",\n")
        ),
    )
    .unwrap();
    path
}

#[test]
fn an_interrupted_check_leaves_no_temporary_files_and_the_old_output_intact() {
    let dir = lane();
    slow_probe_set(dir.path());
    std::fs::write(
        dir.path().join("slow.results.json"),
        b"the previous results",
    )
    .unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .current_dir(dir.path())
        .args([
            "check",
            "slow.probes.json",
            "--jobs",
            "1",
            "--out",
            "slow.results.json",
        ])
        .args(["--junit", "slow.junit.xml"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    // Wait until the run is writing (its scratch files exist), then interrupt it.
    let scratch = |dir: &Path| {
        std::fs::read_dir(dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
            .count()
    };
    let started = Instant::now();
    while scratch(dir.path()) == 0 && started.elapsed() < Duration::from_secs(30) {
        std::thread::sleep(Duration::from_millis(20));
    }
    assert!(scratch(dir.path()) > 0, "the run started writing");
    let killed = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(killed.success());
    let status = child.wait().unwrap();
    assert_eq!(status.code(), Some(130));
    assert_eq!(scratch(dir.path()), 0, "no temporary file left");
    assert_eq!(
        std::fs::read(dir.path().join("slow.results.json")).unwrap(),
        b"the previous results"
    );
    assert!(!dir.path().join("slow.junit.xml").exists());
}

/// Bytes of a small valid file of each kind the program reads, to mutate.
fn seeds() -> Vec<(&'static str, Vec<u8>)> {
    let fixture = |name: &str| std::fs::read(Path::new(FIXTURE).join(name)).unwrap();
    vec![
        ("m.probes.json", fixture("lane.probes.json")),
        ("m.level.json", fixture("lane.level.json")),
        ("m.results.json", fixture("lane.results.json")),
        (
            "m.obj",
            b"o a\nusemtl glass\nv 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\nf 1 3 4 2\n".to_vec(),
        ),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    /// Whatever a file holds, every command exits 0, 1 or 2, and an exit 2 says why in one line.
    #[test]
    fn no_generated_file_makes_a_command_exit_otherwise(
        which in 0usize..4,
        flips in proptest::collection::vec((0usize..4000, any::<u8>()), 0..8),
        cut in proptest::option::of(0usize..4000),
    ) {
        let dir = lane();
        let (name, mut bytes) = seeds().swap_remove(which);
        for (at, value) in flips {
            if !bytes.is_empty() {
                let k = at % bytes.len();
                bytes[k] = value;
            }
        }
        if let Some(cut) = cut {
            bytes.truncate(cut.min(bytes.len()));
        }
        std::fs::write(dir.path().join(name), &bytes).unwrap();
        let runs: Vec<Vec<&str>> = match name {
            "m.probes.json" => vec![vec!["check", name]],
            "m.results.json" => vec![vec!["diff", "lane.results.json", name]],
            _ => vec![vec!["info", name], vec!["check", "lane.probes.json", "--level", name]],
        };
        for args in runs {
            let out = plumbline(dir.path(), &args);
            let code = out.status.code();
            prop_assert!(matches!(code, Some(0..=2)), "{args:?}: {code:?}");
            if code == Some(2) {
                let stderr = String::from_utf8_lossy(&out.stderr);
                prop_assert_eq!(stderr.lines().count(), 1, "{:?}: {}", args, stderr);
            }
        }
    }
}
