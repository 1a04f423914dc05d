//! Mesh building blocks for generated levels: boxes, prisms, rounded canopies and height grids, all
//! closed and wound counter-clockwise seen from outside.

use glam::{DQuat, DVec3};

use crate::level::Mesh;

/// A mesh being assembled from parts.
#[derive(Debug, Clone, Default)]
pub struct MeshBuilder {
    mesh: Mesh,
}

impl MeshBuilder {
    /// An empty mesh.
    pub fn new() -> Self {
        Self::default()
    }

    /// The finished mesh.
    pub fn finish(self) -> Mesh {
        self.mesh
    }

    /// Number of triangles so far.
    pub fn triangle_count(&self) -> usize {
        self.mesh.triangles.len()
    }

    fn push_vertex(&mut self, v: DVec3) -> u32 {
        self.mesh.vertices.push(v);
        (self.mesh.vertices.len() - 1) as u32
    }

    /// An axis-aligned box from `min` to `max`.
    pub fn cuboid(&mut self, min: DVec3, max: DVec3) -> &mut Self {
        self.turned_box((min + max) * 0.5, (max - min) * 0.5, DQuat::IDENTITY)
    }

    /// A box centred at `c` with half extents `h`, turned by `rotation`.
    pub fn turned_box(&mut self, c: DVec3, h: DVec3, rotation: DQuat) -> &mut Self {
        let base = self.mesh.vertices.len() as u32;
        for i in 0..8 {
            let s = DVec3::new(
                if i & 1 == 0 { -1.0 } else { 1.0 },
                if i & 2 == 0 { -1.0 } else { 1.0 },
                if i & 4 == 0 { -1.0 } else { 1.0 },
            );
            self.push_vertex(c + rotation * (s * h));
        }
        let quads = [
            [0, 2, 3, 1],
            [4, 5, 7, 6],
            [0, 1, 5, 4],
            [2, 6, 7, 3],
            [0, 4, 6, 2],
            [1, 3, 7, 5],
        ];
        for q in quads {
            self.mesh
                .triangles
                .push([base + q[0], base + q[1], base + q[2]]);
            self.mesh
                .triangles
                .push([base + q[0], base + q[2], base + q[3]]);
        }
        self
    }

    /// An upright prism with `sides` faces (a trunk or a post), from `bottom` up by `height`.
    pub fn prism(&mut self, bottom: DVec3, radius: f64, height: f64, sides: u32) -> &mut Self {
        let base = self.mesh.vertices.len() as u32;
        for k in 0..sides {
            let a = std::f64::consts::TAU * k as f64 / sides as f64;
            let offset = DVec3::new(a.cos() * radius, 0.0, -a.sin() * radius);
            self.push_vertex(bottom + offset);
            self.push_vertex(bottom + offset + DVec3::Y * height);
        }
        let bottom_centre = self.push_vertex(bottom);
        let top_centre = self.push_vertex(bottom + DVec3::Y * height);
        for k in 0..sides {
            let (b0, t0) = (base + 2 * k, base + 2 * k + 1);
            let next = (k + 1) % sides;
            let (b1, t1) = (base + 2 * next, base + 2 * next + 1);
            self.mesh.triangles.push([b0, b1, t1]);
            self.mesh.triangles.push([b0, t1, t0]);
            self.mesh.triangles.push([bottom_centre, b1, b0]);
            self.mesh.triangles.push([top_centre, t0, t1]);
        }
        self
    }

    /// A closed solid of a convex `profile` (points (z, y), in order around it) carried along x from
    /// `x0` to `x1`: a bank or a ridge. Every face is wound to face away from the solid's middle.
    pub fn ridge(&mut self, x0: f64, x1: f64, profile: &[(f64, f64)]) -> &mut Self {
        let base = self.mesh.vertices.len() as u32;
        let n = profile.len() as u32;
        for x in [x0, x1] {
            for &(z, y) in profile {
                self.push_vertex(DVec3::new(x, y, z));
            }
        }
        let middle = self.mesh.vertices[base as usize..]
            .iter()
            .fold(DVec3::ZERO, |sum, v| sum + *v)
            / (2 * n) as f64;
        let mut faces = Vec::new();
        for k in 0..n {
            let next = (k + 1) % n;
            faces.push([k, next, n + next]);
            faces.push([k, n + next, n + k]);
        }
        for k in 1..n - 1 {
            faces.push([0, k, k + 1]);
            faces.push([n, n + k, n + k + 1]);
        }
        for face in faces {
            let [a, b, c] = face.map(|i| self.mesh.vertices[(base + i) as usize]);
            let outward = (b - a).cross(c - a).dot(a - middle) > 0.0;
            let [i, j, k] = face.map(|i| base + i);
            self.mesh
                .triangles
                .push(if outward { [i, j, k] } else { [i, k, j] });
        }
        self
    }

    /// A rounded blob (an icosphere subdivided `levels` times) scaled per axis: canopies and bushes.
    pub fn blob(&mut self, centre: DVec3, radii: DVec3, levels: u32) -> &mut Self {
        let (unit, triangles) = icosphere(levels);
        let base = self.mesh.vertices.len() as u32;
        for v in unit {
            self.push_vertex(centre + v * radii);
        }
        self.mesh
            .triangles
            .extend(triangles.iter().map(|t| t.map(|i| i + base)));
        self
    }

    /// A height grid of `columns x rows` cells over `[x0, x1] x [z0, z1]`, height from `height(x, z)`;
    /// open (a surface, not a solid), facing up.
    pub fn height_grid(
        &mut self,
        (x0, x1, columns): (f64, f64, usize),
        (z0, z1, rows): (f64, f64, usize),
        height: &dyn Fn(f64, f64) -> f64,
    ) -> &mut Self {
        let base = self.mesh.vertices.len() as u32;
        for i in 0..=rows {
            for j in 0..=columns {
                let x = x0 + (x1 - x0) * j as f64 / columns as f64;
                let z = z0 + (z1 - z0) * i as f64 / rows as f64;
                self.push_vertex(DVec3::new(x, height(x, z), z));
            }
        }
        let at = |i: usize, j: usize| base + (i * (columns + 1) + j) as u32;
        for i in 0..rows {
            for j in 0..columns {
                self.mesh
                    .triangles
                    .push([at(i, j), at(i + 1, j), at(i, j + 1)]);
                self.mesh
                    .triangles
                    .push([at(i, j + 1), at(i + 1, j), at(i + 1, j + 1)]);
            }
        }
        self
    }
}

/// A unit icosphere: the icosahedron subdivided `levels` times, vertices on the unit sphere.
fn icosphere(levels: u32) -> (Vec<DVec3>, Vec<[u32; 3]>) {
    let p = (1.0 + 5f64.sqrt()) / 2.0;
    let corners = [
        [-1.0, p, 0.0],
        [1.0, p, 0.0],
        [-1.0, -p, 0.0],
        [1.0, -p, 0.0],
        [0.0, -1.0, p],
        [0.0, 1.0, p],
        [0.0, -1.0, -p],
        [0.0, 1.0, -p],
        [p, 0.0, -1.0],
        [p, 0.0, 1.0],
        [-p, 0.0, -1.0],
        [-p, 0.0, 1.0],
    ];
    let mut v: Vec<DVec3> = corners
        .iter()
        .map(|a| DVec3::from_array(*a).normalize())
        .collect();
    let mut t: Vec<[u32; 3]> = vec![
        [0, 11, 5],
        [0, 5, 1],
        [0, 1, 7],
        [0, 7, 10],
        [0, 10, 11],
        [1, 5, 9],
        [5, 11, 4],
        [11, 10, 2],
        [10, 7, 6],
        [7, 1, 8],
        [3, 9, 4],
        [3, 4, 2],
        [3, 2, 6],
        [3, 6, 8],
        [3, 8, 9],
        [4, 9, 5],
        [2, 4, 11],
        [6, 2, 10],
        [8, 6, 7],
        [9, 8, 1],
    ];
    for _ in 0..levels {
        let mut mid = std::collections::BTreeMap::new();
        let mut next = Vec::with_capacity(t.len() * 4);
        for [a, b, c] in t {
            let mut midpoint = |x: u32, y: u32| -> u32 {
                *mid.entry((x.min(y), x.max(y))).or_insert_with(|| {
                    v.push(((v[x as usize] + v[y as usize]) * 0.5).normalize());
                    (v.len() - 1) as u32
                })
            };
            let (ab, bc, ca) = (midpoint(a, b), midpoint(b, c), midpoint(c, a));
            next.extend([[a, ab, ca], [b, bc, ab], [c, ca, bc], [ab, bc, ca]]);
        }
        t = next;
    }
    (v, t)
}
