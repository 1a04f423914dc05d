//! The README's demo check, run from the repository root as a user would.

use std::process::Command;

#[test]
fn check_runs_on_the_demo_from_the_repository_root() {
    let run = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args([
            "check",
            "scenes/saltfen-quay.probes.json",
            "--level",
            "scenes/saltfen-quay-edited.level.json",
        ])
        .args([
            "--baseline",
            "scenes/saltfen-quay.baseline.results.json",
            "--brief",
        ])
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(1));
    let stdout = String::from_utf8(run.stdout).unwrap();
    for changed in [
        "gate-sees-warehouse-door",
        "walk-through-personnel-door",
        "crate-2-on-floor",
        "props-rest/crate-2",
    ] {
        assert!(
            stdout
                .lines()
                .any(|l| l.trim_start().starts_with(changed) && l.contains("verdict pass -> fail")),
            "{stdout}"
        );
    }
    // The moved container also takes ground from the characters' reach.
    assert!(
        stdout
            .lines()
            .any(|l| l.trim_start().starts_with("pickups-reachable")
                && l.contains("reached 6251 m² -> 6227 m²")),
        "{stdout}"
    );
    // The moved container also shades part of the yard from the lookouts.
    assert!(
        stdout
            .lines()
            .any(|l| l.trim_start().starts_with("yard-coverage")
                && l.contains("coverage 67.0% -> 66.3%")),
        "{stdout}"
    );
    assert!(
        stdout.contains("Changed since the baseline (6):"),
        "{stdout}"
    );
}
