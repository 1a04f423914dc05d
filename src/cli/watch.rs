//! `plumbline check --watch`: the check again whenever a file it reads changes on disk, saying what
//! changed since the previous run. Runs until interrupted.

use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::mpsc;
use std::time::Duration;

use notify::{RecursiveMode, Watcher};
use plumbline_core::check::ResultsFile;

use super::check::{CheckOptions, print_totals, run_once};
use super::terminal::{Style, Tone, write_stdout};

/// Re-runs the check whenever the probe set or a file of the level changes on disk.
pub fn watch(options: &CheckOptions) -> Result<ExitCode, String> {
    let style = Style::detect();
    let mut previous: Option<ResultsFile> = None;
    let (tx, rx) = mpsc::channel();
    let mut watcher =
        notify::recommended_watcher(tx).map_err(|e| format!("cannot watch files: {e}"))?;
    let mut watched: Vec<PathBuf> = Vec::new();
    let mut inputs = vec![options.probes.clone()];
    loop {
        match run_once(options, previous.as_ref(), true, true, style) {
            Ok(outcome) => {
                print_totals(&outcome.summary, style);
                inputs = outcome.inputs;
                previous = outcome.results;
            }
            Err(e) => eprintln!("plumbline: {e}"),
        }
        for folder in inputs.iter().map(|p| folder_of(p)) {
            if !watched.contains(&folder) {
                watcher
                    .watch(&folder, RecursiveMode::NonRecursive)
                    .map_err(|e| format!("cannot watch {}: {e}", folder.display()))?;
                watched.push(folder);
            }
        }
        write_stdout(&style.paint(Tone::Dim, "watching for changes (Ctrl-C to stop)\n"));
        wait_for_relevant_change(&rx, options)?;
    }
}

/// Blocks until a file the check reads changes, then lets a burst of events settle.
fn wait_for_relevant_change(
    rx: &mpsc::Receiver<notify::Result<notify::Event>>,
    options: &CheckOptions,
) -> Result<(), String> {
    let relevant = |event: &notify::Event| {
        !event.kind.is_access()
            && event.paths.iter().any(|p| {
                let own_output = [&options.out, &options.junit, &options.markdown]
                    .iter()
                    .any(|o| o.as_deref() == Some(p.as_path()));
                let name = p
                    .file_name()
                    .map(|n| n.to_string_lossy().to_string())
                    .unwrap_or_default();
                let interesting = [".json", ".glb", ".gltf", ".bin", ".obj"]
                    .iter()
                    .any(|e| name.ends_with(e));
                interesting && !own_output && !name.starts_with('.')
            })
    };
    loop {
        let event = rx
            .recv()
            .map_err(|_| "the file watcher stopped".to_string())?;
        if event.is_ok_and(|e| relevant(&e)) {
            break;
        }
    }
    while rx.recv_timeout(Duration::from_millis(300)).is_ok() {}
    Ok(())
}

fn folder_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}
