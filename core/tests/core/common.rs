//! Test support: small levels built in code, and independent f64 oracles written from the books
//! (not from the product's code) to check the query core against.
#![allow(dead_code)]

use glam::{DQuat, DVec3};
use plumbline_core::demo::MeshBuilder;
use plumbline_core::level::{Geometry, Level, LevelObject, Mesh, Primitive};
use plumbline_core::query::World;

/// A level of named meshes and primitives, Y up.
pub struct LevelBuilder {
    objects: Vec<LevelObject>,
}

impl LevelBuilder {
    pub fn new() -> Self {
        Self {
            objects: Vec::new(),
        }
    }

    pub fn mesh(mut self, name: &str, vertices: Vec<DVec3>, triangles: Vec<[u32; 3]>) -> Self {
        self.objects.push(LevelObject {
            name: name.into(),
            tags: Vec::new(),
            geometry: Geometry::Mesh(Mesh {
                vertices,
                triangles,
                ..Mesh::default()
            }),
        });
        self
    }

    pub fn tagged(mut self, tags: &[&str]) -> Self {
        let last = self.objects.last_mut().expect("an object to tag");
        last.tags = tags.iter().map(|t| t.to_string()).collect();
        last.tags.sort();
        self
    }

    pub fn primitive(mut self, name: &str, shape: Primitive, at: DVec3, rotation: DQuat) -> Self {
        self.objects.push(LevelObject {
            name: name.into(),
            tags: Vec::new(),
            geometry: Geometry::Primitive {
                shape,
                translation: at,
                rotation,
            },
        });
        self
    }

    pub fn level(self) -> Level {
        Level {
            up: DVec3::Y,
            objects: self.objects,
        }
    }

    pub fn world(self) -> World {
        World::new(&self.level()).expect("a valid test level")
    }
}

/// `builder` with an unturned box primitive of half size `half` centred at `at`.
pub fn box_at(builder: LevelBuilder, name: &str, at: DVec3, half: f64) -> LevelBuilder {
    builder.primitive(
        name,
        Primitive::Box {
            half_extents: DVec3::splat(half),
        },
        at,
        DQuat::IDENTITY,
    )
}

/// A closed box mesh (12 triangles, outward counter-clockwise) centred at `c` with half extents `h`.
pub fn box_mesh(c: DVec3, h: DVec3) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let mut mb = MeshBuilder::new();
    mb.turned_box(c, h, DQuat::IDENTITY);
    let mesh = mb.finish();
    (mesh.vertices, mesh.triangles)
}

/// A closed icosphere: an icosahedron subdivided `levels` times, on radius `r` around `c`.
pub fn icosphere(c: DVec3, r: f64, levels: u32) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let mut mb = MeshBuilder::new();
    mb.blob(c, DVec3::splat(r), levels);
    let mesh = mb.finish();
    (mesh.vertices, mesh.triangles)
}

/// Möller & Trumbore, "Fast, Minimum Storage Ray/Triangle Intersection", JGT 2(1), 1997:
/// the ray parameter of the crossing of `o + t d` with triangle `abc`, two-sided, if any.
pub fn moller_trumbore(o: DVec3, d: DVec3, a: DVec3, b: DVec3, c: DVec3) -> Option<f64> {
    let e1 = b - a;
    let e2 = c - a;
    let p = d.cross(e2);
    let det = e1.dot(p);
    if det.abs() < 1e-300 {
        return None;
    }
    let inv = 1.0 / det;
    let s = o - a;
    let u = s.dot(p) * inv;
    if !(0.0..=1.0).contains(&u) {
        return None;
    }
    let q = s.cross(e1);
    let v = d.dot(q) * inv;
    if v < 0.0 || u + v > 1.0 {
        return None;
    }
    Some(e2.dot(q) * inv)
}

/// Ericson, Real-Time Collision Detection, 2005, §5.1.5 ClosestPtPointTriangle.
pub fn closest_point_triangle(p: DVec3, a: DVec3, b: DVec3, c: DVec3) -> DVec3 {
    let ab = b - a;
    let ac = c - a;
    let ap = p - a;
    let d1 = ab.dot(ap);
    let d2 = ac.dot(ap);
    if d1 <= 0.0 && d2 <= 0.0 {
        return a;
    }
    let bp = p - b;
    let d3 = ab.dot(bp);
    let d4 = ac.dot(bp);
    if d3 >= 0.0 && d4 <= d3 {
        return b;
    }
    let vc = d1 * d4 - d3 * d2;
    if vc <= 0.0 && d1 >= 0.0 && d3 <= 0.0 {
        return a + ab * (d1 / (d1 - d3));
    }
    let cp = p - c;
    let d5 = ab.dot(cp);
    let d6 = ac.dot(cp);
    if d6 >= 0.0 && d5 <= d6 {
        return c;
    }
    let vb = d5 * d2 - d1 * d6;
    if vb <= 0.0 && d2 >= 0.0 && d6 <= 0.0 {
        return a + ac * (d2 / (d2 - d6));
    }
    let va = d3 * d6 - d5 * d4;
    if va <= 0.0 && (d4 - d3) >= 0.0 && (d5 - d6) >= 0.0 {
        return b + (c - b) * ((d4 - d3) / ((d4 - d3) + (d5 - d6)));
    }
    let denom = 1.0 / (va + vb + vc);
    a + ab * (vb * denom) + ac * (vc * denom)
}

/// Ericson, Real-Time Collision Detection, 2005, §5.1.9 ClosestPtSegmentSegment: the closest points
/// of segments `p1q1` and `p2q2`.
pub fn closest_segment_segment(p1: DVec3, q1: DVec3, p2: DVec3, q2: DVec3) -> (DVec3, DVec3) {
    let d1 = q1 - p1;
    let d2 = q2 - p2;
    let r = p1 - p2;
    let a = d1.dot(d1);
    let e = d2.dot(d2);
    let f = d2.dot(r);
    let (s, t);
    if a <= 1e-300 && e <= 1e-300 {
        return (p1, p2);
    }
    if a <= 1e-300 {
        s = 0.0;
        t = (f / e).clamp(0.0, 1.0);
    } else {
        let c = d1.dot(r);
        if e <= 1e-300 {
            t = 0.0;
            s = (-c / a).clamp(0.0, 1.0);
        } else {
            let b = d1.dot(d2);
            let denom = a * e - b * b;
            let mut s0 = if denom != 0.0 {
                ((b * f - c * e) / denom).clamp(0.0, 1.0)
            } else {
                0.0
            };
            let mut t0 = (b * s0 + f) / e;
            if t0 < 0.0 {
                t0 = 0.0;
                s0 = (-c / a).clamp(0.0, 1.0);
            } else if t0 > 1.0 {
                t0 = 1.0;
                s0 = ((b - c) / a).clamp(0.0, 1.0);
            }
            s = s0;
            t = t0;
        }
    }
    (p1 + d1 * s, p2 + d2 * t)
}

/// The smallest distance from point `p` to any triangle of a soup (Ericson §5.1.5 per triangle).
pub fn soup_distance(p: DVec3, v: &[DVec3], t: &[[u32; 3]]) -> f64 {
    t.iter()
        .map(|tri| {
            p.distance(closest_point_triangle(
                p,
                v[tri[0] as usize],
                v[tri[1] as usize],
                v[tri[2] as usize],
            ))
        })
        .fold(f64::INFINITY, f64::min)
}

/// Minimum of a unimodal function on [lo, hi] by golden-section search to 1e-12 (Kiefer 1953).
pub fn golden_min(f: impl Fn(f64) -> f64, lo: f64, hi: f64) -> (f64, f64) {
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let (mut a, mut b) = (lo, hi);
    while b - a > 1e-12 * (1.0 + hi.abs()) {
        let c = b - g * (b - a);
        let d = a + g * (b - a);
        if f(c) <= f(d) { b = d } else { a = c }
    }
    let m = 0.5 * (a + b);
    [(lo, f(lo)), (hi, f(hi)), (m, f(m))]
        .into_iter()
        .min_by(|x, y| x.1.total_cmp(&y.1))
        .unwrap()
}

/// First root of a function that is convex on [lo, hi]: where a sphere moving in a straight line first
/// touches a fixed convex set. Bisection to 1e-13.
pub fn first_root_convex(f: impl Fn(f64) -> f64, lo: f64, hi: f64) -> Option<f64> {
    if f(lo) <= 0.0 {
        return Some(lo);
    }
    let (m, fm) = golden_min(&f, lo, hi);
    if fm > 0.0 {
        return None;
    }
    let (mut a, mut b) = (lo, m);
    while b - a > 1e-13 * (1.0 + hi.abs()) {
        let mid = 0.5 * (a + b);
        if f(mid) > 0.0 { a = mid } else { b = mid }
    }
    Some(b)
}
