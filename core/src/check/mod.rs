//! Running a probe set: answers, verdicts, the results file, and comparison with a baseline.
//!
//! Architecture invariant: results depend only on the level, the probe set and the tolerance — never
//! on thread count, time or machine — so the results file is byte-identical for the same inputs.

mod answer;
mod compare;
mod expectation;
mod records;
mod results_file;
mod run;
mod verdict;

pub use answer::answer_probe;
pub use compare::{Aspect, Comparer, Comparison, DEFAULT_TOLERANCE, ProbeChange, changes, compare};
pub use expectation::expectation_from;
pub use records::{
    ClearanceRecord, ClosestRecord, Hits, OverlapRecord, ProbeResult, RayHitRecord, SourceRecord,
    Summary, SweepHitRecord, Verdict,
};
pub use results_file::{
    ResultsFile, ResultsHead, ResultsWriter, load_results, parse_results, probes_digest,
    text_digest,
};
pub use run::{Runner, run_probes};
pub use verdict::metres;
