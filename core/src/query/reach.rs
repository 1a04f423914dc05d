//! Reach maps: which of a region's walkable ground a character can walk to from its start spots.
//!
//! The ground is found on a grid across the level's up axis (as coverage finds its surfaces, but at
//! the middle of each cell): at each grid point a segment straight down through the region meets the
//! surfaces there — the first, and
//! every other met from its front (a floor under a catwalk is a layer of its own). A surface is
//! walkable ground when its slope is within the limit and the character's shape fits standing on it.
//! Neighbouring cells (the four next grid points, any layer) are linked when a walk from one to the
//! other gets there ([`View::walk`], every movement an exact sweep); the reached cells are those linked
//! from a start, breadth first.

use std::collections::VecDeque;

use glam::DVec3;
use rayon::prelude::*;

use super::QueryError;
use super::coverage::level_axes;
use super::progress::Progress;
use super::shapes::ProbeShape;
use super::walk::{Gait, SKIN};
use super::world::View;

/// How far each sample is nudged off the cell's middle, metres: off every round number a level's
/// builder would use. Ours.
const OFF_GRID: f64 = 0.001_731;

/// One cell of walkable ground.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Cell {
    /// The ground point.
    pub ground: DVec3,
    /// Where the character's centre stands on it.
    pub centre: DVec3,
    /// Its grid column.
    pub column: (usize, usize),
}

/// What a character reaches.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    /// Every walkable cell, in grid order (then from the top down).
    pub cells: Vec<Cell>,
    /// For each cell, whether a start reaches it.
    pub reached: Vec<bool>,
    /// Ground points found too steep to stand on.
    pub steep: Vec<DVec3>,
}

impl Reach {
    /// The reached cell nearest to `point`, and its distance.
    pub fn nearest_reached(&self, point: DVec3) -> Option<(usize, f64)> {
        self.cells
            .iter()
            .zip(&self.reached)
            .enumerate()
            .filter(|(_, (_, reached))| **reached)
            .map(|(k, (c, _))| (k, c.centre.distance(point)))
            .min_by(|a, b| a.1.total_cmp(&b.1).then(a.0.cmp(&b.0)))
    }

    /// The cell a character standing at `point` is on: the nearest cell whose centre is within
    /// `spacing` across and half the character's `height` up or down.
    pub fn cell_at(&self, point: DVec3, up: DVec3, spacing: f64, height: f64) -> Option<usize> {
        self.cells
            .iter()
            .enumerate()
            .filter(|(_, c)| {
                let d = point - c.centre;
                let vertical = d.dot(up);
                (d - up * vertical).length() <= spacing && vertical.abs() <= height * 0.5
            })
            .min_by(|a, b| {
                let (da, db) = (a.1.centre.distance(point), b.1.centre.distance(point));
                da.total_cmp(&db).then(a.0.cmp(&b.0))
            })
            .map(|(k, _)| k)
    }
}

/// A unit direction across the level (perpendicular to `up`).
fn horizontal_axis(up: DVec3) -> DVec3 {
    let x = DVec3::X - up * up.x;
    x.try_normalize().unwrap_or(DVec3::Z)
}

impl View<'_> {
    /// True when a character whose lowest point is at `foot` stands on the surface at `ground`:
    /// nothing lies between them (a floor under a ramp has the ramp in between). The test runs a
    /// hair past the foot at both ends, so a surface the foot rests on exactly (a plate laid on the
    /// floor) counts as between, whichever side of it rounding puts the foot.
    fn stands_on(&self, ground: DVec3, foot: DVec3) -> Result<bool, QueryError> {
        let up = self.world.up();
        let start = ground + up * 1e-4;
        if (foot - start).dot(up) <= 1e-6 {
            return Ok(true);
        }
        Ok(self.ray_first(start, foot + up * 1e-4)?.is_none())
    }

    /// The walkable ground of the box `min`–`max` on a grid of `spacing`, and which of it the
    /// character (`shape`, with `gait`) walks to from `starts` (where its centre stands). Each grid
    /// column and each cell's links count a step of `progress`, which can also stop the work.
    pub fn reach(
        &self,
        shape: &ProbeShape,
        starts: &[DVec3],
        (min, max): (DVec3, DVec3),
        spacing: f64,
        gait: Gait,
        progress: &Progress,
    ) -> Result<Reach, QueryError> {
        if !(spacing.is_finite() && spacing > 0.0 && min.is_finite() && max.is_finite()) {
            return Err(QueryError::PositionNotFinite);
        }
        let up = self.world.up();
        let (vertical, i, j) = level_axes(up);
        // Cells of `spacing` across; each is sampled at its middle, nudged off round numbers (levels
        // are built on grids, and a segment down a grid line runs along walls and stair risers).
        let steps = |k: usize| (((max[k] - min[k]) / spacing).floor() as usize).max(1);
        let (ni, nj) = (steps(i), steps(j));
        // About as many cells as columns, until the columns are searched.
        progress.plan(2 * ni * nj);
        // Before the parallel work, so that its first rays do not each build the index.
        self.world.prepare_rays();
        let below = shape.extent_along(-up) + SKIN;
        let height = below + shape.extent_along(up);
        let cos_limit = gait.max_slope.to_radians().cos();
        // How far the shape reaches across the level from its centre.
        let across = shape.extent_along(horizontal_axis(up));
        // The ground in every column: where the character stands on each walkable point (with room
        // to stand), or nothing for ground too steep.
        type Column = Vec<(DVec3, Option<DVec3>)>;
        let columns: Vec<Column> = (0..ni * nj)
            .into_par_iter()
            .map(|cell| -> Result<Column, QueryError> {
                progress.step()?;
                let mut top = min;
                top[i] += ((cell / nj) as f64 + 0.5) * spacing + OFF_GRID;
                top[j] += ((cell % nj) as f64 + 0.5) * spacing + OFF_GRID;
                let mut bottom = top;
                top[vertical] = max[vertical];
                bottom[vertical] = min[vertical];
                if top == bottom {
                    return Ok(Vec::new());
                }
                let mut found = Vec::new();
                for (k, hit) in self.ray_all(top, bottom)?.iter().enumerate() {
                    if k > 0 && hit.back_face {
                        continue;
                    }
                    let facing = hit.normal.dot(up);
                    // A wall the segment runs down along is neither ground nor a slope.
                    if facing.abs() < 1e-9 {
                        continue;
                    }
                    if facing < cos_limit {
                        found.push((hit.point, None));
                        continue;
                    }
                    // Set down from a little above, as a character stands on a slope (higher than
                    // on the flat); no room when that place is taken.
                    let above = hit.point + up * (below + across);
                    if self.overlap(shape, above)?.is_empty()
                        && let Some((centre, _)) = self.ground_below(shape, above, 2.0 * across)?
                        && self.stands_on(hit.point, centre - up * below)?
                    {
                        found.push((hit.point, Some(centre)));
                    }
                }
                Ok(found)
            })
            .collect::<Result<_, _>>()?;
        let mut cells = Vec::new();
        let mut steep = Vec::new();
        let mut by_column: Vec<Vec<usize>> = vec![Vec::new(); ni * nj];
        for (c, column) in columns.iter().enumerate() {
            for &(ground, standing) in column {
                match standing {
                    Some(centre) => {
                        by_column[c].push(cells.len());
                        cells.push(Cell {
                            ground,
                            centre,
                            column: (c / nj, c % nj),
                        });
                    }
                    None => steep.push(ground),
                }
            }
        }
        progress.plan(ni * nj + cells.len());
        // Links to the cells of the four next columns that a walk gets to.
        let rise = gait.max_step + spacing * gait.max_slope.to_radians().tan().min(1e3);
        let links: Vec<Vec<usize>> = cells
            .par_iter()
            .map(|cell| -> Result<Vec<usize>, QueryError> {
                progress.step()?;
                let (ci, cj) = cell.column;
                let mut to = Vec::new();
                let next = [(1, 0), (-1, 0), (0, 1), (0, -1)];
                for (di, dj) in next {
                    let (Some(ti), Some(tj)) =
                        (ci.checked_add_signed(di), cj.checked_add_signed(dj))
                    else {
                        continue;
                    };
                    if ti >= ni || tj >= nj {
                        continue;
                    }
                    for &other in &by_column[ti * nj + tj] {
                        let target = cells[other].centre;
                        if (target - cell.centre).dot(up).abs() > rise {
                            continue;
                        }
                        let walked = self.walk(shape, &[cell.centre, target], gait)?;
                        if walked.stop.is_none() {
                            to.push(other);
                        }
                    }
                }
                Ok(to)
            })
            .collect::<Result<_, _>>()?;
        let mut reached = vec![false; cells.len()];
        let mut queue = VecDeque::new();
        let probe = Reach {
            cells,
            reached: Vec::new(),
            steep: Vec::new(),
        };
        for start in starts {
            if let Some(k) = probe.cell_at(*start, up, spacing, height)
                && !reached[k]
            {
                reached[k] = true;
                queue.push_back(k);
            }
        }
        while let Some(k) = queue.pop_front() {
            for &next in &links[k] {
                if !reached[next] {
                    reached[next] = true;
                    queue.push_back(next);
                }
            }
        }
        Ok(Reach {
            cells: probe.cells,
            reached,
            steep,
        })
    }
}
