//! Probe definitions, the probe-set file, and expectations (SPEC §2).
//!
//! Architecture invariant: a [`ProbeSet`] that leaves this module is valid — unique ids, known
//! kinds, only the fields each kind takes, finite numbers, usable shapes — and saving then loading
//! it gives the same value. A [`ProbeText`] has unique ids, and every probe taken from it is
//! checked as it is parsed.

mod model;
mod parse;
mod plain_read;
mod rules;
mod text;
mod write;

pub use model::{
    Conditions, EYE_HEIGHT, Expect, ExpectWord, HitsMode, JUMP_TIME, Launch, MAX_SETTLE_TIME,
    MAX_STEP, MAX_WALKABLE_SLOPE, Probe, ProbeId, ProbeKind, ProbeQuery, ProbeSet, REST_SEARCH,
    Range, Region, SETTLE_DENSITY, SETTLE_FRICTION, SETTLE_TIME, STANDARD_GRAVITY, Spot, Spots,
    TARGET_REACH, Turns,
};
pub use rules::{Anchor, FromRule, Landmark, REST_TOLERANCE, Rule, Template, parse_rules};
pub use text::{CHECKED_WHOLE, CHUNK, ProbeText, load_probe_set, parse_probe_set, validate_probe};
pub use write::{probe_set_to_json, rules_to_json};
