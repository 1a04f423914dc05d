//! The `plumbline` command: a thin shell over the library. Exit status: 0 every expectation holds,
//! 1 an expectation fails or a probe errs (for `diff`: changes found), 2 bad usage or unreadable input.

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

use plumbline::level::{Geometry, load_level};
use plumbline::query::World;

#[derive(Parser)]
#[command(
    name = "plumbline",
    version,
    about = "Checks that a 3D level still behaves as intended"
)]
struct Cli {
    #[command(subcommand)]
    command: Option<Command>,
}

#[derive(Subcommand)]
enum Command {
    /// Lists a level's objects, tags, triangle counts, bounds and load warnings.
    Info {
        /// A .level.json, .gltf, .glb or .obj file.
        level: PathBuf,
    },
}

/// Exit status for bad usage or input that cannot be read.
const EXIT_BAD_INPUT: u8 = 2;

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() {
                ExitCode::from(EXIT_BAD_INPUT)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    match run(cli) {
        Ok(code) => code,
        Err(message) => {
            eprintln!("plumbline: {message}");
            ExitCode::from(EXIT_BAD_INPUT)
        }
    }
}

fn run(cli: Cli) -> Result<ExitCode, String> {
    match cli.command {
        Some(Command::Info { level }) => info(&level),
        None => Err("no command given; try `plumbline --help`".into()),
    }
}

fn info(path: &std::path::Path) -> Result<ExitCode, String> {
    let (level, warnings) = load_level(path).map_err(|e| e.to_string())?;
    let world = World::new(&level).map_err(|e| format!("{}: {e}", path.display()))?;
    let mut out = String::new();
    out.push_str(&format!("level     {}\n", path.display()));
    out.push_str(&format!(
        "up        [{}, {}, {}]\n",
        level.up.x, level.up.y, level.up.z
    ));
    out.push_str(&format!("objects   {}\n", level.objects.len()));
    out.push_str(&format!("triangles {}\n", level.triangle_count()));
    if let Some((lo, hi)) = world.bounds() {
        out.push_str(&format!(
            "bounds    [{:.3}, {:.3}, {:.3}] .. [{:.3}, {:.3}, {:.3}]\n",
            lo.x, lo.y, lo.z, hi.x, hi.y, hi.z
        ));
    }
    out.push_str(&format!(
        "digest    {}\n\n",
        plumbline::level::level_digest(&level)
    ));
    let width = level
        .objects
        .iter()
        .map(|o| o.name.len())
        .max()
        .unwrap_or(4)
        .max(6);
    out.push_str(&format!(
        "{:<width$}  {:<10}  {:>9}  tags\n",
        "object", "kind", "triangles"
    ));
    for (id, object) in level.objects.iter().enumerate() {
        let (kind, triangles) = match &object.geometry {
            Geometry::Mesh(m) if world.is_closed(id) => ("closed", m.triangles.len().to_string()),
            Geometry::Mesh(m) => ("mesh", m.triangles.len().to_string()),
            Geometry::Primitive { shape, .. } => (primitive_name(shape), "-".to_string()),
        };
        out.push_str(&format!(
            "{:<width$}  {kind:<10}  {triangles:>9}  {}\n",
            object.name,
            object.tags.join(", ")
        ));
    }
    if !warnings.is_empty() {
        out.push_str(&format!("\n{} warning(s):\n", warnings.len()));
        for w in &warnings {
            out.push_str(&format!("  {w}\n"));
        }
    }
    write_stdout(&out);
    Ok(ExitCode::SUCCESS)
}

fn primitive_name(shape: &plumbline::level::Primitive) -> &'static str {
    use plumbline::level::Primitive::*;
    match shape {
        Sphere { .. } => "sphere",
        Box { .. } => "box",
        Capsule { .. } => "capsule",
        Cylinder { .. } => "cylinder",
        Convex { .. } => "convex",
    }
}

/// Writes to stdout; a closed pipe (`plumbline info x | head`) is not an error.
fn write_stdout(text: &str) {
    let _ = std::io::stdout().lock().write_all(text.as_bytes());
}
