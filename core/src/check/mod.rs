//! Running a probe set: answers, verdicts, the results file, and comparison with a baseline.
//!
//! Architecture invariant: results depend only on the level, the probe set and the tolerance — never
//! on thread count, time or machine — so the results file is byte-identical for the same inputs.

mod answer;
mod answer_level;
mod compare;
mod expectation;
mod jump;
mod level_records;
mod level_verdict;
mod merge;
mod reach;
mod records;
mod results_file;
mod rules;
mod run;
mod settle;
mod shard;
mod verdict;
mod volumes;
mod walk;

pub use crate::input::text_digest;
pub use answer::{answer_probe, answer_probe_watched};
pub use answer_level::spot_list;
pub use compare::{Aspect, Comparer, Comparison, DEFAULT_TOLERANCE, ProbeChange, changes, compare};
pub use expectation::expectation_from;
pub use jump::{JumpRecord, trajectory};
pub use level_records::MAX_LISTED_POINTS;
pub use merge::merge;
pub use reach::{ReachRecord, TargetRecord};
pub use records::{
    ClearanceRecord, ClosestRecord, CoverageRecord, Hits, OverlapRecord, PairRecord, ProbeResult,
    RayHitRecord, RestRecord, SourceRecord, Summary, SweepHitRecord, Verdict,
};
pub use results_file::{
    PARTIAL_KIND, PartHead, ResultsFile, ResultsHead, ResultsWriter, entries_text, load_results,
    parse_results, probes_digest,
};
pub use rules::expand_rules;
pub use run::{Runner, Watcher, run_probes};
pub use settle::{SettleRecord, settle_ends};
pub use shard::{MAX_SHARDS, Shard, assign, expected_cost};
pub use verdict::metres;
pub use volumes::{VolumeCrossing, VolumeRecord};
pub use walk::WalkRecord;
