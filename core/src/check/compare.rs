//! What changed between two runs of a probe set: verdicts, blocked/clear, first object, distances
//! that moved by more than a tolerance, sightlines gained or lost, coverage that moved, and the
//! ground and targets a reach map reaches, and the volumes a probe enters.

use std::collections::HashMap;
use std::fmt;

use super::reach::ReachRecord;
use super::records::{Hits, PairRecord, ProbeResult, Verdict};
use super::results_file::ResultsFile;
use super::verdict::metres;
use crate::probe::ProbeKind;

/// The default tolerance for distance changes, metres (SPEC §4).
pub const DEFAULT_TOLERANCE: f64 = 0.01;

/// How far a coverage share must move to count as a change: a tenth of a percentage point, the
/// precision reports show it at (ours).
pub const SHARE_TOLERANCE: f64 = 0.001;

/// Two spots by name.
pub type SpotPair = (String, String);

/// One aspect of a probe's answer that changed.
#[derive(Debug, Clone, PartialEq)]
pub enum Aspect {
    /// The verdict changed.
    Verdict(Verdict, Verdict),
    /// It became blocked (true) or clear (false).
    Blocked(bool, bool),
    /// The first object hit (nearest, deepest) changed.
    FirstObject(Option<String>, Option<String>),
    /// The first hit's distance (or depth) moved.
    Distance(f64, f64),
    /// A sweep's least clearance moved.
    Clearance(f64, f64),
    /// Pairs of spots that stopped seeing each other (`lost`) or started to (`gained`).
    Sightlines {
        /// Pairs that no longer see each other.
        lost: Vec<SpotPair>,
        /// Pairs that now see each other.
        gained: Vec<SpotPair>,
    },
    /// The share of a region the spots see moved (0 to 1).
    Coverage(f64, f64),
    /// The ground a reach map reaches changed, square metres.
    Reached(f64, f64),
    /// Volumes the probe is now in at some point of its way (`entered`) or no longer (`left`).
    Volumes {
        /// Volumes now met.
        entered: Vec<String>,
        /// Volumes no longer met.
        left: Vec<String>,
    },
    /// Targets of a reach map that stopped being reached (`lost`) or started to be (`gained`).
    Targets {
        /// Targets no longer reached.
        lost: Vec<String>,
        /// Targets now reached.
        gained: Vec<String>,
    },
}

impl fmt::Display for Aspect {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let state = |b: bool| if b { "blocked" } else { "clear" };
        let name = |n: &Option<String>| n.clone().unwrap_or_else(|| "nothing".into());
        match self {
            Aspect::Verdict(a, b) => write!(f, "verdict {} -> {}", a.word(), b.word()),
            Aspect::Blocked(a, b) => write!(f, "{} -> {}", state(*a), state(*b)),
            Aspect::FirstObject(a, b) => write!(f, "first object {} -> {}", name(a), name(b)),
            Aspect::Distance(a, b) => write!(
                f,
                "distance {} -> {} ({:+.3} m)",
                metres(*a),
                metres(*b),
                b - a
            ),
            Aspect::Clearance(a, b) => write!(
                f,
                "clearance {} -> {} ({:+.3} m)",
                metres(*a),
                metres(*b),
                b - a
            ),
            Aspect::Sightlines { lost, gained } => {
                let pairs = |list: &[SpotPair]| {
                    list.iter()
                        .map(|(a, b)| format!("{a}-{b}"))
                        .collect::<Vec<_>>()
                };
                two_lists(
                    f,
                    ("sightlines lost:", &pairs(lost)),
                    ("sightlines gained:", &pairs(gained)),
                )
            }
            Aspect::Targets { lost, gained } => {
                two_lists(f, ("targets lost:", lost), ("targets gained:", gained))
            }
            Aspect::Volumes { entered, left } => {
                two_lists(f, ("now enters", entered), ("no longer enters", left))
            }
            Aspect::Reached(a, b) => write!(f, "reached {a:.0} m² -> {b:.0} m² ({:+.0} m²)", b - a),
            Aspect::Coverage(a, b) => write!(
                f,
                "coverage {:.1}% -> {:.1}% ({:+.1} points)",
                a * 100.0,
                b * 100.0,
                (b - a) * 100.0
            ),
        }
    }
}

/// Two lists, each after its words ("targets lost: a, b; targets gained: c"), each only when it
/// lists something.
fn two_lists(
    f: &mut fmt::Formatter<'_>,
    first: (&str, &[String]),
    second: (&str, &[String]),
) -> fmt::Result {
    let parts: Vec<String> = [first, second]
        .into_iter()
        .filter(|(_, list)| !list.is_empty())
        .map(|(words, list)| format!("{words} {}", list.join(", ")))
        .collect();
    write!(f, "{}", parts.join("; "))
}

/// A probe whose answer changed.
#[derive(Debug, Clone, PartialEq)]
pub struct ProbeChange {
    /// The probe's id.
    pub id: String,
    /// What changed, in a fixed order (verdict first).
    pub aspects: Vec<Aspect>,
}

/// Everything that changed between an old and a new run.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Comparison {
    /// Probes in both runs whose answers changed, in the new run's order.
    pub changed: Vec<ProbeChange>,
    /// Probes only in the new run.
    pub added: Vec<String>,
    /// Probes only in the old run.
    pub removed: Vec<String>,
    /// True when the two runs were computed on different level geometry.
    pub level_differs: bool,
}

impl Comparison {
    /// True when nothing changed (a different level alone is not a change in answers).
    pub fn is_empty(&self) -> bool {
        self.changed.is_empty() && self.added.is_empty() && self.removed.is_empty()
    }

    /// Number of probes changed, added or removed.
    pub fn count(&self) -> usize {
        self.changed.len() + self.added.len() + self.removed.len()
    }
}

/// Compares two runs; distances must move by more than `tolerance` metres to count.
pub fn compare(old: &ResultsFile, new: &ResultsFile, tolerance: f64) -> Comparison {
    let mut comparer = Comparer::new(old, &new.level_digest, tolerance);
    for result in &new.results {
        comparer.observe(result);
    }
    comparer.finish()
}

/// Compares a run with an earlier one as its results come, in the new run's order.
pub struct Comparer<'a> {
    old: &'a ResultsFile,
    by_id: HashMap<&'a str, usize>,
    seen: Vec<bool>,
    tolerance: f64,
    comparison: Comparison,
}

impl<'a> Comparer<'a> {
    /// A comparison with `old`, for a new run on the level whose digest is `level_digest`.
    pub fn new(old: &'a ResultsFile, level_digest: &str, tolerance: f64) -> Comparer<'a> {
        Comparer {
            by_id: old
                .results
                .iter()
                .enumerate()
                .map(|(k, r)| (&*r.id, k))
                .collect(),
            seen: vec![false; old.results.len()],
            old,
            tolerance,
            comparison: Comparison {
                level_differs: old.level_digest != level_digest,
                ..Comparison::default()
            },
        }
    }

    /// Takes in the next result of the new run; true when it changed (or is new).
    pub fn observe(&mut self, new: &ProbeResult) -> bool {
        match self.by_id.get(&*new.id) {
            Some(&k) => {
                self.seen[k] = true;
                let aspects = changes(&self.old.results[k], new, self.tolerance);
                if aspects.is_empty() {
                    return false;
                }
                self.comparison.changed.push(ProbeChange {
                    id: new.id.to_string(),
                    aspects,
                });
            }
            None => self.comparison.added.push(new.id.to_string()),
        }
        true
    }

    /// What changed: the probes of the old run never seen are the removed ones.
    pub fn finish(mut self) -> Comparison {
        self.comparison.removed = self
            .old
            .results
            .iter()
            .zip(&self.seen)
            .filter(|(_, seen)| !**seen)
            .map(|(r, _)| r.id.to_string())
            .collect();
        self.comparison
    }
}

/// The aspects of one probe's answer that changed.
pub fn changes(old: &ProbeResult, new: &ProbeResult, tolerance: f64) -> Vec<Aspect> {
    let mut aspects = Vec::new();
    if old.verdict != new.verdict {
        aspects.push(Aspect::Verdict(old.verdict, new.verdict));
    }
    let (was_in, now_in) = (old.volumes_met(), new.volumes_met());
    let entered: Vec<String> = now_in
        .iter()
        .filter(|v| !was_in.contains(v))
        .cloned()
        .collect();
    let left: Vec<String> = was_in
        .iter()
        .filter(|v| !now_in.contains(v))
        .cloned()
        .collect();
    if !entered.is_empty() || !left.is_empty() {
        aspects.push(Aspect::Volumes { entered, left });
    }
    match (&old.hits, &new.hits) {
        (Hits::Sightlines(a), Hits::Sightlines(b)) => {
            let (lost, gained) = sightline_changes(a, b);
            if !lost.is_empty() || !gained.is_empty() {
                aspects.push(Aspect::Sightlines { lost, gained });
            }
            return aspects;
        }
        (Hits::Coverage(a), Hits::Coverage(b)) => {
            let share = |c: &[super::records::CoverageRecord]| c.first().map(|c| c.share);
            if let (Some(a), Some(b)) = (share(a), share(b))
                && (a - b).abs() > SHARE_TOLERANCE
            {
                aspects.push(Aspect::Coverage(a, b));
            }
            return aspects;
        }
        (Hits::Reach(a), Hits::Reach(b)) => {
            if let (Some(a), Some(b)) = (a.first(), b.first()) {
                if a.reached != b.reached {
                    aspects.push(Aspect::Reached(a.area_reached, b.area_reached));
                }
                let (lost, gained) = target_changes(a, b);
                if !lost.is_empty() || !gained.is_empty() {
                    aspects.push(Aspect::Targets { lost, gained });
                }
            }
            return aspects;
        }
        _ => {}
    }
    let (was, is) = (!old.hits.is_empty(), !new.hits.is_empty());
    // A rest probe with nothing under it shows as its support becoming nothing.
    if was != is && new.kind != ProbeKind::Rest {
        aspects.push(Aspect::Blocked(was, is));
    }
    let first_object = |r: &ProbeResult| r.hits.first().map(|(o, _, _)| o.to_string());
    if first_object(old) != first_object(new) {
        aspects.push(Aspect::FirstObject(first_object(old), first_object(new)));
    }
    if let (Some((_, _, a)), Some((_, _, b))) = (old.hits.first(), new.hits.first())
        && (a - b).abs() > tolerance
    {
        aspects.push(Aspect::Distance(a, b));
    }
    if let (Some(a), Some(b)) = (&old.clearance, &new.clearance)
        && (a.distance - b.distance).abs() > tolerance
    {
        aspects.push(Aspect::Clearance(a.distance, b.distance));
    }
    aspects
}

/// The targets that stopped and started being reached, in the new run's order (targets in only one
/// run are not compared).
fn target_changes(old: &ReachRecord, new: &ReachRecord) -> (Vec<String>, Vec<String>) {
    let before: HashMap<&str, bool> = old
        .targets
        .iter()
        .map(|t| (&*t.name, t.reachable))
        .collect();
    let (mut lost, mut gained) = (Vec::new(), Vec::new());
    for target in &new.targets {
        match before.get(&*target.name) {
            Some(true) if !target.reachable => lost.push(target.name.to_string()),
            Some(false) if target.reachable => gained.push(target.name.to_string()),
            _ => {}
        }
    }
    (lost, gained)
}

/// The pairs of spots that stopped and started seeing each other, in the new run's order (pairs in
/// only one run are not compared: a spot added or removed changes the probe, not its sightlines).
fn sightline_changes(old: &[PairRecord], new: &[PairRecord]) -> (Vec<SpotPair>, Vec<SpotPair>) {
    let before: HashMap<(&str, &str), bool> =
        old.iter().map(|p| ((&*p.a, &*p.b), p.sees)).collect();
    let (mut lost, mut gained) = (Vec::new(), Vec::new());
    for pair in new {
        match before.get(&(&*pair.a, &*pair.b)) {
            Some(true) if !pair.sees => lost.push((pair.a.to_string(), pair.b.to_string())),
            Some(false) if pair.sees => gained.push((pair.a.to_string(), pair.b.to_string())),
            _ => {}
        }
    }
    (lost, gained)
}
