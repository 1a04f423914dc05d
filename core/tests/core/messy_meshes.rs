//! Real, messy meshes: triangles wound against their neighbours, duplicated faces, seams of
//! duplicated vertices, zero-area faces, polygons and several primitives, materials, and the same
//! triangles cut into objects and parts in different ways.

use crate::common::{self, LevelBuilder};

use std::path::{Path, PathBuf};

use glam::DVec3;
use plumbline_core::input::PathPolicy;
use plumbline_core::level::{Geometry, Level, LevelObject, Mesh, load_level};
use plumbline_core::query::{Filter, PART_TRIANGLES, RayHit, World};
use plumbline_core::session::{OpenOptions, open};
use proptest::prelude::*;

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn all_hits(world: &World, from: DVec3, to: DVec3) -> Vec<RayHit> {
    world.everything().ray_all(from, to).unwrap()
}

fn flipped(t: [u32; 3]) -> [u32; 3] {
    [t[0], t[2], t[1]]
}

/// The unit square in the XZ plane at height 0, as two triangles sharing the diagonal (0,0)–(1,1).
fn square(flip_second: bool) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let v = vec![
        DVec3::new(0.0, 0.0, 0.0),
        DVec3::new(1.0, 0.0, 0.0),
        DVec3::new(1.0, 0.0, 1.0),
        DVec3::new(0.0, 0.0, 1.0),
    ];
    let second = if flip_second {
        flipped([0, 2, 3])
    } else {
        [0, 2, 3]
    };
    (v, vec![[0, 2, 1], second])
}

#[test]
fn a_ray_through_the_shared_edge_of_a_flipped_square_crosses_once() {
    // Elementary geometry: a vertical segment through a point of a flat surface crosses it once.
    for flip in [false, true] {
        let (v, t) = square(flip);
        let world = LevelBuilder::new().mesh("tile", v, t).world();
        let hits = all_hits(
            &world,
            DVec3::new(0.5, 1.0, 0.5),
            DVec3::new(0.5, -1.0, 0.5),
        );
        assert_eq!(hits.len(), 1, "flip {flip}: {hits:?}");
        assert_eq!(hits[0].distance, 1.0);
        // The tie goes to the triangle first in the file, with its own normal.
        assert_eq!(hits[0].triangle, Some(0));
        assert_eq!(hits[0].normal, DVec3::Y);
    }
}

#[test]
fn a_ray_through_a_vertex_of_a_fan_with_flipped_triangles_crosses_once() {
    // Six triangles around a vertex at the origin, every other one flipped.
    let mut v = vec![DVec3::ZERO];
    for k in 0..6 {
        let a = k as f64 * std::f64::consts::TAU / 6.0;
        v.push(DVec3::new(a.cos(), 0.0, a.sin()));
    }
    let t: Vec<[u32; 3]> = (0..6u32)
        .map(|k| {
            let tri = [0, 1 + (k + 1) % 6, 1 + k];
            if k % 2 == 1 { flipped(tri) } else { tri }
        })
        .collect();
    let world = LevelBuilder::new().mesh("fan", v, t).world();
    let hits = all_hits(
        &world,
        DVec3::new(0.0, 2.0, 0.0),
        DVec3::new(0.0, -2.0, 0.0),
    );
    assert_eq!(hits.len(), 1, "{hits:?}");
    assert_eq!(hits[0].triangle, Some(0));
}

#[test]
fn a_folded_edge_is_crossed_once_and_a_grazed_ridge_twice() {
    // Two triangles folded along the Z axis like a roof (ridge up), the second flipped.
    let v = vec![
        DVec3::new(0.0, 1.0, -1.0),
        DVec3::new(0.0, 1.0, 1.0),
        DVec3::new(-1.0, 0.0, 0.0),
        DVec3::new(1.0, 0.0, 0.0),
    ];
    let t = vec![[0, 1, 2], flipped([1, 0, 3])];
    let world = LevelBuilder::new().mesh("roof", v, t).world();
    // Straight down through the ridge: into the roof once (elementary geometry).
    let down = all_hits(
        &world,
        DVec3::new(0.0, 3.0, 0.0),
        DVec3::new(0.0, -1.0, 0.0),
    );
    assert_eq!(down.len(), 1, "{down:?}");
    // Sideways along the ridge's height, grazing it: nearby copies cross both slopes or neither.
    let graze = all_hits(
        &world,
        DVec3::new(-3.0, 1.0, 0.0),
        DVec3::new(3.0, 1.0, 0.0),
    );
    assert_eq!(graze.len(), 2, "{graze:?}");
    assert_eq!(graze[0].distance, graze[1].distance);
}

#[test]
fn coincident_duplicate_faces_count_once_in_either_winding() {
    for second in [[0u32, 2, 1], [0, 1, 2]] {
        let v = vec![
            DVec3::new(0.0, 0.0, 0.0),
            DVec3::new(1.0, 0.0, 0.0),
            DVec3::new(0.0, 0.0, 1.0),
            // The same corners again (a soup with duplicated vertices).
            DVec3::new(0.0, 0.0, 0.0),
            DVec3::new(1.0, 0.0, 0.0),
            DVec3::new(0.0, 0.0, 1.0),
        ];
        let t = vec![[0, 2, 1], [second[0] + 3, second[1] + 3, second[2] + 3]];
        let world = LevelBuilder::new().mesh("double", v, t).world();
        let hits = all_hits(
            &world,
            DVec3::new(0.2, 1.0, 0.2),
            DVec3::new(0.2, -1.0, 0.2),
        );
        assert_eq!(hits.len(), 1, "{second:?}: {hits:?}");
        assert_eq!(hits[0].triangle, Some(0));
    }
}

#[test]
fn a_seam_of_duplicated_vertices_is_crossed_once() {
    // Two quads meeting along x = 1 with their own copies of the seam's vertices, one flipped.
    let v = vec![
        DVec3::new(0.0, 0.0, 0.0),
        DVec3::new(1.0, 0.0, 0.0),
        DVec3::new(1.0, 0.0, 1.0),
        DVec3::new(0.0, 0.0, 1.0),
        DVec3::new(1.0, 0.0, 0.0),
        DVec3::new(2.0, 0.0, 0.0),
        DVec3::new(2.0, 0.0, 1.0),
        DVec3::new(1.0, 0.0, 1.0),
    ];
    let t = vec![[0, 2, 1], [0, 3, 2], flipped([4, 6, 5]), flipped([4, 7, 6])];
    let world = LevelBuilder::new().mesh("floor", v, t).world();
    for at in [DVec3::new(1.0, 0.0, 0.3), DVec3::new(1.0, 0.0, 1.0)] {
        let hits = all_hits(&world, at + DVec3::Y, at - DVec3::Y);
        assert_eq!(hits.len(), 1, "{at}: {hits:?}");
    }
}

/// The hit count on a closed mesh with some triangles flipped, for a segment from outside to
/// outside through the point `at`.
fn crossings(v: &[DVec3], t: &[[u32; 3]], flips: &[bool], at: DVec3, dir: DVec3) -> usize {
    let t: Vec<[u32; 3]> = t
        .iter()
        .zip(flips.iter().cycle())
        .map(|(tri, f)| if *f { flipped(*tri) } else { *tri })
        .collect();
    let world = LevelBuilder::new().mesh("solid", v.to_vec(), t).world();
    all_hits(&world, at - dir * 10.0, at + dir * 10.0).len()
}

/// Independent oracle: the fewest and the most crossings (Möller & Trumbore 1997, over every
/// triangle) of copies of the segment moved a little sideways in sixteen directions, where no edge
/// or vertex is hit. They agree where the segment crosses the surface; a touch (grazing a vertex or
/// a ridge from outside) gives 0 and 2.
fn crossings_nearby(v: &[DVec3], t: &[[u32; 3]], at: DVec3, dir: DVec3) -> (usize, usize) {
    let (u, w) = dir.any_orthonormal_pair();
    let counts: Vec<usize> = (0..16)
        .map(|k| {
            let a = 0.113 + k as f64 * std::f64::consts::TAU / 16.0;
            let origin = at - dir * 10.0 + (u * a.cos() + w * a.sin()) * 1e-6;
            t.iter()
                .filter(|tri| {
                    let [a, b, c] = tri.map(|i| v[i as usize]);
                    common::moller_trumbore(origin, dir, a, b, c)
                        .is_some_and(|s| (0.0..=20.0).contains(&s))
                })
                .count()
        })
        .collect();
    (*counts.iter().min().unwrap(), *counts.iter().max().unwrap())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    /// On a closed mesh with random triangles flipped, a segment from outside to outside through an
    /// edge or a vertex crosses the surface as often as with consistent winding, an even number of
    /// times (Jordan–Brouwer; common practice in point-in-mesh tests — Ericson, Real-Time Collision
    /// Detection, 2005, §5.4.1 gives the 2D analogue, from memory), and as often as copies of the
    /// segment moved sideways cross it (a touch, which they cross 0 or 2 times, may count either).
    #[test]
    fn crossings_through_edges_and_vertices_ignore_winding(
        levels in 0u32..2,
        flips in proptest::collection::vec(any::<bool>(), 1..64),
        corner in 0usize..1000,
        along in 0.0f64..1.0,
        through_vertex in any::<bool>(),
        theta in 0.0f64..std::f64::consts::PI,
        phi in 0.0f64..std::f64::consts::TAU,
    ) {
        let (v, t) = common::icosphere(DVec3::new(0.3, -0.2, 0.1), 1.5, levels);
        let tri = t[corner % t.len()];
        let (a, b) = (v[tri[0] as usize], v[tri[1] as usize]);
        let at = if through_vertex { a } else { a.lerp(b, along) };
        let dir = DVec3::new(theta.sin() * phi.cos(), theta.cos(), theta.sin() * phi.sin());
        let consistent = crossings(&v, &t, &[false], at, dir);
        let messy = crossings(&v, &t, &flips, at, dir);
        prop_assert_eq!(messy, consistent);
        prop_assert_eq!(consistent % 2, 0);
        let (fewest, most) = crossings_nearby(&v, &t, at, dir);
        prop_assert!(consistent == fewest || consistent == most, "{} not in {}..={}", consistent, fewest, most);
    }
}

#[test]
fn obj_faces_are_named_as_the_file_numbers_them() {
    let dir = tempfile::tempdir().unwrap();
    // Line 10: a zero-area face (dropped); line 11: a quad; line 12: a pentagon; line 13: a
    // triangle beside it.
    let text = "o plaza\nv 0 0 0\nv 4 0 0\nv 4 0 4\nv 0 0 4\nv 8 0 0\nv 8 0 4\nv 12 0 4\nv 16 0 0\n\
                f 1 2 2\nf 1 4 3 2\nf 2 3 6 7 5\nf 5 7 8\n";
    let path = write(dir.path(), "plaza.obj", text);
    let level = load_level(&path, PathPolicy::default()).unwrap().level;
    let world = World::new(&level).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    let vertex = |k: usize| {
        let coords: Vec<f64> = lines[k]
            .split_whitespace()
            .skip(1)
            .map(|w| w.parse().unwrap())
            .collect();
        DVec3::new(coords[0], coords[1], coords[2])
    };
    let Geometry::Mesh(mesh) = &level.objects[0].geometry else {
        panic!("a mesh");
    };
    // Every kept triangle, hit at its centroid from above, names the face that holds it.
    for tri in &mesh.triangles {
        let [a, b, c] = tri.map(|i| mesh.vertices[i as usize]);
        let centroid = (a + b + c) / 3.0;
        let hit = world
            .everything()
            .ray_first(centroid + DVec3::Y, centroid - DVec3::Y)
            .unwrap()
            .unwrap();
        let place = world.face_place(hit.object, hit.triangle.unwrap()).unwrap();
        let plumbline_core::level::FacePlace::Obj {
            line, fan, face, ..
        } = place
        else {
            panic!("an OBJ face: {place:?}");
        };
        // The face's own corners from its line; its fan triangle holds the hit point.
        let corners: Vec<DVec3> = lines[line as usize - 1]
            .split_whitespace()
            .skip(1)
            .map(|w| vertex(w.parse::<usize>().unwrap()))
            .collect();
        let (p, q, r) = (
            corners[0],
            corners[fan as usize + 1],
            corners[fan as usize + 2],
        );
        let inside = |x: DVec3| {
            let area = |u: DVec3, v: DVec3, w: DVec3| (v - u).cross(w - u).length();
            (area(x, p, q) + area(x, q, r) + area(x, r, p) - area(p, q, r)).abs() < 1e-9
        };
        assert!(
            inside(hit.point),
            "line {line} fan {fan} holds {}",
            hit.point
        );
        // Faces count from 0 in file order, the dropped one included.
        assert_eq!(face as usize, line as usize - 10);
    }
}

#[test]
fn gltf_triangles_are_named_by_primitive() {
    use base64::Engine;
    let dir = tempfile::tempdir().unwrap();
    // Primitive 0: two indexed triangles on x ∈ [0, 1]; primitive 1: a strip of two on x ∈ [2, 3].
    let positions: [[f32; 3]; 8] = [
        [0.0, 0.0, 0.0],
        [0.0, 0.0, 1.0],
        [1.0, 0.0, 0.0],
        [1.0, 0.0, 1.0],
        [2.0, 0.0, 0.0],
        [2.0, 0.0, 1.0],
        [3.0, 0.0, 0.0],
        [3.0, 0.0, 1.0],
    ];
    let mut bytes: Vec<u8> = positions
        .iter()
        .flatten()
        .flat_map(|f| f.to_le_bytes())
        .collect();
    bytes.extend([0u16, 1, 2, 2, 1, 3].iter().flat_map(|i| i.to_le_bytes()));
    let data = base64::engine::general_purpose::STANDARD.encode(&bytes);
    let gltf = format!(
        r#"{{"asset": {{"version": "2.0"}}, "scene": 0, "scenes": [{{"nodes": [0]}}],
        "nodes": [{{"name": "deck", "mesh": 0}}],
        "meshes": [{{"primitives": [
            {{"attributes": {{"POSITION": 0}}, "indices": 2, "material": 0}},
            {{"attributes": {{"POSITION": 1}}, "mode": 5, "material": 1}}]}}],
        "materials": [{{"name": "planks"}}, {{}}],
        "accessors": [
            {{"bufferView": 0, "componentType": 5126, "count": 4, "type": "VEC3"}},
            {{"bufferView": 0, "byteOffset": 48, "componentType": 5126, "count": 4, "type": "VEC3"}},
            {{"bufferView": 1, "componentType": 5123, "count": 6, "type": "SCALAR"}}],
        "bufferViews": [{{"buffer": 0, "byteLength": 96}}, {{"buffer": 0, "byteOffset": 96, "byteLength": 12}}],
        "buffers": [{{"uri": "data:application/octet-stream;base64,{data}", "byteLength": {}}}]}}"#,
        bytes.len()
    );
    let path = write(dir.path(), "deck.gltf", &gltf);
    let world = World::new(&load_level(&path, PathPolicy::default()).unwrap().level).unwrap();
    for (x, z, primitive, triangle, material) in [
        (0.3, 0.2, 0, 0, "planks"),
        (0.7, 0.8, 0, 1, "planks"),
        (2.3, 0.2, 1, 0, "material#1"),
        (2.7, 0.8, 1, 1, "material#1"),
    ] {
        let at = DVec3::new(x, 0.0, z);
        let hit = world
            .everything()
            .ray_first(at + DVec3::Y, at - DVec3::Y)
            .unwrap()
            .unwrap();
        let place = world.face_place(hit.object, hit.triangle.unwrap()).unwrap();
        assert_eq!(
            place,
            plumbline_core::level::FacePlace::Gltf {
                mesh: 0,
                primitive,
                triangle
            },
            "at {at}"
        );
        assert_eq!(world.material(hit.material.unwrap()), material);
    }
}

/// A wavy grid of `n × n` cells (two triangles each), row by row, as one list of triangles.
fn grid(n: u32) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let mut v = Vec::new();
    for i in 0..=n {
        for j in 0..=n {
            let (x, z) = (j as f64, i as f64);
            v.push(DVec3::new(x, ((x * 0.7).sin() + (z * 0.4).cos()) * 0.5, z));
        }
    }
    let at = |i: u32, j: u32| i * (n + 1) + j;
    let mut t = Vec::new();
    for i in 0..n {
        for j in 0..n {
            t.push([at(i, j), at(i + 1, j), at(i, j + 1)]);
            t.push([at(i, j + 1), at(i + 1, j), at(i + 1, j + 1)]);
        }
    }
    (v, t)
}

/// The same triangles as `pieces` objects, each a run of the list in order.
fn cut(v: &[DVec3], t: &[[u32; 3]], pieces: usize) -> Level {
    let per = t.len().div_ceil(pieces);
    let objects = t
        .chunks(per)
        .enumerate()
        .map(|(k, chunk)| LevelObject {
            name: format!("piece-{k}"),
            tags: Vec::new(),
            geometry: Geometry::Mesh(Mesh {
                vertices: v.to_vec(),
                triangles: chunk.to_vec(),
                ..Mesh::default()
            }),
        })
        .collect();
    Level {
        up: DVec3::Y,
        objects,
    }
}

/// The corners of the triangle a hit names.
fn corners_of(level: &Level, hit: &RayHit) -> [DVec3; 3] {
    let Geometry::Mesh(mesh) = &level.objects[hit.object].geometry else {
        panic!("a mesh");
    };
    let kept = mesh.origin.kept(hit.triangle.unwrap()).unwrap();
    mesh.triangles[kept as usize].map(|i| mesh.vertices[i as usize])
}

#[test]
fn ties_at_edges_and_vertices_do_not_depend_on_objects_or_parts() {
    // Enough cells that one object is split into parts (more than PART_TRIANGLES triangles).
    let n = ((PART_TRIANGLES as f64 / 2.0).sqrt() as u32) + 8;
    let (v, t) = grid(n);
    assert!(t.len() > PART_TRIANGLES);
    let levels = [cut(&v, &t, 1), cut(&v, &t, 8)];
    let worlds: Vec<World> = levels.iter().map(|l| World::new(l).unwrap()).collect();
    // Straight down and slanted, through vertices and the middles of shared edges.
    let mut rays = Vec::new();
    for k in 0..60u32 {
        let (i, j) = (1 + (k * 37) % (n - 2), 1 + (k * 53) % (n - 2));
        let vertex = v[(i * (n + 1) + j) as usize];
        let edge = vertex.lerp(v[((i + 1) * (n + 1) + j) as usize], 0.5);
        for at in [vertex, edge] {
            for dir in [DVec3::NEG_Y, DVec3::new(0.3, -1.0, 0.2).normalize()] {
                rays.push((at - dir * 5.0, at + dir * 5.0));
            }
        }
    }
    for (from, to) in rays {
        let answers: Vec<(DVec3, DVec3, [DVec3; 3])> = levels
            .iter()
            .zip(&worlds)
            .map(|(level, world)| {
                let hit = world.everything().ray_first(from, to).unwrap().unwrap();
                (hit.point, hit.normal, corners_of(level, &hit))
            })
            .collect();
        assert_eq!(answers[0], answers[1], "{from} → {to}");
    }
}

#[test]
fn materials_are_named_filtered_and_tagged() {
    let dir = tempfile::tempdir().unwrap();
    // A wall of glass in front of a wall of brick, one OBJ object.
    let obj = "o facade\nv 0 0 1\nv 2 0 1\nv 2 2 1\nv 0 2 1\nv 0 0 2\nv 2 0 2\nv 2 2 2\nv 0 2 2\n\
               usemtl Glass_Pane\nf 1 2 3 4\nusemtl brick\nf 5 6 7 8\n";
    write(dir.path(), "facade.obj", obj);
    let world = World::new(
        &load_level(&dir.path().join("facade.obj"), PathPolicy::default())
            .unwrap()
            .level,
    )
    .unwrap();
    let (from, to) = (DVec3::new(1.0, 1.0, 0.0), DVec3::new(1.0, 1.0, 3.0));
    let first = world.everything().ray_first(from, to).unwrap().unwrap();
    assert_eq!(world.material(first.material.unwrap()), "Glass_Pane");
    let past_glass = Filter {
        ignore_tags: vec!["material:Glass_Pane".into()],
        ..Filter::default()
    };
    let hit = world
        .view(&past_glass)
        .ray_first(from, to)
        .unwrap()
        .unwrap();
    assert_eq!(world.material(hit.material.unwrap()), "brick");
    assert_eq!(
        hit.object, first.object,
        "the same object, another material"
    );
    // A level file's tag rule by material name: "ignore glass" works on the export.
    let level = r#"{"plumbline": "level", "version": 1,
        "tag_rules": [{"material": "*glass*", "tags": ["glass"]}, {"material": "*Glass*", "tags": ["glass"]}],
        "objects": [{"name": "front", "mesh": "facade.obj"}]}"#;
    let path = write(dir.path(), "street.level.json", level);
    let world = World::new(&load_level(&path, PathPolicy::default()).unwrap().level).unwrap();
    let first = world.everything().ray_first(from, to).unwrap().unwrap();
    assert_eq!(&*world.hit_tags(first.object, first.material), ["glass"]);
    let ignore_glass = Filter {
        ignore_tags: vec!["glass".into()],
        ..Filter::default()
    };
    let hit = world
        .view(&ignore_glass)
        .ray_first(from, to)
        .unwrap()
        .unwrap();
    assert_eq!(world.material(hit.material.unwrap()), "brick");
}

#[test]
fn meshes_wound_against_their_neighbours_are_named_in_the_warnings() {
    let dir = tempfile::tempdir().unwrap();
    let obj = "o tiles\nv 0 0 0\nv 1 0 0\nv 1 0 1\nv 0 0 1\nf 1 3 2\nf 1 3 4\n";
    let path = write(dir.path(), "tiles.obj", obj);
    let opened = open(&path, &OpenOptions::default()).unwrap();
    let warnings: Vec<String> = opened
        .level
        .diagnostics
        .iter()
        .map(|d| d.to_string())
        .collect();
    assert!(
        warnings
            .iter()
            .any(|w| w.contains("object \"tiles\"") && w.contains("wound opposite ways")),
        "{warnings:?}"
    );
}
