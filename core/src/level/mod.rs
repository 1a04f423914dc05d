//! The level model and its loaders: level file, glTF 2.0, OBJ, primitives; validation; digest.
//!
//! Architecture invariant: everything that leaves this module is validated — finite numbers,
//! indices in range, positive sizes, no degenerate triangles, unique object names — so the query
//! core can hand it to parry without further checks. Loaders return the value and a list of
//! warnings; errors name the file and the place in it.

mod digest;
mod glob;
mod gltf;
mod level_file;
mod lint_settings;
mod mesh;
mod model;
mod obj;
mod selection;
mod shape;
mod transform;

use std::path::{Path, PathBuf};

pub use digest::{LevelDigest, level_digest};
pub use glob::glob_matches;
pub use lint_settings::{Allowance, LintSettings};
pub use mesh::{DEGENERATE_RELATIVE_AREA, MeshFault, is_degenerate};
pub use model::{
    FaceLayout, FacePlace, Geometry, Level, LevelObject, MAX_LISTED_DROPPED, MaterialRun, Mesh,
    MeshOrigin, ObjFace, Primitive,
};
pub use selection::Selection;
pub use shape::{ShapeError, ShapeSpec};
pub use transform::Transform;

use crate::error::{Diagnostic, InputError};
use crate::input::{PathPolicy, read_input};

/// The largest coordinate, in metres, a level or probe may use: 10,000 km. Beyond it f64 keeps too
/// few digits below the millimetre, and parry's iterative queries can fail outright. Ours.
pub const MAX_COORDINATE: f64 = 1e7;

/// The tag that makes an object a volume: a region that blocks nothing (rays, sweeps, walks and
/// overlaps pass through it) and that probes report entering, leaving and being inside. A level file
/// object gives it with `"volume": true` (or as a tag, or by a tag rule), a glTF node with
/// `"extras": {"volume": true}` (or in its `extras.tags`).
pub const VOLUME_TAG: &str = "volume";

/// The largest size (radius, half extent, height), in metres, a shape may have: 1,000 km. Ours.
pub const MAX_SIZE: f64 = 1e6;

/// True when every coordinate of `v` is finite and within ±[`MAX_COORDINATE`].
pub fn within_range(v: glam::DVec3) -> bool {
    v.is_finite() && v.abs().max_element() <= MAX_COORDINATE
}

/// A level as loaded: the validated level, the warnings, and every file read to make it.
#[derive(Debug, Clone, PartialEq)]
pub struct LoadedLevel {
    /// The level.
    pub level: Level,
    /// What was skipped or repaired while loading.
    pub diagnostics: Vec<Diagnostic>,
    /// Every file read: the level file, then the mesh and buffer files it names, in reading order.
    pub files: Vec<PathBuf>,
    /// The level file's `lint` section (empty for a glTF or OBJ file).
    pub lint: LintSettings,
}

/// Loads a level from a level file (`.json`), a glTF 2.0 file (`.gltf`, `.glb`) or an OBJ file;
/// paths named inside it are resolved under `policy`.
pub fn load_level(path: &Path, policy: PathPolicy) -> Result<LoadedLevel, InputError> {
    load_level_from(path, &read_input(path)?, policy)
}

/// Loads a level as [`load_level`] does, from the bytes of the file at `path` already read (the
/// files it names are read from disk, relative to `path`).
pub fn load_level_from(
    path: &Path,
    bytes: &[u8],
    policy: PathPolicy,
) -> Result<LoadedLevel, InputError> {
    let mut files = vec![path.to_path_buf()];
    let (level, diagnostics, lint) = match extension(path).as_str() {
        "json" => level_file::load_level_file(path, bytes, policy, &mut files)?,
        "gltf" | "glb" | "obj" => {
            let (objects, mut diagnostics) = mesh_file_objects(path, bytes, policy, &mut files)?;
            let mut level = Level {
                up: glam::DVec3::Y,
                objects,
            };
            level_file::drop_empty_objects(path, &mut level.objects, &mut diagnostics);
            (level, diagnostics, LintSettings::default())
        }
        _ => {
            return Err(InputError::file(
                path,
                "not a level: expected a .level.json, .gltf, .glb or .obj file",
            ));
        }
    };
    Ok(LoadedLevel {
        level,
        diagnostics,
        files,
        lint,
    })
}

/// Loads the objects of a glTF or OBJ file, in the file's own coordinates, adding every file read to
/// `files`.
pub(crate) fn load_mesh_file(
    path: &Path,
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let bytes = read_input(path)?;
    files.push(path.to_path_buf());
    mesh_file_objects(path, &bytes, policy, files)
}

/// The objects of a glTF or OBJ file's bytes.
fn mesh_file_objects(
    path: &Path,
    bytes: &[u8],
    policy: PathPolicy,
    files: &mut Vec<PathBuf>,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    match extension(path).as_str() {
        "gltf" | "glb" => gltf::load_gltf(path, bytes, policy, files),
        "obj" => obj::load_obj(path, bytes),
        _ => Err(InputError::file(
            path,
            "not a mesh file: expected .gltf, .glb or .obj",
        )),
    }
}

fn extension(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}
