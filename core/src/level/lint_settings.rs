//! The level file's `lint` section: which objects lint holds to stricter checks, and the findings
//! the level's authors have accepted (so that a clean level stays clean).
//!
//! ```json
//! "lint": {
//!   "closed": { "tags": ["rock"] },
//!   "props": { "tags": ["prop"] },
//!   "allow": [ { "finding": "overlap", "objects": ["yard/tree-*", "yard/terrain"],
//!                "why": "trunks are planted 30 cm into the ground" } ]
//! }
//! ```

use std::path::Path;

use serde::Deserialize;

use super::Selection;
use super::glob::glob_matches;
use crate::error::InputError;
use crate::input::check_name;
use crate::lint::FindingKind;

/// What the level file says to lint.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LintSettings {
    /// Meshes that must be closed (no open or non-manifold edges).
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub closed: Option<Selection>,
    /// Objects that must rest on the level (default: those tagged `prop`).
    #[serde(default, deserialize_with = "crate::json_object::optional_object")]
    pub props: Option<Selection>,
    /// Findings accepted as they are.
    #[serde(default, deserialize_with = "crate::json_object::objects")]
    pub allow: Vec<Allowance>,
}

/// A finding accepted: of this kind (any, when not given), about objects that each match one of
/// these globs.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Allowance {
    /// The finding's kind word (`overlap`, `narrow-gap`, …).
    #[serde(default)]
    pub finding: Option<String>,
    /// Globs over object names; every object of the finding must match one.
    pub objects: Vec<String>,
    /// Why it is accepted, for whoever reads the level next.
    #[serde(default)]
    pub why: Option<String>,
}

impl LintSettings {
    /// Checks names and finding words; `path` is named in errors.
    pub(super) fn check(&self, path: &Path) -> Result<(), InputError> {
        for (k, allow) in self.allow.iter().enumerate() {
            let place = format!("lint.allow[{k}]");
            let fail = |m: String| InputError::at(path, place.clone(), m);
            if let Some(word) = &allow.finding
                && FindingKind::from_word(word).is_none()
            {
                return Err(fail(format!(
                    "\"{}\" is not a kind of finding (one of {})",
                    crate::input::one_line(word),
                    FindingKind::ALL.map(FindingKind::word).join(", ")
                )));
            }
            if allow.objects.is_empty() {
                return Err(fail("\"objects\" needs at least one name or glob".into()));
            }
            for glob in &allow.objects {
                check_name("an object glob", glob).map_err(fail)?;
            }
        }
        for selection in [&self.closed, &self.props].into_iter().flatten() {
            for tag in &selection.tags {
                check_name("a tag", tag).map_err(|m| InputError::at(path, "lint", m))?;
            }
        }
        Ok(())
    }

    /// The accepted finding that covers a finding of `kind` about `objects`, if any.
    pub fn allowance(&self, kind: FindingKind, objects: &[&str]) -> Option<&Allowance> {
        self.allow.iter().find(|a| {
            a.finding
                .as_deref()
                .is_none_or(|w| FindingKind::from_word(w) == Some(kind))
                && objects
                    .iter()
                    .all(|o| a.objects.iter().any(|g| glob_matches(g, o)))
        })
    }
}
