//! Reports for people and CI systems: JUnit XML, a Markdown summary and an HTML page, each written as the check
//! goes, probe by probe; and the same for lint findings.

mod html;
mod junit;
mod lint;
mod markdown;

pub use lint::{lint_json, lint_junit, lint_markdown};

pub use html::{HtmlWriter, MAX_QUIET_ROWS};
pub use junit::JunitWriter;
pub use markdown::MarkdownWriter;
