//! Probe definitions, the probe-set file, and expectations (SPEC §2).
//!
//! Architecture invariant: a [`ProbeSet`] that leaves this module is valid — unique ids, known kinds,
//! only the fields each kind takes, finite numbers, usable shapes — and saving then loading it gives
//! the same value.

mod file;
mod model;

pub use file::{load_probe_set, parse_probe_set, probe_set_to_json, validate_probe};
pub use model::{
    Conditions, Expect, ExpectWord, HitsMode, Probe, ProbeKind, ProbeQuery, ProbeSet, Range,
};
