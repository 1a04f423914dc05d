//! `plumbline merge PARTS… --out R`: joins the partial results files of a sharded check into the
//! results file a single run writes, and optionally the reports of the whole check.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use plumbline_core::check::merge as merge_parts;
use plumbline_core::error::Error;
use plumbline_core::input::check_outputs;
use plumbline_core::report::{JunitWriter, MarkdownWriter};

use super::EXIT_FAILED;
use super::check::{print_totals, suite_name};
use super::terminal::Style;

/// The options of `plumbline merge`.
#[derive(clap::Args)]
pub struct MergeOptions {
    /// The partial results files of every shard (written by `check --shard K/N --out …`).
    #[arg(required = true)]
    pub parts: Vec<PathBuf>,
    /// Write the joined results file here.
    #[arg(long)]
    pub out: PathBuf,
    /// Also write a JUnit XML report of the whole check here.
    #[arg(long)]
    pub junit: Option<PathBuf>,
    /// Also write a Markdown summary of the whole check here.
    #[arg(long)]
    pub markdown: Option<PathBuf>,
}

/// Joins the parts, writes the files, prints the totals. Exit 0 when every expectation holds, 1
/// when one fails or a probe erred, 2 when the parts cannot be joined.
pub fn merge(options: &MergeOptions) -> Result<ExitCode, String> {
    run(options).map_err(|e| e.to_string())
}

fn run(options: &MergeOptions) -> Result<ExitCode, Error> {
    let mut outputs: Vec<(&str, &Path)> = vec![("merged results file (--out)", &options.out)];
    outputs.extend(
        options
            .junit
            .as_deref()
            .map(|p| ("JUnit report (--junit)", p)),
    );
    outputs.extend(
        options
            .markdown
            .as_deref()
            .map(|p| ("Markdown summary (--markdown)", p)),
    );
    check_outputs(&options.parts, &outputs)?;
    let failed = |path: &Path| {
        let path = path.to_path_buf();
        move |source| Error::Write { path, source }
    };
    let mut junit = options
        .junit
        .as_deref()
        .map(|p| JunitWriter::create(p).map_err(failed(p)))
        .transpose()?;
    let mut markdown = options
        .markdown
        .as_deref()
        .map(|p| MarkdownWriter::create(p).map_err(failed(p)))
        .transpose()?;
    let mut report = |result| {
        if let (Some(w), Some(p)) = (&mut junit, &options.junit) {
            w.push(&result, &[]).map_err(failed(p))?;
        }
        if let (Some(w), Some(p)) = (&mut markdown, &options.markdown) {
            w.push(None, &result).map_err(failed(p))?;
        }
        Ok(())
    };
    let reports = options.junit.is_some() || options.markdown.is_some();
    let (head, summary) = merge_parts(
        &options.parts,
        &options.out,
        reports.then_some(&mut report as &mut dyn FnMut(_) -> Result<(), Error>),
    )?;
    if let (Some(w), Some(p)) = (junit, &options.junit) {
        w.finish(&suite_name(Path::new(&head.probes)), &summary)
            .map_err(failed(p))?;
    }
    if let (Some(w), Some(p)) = (markdown, &options.markdown) {
        w.finish(&summary, &head.level, None, &|_| None)
            .map_err(failed(p))?;
    }
    print_totals(&summary, Style::detect());
    Ok(if summary.all_hold() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(EXIT_FAILED)
    })
}
