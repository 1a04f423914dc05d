//! `check --shard K/N` and `plumbline merge` from the outside: the shards of a check merged give the
//! single run's results file byte for byte, and parts that do not make one check are refused.

use std::path::{Path, PathBuf};

use super::support::plumbline;

const FIXTURE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/core/tests/fixtures/check");
const ROOT: &str = env!("CARGO_MANIFEST_DIR");

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).unwrap()
}

fn path(dir: &Path, name: &str) -> String {
    dir.join(name).display().to_string()
}

/// Runs shard `k` of `n` of `probes` (from `cwd`) with `jobs` threads, writing `dir/part-k.json`.
fn shard(cwd: &Path, probes: &str, k: usize, n: usize, jobs: &str, dir: &Path) -> PathBuf {
    let part = dir.join(format!("part-{k}.json"));
    let run = plumbline(
        cwd,
        &[
            "check",
            probes,
            "--shard",
            &format!("{k}/{n}"),
            "--jobs",
            jobs,
            "--out",
            &part.display().to_string(),
        ],
    );
    assert!(
        matches!(run.status.code(), Some(0 | 1)),
        "{}",
        text(&run.stderr)
    );
    part
}

#[test]
fn four_shards_of_the_demo_merge_into_the_single_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let probes = "scenes/saltfen-quay.probes.json";
    let whole = plumbline(
        Path::new(ROOT),
        &[
            "check",
            probes,
            "--out",
            &path(dir.path(), "whole.results.json"),
            "--junit",
            &path(dir.path(), "whole.xml"),
        ],
    );
    assert_eq!(whole.status.code(), Some(1), "{}", text(&whole.stderr));
    // Each shard on its own thread count: the split and the answers depend on neither.
    let parts: Vec<PathBuf> = (1..=4)
        .map(|k| shard(Path::new(ROOT), probes, k, 4, ["1", "2"][k % 2], dir.path()))
        .collect();
    // Every shard has work: the reach map, the settles and the many small probes are spread out.
    for part in &parts {
        let body = std::fs::read_to_string(part).unwrap();
        assert!(body.contains("\"plumbline\": \"partial-results\""));
        assert!(!body.contains("\"positions\": []"), "{body}");
    }
    let shuffled = [&parts[2], &parts[0], &parts[3], &parts[1]];
    let mut args = vec!["merge".to_string()];
    args.extend(shuffled.iter().map(|p| p.display().to_string()));
    args.extend([
        "--out".into(),
        path(dir.path(), "merged.results.json"),
        "--junit".into(),
        path(dir.path(), "merged.xml"),
    ]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let merged = plumbline(Path::new(ROOT), &args);
    assert_eq!(merged.status.code(), Some(1), "{}", text(&merged.stderr));
    assert!(
        text(&merged.stdout).contains("67 probes: 60 pass, 6 fail, 0 error, 1 unchecked"),
        "{}",
        text(&merged.stdout)
    );
    let read = |name: &str| std::fs::read(dir.path().join(name)).unwrap();
    assert!(read("whole.results.json") == read("merged.results.json"));
    assert!(read("whole.xml") == read("merged.xml"));
}

/// The lane fixture split in two, in a folder of its own.
fn lane_parts() -> (tempfile::TempDir, PathBuf, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    for name in ["lane.level.json", "lane.probes.json"] {
        std::fs::copy(Path::new(FIXTURE).join(name), dir.path().join(name)).unwrap();
    }
    let a = shard(dir.path(), "lane.probes.json", 1, 2, "1", dir.path());
    let b = shard(dir.path(), "lane.probes.json", 2, 2, "1", dir.path());
    (dir, a, b)
}

fn merge(dir: &Path, parts: &[&Path], out: &str) -> (Option<i32>, String) {
    let mut args = vec!["merge".to_string()];
    args.extend(parts.iter().map(|p| p.display().to_string()));
    args.extend(["--out".into(), out.into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let run = plumbline(dir, &args);
    (run.status.code(), text(&run.stderr))
}

#[test]
fn a_missing_or_repeated_shard_is_refused_and_nothing_is_written() {
    let (dir, a, b) = lane_parts();
    let (code, err) = merge(dir.path(), &[&a], "r.json");
    assert_eq!(code, Some(2));
    assert!(err.contains("shard 2/2 of the check is missing"), "{err}");
    let (code, err) = merge(dir.path(), &[&a, &b, &a], "r.json");
    assert_eq!(code, Some(2));
    assert!(err.contains("is shard 1/2, as is"), "{err}");
    assert!(!dir.path().join("r.json").exists());
    let (code, err) = merge(dir.path(), &[&b, &a], "r.json");
    assert_eq!(code, Some(1), "{err}");
    assert!(dir.path().join("r.json").exists());
}

#[test]
fn parts_of_different_probe_sets_are_refused() {
    let (dir, a, _) = lane_parts();
    let probes = dir.path().join("lane.probes.json");
    let edited = std::fs::read_to_string(&probes)
        .unwrap()
        .replace("\"max_distance\": 5", "\"max_distance\": 6");
    std::fs::write(&probes, edited).unwrap();
    let b = shard(dir.path(), "lane.probes.json", 2, 2, "1", dir.path());
    let (code, err) = merge(dir.path(), &[&a, &b], "r.json");
    assert_eq!(code, Some(2));
    assert!(err.contains("answers a different probe set than"), "{err}");
}

#[test]
fn a_whole_results_file_or_an_output_over_a_part_is_refused() {
    let (dir, a, b) = lane_parts();
    let whole = plumbline(
        dir.path(),
        &["check", "lane.probes.json", "--out", "whole.json"],
    );
    assert_eq!(whole.status.code(), Some(1));
    let (code, err) = merge(dir.path(), &[&a, &dir.path().join("whole.json")], "r.json");
    assert_eq!(code, Some(2));
    assert!(err.contains("not a shard's partial results"), "{err}");
    let before = std::fs::read(&a).unwrap();
    let (code, err) = merge(dir.path(), &[&a, &b], &a.display().to_string());
    assert_eq!(code, Some(2));
    assert!(err.contains("one of this run's inputs"), "{err}");
    assert_eq!(std::fs::read(&a).unwrap(), before);
}

#[test]
fn a_shard_cannot_be_compared_with_a_baseline() {
    let (dir, a, _) = lane_parts();
    let run = plumbline(
        dir.path(),
        &[
            "check",
            "lane.probes.json",
            "--shard",
            "1/2",
            "--baseline",
            &a.display().to_string(),
        ],
    );
    assert_eq!(run.status.code(), Some(2));
    let run = plumbline(dir.path(), &["check", "lane.probes.json", "--shard", "3/2"]);
    assert_eq!(run.status.code(), Some(2));
    assert!(text(&run.stderr).contains("is not a shard"));
}

#[test]
fn a_part_that_claims_a_huge_set_is_refused_without_allocating_for_it() {
    let (dir, a, b) = lane_parts();
    for part in [&a, &b] {
        let text = std::fs::read_to_string(part).unwrap();
        let claimed = text.replace("\"of_probes\": 7", "\"of_probes\": 1000000000000000");
        assert_ne!(text, claimed);
        std::fs::write(part, claimed).unwrap();
    }
    let (code, err) = merge(dir.path(), &[&a, &b], "r.json");
    assert_eq!(code, Some(2));
    assert!(
        err.contains("the parts hold 7 results, but their shards say the set has 1000000000000000"),
        "{err}"
    );
}
