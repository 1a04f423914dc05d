//! The surfaces of meshes: edges of meshes that must be closed, duplicate coplanar faces, slivers
//! and degenerate triangles.

use std::collections::HashMap;
use std::sync::Arc;

use glam::DVec3;

use super::{Finding, FindingKind, LintOptions, MAX_LISTED, TriangleRef};
use crate::level::{Geometry, Level, Mesh, Selection};

/// Faces whose planes are this close are coplanar, metres: a millimetre. Ours.
const PLANE_TOLERANCE: f64 = 1e-3;
/// Faces whose unit normals differ by less than this face the same way (about 0.1°). Ours.
const NORMAL_TOLERANCE: f64 = 2e-3;
/// Coplanar faces overlapping by less than this area only touch, square metres (1 mm²). Ours.
const AREA_TOLERANCE: f64 = 1e-6;

/// Every surface finding of the level's meshes.
pub(super) fn surfaces(
    level: &Level,
    closed: Option<&Selection>,
    options: &LintOptions,
) -> Vec<Finding> {
    let mut findings = Vec::new();
    let meshes: Vec<(Arc<str>, &Mesh)> = level
        .objects
        .iter()
        .filter_map(|o| match &o.geometry {
            Geometry::Mesh(m) => Some((Arc::from(o.name.as_str()), m)),
            Geometry::Primitive { .. } => None,
        })
        .collect();
    for (object, (name, mesh)) in level
        .objects
        .iter()
        .filter(|o| matches!(o.geometry, Geometry::Mesh(_)))
        .zip(&meshes)
    {
        if closed.is_some_and(|s| s.picks(&object.name, &object.tags)) {
            findings.extend(edges(name, mesh));
        }
        findings.extend(slivers(name, mesh, options.sliver_angle));
        findings.extend(degenerate(name, mesh));
    }
    findings.extend(duplicates(&meshes));
    findings
}

/// How an edge is used: by how many triangles, and its first corners and triangle.
struct EdgeUse {
    count: usize,
    corners: [u32; 2],
    triangle: u32,
}

/// Open edges (one triangle) and non-manifold edges (more than two) of a mesh that must be closed;
/// vertices at the same position are one vertex.
fn edges(name: &Arc<str>, mesh: &Mesh) -> Vec<Finding> {
    let mut ids: HashMap<[u64; 3], u32> = HashMap::new();
    let welded: Vec<u32> = mesh
        .vertices
        .iter()
        .map(|v| {
            // +0.0 makes -0.0 and 0.0 one key.
            let key = v.to_array().map(|c| (c + 0.0).to_bits());
            let next = ids.len() as u32;
            *ids.entry(key).or_insert(next)
        })
        .collect();
    let mut uses: HashMap<(u32, u32), EdgeUse> = HashMap::new();
    for (k, t) in mesh.triangles.iter().enumerate() {
        for e in 0..3 {
            let (a, b) = (t[e], t[(e + 1) % 3]);
            let (wa, wb) = (welded[a as usize], welded[b as usize]);
            let entry = uses.entry((wa.min(wb), wa.max(wb))).or_insert(EdgeUse {
                count: 0,
                corners: [a, b],
                triangle: k as u32,
            });
            entry.count += 1;
        }
    }
    let mut list: Vec<&EdgeUse> = uses.values().collect();
    list.sort_by_key(|u| (u.triangle, u.corners));
    let mut findings = Vec::new();
    for (kind, wanted, words) in [
        (
            FindingKind::OpenEdges,
            1..2,
            "open edge(s): the mesh is not closed",
        ),
        (
            FindingKind::NonManifoldEdges,
            3..usize::MAX,
            "edge(s) shared by more than two triangles",
        ),
    ] {
        let chosen: Vec<&&EdgeUse> = list.iter().filter(|u| wanted.contains(&u.count)).collect();
        let Some(first) = chosen.first() else {
            continue;
        };
        let corner = |i: u32| mesh.vertices[i as usize];
        let edges: Vec<[DVec3; 2]> = chosen
            .iter()
            .take(MAX_LISTED)
            .map(|u| u.corners.map(corner))
            .collect();
        let mut triangles: Vec<TriangleRef> = chosen
            .iter()
            .map(|u| TriangleRef {
                object: name.clone(),
                number: mesh.origin.number(u.triangle),
            })
            .collect();
        triangles.dedup();
        triangles.truncate(MAX_LISTED);
        findings.push(Finding {
            kind,
            objects: vec![name.clone()],
            triangles,
            count: chosen.len(),
            measure: None,
            point: (corner(first.corners[0]) + corner(first.corners[1])) / 2.0,
            edges,
            message: format!("{name} has {} {words}", chosen.len()),
        });
    }
    findings
}

/// The triangles of a mesh with an angle below `limit` degrees.
fn slivers(name: &Arc<str>, mesh: &Mesh, limit: f64) -> Option<Finding> {
    let mut found: Vec<(u32, f64, DVec3)> = Vec::new();
    for (k, t) in mesh.triangles.iter().enumerate() {
        let [a, b, c] = t.map(|i| mesh.vertices[i as usize]);
        let angle = smallest_angle(a, b, c);
        if angle < limit {
            found.push((k as u32, angle, (a + b + c) / 3.0));
        }
    }
    let worst = found
        .iter()
        .min_by(|x, y| x.1.total_cmp(&y.1).then(x.0.cmp(&y.0)))?;
    Some(Finding {
        kind: FindingKind::Slivers,
        objects: vec![name.clone()],
        triangles: found
            .iter()
            .take(MAX_LISTED)
            .map(|(k, _, _)| TriangleRef {
                object: name.clone(),
                number: mesh.origin.number(*k),
            })
            .collect(),
        count: found.len(),
        measure: Some(worst.1),
        point: worst.2,
        edges: Vec::new(),
        message: format!(
            "{name} has {} sliver triangle(s); the thinnest has an angle of {:.4}°",
            found.len(),
            worst.1
        ),
    })
}

/// The smallest angle of a triangle, in degrees: `atan2(|u × v|, u · v)` at each corner, which
/// stays accurate for angles near 0° and 180° (where `acos` of a dot product does not).
pub fn smallest_angle(a: DVec3, b: DVec3, c: DVec3) -> f64 {
    let at = |p: DVec3, q: DVec3, r: DVec3| {
        let (u, v) = (q - p, r - p);
        u.cross(v).length().atan2(u.dot(v)).to_degrees()
    };
    at(a, b, c).min(at(b, c, a)).min(at(c, a, b))
}

/// The triangles of a mesh dropped at loading for having no area.
fn degenerate(name: &Arc<str>, mesh: &Mesh) -> Option<Finding> {
    let (_, first) = *mesh.origin.dropped.first()?;
    Some(Finding {
        kind: FindingKind::Degenerate,
        objects: vec![name.clone()],
        triangles: mesh
            .origin
            .dropped
            .iter()
            .take(MAX_LISTED)
            .map(|(n, _)| TriangleRef {
                object: name.clone(),
                number: *n,
            })
            .collect(),
        count: mesh.origin.dropped.len(),
        measure: None,
        point: first,
        edges: Vec::new(),
        message: format!(
            "{name} has {} triangle(s) with no area (left out of every query)",
            mesh.origin.dropped.len()
        ),
    })
}

/// One triangle for the duplicate search.
struct Face {
    mesh: usize,
    triangle: u32,
    normal: DVec3,
    offset: f64,
    lo: DVec3,
    hi: DVec3,
}

/// The duplicate faces found between two meshes (or in one): triangles as (mesh, index), how many
/// pairs, and where the first is.
struct Duplicates {
    triangles: Vec<(usize, u32)>,
    count: usize,
    point: DVec3,
}

/// Coplanar faces facing the same way whose areas overlap, in one mesh or across meshes; one
/// finding per pair of objects (or per object, for its own duplicates).
fn duplicates(meshes: &[(Arc<str>, &Mesh)]) -> Vec<Finding> {
    let mut faces: Vec<((i64, i64, i64, i64), Face)> = Vec::new();
    for (m, (_, mesh)) in meshes.iter().enumerate() {
        for (k, t) in mesh.triangles.iter().enumerate() {
            let [a, b, c] = t.map(|i| mesh.vertices[i as usize]);
            let Some(normal) = (b - a).cross(c - a).try_normalize() else {
                continue;
            };
            let offset = normal.dot(a);
            // Faces in one plane share a key (up to rounding at a key's edge).
            let key = (
                (normal.x / NORMAL_TOLERANCE).round() as i64,
                (normal.y / NORMAL_TOLERANCE).round() as i64,
                (normal.z / NORMAL_TOLERANCE).round() as i64,
                (offset / (4.0 * PLANE_TOLERANCE)).round() as i64,
            );
            faces.push((
                key,
                Face {
                    mesh: m,
                    triangle: k as u32,
                    normal,
                    offset,
                    lo: a.min(b).min(c),
                    hi: a.max(b).max(c),
                },
            ));
        }
    }
    faces.sort_by(|x, y| x.0.cmp(&y.0).then(x.1.lo.x.total_cmp(&y.1.lo.x)));
    let mut found: HashMap<(usize, usize), Duplicates> = HashMap::new();
    let mut start = 0;
    while start < faces.len() {
        let mut end = start;
        while end < faces.len() && faces[end].0 == faces[start].0 {
            end += 1;
        }
        let run = &faces[start..end];
        for i in 0..run.len() {
            let f = &run[i].1;
            for (_, g) in &run[i + 1..] {
                if g.lo.x > f.hi.x + PLANE_TOLERANCE {
                    break;
                }
                if !boxes_meet(f, g) || f.normal.dot(g.normal) < 1.0 - NORMAL_TOLERANCE {
                    continue;
                }
                if (f.offset - g.offset).abs() > PLANE_TOLERANCE {
                    continue;
                }
                let corners = |face: &Face| {
                    let (_, mesh) = meshes[face.mesh];
                    mesh.triangles[face.triangle as usize].map(|v| mesh.vertices[v as usize])
                };
                let (area, middle) = overlap_area(&corners(f), &corners(g), f.normal);
                if area <= AREA_TOLERANCE {
                    continue;
                }
                let (first, second) = if f.mesh <= g.mesh { (f, g) } else { (g, f) };
                let entry = found
                    .entry((first.mesh, second.mesh))
                    .or_insert_with(|| Duplicates {
                        triangles: Vec::new(),
                        count: 0,
                        point: middle,
                    });
                entry.count += 1;
                if entry.triangles.len() < MAX_LISTED {
                    entry.triangles.push((first.mesh, first.triangle));
                    entry.triangles.push((second.mesh, second.triangle));
                }
            }
        }
        start = end;
    }
    let mut pairs: Vec<_> = found.into_iter().collect();
    pairs.sort_by_key(|(k, _)| *k);
    pairs
        .into_iter()
        .map(|((a, b), found)| {
            let Duplicates {
                triangles: tris,
                count,
                point,
            } = found;
            let mut objects = vec![meshes[a].0.clone()];
            if b != a {
                objects.push(meshes[b].0.clone());
            }
            let mut triangles: Vec<TriangleRef> = tris
                .iter()
                .map(|(m, t)| TriangleRef {
                    object: meshes[*m].0.clone(),
                    number: meshes[*m].1.origin.number(*t),
                })
                .collect();
            triangles.sort();
            triangles.dedup();
            let whose = if a == b {
                format!("{} has", meshes[a].0)
            } else {
                format!("{} and {} have", meshes[a].0, meshes[b].0)
            };
            Finding {
                kind: FindingKind::DuplicateFaces,
                objects,
                triangles,
                count,
                measure: None,
                point,
                edges: Vec::new(),
                message: format!(
                    "{whose} {count} pair(s) of coplanar faces that overlap (the surface is there twice)"
                ),
            }
        })
        .collect()
}

fn boxes_meet(f: &Face, g: &Face) -> bool {
    (f.lo - PLANE_TOLERANCE).cmple(g.hi).all() && (g.lo - PLANE_TOLERANCE).cmple(f.hi).all()
}

/// The area shared by two coplanar triangles and the middle of the shared part: `q` clipped to
/// `p` (Sutherland & Hodgman, "Reentrant polygon clipping", CACM 17(1), 1974), both seen along
/// `normal`.
fn overlap_area(p: &[DVec3; 3], q: &[DVec3; 3], normal: DVec3) -> (f64, DVec3) {
    let mut polygon: Vec<DVec3> = q.to_vec();
    for e in 0..3 {
        let (a, b) = (p[e], p[(e + 1) % 3]);
        // Inside is to the left of a→b, seen from the front.
        let inward = normal.cross(b - a);
        let side = |x: DVec3| inward.dot(x - a);
        let mut clipped = Vec::with_capacity(polygon.len() + 1);
        for k in 0..polygon.len() {
            let (x, y) = (polygon[k], polygon[(k + 1) % polygon.len()]);
            let (sx, sy) = (side(x), side(y));
            if sx >= 0.0 {
                clipped.push(x);
            }
            if (sx >= 0.0) != (sy >= 0.0) {
                clipped.push(x + (y - x) * (sx / (sx - sy)));
            }
        }
        polygon = clipped;
        if polygon.len() < 3 {
            return (0.0, DVec3::ZERO);
        }
    }
    let mut twice = DVec3::ZERO;
    for k in 1..polygon.len() - 1 {
        twice += (polygon[k] - polygon[0]).cross(polygon[k + 1] - polygon[0]);
    }
    let middle = polygon.iter().sum::<DVec3>() / polygon.len() as f64;
    (twice.dot(normal).abs() / 2.0, middle)
}
