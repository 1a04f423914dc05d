//! Objects picked by tag and name, as rules and the level file's lint section select them.

use serde::{Deserialize, Serialize};

/// Objects picked by tag and name: those with any of `tags` (when given) whose names match the glob
/// `pattern` (when given).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Selection {
    /// Any of these tags.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub tags: Vec<String>,
    /// A glob over object names (`*` any run of characters, `?` one).
    #[serde(default, rename = "match", skip_serializing_if = "Option::is_none")]
    pub pattern: Option<String>,
}

impl Selection {
    /// The selection in words: `objects tagged spawn or marker named "spawn-*"`.
    pub fn describe(&self) -> String {
        let mut text = String::from("objects");
        if !self.tags.is_empty() {
            text.push_str(&format!(" tagged {}", self.tags.join(" or ")));
        }
        if let Some(p) = &self.pattern {
            text.push_str(&format!(" named \"{p}\""));
        }
        text
    }

    /// True when an object with this name and these tags is selected.
    pub fn picks(&self, name: &str, tags: &[String]) -> bool {
        (self.tags.is_empty() || tags.iter().any(|t| self.tags.contains(t)))
            && self
                .pattern
                .as_ref()
                .is_none_or(|p| super::glob_matches(p, name))
    }
}
