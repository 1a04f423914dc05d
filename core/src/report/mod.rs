//! Reports for people and CI systems: JUnit XML and a Markdown summary, each written as the check
//! goes, probe by probe; and the same for lint findings.

mod junit;
mod lint;
mod markdown;

pub use lint::{lint_json, lint_junit, lint_markdown};

pub use junit::JunitWriter;
pub use markdown::MarkdownWriter;
