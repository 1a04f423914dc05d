//! `level_digest`: a SHA-256 over the level geometry as loaded (names, tags, up axis, every number).

use sha2::{Digest, Sha256};

use super::model::{Geometry, Level, LevelObject, Primitive};

/// The digest of a loaded level, `sha256:<hex>`. Equal levels give equal digests on every machine.
pub fn level_digest(level: &Level) -> String {
    let mut digest = LevelDigest::new(level);
    level
        .objects
        .iter()
        .for_each(|object| digest.object(object));
    digest.finish()
}

/// [`level_digest`] taken an object at a time, in the level's order: each object can be hashed
/// just before it is handed on (a world build takes the objects over one by one).
pub struct LevelDigest {
    h: Sha256,
}

impl LevelDigest {
    /// The digest of `level`'s head (its up axis and how many objects it has); its objects follow.
    pub fn new(level: &Level) -> LevelDigest {
        let mut h = Sha256::new();
        h.update(b"plumbline level geometry 1\0");
        floats(&mut h, &level.up.to_array());
        h.update((level.objects.len() as u64).to_le_bytes());
        LevelDigest { h }
    }

    /// Adds the next object.
    pub fn object(&mut self, object: &LevelObject) {
        let h = &mut self.h;
        text(h, &object.name);
        h.update((object.tags.len() as u64).to_le_bytes());
        for tag in &object.tags {
            text(h, tag);
        }
        match &object.geometry {
            Geometry::Mesh(mesh) => {
                h.update(b"mesh");
                h.update((mesh.vertices.len() as u64).to_le_bytes());
                for v in &mesh.vertices {
                    floats(h, &v.to_array());
                }
                h.update((mesh.triangles.len() as u64).to_le_bytes());
                for t in &mesh.triangles {
                    for i in t {
                        h.update(i.to_le_bytes());
                    }
                }
            }
            Geometry::Primitive {
                shape,
                translation,
                rotation,
            } => {
                h.update(b"primitive");
                floats(h, &translation.to_array());
                floats(h, &rotation.to_array());
                match shape {
                    Primitive::Sphere { radius } => {
                        h.update(b"sphere");
                        floats(h, &[*radius]);
                    }
                    Primitive::Box { half_extents } => {
                        h.update(b"box");
                        floats(h, &half_extents.to_array());
                    }
                    Primitive::Capsule {
                        radius,
                        half_height,
                    } => {
                        h.update(b"capsule");
                        floats(h, &[*radius, *half_height]);
                    }
                    Primitive::Cylinder {
                        radius,
                        half_height,
                    } => {
                        h.update(b"cylinder");
                        floats(h, &[*radius, *half_height]);
                    }
                    Primitive::Convex { points } => {
                        h.update(b"convex");
                        h.update((points.len() as u64).to_le_bytes());
                        for p in points {
                            floats(h, &p.to_array());
                        }
                    }
                }
            }
        }
    }

    /// The digest, `sha256:<hex>`, once every object is added.
    pub fn finish(self) -> String {
        let bytes = self.h.finalize();
        let hex: String = bytes.iter().map(|b| format!("{b:02x}")).collect();
        format!("sha256:{hex}")
    }
}

fn text(h: &mut Sha256, s: &str) {
    h.update((s.len() as u64).to_le_bytes());
    h.update(s.as_bytes());
}

fn floats(h: &mut Sha256, values: &[f64]) {
    for v in values {
        // +0.0 and -0.0 are the same geometry.
        let v = if *v == 0.0 { 0.0 } else { *v };
        h.update(v.to_le_bytes());
    }
}
