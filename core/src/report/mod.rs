//! Reports for people and CI systems: JUnit XML and a Markdown summary, each written as the check
//! goes, probe by probe.

mod junit;
mod markdown;

pub use junit::JunitWriter;
pub use markdown::MarkdownWriter;
