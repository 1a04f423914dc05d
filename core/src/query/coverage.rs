//! Visibility coverage: which points of a region's surfaces some spot sees.
//!
//! The region is a box; its surfaces are sampled on a grid of the given spacing across the level's
//! up axis (along the two level axes most nearly level): at every grid point a segment straight down
//! through the box finds the surfaces there — the first one met, and every other one met from its
//! front (floors under a catwalk; undersides are crossed from behind). Each surface point, raised
//! [`SURFACE_LIFT`] above the surface, is seen when some spot's sightline to it is clear (the
//! end-point rule of [`super::sightlines`]). Every sightline is an exact ray; the answer depends on
//! the spacing only through which points are asked about.

use glam::DVec3;
use rayon::prelude::*;

use super::QueryError;
use super::sightlines::SpotAt;
use super::world::View;

/// How far above a surface its sample point is, metres: the ground a designer means, not the
/// surface's exact plane (which grazing sightlines would hit). Ours.
pub const SURFACE_LIFT: f64 = 0.02;

/// A sample point of a region and whether some spot sees it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sample {
    /// The point, just above the surface.
    pub at: DVec3,
    /// True when some spot sees it.
    pub seen: bool,
}

impl View<'_> {
    /// The surface points of the box `min`–`max` on a grid of `spacing` metres (only the grid
    /// points inside `outline`, seen along the up axis, when one is given), each with whether a
    /// spot sees it; in grid order (deterministic whatever the thread count).
    pub fn coverage(
        &self,
        spots: &[SpotAt],
        (min, max): (DVec3, DVec3),
        outline: Option<&[DVec3]>,
        spacing: f64,
    ) -> Result<Vec<Sample>, QueryError> {
        if !(spacing.is_finite() && spacing > 0.0 && min.is_finite() && max.is_finite()) {
            return Err(QueryError::PositionNotFinite);
        }
        let (vertical, i, j) = level_axes(self.world.up());
        let steps = |k: usize| ((max[k] - min[k]) / spacing).floor() as usize + 1;
        let (ni, nj) = (steps(i), steps(j));
        // Before the parallel work, so that its first rays do not each build the index.
        self.world.prepare_rays();
        let columns: Vec<Vec<DVec3>> = (0..ni * nj)
            .into_par_iter()
            .map(|cell| {
                let mut top = min;
                top[i] += (cell / nj) as f64 * spacing;
                top[j] += (cell % nj) as f64 * spacing;
                if let Some(outline) = outline
                    && !inside(outline, (top[i], top[j]), (i, j))
                {
                    return Ok(Vec::new());
                }
                let mut bottom = top;
                top[vertical] = max[vertical];
                bottom[vertical] = min[vertical];
                self.surfaces_below(top, bottom)
            })
            .collect::<Result<_, _>>()?;
        let points: Vec<DVec3> = columns.into_iter().flatten().collect();
        points
            .par_iter()
            .map(|&at| -> Result<Sample, QueryError> {
                for spot in spots {
                    let own: Vec<_> = spot.object.into_iter().collect();
                    if self.sightline(spot.at, at, &own)?.is_none() {
                        return Ok(Sample { at, seen: true });
                    }
                }
                Ok(Sample { at, seen: false })
            })
            .collect()
    }

    /// The surface points straight down from `top` to `bottom`: the first surface, then every one
    /// met from its front; each raised by [`SURFACE_LIFT`].
    fn surfaces_below(&self, top: DVec3, bottom: DVec3) -> Result<Vec<DVec3>, QueryError> {
        if top == bottom {
            return Ok(Vec::new());
        }
        let up = (top - bottom).normalize();
        let hits = self.ray_all(top, bottom)?;
        Ok(hits
            .iter()
            .enumerate()
            .filter(|(k, h)| *k == 0 || !h.back_face)
            .map(|(_, h)| h.point + up * SURFACE_LIFT)
            .collect())
    }
}

/// The level axis closest to `up` (the vertical), then the two that span the level's ground.
pub(crate) fn level_axes(up: DVec3) -> (usize, usize, usize) {
    let axes = [DVec3::X, DVec3::Y, DVec3::Z];
    let vertical = (0..3)
        .max_by(|&i, &j| up.dot(axes[i]).abs().total_cmp(&up.dot(axes[j]).abs()))
        .expect("three axes");
    (vertical, (vertical + 1) % 3, (vertical + 2) % 3)
}

/// True when `(u, v)` lies inside the polygon `outline` on the axes `(i, j)`: the crossing-number
/// (even–odd) test (Haines, "Point in Polygon Strategies", Graphics Gems IV, 1994).
pub(crate) fn inside(outline: &[DVec3], (u, v): (f64, f64), (i, j): (usize, usize)) -> bool {
    let mut crossing = false;
    for k in 0..outline.len() {
        let (a, b) = (outline[k], outline[(k + 1) % outline.len()]);
        if (a[j] > v) != (b[j] > v) {
            let at = a[i] + (v - a[j]) / (b[j] - a[j]) * (b[i] - a[i]);
            if u < at {
                crossing = !crossing;
            }
        }
    }
    crossing
}
