//! Watertight ray–triangle intersection (Woop, Benthin & Wald, "Watertight Ray/Triangle
//! Intersection", JCGT 2(1), 2013): a ray through a shared edge or vertex of a closed mesh always
//! hits at least one of the triangles that share it, because each edge function is computed from the
//! same two sheared vertices in both triangles and so changes sign exactly.

use glam::DVec3;

/// A ray prepared for many triangle tests: its origin, and the axis permutation and shear that make
/// its direction the +Z axis.
#[derive(Debug, Clone, Copy)]
pub struct ShearedRay {
    origin: DVec3,
    kx: usize,
    ky: usize,
    kz: usize,
    sx: f64,
    sy: f64,
    sz: f64,
}

impl ShearedRay {
    /// Prepares the ray `origin + t * dir`; `dir` must be non-zero (for distances in metres, a unit vector).
    pub fn new(origin: DVec3, dir: DVec3) -> ShearedRay {
        let kz = dir.abs().max_position();
        let mut kx = (kz + 1) % 3;
        let mut ky = (kx + 1) % 3;
        if dir[kz] < 0.0 {
            std::mem::swap(&mut kx, &mut ky);
        }
        ShearedRay {
            origin,
            kx,
            ky,
            kz,
            sx: dir[kx] / dir[kz],
            sy: dir[ky] / dir[kz],
            sz: 1.0 / dir[kz],
        }
    }

    /// The ray parameter `t` where it crosses triangle `abc` with `0 <= t <= t_max`, if it does.
    /// Hits on an edge or a vertex count for every triangle that has it.
    #[inline]
    pub fn intersect(&self, a: DVec3, b: DVec3, c: DVec3, t_max: f64) -> Option<f64> {
        let (a, b, c) = (a - self.origin, b - self.origin, c - self.origin);
        let (ax, ay) = (
            a[self.kx] - self.sx * a[self.kz],
            a[self.ky] - self.sy * a[self.kz],
        );
        let (bx, by) = (
            b[self.kx] - self.sx * b[self.kz],
            b[self.ky] - self.sy * b[self.kz],
        );
        let (cx, cy) = (
            c[self.kx] - self.sx * c[self.kz],
            c[self.ky] - self.sy * c[self.kz],
        );
        let u = cx * by - cy * bx;
        let v = ax * cy - ay * cx;
        let w = bx * ay - by * ax;
        if (u < 0.0 || v < 0.0 || w < 0.0) && (u > 0.0 || v > 0.0 || w > 0.0) {
            return None;
        }
        let det = u + v + w;
        if det == 0.0 {
            return None;
        }
        let (az, bz, cz) = (
            self.sz * a[self.kz],
            self.sz * b[self.kz],
            self.sz * c[self.kz],
        );
        let t_scaled = u * az + v * bz + w * cz;
        let t = t_scaled / det;
        (t >= 0.0 && t <= t_max).then_some(t)
    }
}
