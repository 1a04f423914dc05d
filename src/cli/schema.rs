//! `plumbline schema KIND`: prints the JSON Schema (draft 2020-12) of one of the file formats, for
//! editors that check and complete files as they are typed.

use std::process::ExitCode;

use super::terminal::write_stdout;

/// The schemas, by the kind of file (`"plumbline"` in the file), as `schemas/` in the repository
/// holds them.
pub const SCHEMAS: [(&str, &str); 4] = [
    ("level", include_str!("../../schemas/level.schema.json")),
    ("probes", include_str!("../../schemas/probes.schema.json")),
    ("results", include_str!("../../schemas/results.schema.json")),
    (
        "partial-results",
        include_str!("../../schemas/partial-results.schema.json"),
    ),
];

/// Prints the schema of `kind` (one of [`SCHEMAS`]; the command line checks the name).
pub fn schema(kind: &str) -> Result<ExitCode, String> {
    let (_, text) = SCHEMAS
        .iter()
        .find(|(k, _)| *k == kind)
        .ok_or_else(|| format!("no schema for \"{kind}\""))?;
    write_stdout(text);
    Ok(ExitCode::SUCCESS)
}
