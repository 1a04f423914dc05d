//! `plumbline info LEVEL`: objects, tags, triangle counts, bounds and load warnings.

use std::path::Path;
use std::process::ExitCode;

use plumbline_core::input::PathPolicy;
use plumbline_core::level::Geometry;
use plumbline_core::session::{OpenLevel, OpenOptions, open};

use super::terminal::{column_width, write_stdout};

/// Prints what the level holds; exit 0, or an error for unreadable input.
pub fn info(path: &Path, allow_outside_paths: bool) -> Result<ExitCode, String> {
    let opened = open(
        path,
        &OpenOptions {
            keep_level: true,
            paths: PathPolicy {
                anywhere: allow_outside_paths,
            },
            ..OpenOptions::default()
        },
    )
    .map_err(|e| e.to_string())?;
    // Given a probe set, every probe in it is checked as `check` would.
    opened.probes.check_all().map_err(|e| e.to_string())?;
    let OpenLevel {
        model,
        world,
        digest,
        diagnostics: warnings,
        ..
    } = opened.level;
    let level = model.expect("the session keeps the level model when asked");
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
    out.push_str(&format!("digest    {digest}\n\n"));
    let width = column_width(
        level
            .objects
            .iter()
            .map(|o| o.name.chars().count())
            .max()
            .unwrap_or(0)
            .max(6),
    );
    out.push_str(&format!(
        "{:<width$}  {:<8}  {:>9}  tags\n",
        "object", "kind", "triangles"
    ));
    for (id, object) in level.objects.iter().enumerate() {
        let (kind, triangles) = match &object.geometry {
            Geometry::Mesh(m) if world.is_closed(id) => ("closed", m.triangles.len().to_string()),
            Geometry::Mesh(m) => ("mesh", m.triangles.len().to_string()),
            Geometry::Primitive { shape, .. } => (shape.type_name(), "-".to_string()),
        };
        out.push_str(&format!(
            "{:<width$}  {kind:<8}  {triangles:>9}  {}\n",
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
