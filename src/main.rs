//! The `plumbline` command: a thin shell over the library. Exit status (SPEC §4): 0 every expectation
//! holds (for `diff`: no changes; for `lint`: nothing found), 1 an expectation fails or a probe errs
//! (for `diff`: changes found; for `lint`: findings), 2 bad usage or input that cannot be read.

mod cli;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use plumbline_core::check::DEFAULT_TOLERANCE;

#[derive(Parser)]
#[command(
    name = "plumbline",
    version,
    about = "Checks that a 3D level still behaves as intended"
)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
    #[command(flatten)]
    window: cli::WindowArgs,
}

#[derive(Subcommand)]
enum Command {
    /// Opens the workbench window on a level or a probe set (default: the bundled demo).
    Open {
        /// A *.probes.json, .level.json, .gltf, .glb or .obj file.
        file: Option<PathBuf>,
        #[command(flatten)]
        window: cli::WindowArgs,
    },
    /// Answers every probe of a probe set, prints a summary and writes the requested files.
    Check {
        #[command(flatten)]
        options: cli::CheckOptions,
        /// Re-run whenever the level or the probe set changes on disk.
        #[arg(long, conflicts_with = "shard")]
        watch: bool,
    },
    /// Joins the partial results files of a check split with `check --shard K/N` into the results
    /// file a single run writes.
    Merge {
        #[command(flatten)]
        options: cli::MergeOptions,
    },
    /// Lists what changed between two results files.
    Diff {
        /// The earlier results file.
        old: PathBuf,
        /// The later results file.
        new: PathBuf,
        /// Metres a distance must move to count as a change.
        #[arg(long, default_value_t = DEFAULT_TOLERANCE, value_parser = cli::parse_tolerance)]
        tolerance: f64,
    },
    /// Finds what is wrong with a level's own geometry: objects that interpenetrate or leave
    /// narrow gaps, props that float or sink, open meshes, duplicate faces, slivers.
    Lint {
        #[command(flatten)]
        args: cli::LintArgs,
    },
    /// Prints the JSON Schema (draft 2020-12) of a file format, for editors.
    Schema {
        /// Which format: level, probes, results or partial-results.
        #[arg(value_parser = ["level", "probes", "results", "partial-results"])]
        kind: String,
    },
    /// Lists a level's objects, tags, triangle counts, bounds and load warnings.
    Info {
        /// A .level.json, .gltf, .glb or .obj file (or a probe set: its level).
        level: PathBuf,
        /// Let files name paths outside their own folder (absolute, or `..` above it).
        #[arg(long)]
        allow_outside_paths: bool,
    },
}

/// Opens the window on `file`, or on the bundled demo's probe set.
fn open(file: Option<PathBuf>, window: cli::WindowArgs) -> Result<ExitCode, String> {
    let file = file.unwrap_or_else(|| demo_scenes().join(plumbline_core::demo::files::PROBES));
    plumbline::app::launch(&file, window.options()?)?;
    Ok(ExitCode::SUCCESS)
}

/// The demo's folder: `scenes/` here, or the one in the source tree this binary was built from.
fn demo_scenes() -> PathBuf {
    let here = PathBuf::from("scenes");
    if here.join(plumbline_core::demo::files::PROBES).is_file() {
        here
    } else {
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("scenes")
    }
}

/// Exit status of a run interrupted by a signal (128 + SIGINT, as shells report it).
const EXIT_INTERRUPTED: i32 = 130;

fn main() -> ExitCode {
    // An interrupted run leaves no temporary files behind (the files it replaces stay as they were).
    let _ = ctrlc::set_handler(|| {
        plumbline_core::atomic::remove_unfinished();
        std::process::exit(EXIT_INTERRUPTED);
    });
    let parsed = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() {
                ExitCode::from(cli::EXIT_BAD_INPUT)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    match run(parsed) {
        Ok(code) => code,
        Err(message) => {
            eprintln!("plumbline: {message}");
            ExitCode::from(cli::EXIT_BAD_INPUT)
        }
    }
}

fn run(parsed: Cli) -> Result<ExitCode, String> {
    match parsed.command {
        Some(Command::Check { options, watch }) => {
            if watch {
                cli::watch(&options)
            } else {
                cli::check(&options)
            }
        }
        Some(Command::Diff {
            old,
            new,
            tolerance,
        }) => cli::diff(&old, &new, tolerance),
        Some(Command::Info {
            level,
            allow_outside_paths,
        }) => cli::info(&level, allow_outside_paths),
        Some(Command::Lint { args }) => cli::lint(&args),
        Some(Command::Merge { options }) => cli::merge(&options),
        Some(Command::Schema { kind }) => cli::schema(&kind),
        Some(Command::Open { file, window }) => open(file, window),
        None => open(None, parsed.window),
    }
}
