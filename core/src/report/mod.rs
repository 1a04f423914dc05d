//! Reports of a run for other tools and people: JUnit XML for CI systems, Markdown for code review.

mod junit;
mod markdown;

pub use junit::junit_xml;
pub use markdown::markdown_summary;
