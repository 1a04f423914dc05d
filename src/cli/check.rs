//! `plumbline check`: answer every probe of a set, print a line per probe and the totals, write the
//! requested files, and compare with a baseline. Everything streams: each probe's line, results-file
//! entry and report row is written as its chunk is answered, so a run of any size holds one chunk.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use plumbline_core::check::{
    Comparer, Comparison, DEFAULT_TOLERANCE, PartHead, ProbeResult, ResultsFile, ResultsHead,
    ResultsWriter, Runner, Shard, Summary, Verdict, load_results,
};
use plumbline_core::error::Error;
use plumbline_core::input::{PathPolicy, check_outputs};
use plumbline_core::probe::Probe;
use plumbline_core::report::{HtmlWriter, JunitWriter, MarkdownWriter};
use plumbline_core::session::{HandOut, LaidOut, OpenOptions, open};

use super::pictures::{Pictures, relative_link};
use super::terminal::{Lines, Progress, Style, Tone, column_width, write_stdout};
use super::timings::Timings;
use super::{EXIT_FAILED, print_comparison};

/// How many answered results are handed to the answering threads to be freed at once: a chunk's
/// worth, as they were answered.
const FREED_TOGETHER: usize = plumbline_core::probe::CHUNK;

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
    /// Write a self-contained HTML report here (with pictures, when --pictures draws them).
    #[arg(long)]
    pub html: Option<PathBuf>,
    /// Draw a picture of each failing, erring or changed probe into this folder (PNG); the
    /// Markdown, HTML and JUnit reports show them.
    #[arg(long, value_name = "DIR")]
    pub pictures: Option<PathBuf>,
    /// With --pictures, draw every probe, not only failing, erring and changed ones.
    #[arg(long, requires = "pictures")]
    pub pictures_all: bool,
    /// Metres a distance must move to count as a change.
    #[arg(long, default_value_t = DEFAULT_TOLERANCE, value_parser = super::parse_tolerance)]
    pub tolerance: f64,
    /// Count a change since the baseline as a failure (exit 1).
    #[arg(long)]
    pub fail_on_change: bool,
    /// Threads that answer (default: all cores); with one, the set is read and the results are
    /// written beside it, on a thread each.
    #[arg(long, value_parser = clap::value_parser!(u32).range(1..))]
    pub jobs: Option<u32>,
    /// List only failures, errors and changes.
    #[arg(long)]
    pub brief: bool,
    /// At the end, print the time spent answering per kind and the slowest probes.
    #[arg(long)]
    pub timings: bool,
    /// Let files name paths outside their own folder (absolute, or `..` above it).
    #[arg(long)]
    pub allow_outside_paths: bool,
    /// Answer only the K-th of N shares of the probes, balanced by expected cost; `--out` then
    /// writes a partial results file for `plumbline merge`.
    #[arg(long, value_name = "K/N", conflicts_with_all = ["baseline", "fail_on_change"])]
    pub shard: Option<Shard>,
}

impl CheckOptions {
    /// The outputs asked for, with what each is, for messages.
    fn outputs(&self) -> Vec<(&'static str, &Path)> {
        [
            ("results file (--out)", &self.out),
            ("JUnit report (--junit)", &self.junit),
            ("Markdown summary (--markdown)", &self.markdown),
            ("HTML report (--html)", &self.html),
        ]
        .into_iter()
        .filter_map(|(what, path)| path.as_deref().map(|p| (what, p)))
        .collect()
    }
}

/// What one run found.
pub struct Outcome {
    /// Counts by verdict.
    pub summary: Summary,
    /// What changed since the baseline, when one was given.
    pub comparison: Option<Comparison>,
    /// Every file the run read (for `--watch`).
    pub inputs: Vec<PathBuf>,
    /// The whole results, when asked for (the next `--watch` run compares with them).
    pub results: Option<ResultsFile>,
    /// What the answers cost, when `--timings` asked.
    pub timings: Option<Timings>,
}

/// Runs the check once, prints the summary and writes the files. Exit 0, 1 or 2 (SPEC §4).
pub fn check(options: &CheckOptions) -> Result<ExitCode, String> {
    let baseline = options
        .baseline
        .as_deref()
        .map(load_results)
        .transpose()
        .map_err(|e| e.to_string())?;
    let style = Style::detect();
    let outcome = run_once(options, baseline.as_ref(), options.brief, false, style)
        .map_err(|e| e.to_string())?;
    print_totals(&outcome.summary, style);
    if let Some(t) = &outcome.timings {
        t.print(style);
    }
    let changed = outcome.comparison.as_ref().is_some_and(|c| !c.is_empty());
    Ok(
        if outcome.summary.all_hold() && !(options.fail_on_change && changed) {
            ExitCode::SUCCESS
        } else {
            ExitCode::from(EXIT_FAILED)
        },
    )
}

/// The files one run writes, streamed as the results come.
struct Writers {
    results: Option<ResultsWriter>,
    junit: Option<JunitWriter>,
    markdown: Option<MarkdownWriter>,
    html: Option<HtmlWriter>,
}

impl Writers {
    /// Starts every file `options` asks for; a results file gets `head` (and `part`, a shard's).
    fn create(
        options: &CheckOptions,
        total: usize,
        head: &ResultsHead,
        part: Option<&PartHead>,
    ) -> Result<Writers, Error> {
        let failed = |path: &Path| {
            let path = path.to_path_buf();
            move |source| Error::Write { path, source }
        };
        Ok(Writers {
            results: options
                .out
                .as_deref()
                .map(|p| ResultsWriter::create(p, total, head, part).map_err(failed(p)))
                .transpose()?,
            junit: options
                .junit
                .as_deref()
                .map(|p| JunitWriter::create(p).map_err(failed(p)))
                .transpose()?,
            markdown: options
                .markdown
                .as_deref()
                .map(|p| MarkdownWriter::create(p).map_err(failed(p)))
                .transpose()?,
            html: options
                .html
                .as_deref()
                .map(|p| HtmlWriter::create(p).map_err(failed(p)))
                .transpose()?,
        })
    }
}

/// Answers every probe once: prints a line per probe (only failures, errors and changes with
/// `brief`), compares with `baseline`, writes the requested files, and prints what changed.
pub fn run_once(
    options: &CheckOptions,
    baseline: Option<&ResultsFile>,
    brief: bool,
    keep_results: bool,
    style: Style,
) -> Result<Outcome, Error> {
    // Reading and checking the probe set runs on the threads the answers will use (--jobs), or
    // beside the one thread on a reading thread of its own (`plumbline_core::beside`).
    let threads = Runner::new(options.jobs.map(|j| j as usize))?.timing(options.timings);
    let opened = threads.install(|| {
        open(
            &options.probes,
            &OpenOptions {
                level: options.level.clone(),
                paths: PathPolicy {
                    anywhere: options.allow_outside_paths,
                },
                keep_level: options.pictures.is_some(),
                ..OpenOptions::default()
            },
        )
    })?;
    let mut inputs = opened.inputs();
    inputs.extend(options.baseline.clone());
    check_outputs(&inputs, &options.outputs())?;
    let positions = threads.install(|| {
        options
            .shard
            .map(|shard| opened.shard_positions(shard))
            .transpose()
    })?;
    let total = positions.as_ref().map_or(opened.probes.len(), Vec::len);
    let level = &opened.level;
    let share = match options.shard {
        Some(shard) => format!("shard {shard}: {total} of {} probes", opened.probes.len()),
        None => format!("{total} probes"),
    };
    let mut header = format!(
        "{} on {} ({share}, {} triangles)\n",
        options.probes.display(),
        level.path.display(),
        level.triangles
    );
    for w in &level.diagnostics {
        header.push_str(&style.paint(Tone::Note, &format!("warning: {w}\n")));
    }
    write_stdout(&header);
    let head = ResultsHead {
        probes: options.probes.display().to_string(),
        level: level.path.display().to_string(),
        level_digest: level.digest.clone(),
        probes_digest: opened.probes_digest.clone().unwrap_or_default(),
    };
    let part = options
        .shard
        .zip(positions)
        .map(|(shard, positions)| PartHead {
            shard,
            of_probes: opened.probes.len(),
            positions,
        });
    let mut writers = Writers::create(options, total, &head, part.as_ref())?;
    let mut pictures = match (&options.pictures, &level.model) {
        (Some(dir), Some(model)) => {
            Some(Pictures::new(dir, model, options.pictures_all, baseline)?)
        }
        _ => None,
    };
    let markdown_dir = options
        .markdown
        .as_deref()
        .and_then(Path::parent)
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let mut changed_count = 0;
    let mut comparer = baseline.map(|b| Comparer::new(b, &level.digest, options.tolerance));
    let mut changed_labels: HashMap<String, Option<String>> = HashMap::new();
    let mut kept = Vec::new();
    let width = column_width(opened.probes.longest_id());
    let progress = Progress::new(total);
    let mut lines = Lines::new(&progress);
    let mut timings = options.timings.then(Timings::default);
    // The results file is written from the text the answering threads lay out.
    let mut results_file = writers.results.take();
    let mut write_results = results_file.as_mut().map(|w| {
        |text: &str, count| {
            w.push_laid_out(text, count)
                .map_err(write_failed(&options.out))
        }
    });
    let mut answered = Vec::with_capacity(FREED_TOGETHER);
    let each = &mut |probe: &Probe, result: ProbeResult, took| {
        if let Some(t) = &mut timings {
            t.add(probe, took);
        }
        if !(brief && matches!(result.verdict, Verdict::Pass | Verdict::Unchecked)) {
            lines.push_with(|out| result_line(&result, width, style, out));
        }
        let changed = comparer.as_mut().is_some_and(|c| c.observe(&result));
        if changed {
            changed_count += 1;
            changed_labels.insert(result.id.to_string(), probe.label.clone());
        }
        let drawn = match &mut pictures {
            Some(p) => p.draw(probe, &result, changed)?,
            None => Vec::new(),
        };
        if let Some(w) = &mut writers.junit {
            let paths: Vec<String> = drawn.iter().map(|d| d.path.display().to_string()).collect();
            w.push(&result, &paths)
                .map_err(write_failed(&options.junit))?;
        }
        if let Some(w) = &mut writers.markdown {
            w.push(probe.label.as_deref(), &result)
                .map_err(write_failed(&options.markdown))?;
            if !drawn.is_empty() {
                let links: Vec<(String, String)> = drawn
                    .iter()
                    .map(|d| (d.caption.clone(), relative_link(&markdown_dir, &d.path)))
                    .collect();
                w.picture(&result.id, &links)
                    .map_err(write_failed(&options.markdown))?;
            }
        }
        if let Some(w) = &mut writers.html {
            let shown: Vec<(String, Vec<u8>)> =
                drawn.into_iter().map(|d| (d.caption, d.png)).collect();
            w.push(probe.label.as_deref(), &result, changed, &shown)
                .map_err(write_failed(&options.html))?;
        }
        if keep_results {
            kept.push(result);
        } else {
            // Freed on the answering threads, a batch at a time (see `Runner::free_later`).
            answered.push(result);
            if answered.len() == FREED_TOGETHER {
                threads.free_later(std::mem::take(&mut answered));
            }
        }
        Ok(())
    };
    let laid_out = write_results.as_mut().map(|w| w as &mut LaidOut);
    let summary = opened.answer_each(
        &threads,
        part.as_ref().map(|p| p.positions.as_slice()),
        progress.watcher().as_ref().map(|w| w as _),
        HandOut { each, laid_out },
    )?;
    lines.finish();
    progress.finish();
    let comparison = comparer.map(Comparer::finish);
    if let Some(c) = &comparison {
        print_comparison(c, style);
    }
    // The level and the set are freed on their own thread while the files are finished (their
    // last writes wait on the disk).
    std::thread::scope(|scope| {
        scope.spawn(move || drop(opened));
        if let Some(w) = results_file {
            w.finish(&summary).map_err(write_failed(&options.out))?;
        }
        if let Some(w) = writers.junit {
            w.finish(&suite_name(&options.probes), &summary)
                .map_err(write_failed(&options.junit))?;
        }
        if let Some(w) = writers.html {
            w.finish(&summary, &head.level, changed_count)
                .map_err(write_failed(&options.html))?;
        }
        if let Some(w) = writers.markdown {
            let labels = |id: &str| changed_labels.get(id).cloned().flatten();
            w.finish(&summary, &head.level, comparison.as_ref(), &labels)
                .map_err(write_failed(&options.markdown))?;
        }
        Ok::<_, Error>(())
    })?;
    let results = keep_results.then(|| {
        ResultsFile::new(
            head.probes,
            head.level,
            head.level_digest,
            head.probes_digest,
            kept,
        )
    });
    Ok(Outcome {
        summary,
        comparison,
        inputs,
        results,
        timings,
    })
}

/// The error of writing the output file an option names (its path, once there is an error).
fn write_failed(path: &Option<PathBuf>) -> impl FnOnce(std::io::Error) -> Error + '_ {
    move |source| Error::Write {
        path: path.clone().unwrap_or_default(),
        source,
    }
}

/// The JUnit suite's name: the probe set's file name.
pub fn suite_name(probes: &Path) -> String {
    probes
        .file_name()
        .map_or("probes".into(), |n| n.to_string_lossy().to_string())
}

/// One probe's line, written at the end of `out`: its verdict, id and reason.
fn result_line(r: &ProbeResult, width: usize, style: Style, out: &mut String) {
    let (word, tone) = match r.verdict {
        Verdict::Pass => ("pass ", Tone::Good),
        Verdict::Fail => ("FAIL ", Tone::Bad),
        Verdict::Error => ("ERROR", Tone::Bad),
        Verdict::Unchecked => ("  -  ", Tone::Dim),
    };
    out.push_str("  ");
    style.paint_onto(tone, word, out);
    out.push_str("  ");
    out.push_str(&r.id);
    // Padded to the column by characters, as `{:<width$}` pads.
    out.extend(std::iter::repeat_n(
        ' ',
        width.saturating_sub(r.id.chars().count()),
    ));
    out.extend(["  ", &r.reason, "\n"]);
}

/// The last line: counts by verdict.
pub fn print_totals(s: &Summary, style: Style) {
    let line = format!(
        "{} probes: {} pass, {} fail, {} error, {} unchecked\n",
        s.probes, s.pass, s.fail, s.error, s.unchecked
    );
    write_stdout(&style.paint(if s.all_hold() { Tone::Good } else { Tone::Bad }, &line));
}
