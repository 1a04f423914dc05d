//! Generated demo data: Saltfen Quay, an invented freight yard on a river quay, with its probe set, an
//! edited version and a baseline; and larger levels in the same style for benchmarks.
//!
//! Architecture invariant: generation is deterministic — the same call writes the same bytes on every
//! machine (own random source, fixed order, stable number formatting).

mod glb;
mod probes;
pub mod quay;
mod shapes;

use std::path::Path;

pub use glb::{GlbObject, pack_glb, write_glb};
pub use probes::probe_set;
pub use shapes::MeshBuilder;

use crate::atomic::write_atomic;
use crate::check::{ResultsFile, probes_digest};
use crate::error::Error;
use crate::json_text::to_pretty;
use crate::level::{Geometry, Level, LevelObject};
use crate::probe::probe_set_to_json;
use crate::session::{OpenOptions, open};
use quay::Detail;

/// File names of the demo scene inside its folder.
pub mod files {
    /// The meshes.
    pub const GLB: &str = "saltfen-quay.glb";
    /// The level file.
    pub const LEVEL: &str = "saltfen-quay.level.json";
    /// The level after three edits.
    pub const EDITED_LEVEL: &str = "saltfen-quay-edited.level.json";
    /// The probe set.
    pub const PROBES: &str = "saltfen-quay.probes.json";
    /// Results of the probe set on the original level, the baseline for the edited one.
    pub const BASELINE: &str = "saltfen-quay.baseline.results.json";
}

/// Writes the demo scene (all five files of [`files`]) into `folder`.
pub fn write_demo_scene(folder: &Path) -> Result<(), Error> {
    write_scene(folder, Detail::Demo, true)
}

/// Writes a large level in the demo's style with at least `triangles` triangles: `saltfen-quay.glb`,
/// the level file and the probe set (no edited level or baseline).
pub fn write_large_scene(folder: &Path, triangles: usize) -> Result<(), Error> {
    write_scene(folder, Detail::Triangles(triangles), false)
}

fn write_scene(folder: &Path, detail: Detail, with_edits: bool) -> Result<(), Error> {
    std::fs::create_dir_all(folder).map_err(|source| Error::Write {
        path: folder.to_path_buf(),
        source,
    })?;
    let write = |name: &str, bytes: &[u8]| {
        let path = folder.join(name);
        write_atomic(&path, bytes).map_err(|source| Error::Write { path, source })
    };
    let objects = quay::mesh_objects(detail);
    let glb_objects: Vec<GlbObject> = objects
        .iter()
        .map(|o| GlbObject {
            name: &o.name,
            tags: &o.tags,
            mesh: &o.mesh,
        })
        .collect();
    write(files::GLB, &write_glb(&glb_objects))?;
    write(
        files::LEVEL,
        to_pretty(&quay::level_file(files::GLB, false)).as_bytes(),
    )?;
    let set = probe_set(files::LEVEL);
    write(files::PROBES, probe_set_to_json(&set).as_bytes())?;
    if with_edits {
        write(
            files::EDITED_LEVEL,
            to_pretty(&quay::level_file(files::GLB, true)).as_bytes(),
        )?;
        let opened = open(&folder.join(files::PROBES), &OpenOptions::default())?;
        let results = opened.answer(None, None)?;
        let baseline = ResultsFile::new(
            files::PROBES.into(),
            files::LEVEL.into(),
            opened.level.digest.clone(),
            probes_digest(&set),
            results,
        );
        write(files::BASELINE, baseline.to_json().as_bytes())?;
    }
    Ok(())
}

/// A level in the demo's style with at least `triangles` triangles, built in memory (meshes only,
/// in f64; the files hold f32 positions): for benchmarks that should not depend on files on disk.
pub fn large_level(triangles: usize) -> Level {
    let objects = quay::mesh_objects(Detail::Triangles(triangles))
        .into_iter()
        .map(|o| LevelObject {
            name: o.name,
            tags: o.tags.iter().map(|t| t.to_string()).collect(),
            geometry: Geometry::Mesh(o.mesh),
        })
        .collect();
    Level {
        up: glam::DVec3::Y,
        objects,
    }
}
