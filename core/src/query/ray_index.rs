//! Everything a ray can meet in a world, in one ray tree ([`super::ray_tree`]): every mesh
//! triangle of every body, and every primitive body whole. Items are stored in leaf order with
//! their triangles' corners beside them, so a leaf's items are read from one place (80 bytes an
//! item). Built when a ray first needs it.

use glam::DVec3;
use rayon::prelude::*;

use super::body::{Body, HeldMesh};
use super::ray_tree::{RayFrame, RayTree, TreeItems, TreeRay};

/// A mesh's vertices and its triangles as indices into them, borrowed.
type Triangles<'a> = (&'a [DVec3], &'a [[u32; 3]]);

/// Most items in one leaf.
const LEAF_ITEMS: usize = 4;

/// What stands in for a triangle number on a primitive's item.
const PRIMITIVE: u32 = u32::MAX;

/// One thing a ray can meet: a body's triangle, or a primitive body.
#[derive(Debug, Clone, Copy)]
pub(crate) struct RayItem {
    /// The body, by index into the world's bodies.
    pub body: u32,
    /// The triangle's number in its object (as the level's file numbers it), or [`PRIMITIVE`].
    triangle: u32,
    /// The triangle's corners (unused for a primitive).
    pub corners: [DVec3; 3],
}

impl RayItem {
    /// The triangle's number in its object (as the level's file numbers it: what a hit reports),
    /// or `None` for a primitive.
    pub fn triangle(&self) -> Option<u32> {
        (self.triangle != PRIMITIVE).then_some(self.triangle)
    }
}

/// The world's ray tree and its items in leaf order.
#[derive(Debug)]
pub(crate) struct RayIndex {
    tree: RayTree,
    items: Box<[RayItem]>,
}

impl RayIndex {
    /// The index of `bodies`, with coordinates measured in `frame`; `number(body, k)` is the
    /// file's number of the body's triangle `k`, kept with the item so a hit needs no look-ups.
    pub fn new(
        frame: RayFrame,
        bodies: &[Body],
        number: impl Fn(&Body, u32) -> u32 + Sync,
    ) -> RayIndex {
        // Every mesh held where it is for the build (nothing is copied or built to read it).
        let held: Vec<Option<HeldMesh>> = bodies.iter().map(Body::hold_triangles).collect();
        let meshes: Vec<Option<Triangles>> = held
            .iter()
            .map(|h| h.as_ref().map(HeldMesh::triangles))
            .collect();
        let source = ItemSource::new(bodies, &meshes, number);
        // The tree from the items' boxes; then the items gathered in the tree's leaf order, in
        // parallel, each made again from its body's mesh: the build never holds the boxes and the
        // items at once, nor two copies of the items.
        let mut boxes = TreeItems::with_capacity(frame, source.count());
        source.each_corners(|[a, b, c]| boxes.push(a.min(b).min(c), a.max(b).max(c)));
        let (tree, order) = boxes.build(LEAF_ITEMS);
        let items: Vec<RayItem> = order
            .par_iter()
            .map_init(|| 0, |guess, &k| source.item(k, guess))
            .collect();
        RayIndex {
            tree,
            items: items.into_boxed_slice(),
        }
    }

    /// The frame of the tree's coordinates.
    pub fn frame(&self) -> RayFrame {
        self.tree.frame()
    }

    /// Calls `leaf(items, reach)` on every leaf the ray may meet within `reach`, nearest box first;
    /// `leaf` returns the new reach (see [`RayTree::nearest_first`]).
    pub fn nearest_first<'s>(
        &'s self,
        ray: &TreeRay,
        reach: f64,
        mut leaf: impl FnMut(&'s [RayItem], f64) -> f64,
    ) {
        self.tree
            .nearest_first(ray, reach, |range, reach| leaf(&self.items[range], reach));
    }

    /// Calls `leaf(items)` on every leaf whose box may overlap the box `lo ..= hi`: every item
    /// whose own box does is among them.
    pub fn overlapping(&self, lo: DVec3, hi: DVec3, mut leaf: impl FnMut(&[RayItem])) {
        self.tree
            .overlapping(lo, hi, |range| leaf(&self.items[range]));
    }
}

/// The items of `bodies`, numbered in body order (a mesh's triangles in order, numbered by
/// `number`; a primitive whole, its box standing in for corners), each made on demand from its
/// body's mesh.
struct ItemSource<'a, N> {
    bodies: &'a [Body],
    meshes: &'a [Option<Triangles<'a>>],
    number: N,
    /// Each body's first item, then the number of items.
    first: Vec<u32>,
}

impl<'a, N: Fn(&Body, u32) -> u32> ItemSource<'a, N> {
    fn new(bodies: &'a [Body], meshes: &'a [Option<Triangles<'a>>], number: N) -> Self {
        let mut first = Vec::with_capacity(bodies.len() + 1);
        let mut count = 0;
        for mesh in meshes {
            first.push(count as u32);
            count += mesh.map_or(1, |(_, triangles)| triangles.len());
        }
        first.push(count as u32);
        ItemSource {
            bodies,
            meshes,
            number,
            first,
        }
    }

    /// How many items there are.
    fn count(&self) -> usize {
        self.first.last().map_or(0, |&n| n as usize)
    }

    /// The body of item `k`: `guess` when it holds it (items in leaf order mostly follow each other
    /// within a body), else found by bisection; `guess` is left at the answer.
    fn body_of(&self, k: u32, guess: &mut usize) -> u32 {
        let held = |b: usize| self.first[b] <= k && k < self.first[b + 1];
        if !held(*guess) {
            *guess = self.first.partition_point(|&f| f <= k) - 1;
        }
        *guess as u32
    }

    /// Item `k` (`guess`: see [`ItemSource::body_of`]).
    fn item(&self, k: u32, guess: &mut usize) -> RayItem {
        let index = self.body_of(k, guess);
        let body = &self.bodies[index as usize];
        match self.meshes[index as usize] {
            Some((vertices, triangles)) => {
                let t = k - self.first[index as usize];
                RayItem {
                    body: index,
                    triangle: (self.number)(body, t),
                    corners: corners(vertices, triangles[t as usize]),
                }
            }
            None => RayItem {
                body: index,
                triangle: PRIMITIVE,
                corners: primitive_corners(body),
            },
        }
    }

    /// Calls `each` on every item's corners, in item order (body by body, without look-ups).
    fn each_corners(&self, mut each: impl FnMut([DVec3; 3])) {
        for (body, mesh) in self.bodies.iter().zip(self.meshes) {
            match mesh {
                Some((vertices, triangles)) => {
                    for &triangle in *triangles {
                        each(corners(vertices, triangle));
                    }
                }
                None => each(primitive_corners(body)),
            }
        }
    }
}

/// A triangle's corners.
fn corners(vertices: &[DVec3], triangle: [u32; 3]) -> [DVec3; 3] {
    triangle.map(|v| vertices[v as usize])
}

/// What stands in for a primitive body's corners: its box.
fn primitive_corners(body: &Body) -> [DVec3; 3] {
    [body.aabb.mins, body.aabb.maxs, body.aabb.mins]
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::level::{Geometry, Level, LevelObject, Mesh, Primitive};
    use crate::query::{ProbeShape, World};
    use glam::DQuat;

    /// A level of a small mesh (a fan of triangles) and a box.
    fn fan_and_box() -> Level {
        let mut vertices = vec![DVec3::ZERO];
        vertices.extend((0..9).map(|k| {
            let a = k as f64 * 0.7;
            DVec3::new(a.cos() * 3.0, 0.1 * k as f64, a.sin() * 3.0)
        }));
        let triangles = (1..9).map(|k| [0, k, k + 1]).collect();
        Level {
            up: DVec3::Y,
            objects: vec![
                LevelObject {
                    name: "fan".into(),
                    tags: Vec::new(),
                    geometry: Geometry::Mesh(Mesh {
                        vertices,
                        triangles,
                        origin: Default::default(),
                    }),
                },
                LevelObject {
                    name: "crate".into(),
                    tags: Vec::new(),
                    geometry: Geometry::Primitive {
                        shape: Primitive::Box {
                            half_extents: DVec3::ONE,
                        },
                        translation: DVec3::new(5.0, 1.0, 0.0),
                        rotation: DQuat::IDENTITY,
                    },
                },
            ],
        }
    }

    /// The index's items as (body, triangle, corners), sorted.
    fn items_of(world: &World) -> Vec<(u32, u32, [[u64; 3]; 3])> {
        let mut items: Vec<_> = world
            .ray_index()
            .items
            .iter()
            .map(|i| {
                let corners = i.corners.map(|c| c.to_array().map(f64::to_bits));
                (i.body, i.triangle, corners)
            })
            .collect();
        items.sort();
        items
    }

    #[test]
    fn every_triangle_and_primitive_is_one_item_with_its_corners() {
        let level = fan_and_box();
        let world = World::new(&level).unwrap();
        let items = items_of(&world);
        let Geometry::Mesh(mesh) = &level.objects[0].geometry else {
            unreachable!()
        };
        // The plain way: every triangle of the mesh, numbered in order, then the box whole.
        let mut expected: Vec<_> = mesh
            .triangles
            .iter()
            .enumerate()
            .map(|(t, tri)| {
                let corners = tri.map(|v| mesh.vertices[v as usize].to_array().map(f64::to_bits));
                (0, t as u32, corners)
            })
            .collect();
        let boxed = world
            .ray_index()
            .items
            .iter()
            .find(|i| i.body == 1)
            .unwrap();
        assert_eq!(boxed.triangle(), None);
        expected.push((
            1,
            PRIMITIVE,
            boxed.corners.map(|c| c.to_array().map(f64::to_bits)),
        ));
        expected.sort();
        assert_eq!(items, expected);
    }

    #[test]
    fn each_item_is_found_in_its_body_whatever_the_guess() {
        // Bodies of 3, 1 (a primitive) and 5 items; against the plain way: counting through them.
        let vertices = [DVec3::ZERO; 3];
        let (three, five) = ([[0, 1, 2]; 3], [[0, 1, 2]; 5]);
        let meshes = [
            Some((&vertices[..], &three[..])),
            None,
            Some((&vertices[..], &five[..])),
        ];
        let source = ItemSource::new(&[], &meshes, |_: &Body, t: u32| t);
        assert_eq!(source.count(), 9);
        let plain = [0, 0, 0, 1, 2, 2, 2, 2, 2];
        for (k, &body) in plain.iter().enumerate() {
            for start in 0..3 {
                let mut guess = start;
                assert_eq!(
                    source.body_of(k as u32, &mut guess),
                    body,
                    "item {k} from {start}"
                );
                assert_eq!(guess, body as usize);
            }
        }
    }

    #[test]
    fn rays_and_sweeps_answered_together_agree_with_one_at_a_time() {
        // The first ray builds the index while sweeps on the other threads build the meshes it
        // reads (from a copy then): every answer as a fresh world gives it alone.
        let mut level = fan_and_box();
        let fan = level.objects[0].clone();
        for k in 1..24 {
            let mut copy = fan.clone();
            copy.name = format!("fan-{k}");
            if let Geometry::Mesh(mesh) = &mut copy.geometry {
                mesh.vertices
                    .iter_mut()
                    .for_each(|v| *v += DVec3::new(7.0 * k as f64, 0.0, 0.0));
            }
            level.objects.push(copy);
        }
        let ball = ProbeShape::new(
            &crate::level::ShapeSpec::Sphere { radius: 0.2 },
            DQuat::IDENTITY,
        )
        .unwrap();
        let answer = |world: &World, task: usize| -> Option<u64> {
            let x = 7.0 * (task % 24) as f64 + 0.5;
            let (from, to) = (DVec3::new(x, 3.0, 0.5), DVec3::new(x, -3.0, 0.5));
            let view = world.everything();
            let distance = if task.is_multiple_of(2) {
                view.ray_first(from, to).unwrap().map(|h| h.distance)
            } else {
                view.sweep_first(&ball, &[from, to])
                    .unwrap()
                    .map(|h| h.distance)
            };
            distance.map(f64::to_bits)
        };
        let expected: Vec<_> = (0..96)
            .map(|t| answer(&World::new(&level).unwrap(), t))
            .collect();
        assert!(expected.iter().all(Option::is_some));
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(4)
            .build()
            .unwrap();
        for _ in 0..5 {
            let world = World::new(&level).unwrap();
            let together: Vec<_> =
                pool.install(|| (0..96).into_par_iter().map(|t| answer(&world, t)).collect());
            assert_eq!(together, expected);
        }
    }

    #[test]
    fn a_mesh_built_before_the_index_gives_the_same_items() {
        let level = fan_and_box();
        let pending = World::new(&level).unwrap();
        let built = World::new(&level).unwrap();
        // A sweep builds the meshes it meets; rays never do.
        let ball = ProbeShape::new(
            &crate::level::ShapeSpec::Sphere { radius: 0.2 },
            DQuat::IDENTITY,
        )
        .unwrap();
        let path = [DVec3::new(0.5, 3.0, 0.5), DVec3::new(0.5, -3.0, 0.5)];
        assert!(
            built
                .everything()
                .sweep_first(&ball, &path)
                .unwrap()
                .is_some()
        );
        assert_eq!(items_of(&built), items_of(&pending));
        let in_leaf_order = |w: &World| -> Vec<(u32, u32)> {
            w.ray_index()
                .items
                .iter()
                .map(|i| (i.body, i.triangle))
                .collect()
        };
        assert_eq!(in_leaf_order(&built), in_leaf_order(&pending));
    }
}
