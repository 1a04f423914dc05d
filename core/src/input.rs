//! Reading input files: every file the program reads for the user comes through [`read_input`].

use std::path::Path;

use crate::error::InputError;

/// Reads a whole input file; a missing or empty file is an error that names it.
pub fn read_input(path: &Path) -> Result<Vec<u8>, InputError> {
    let bytes = std::fs::read(path)
        .map_err(|e| InputError::file(path, format!("cannot read the file: {e}")))?;
    if bytes.iter().all(u8::is_ascii_whitespace) {
        return Err(InputError::file(path, "the file is empty"));
    }
    Ok(bytes)
}
