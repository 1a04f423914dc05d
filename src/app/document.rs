//! What the workbench has open: a level, its query world, a probe set and every probe's answer, and
//! whether the level on disk still matches what was answered.

use std::path::{Path, PathBuf};
use std::time::SystemTime;

use crate::check::{ProbeResult, Summary, run_probes};
use crate::level::{Geometry, Level, level_digest, load_level};
use crate::probe::{ProbeSet, load_probe_set};
use crate::query::World;

/// An open level with its probes answered.
pub struct Document {
    /// The level file.
    pub level_path: PathBuf,
    /// The probe set file, when one is open.
    pub probes_path: Option<PathBuf>,
    /// The level as loaded (kept for drawing and for naming triangles).
    pub level: Level,
    /// The query world built from it.
    pub world: World,
    /// The probes.
    pub probes: ProbeSet,
    /// One answer per probe, in probe order.
    pub results: Vec<ProbeResult>,
    /// The level's digest as loaded.
    pub level_digest: String,
    /// Load warnings, as `file: place: message` lines.
    pub warnings: Vec<String>,
    stamps: Vec<(PathBuf, Option<SystemTime>)>,
}

impl Document {
    /// Opens a probe set (`*.probes.json`, with the level it names) or a level on its own.
    pub fn open(path: &Path) -> Result<Document, String> {
        let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if name.ends_with(".probes.json") {
            let probes = load_probe_set(path).map_err(|e| e.to_string())?;
            let level_path = path.parent().unwrap_or(Path::new("")).join(&probes.level);
            Document::load(level_path, Some(path.to_path_buf()), probes)
        } else {
            let probes = ProbeSet {
                level: name.to_string(),
                probes: Vec::new(),
            };
            Document::load(path.to_path_buf(), None, probes)
        }
    }

    fn load(
        level_path: PathBuf,
        probes_path: Option<PathBuf>,
        probes: ProbeSet,
    ) -> Result<Document, String> {
        let stamps = stamps(&level_path);
        let (level, diagnostics) = load_level(&level_path).map_err(|e| e.to_string())?;
        let warnings = diagnostics.iter().map(|d| d.to_string()).collect();
        let level_digest = level_digest(&level);
        let world = World::new(&level).map_err(|e| format!("{}: {e}", level_path.display()))?;
        let results = run_probes(&world, &probes.probes, None, &|_| {})?;
        Ok(Document {
            level_path,
            probes_path,
            level,
            world,
            probes,
            results,
            level_digest,
            warnings,
            stamps,
        })
    }

    /// Counts by verdict.
    pub fn summary(&self) -> Summary {
        Summary::of(&self.results)
    }

    /// True when the level file, or a geometry file beside it, changed on disk since it was loaded
    /// (so the answers on screen may no longer hold).
    pub fn level_changed_on_disk(&self) -> bool {
        stamps(&self.level_path) != self.stamps
    }

    /// The three corners of a triangle of an object's mesh, by object name and triangle index.
    pub fn triangle(&self, object: &str, triangle: u32) -> Option<[glam::DVec3; 3]> {
        let found = self.level.objects.iter().find(|o| o.name == object)?;
        match &found.geometry {
            Geometry::Mesh(mesh) => {
                let t = mesh.triangles.get(triangle as usize)?;
                Some(t.map(|i| mesh.vertices[i as usize]))
            }
            Geometry::Primitive { .. } => None,
        }
    }
}

/// Modification times of the level file and of the geometry files in its folder.
fn stamps(level_path: &Path) -> Vec<(PathBuf, Option<SystemTime>)> {
    let modified = |p: &Path| std::fs::metadata(p).and_then(|m| m.modified()).ok();
    let mut out = vec![(level_path.to_path_buf(), modified(level_path))];
    let folder = match level_path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    if let Ok(entries) = std::fs::read_dir(&folder) {
        let mut geometry: Vec<PathBuf> = entries
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| {
                p.extension()
                    .and_then(|e| e.to_str())
                    .is_some_and(|e| matches!(e, "glb" | "gltf" | "bin" | "obj"))
            })
            .collect();
        geometry.sort();
        out.extend(geometry.into_iter().map(|p| {
            let stamp = modified(&p);
            (p, stamp)
        }));
    }
    out
}
