//! Splitting a check over machines: which probes one shard answers, balanced by what each probe is
//! expected to cost rather than by count, so that four shards of a set with one reach map and ten
//! thousand rays finish at about the same time.

use std::fmt;
use std::str::FromStr;

use glam::DVec3;

use super::answer_level::spot_list;
use crate::probe::{HitsMode, Probe, ProbeQuery, Region, Spots};
use crate::query::World;

/// One of `count` shards of a check: the `index`-th, counting from 1 (`--shard 2/4`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// Which shard, 1 to `count`.
    pub index: usize,
    /// How many shards the check is split into.
    pub count: usize,
}

/// The most shards a check may be split into. Ours: more than any CI matrix offers.
pub const MAX_SHARDS: usize = 1024;

impl FromStr for Shard {
    type Err = String;

    /// Reads `K/N`, 1 ≤ K ≤ N ≤ [`MAX_SHARDS`].
    fn from_str(text: &str) -> Result<Shard, String> {
        let bad = || {
            format!(
                "\"{text}\" is not a shard: write K/N, the K-th of N shards (1 ≤ K ≤ N ≤ {MAX_SHARDS})"
            )
        };
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let index: usize = k.trim().parse().map_err(|_| bad())?;
        let count: usize = n.trim().parse().map_err(|_| bad())?;
        if index == 0 || index > count || count > MAX_SHARDS {
            return Err(bad());
        }
        Ok(Shard { index, count })
    }
}

impl fmt::Display for Shard {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

/// What a probe is expected to cost to answer, in microseconds on one core of this project's
/// benchmark machine: rough figures from `check --timings` on the demo and the 1M-triangle level,
/// good to a factor of a few, which is all balancing needs. The order of kinds matters more than the
/// figures: a ray costs microseconds, a sweep tens, a walk hundreds, a reach map tenths of a second
/// and more.
pub fn expected_cost(probe: &Probe, world: &World) -> u64 {
    let up = world.up();
    let cost = match &probe.query {
        ProbeQuery::Ray { hits, .. } => match hits {
            Some(HitsMode::All) => 4.0,
            _ => 2.0,
        },
        ProbeQuery::Closest { .. } => 3.0,
        ProbeQuery::Overlap { .. } | ProbeQuery::Rest { .. } => 5.0,
        ProbeQuery::Sweep {
            path,
            clearance,
            turns,
            ..
        } => {
            let segments = path.len().saturating_sub(1) as f64;
            let clearance = if *clearance == Some(true) { 2.0 } else { 1.0 };
            let turning = if turns.is_some() { 4.0 } else { 1.0 };
            15.0 * segments * clearance * turning
        }
        ProbeQuery::Sightlines { spots } => {
            let n = spot_count(world, spots);
            2.0 * n * n
        }
        ProbeQuery::Coverage {
            spots,
            region,
            spacing,
            ..
        } => 2.0 * spot_count(world, spots) * cells(region, *spacing, up),
        ProbeQuery::Jump { .. } => 500.0,
        ProbeQuery::Walk { path, .. } => 200.0 * path.len().saturating_sub(1) as f64,
        ProbeQuery::Reach {
            region, spacing, ..
        } => 40.0 * cells(region, *spacing, up),
        ProbeQuery::Settle { max_time, .. } => {
            // About 200 µs a physics step at 60 steps a second, for the longest it may run.
            200.0 * 60.0 * max_time.unwrap_or(crate::probe::SETTLE_TIME)
        }
    };
    // At least 1, so that probes of no cost still spread; saturating on absurd regions.
    (cost.max(1.0)).min(u64::MAX as f64) as u64
}

/// How many spots a set of spots gives on this level.
fn spot_count(world: &World, spots: &Spots) -> f64 {
    spot_list(world, spots).len() as f64
}

/// How many grid cells a region's ground has at `spacing`, seen along `up`.
fn cells(region: &Region, spacing: f64, up: DVec3) -> f64 {
    let (_, i, j) = crate::query::level_axes(up);
    let side = |axis: usize| {
        ((region.max[axis] - region.min[axis]) / spacing)
            .abs()
            .ceil()
            + 1.0
    };
    let n = side(i) * side(j);
    if n.is_finite() { n } else { f64::MAX }
}

/// Which shard (0-based) answers each probe, given each probe's expected cost: the costliest probe
/// first, each to the shard with the least work so far (the longest-processing-time rule; Graham,
/// "Bounds on multiprocessing timing anomalies", SIAM J. Appl. Math. 17(2), 1969, which bounds the
/// longest shard by 4/3 of the best split). Ties go to the earlier probe and the lower shard, so the
/// split depends only on the probes.
pub fn assign(costs: &[u64], count: usize) -> Vec<u32> {
    let count = count.max(1);
    let mut order: Vec<usize> = (0..costs.len()).collect();
    order.sort_by(|&a, &b| costs[b].cmp(&costs[a]).then(a.cmp(&b)));
    let mut load = std::collections::BinaryHeap::new();
    for shard in 0..count {
        load.push(std::cmp::Reverse((0u128, shard)));
    }
    let mut shard_of = vec![0u32; costs.len()];
    for probe in order {
        let std::cmp::Reverse((work, shard)) = load.pop().expect("at least one shard");
        shard_of[probe] = shard as u32;
        load.push(std::cmp::Reverse((work + u128::from(costs[probe]), shard)));
    }
    shard_of
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_are_read_as_k_of_n() {
        assert_eq!("2/4".parse::<Shard>(), Ok(Shard { index: 2, count: 4 }));
        for bad in ["0/4", "5/4", "4", "a/b", "1/0", "1/5000", ""] {
            assert!(bad.parse::<Shard>().is_err(), "{bad}");
        }
    }

    #[test]
    fn one_costly_probe_gets_a_shard_of_its_own() {
        let mut costs = vec![1u64; 100];
        costs[40] = 1_000_000;
        let shard_of = assign(&costs, 4);
        let with_big: Vec<usize> = (0..100).filter(|&p| shard_of[p] == shard_of[40]).collect();
        assert_eq!(with_big, vec![40]);
        for shard in 0..4 {
            assert!(shard_of.contains(&shard));
        }
    }

    #[test]
    fn equal_probes_split_evenly() {
        let shard_of = assign(&[7; 10], 3);
        let counts: Vec<usize> = (0..3)
            .map(|s| shard_of.iter().filter(|&&x| x == s).count())
            .collect();
        assert_eq!(counts, vec![4, 3, 3]);
    }
}
