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
mod mesh;
mod model;
mod obj;
mod shape;
mod transform;

use std::path::Path;

pub use digest::level_digest;
pub use glob::glob_matches;
pub use mesh::{DEGENERATE_RELATIVE_AREA, is_degenerate};
pub use model::{Geometry, Level, LevelObject, Mesh, Primitive};
pub use shape::ShapeSpec;
pub use transform::Transform;

use crate::error::{Diagnostic, InputError};

/// The largest coordinate, in metres, a level or probe may use: 10,000 km. Beyond it f64 keeps too
/// few digits below the millimetre, and parry's iterative queries can fail outright. Ours.
pub const MAX_COORDINATE: f64 = 1e7;

/// The largest size (radius, half extent, height), in metres, a shape may have: 1,000 km. Ours.
pub const MAX_SIZE: f64 = 1e6;

/// True when every coordinate of `v` is finite and within ±[`MAX_COORDINATE`].
pub fn within_range(v: glam::DVec3) -> bool {
    v.is_finite() && v.abs().max_element() <= MAX_COORDINATE
}

/// Loads a level from a level file (`.json`), a glTF 2.0 file (`.gltf`, `.glb`) or an OBJ file.
pub fn load_level(path: &Path) -> Result<(Level, Vec<Diagnostic>), InputError> {
    match extension(path).as_str() {
        "json" => level_file::load_level_file(path),
        "gltf" | "glb" | "obj" => {
            let (objects, diagnostics) = load_mesh_file(path)?;
            let mut level = Level {
                up: glam::DVec3::Y,
                objects,
            };
            let mut diagnostics = diagnostics;
            level_file::drop_empty_objects(path, &mut level.objects, &mut diagnostics);
            Ok((level, diagnostics))
        }
        _ => Err(InputError::file(
            path,
            "not a level: expected a .level.json, .gltf, .glb or .obj file",
        )),
    }
}

/// Loads the objects of a glTF or OBJ file, in the file's own coordinates.
pub(crate) fn load_mesh_file(
    path: &Path,
) -> Result<(Vec<LevelObject>, Vec<Diagnostic>), InputError> {
    let bytes = read_input(path)?;
    match extension(path).as_str() {
        "gltf" | "glb" => gltf::load_gltf(path, &bytes),
        "obj" => {
            let text = std::str::from_utf8(&bytes)
                .map_err(|e| InputError::file(path, format!("not UTF-8 text: {e}")))?;
            obj::load_obj(path, text)
        }
        _ => Err(InputError::file(
            path,
            "not a mesh file: expected .gltf, .glb or .obj",
        )),
    }
}

/// Reads a whole input file; a missing or empty file is an error that names it.
pub fn read_input(path: &Path) -> Result<Vec<u8>, InputError> {
    let bytes = std::fs::read(path)
        .map_err(|e| InputError::file(path, format!("cannot read the file: {e}")))?;
    if bytes.iter().all(u8::is_ascii_whitespace) {
        return Err(InputError::file(path, "the file is empty"));
    }
    Ok(bytes)
}

fn extension(path: &Path) -> String {
    path.extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default()
}
