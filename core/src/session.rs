//! One way in: open a probe set (or a level on its own), load and validate the level it names (or
//! another one), build the query world, and answer the probes. `check`, `info`, the window's open and
//! its reload all come through [`open`]; nothing else runs this pipeline.
//!
//! ```no_run
//! use std::path::Path;
//! use plumbline_core::session::{OpenOptions, open};
//!
//! let opened = open(Path::new("scenes/saltfen-quay.probes.json"), &OpenOptions::default())?;
//! let results = opened.answer(None, &|_| {})?;
//! println!("{} probes, {} warnings", results.len(), opened.level.diagnostics.len());
//! # Ok::<(), plumbline_core::error::Error>(())
//! ```

use std::path::{Path, PathBuf};

use crate::check::{ProbeResult, run_probes, text_digest};
use crate::error::{Diagnostic, Error, InputError};
use crate::input::read_input;
use crate::level::{Level, LoadedLevel, level_digest, load_level};
use crate::probe::{Probe, ProbeSet, parse_probe_set};
use crate::query::World;

/// How to open.
#[derive(Debug, Clone, Default)]
pub struct OpenOptions {
    /// Use this level instead of the one the probe set names.
    pub level: Option<PathBuf>,
    /// Answer these probes instead of the file's (the window's edited probes, on a reloaded level).
    pub probes: Option<Vec<Probe>>,
    /// Keep the level model beside the query world (the window draws it); without it the world takes
    /// the level over, so peak memory holds one copy of the geometry.
    pub keep_level: bool,
}

/// A probe set (or a level alone) opened: the probes, and the level they are about, ready to answer.
pub struct Opened {
    /// The probe-set file, when a probe set was opened.
    pub probes_path: Option<PathBuf>,
    /// `sha256:` of the probe-set file's bytes as read; `None` for a level opened alone.
    pub probes_digest: Option<String>,
    /// The probes (empty for a level opened alone).
    pub probes: ProbeSet,
    /// The level.
    pub level: OpenLevel,
}

/// The level of an opened probe set: where it came from, what it holds, and its query world.
pub struct OpenLevel {
    /// The level file.
    pub path: PathBuf,
    /// The level model, when [`OpenOptions::keep_level`] asked for it.
    pub model: Option<Level>,
    /// The digest of the geometry as loaded (SPEC §3 `level_digest`).
    pub digest: String,
    /// Mesh triangles in the level.
    pub triangles: usize,
    /// Objects in the level.
    pub objects: usize,
    /// What was skipped or repaired while loading.
    pub diagnostics: Vec<Diagnostic>,
    /// Every file read to load the level (the level file first).
    pub files: Vec<PathBuf>,
    /// The query world.
    pub world: World,
}

/// True when `path` names a probe set (`*.probes.json`) rather than a level.
pub fn is_probe_set(path: &Path) -> bool {
    path.file_name()
        .and_then(|n| n.to_str())
        .is_some_and(|n| n.ends_with(".probes.json"))
}

/// Opens a probe set (`*.probes.json`) or a level (`.level.json`, `.gltf`, `.glb`, `.obj`): reads and
/// validates the probes, loads the level (the set's own, or [`OpenOptions::level`]) and builds its
/// query world. Nothing is answered yet: see [`Opened::answer`].
pub fn open(path: &Path, options: &OpenOptions) -> Result<Opened, Error> {
    let (probes_path, probes_digest, mut probes, level_path) = if is_probe_set(path) {
        let bytes = read_input(path)?;
        let text = std::str::from_utf8(&bytes)
            .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
        let set = parse_probe_set(path, text)?;
        let beside = path.parent().unwrap_or(Path::new("")).join(&set.level);
        (
            Some(path.to_path_buf()),
            Some(text_digest(&bytes)),
            set,
            beside,
        )
    } else {
        let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
        let set = ProbeSet {
            level: name.to_string(),
            probes: Vec::new(),
        };
        (None, None, set, path.to_path_buf())
    };
    if let Some(edited) = &options.probes {
        probes.probes = edited.clone();
    }
    let level_path = options.level.clone().unwrap_or(level_path);
    let level = open_level(&level_path, options.keep_level)?;
    Ok(Opened {
        probes_path,
        probes_digest,
        probes,
        level,
    })
}

/// Loads a level and builds its world.
fn open_level(path: &Path, keep_level: bool) -> Result<OpenLevel, Error> {
    let LoadedLevel {
        level,
        diagnostics,
        files,
    } = load_level(path)?;
    let digest = level_digest(&level);
    let (triangles, objects) = (level.triangle_count(), level.objects.len());
    let build_error = |cause| Error::Build {
        level: path.to_path_buf(),
        cause,
    };
    let (model, world) = if keep_level {
        let world = World::new(&level).map_err(build_error)?;
        (Some(level), world)
    } else {
        (None, World::from_level(level).map_err(build_error)?)
    };
    Ok(OpenLevel {
        path: path.to_path_buf(),
        model,
        digest,
        triangles,
        objects,
        diagnostics,
        files,
        world,
    })
}

impl Opened {
    /// Answers every probe on `jobs` threads (all cores when `None`), in probe order; `progress` is
    /// told how many are done, from any thread. The answers do not depend on the thread count.
    pub fn answer(
        &self,
        jobs: Option<usize>,
        progress: &(dyn Fn(usize) + Sync),
    ) -> Result<Vec<ProbeResult>, Error> {
        run_probes(&self.level.world, &self.probes.probes, jobs, progress)
    }

    /// Every file this run reads: the probe set, then the level's files.
    pub fn inputs(&self) -> Vec<PathBuf> {
        self.probes_path
            .iter()
            .cloned()
            .chain(self.level.files.iter().cloned())
            .collect()
    }
}
