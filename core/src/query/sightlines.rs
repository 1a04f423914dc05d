//! Sightlines between spots: for every pair, whether the straight segment between them is clear.
//!
//! The end-point rule: a hit within [`END_GAP`] of either end does not block (a spot standing on a
//! surface, or an eye exactly at a wall, still sees), and a spot's own object never blocks its
//! sightlines. Both make the answer symmetric: `a` sees `b` exactly when `b` sees `a`.

use std::sync::Arc;

use glam::DVec3;

use super::QueryError;
use super::ray::RayHit;
use super::world::{ObjectId, View};

/// Hits this close to either end of a sightline do not block it, metres. Ours: a millimetre, the
/// finest a designer reads.
pub const END_GAP: f64 = 1e-3;

/// A spot that sees: a name, a point, and the object it stands for (for spots of tagged objects).
#[derive(Debug, Clone, PartialEq)]
pub struct SpotAt {
    /// The spot's name.
    pub name: Arc<str>,
    /// Its eye.
    pub at: DVec3,
    /// The object it stands on, which does not block its sightlines.
    pub object: Option<ObjectId>,
}

/// Whether two spots see each other.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sightline {
    /// The first spot (index into the spots).
    pub a: usize,
    /// The second spot.
    pub b: usize,
    /// What blocks the sightline from `a` towards `b`, if anything.
    pub blocker: Option<RayHit>,
}

impl View<'_> {
    /// The sightline between `from` and `to` under the end-point rule, looking past `own` objects:
    /// the first hit from `from`, or `None` when clear.
    pub fn sightline(
        &self,
        from: DVec3,
        to: DVec3,
        own: &[ObjectId],
    ) -> Result<Option<RayHit>, QueryError> {
        let length = from.distance(to);
        if length <= 2.0 * END_GAP {
            return Ok(None);
        }
        let dir = (to - from) / length;
        let view = self.without(own);
        let hit = view.ray_first(from + dir * END_GAP, to - dir * END_GAP)?;
        Ok(hit.map(|mut h| {
            h.distance += END_GAP;
            h.t = h.distance / length;
            h
        }))
    }

    /// Every pair of spots (`a < b`, in order), with what blocks it.
    pub fn sightlines(&self, spots: &[SpotAt]) -> Result<Vec<Sightline>, QueryError> {
        let mut pairs = Vec::with_capacity(spots.len() * spots.len().saturating_sub(1) / 2);
        for a in 0..spots.len() {
            for b in a + 1..spots.len() {
                let own: Vec<ObjectId> = [spots[a].object, spots[b].object]
                    .into_iter()
                    .flatten()
                    .collect();
                let blocker = self.sightline(spots[a].at, spots[b].at, &own)?;
                pairs.push(Sightline { a, b, blocker });
            }
        }
        Ok(pairs)
    }
}
