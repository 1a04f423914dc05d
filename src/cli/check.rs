//! `plumbline check`: answer every probe of a set, print a summary, write the requested files, and
//! compare with a baseline; `--watch` re-runs on every change on disk.

use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::mpsc;
use std::time::Duration;

use plumbline_core::atomic::write_atomic;
use plumbline_core::check::{
    Comparison, DEFAULT_TOLERANCE, ResultsFile, Verdict, compare, load_results,
};
use plumbline_core::probe::ProbeSet;
use plumbline_core::report::{junit_xml, markdown_summary};
use plumbline_core::session::{OpenOptions, open};

use super::terminal::{Progress, Style, Tone, write_stdout};
use super::{EXIT_FAILED, print_comparison};

/// The options of `plumbline check`.
#[derive(clap::Args)]
pub struct CheckOptions {
    /// The probe set (*.probes.json).
    pub probes: PathBuf,
    /// Use this level instead of the one the probe set names.
    #[arg(long)]
    pub level: Option<PathBuf>,
    /// Write the results file here.
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Compare with this earlier results file and list what changed.
    #[arg(long)]
    pub baseline: Option<PathBuf>,
    /// Write a JUnit XML report here.
    #[arg(long)]
    pub junit: Option<PathBuf>,
    /// Write a Markdown summary here.
    #[arg(long)]
    pub markdown: Option<PathBuf>,
    /// Metres a distance must move to count as a change.
    #[arg(long, default_value_t = DEFAULT_TOLERANCE, value_parser = super::parse_tolerance)]
    pub tolerance: f64,
    /// Count a change since the baseline as a failure (exit 1).
    #[arg(long)]
    pub fail_on_change: bool,
    /// Worker threads (default: all cores).
    #[arg(long, value_parser = clap::value_parser!(u32).range(1..))]
    pub jobs: Option<u32>,
    /// List only failures, errors and changes.
    #[arg(long)]
    pub brief: bool,
}

/// One complete run: the inputs as loaded and the results.
struct Run {
    set: ProbeSet,
    level_path: PathBuf,
    results: ResultsFile,
    triangles: usize,
    warnings: Vec<String>,
}

/// Runs the check once, prints the summary and writes the files. Exit 0, 1 or 2 (SPEC §4).
pub fn check(options: &CheckOptions) -> Result<ExitCode, String> {
    let baseline = options
        .baseline
        .as_deref()
        .map(load_results)
        .transpose()
        .map_err(|e| e.to_string())?;
    let run = run_once(options)?;
    let comparison = baseline
        .as_ref()
        .map(|b| compare(b, &run.results, options.tolerance));
    let style = Style::detect();
    print_run(&run, options.brief, style);
    if let Some(c) = &comparison {
        print_comparison(c, style);
    }
    write_outputs(options, &run, comparison.as_ref())?;
    print_totals(&run.results, style);
    let changed = comparison.as_ref().is_some_and(|c| !c.is_empty());
    Ok(
        if run.results.summary.all_hold() && !(options.fail_on_change && changed) {
            ExitCode::SUCCESS
        } else {
            ExitCode::from(EXIT_FAILED)
        },
    )
}

/// Re-runs the check whenever the probe set or anything beside the level changes on disk, printing
/// what changed since the previous run. Runs until interrupted.
pub fn watch(options: &CheckOptions) -> Result<ExitCode, String> {
    use notify::{RecursiveMode, Watcher};
    let style = Style::detect();
    let mut previous: Option<ResultsFile> = None;
    let (tx, rx) = mpsc::channel();
    let mut watcher =
        notify::recommended_watcher(tx).map_err(|e| format!("cannot watch files: {e}"))?;
    let mut watched: Vec<PathBuf> = Vec::new();
    loop {
        match run_once(options) {
            Ok(run) => {
                print_run(&run, true, style);
                if let Some(old) = &previous {
                    print_comparison(&compare(old, &run.results, options.tolerance), style);
                }
                if let Err(e) = write_outputs(options, &run, None) {
                    eprintln!("plumbline: {e}");
                }
                print_totals(&run.results, style);
                let folders = [folder_of(&options.probes), folder_of(&run.level_path)];
                for folder in folders {
                    if !watched.contains(&folder) {
                        watcher
                            .watch(&folder, RecursiveMode::NonRecursive)
                            .map_err(|e| format!("cannot watch {}: {e}", folder.display()))?;
                        watched.push(folder);
                    }
                }
                previous = Some(run.results);
            }
            Err(message) => {
                eprintln!("plumbline: {message}");
                if watched.is_empty() {
                    let folder = folder_of(&options.probes);
                    watcher
                        .watch(&folder, RecursiveMode::NonRecursive)
                        .map_err(|e| e.to_string())?;
                    watched.push(folder);
                }
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

fn run_once(options: &CheckOptions) -> Result<Run, String> {
    let opened = open(
        &options.probes,
        &OpenOptions {
            level: options.level.clone(),
            ..OpenOptions::default()
        },
    )
    .map_err(|e| e.to_string())?;
    let progress = Progress::new(opened.probes.probes.len());
    let results = opened
        .answer(options.jobs.map(|j| j as usize), &|done| {
            progress.update(done)
        })
        .map_err(|e| e.to_string())?;
    progress.finish();
    let level = opened.level;
    let results = ResultsFile::new(
        options.probes.display().to_string(),
        level.path.display().to_string(),
        level.digest,
        opened.probes_digest.unwrap_or_default(),
        results,
    );
    Ok(Run {
        set: opened.probes,
        level_path: level.path,
        results,
        triangles: level.triangles,
        warnings: level.diagnostics.iter().map(|w| w.to_string()).collect(),
    })
}

fn print_run(run: &Run, brief: bool, style: Style) {
    let mut out = format!(
        "{} on {} ({} probes, {} triangles)\n",
        run.results.probes,
        run.level_path.display(),
        run.set.probes.len(),
        run.triangles
    );
    for w in &run.warnings {
        out.push_str(&style.paint(Tone::Note, &format!("warning: {w}\n")));
    }
    let width = run
        .results
        .results
        .iter()
        .map(|r| r.id.len())
        .max()
        .unwrap_or(0);
    for r in &run.results.results {
        let (word, tone) = match r.verdict {
            Verdict::Pass => ("pass ", Tone::Good),
            Verdict::Fail => ("FAIL ", Tone::Bad),
            Verdict::Error => ("ERROR", Tone::Bad),
            Verdict::Unchecked => ("  -  ", Tone::Dim),
        };
        if brief && matches!(r.verdict, Verdict::Pass | Verdict::Unchecked) {
            continue;
        }
        out.push_str(&format!(
            "  {}  {:<width$}  {}\n",
            style.paint(tone, word),
            r.id,
            r.reason
        ));
    }
    write_stdout(&out);
}

fn print_totals(results: &ResultsFile, style: Style) {
    let s = &results.summary;
    let line = format!(
        "{} probes: {} pass, {} fail, {} error, {} unchecked\n",
        s.probes, s.pass, s.fail, s.error, s.unchecked
    );
    write_stdout(&style.paint(if s.all_hold() { Tone::Good } else { Tone::Bad }, &line));
}

fn write_outputs(
    options: &CheckOptions,
    run: &Run,
    comparison: Option<&Comparison>,
) -> Result<(), String> {
    let write = |path: &Path, text: &str| {
        write_atomic(path, text.as_bytes())
            .map_err(|e| format!("{}: cannot write the file: {e}", path.display()))
    };
    if let Some(out) = &options.out {
        write(out, &run.results.to_json())?;
    }
    if let Some(junit) = &options.junit {
        let suite = options
            .probes
            .file_name()
            .map_or("probes".into(), |n| n.to_string_lossy().to_string());
        write(junit, &junit_xml(&run.results, &suite))?;
    }
    if let Some(markdown) = &options.markdown {
        write(
            markdown,
            &markdown_summary(&run.results, &run.set, comparison),
        )?;
    }
    Ok(())
}
