//! Writing user files safely: a temporary file in the same folder, flushed to disk, renamed over the
//! target, and the folder flushed; a replaced file can keep its previous version as `<name>.bak`.

use std::fs::{self, File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Writes `bytes` to `path` atomically: readers see the old file or the new one, never a mix.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "no file name"))?;
    let temp = folder.join(format!(
        ".{}.{}.tmp",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| {
        let mut file = OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&temp)?;
        file.write_all(bytes)?;
        file.sync_all()?;
        fs::rename(&temp, path)?;
        // Make the rename itself durable (not possible on every platform; harmless where not).
        if let Ok(dir) = File::open(&folder) {
            let _ = dir.sync_all();
        }
        Ok(())
    })();
    if result.is_err() {
        let _ = fs::remove_file(&temp);
    }
    result
}

/// The backup path kept beside a file: `<name>.bak`.
pub fn backup_path(path: &Path) -> PathBuf {
    let mut name = path.file_name().unwrap_or_default().to_os_string();
    name.push(".bak");
    path.with_file_name(name)
}

/// Writes `bytes` to `path` atomically, first keeping the current file (if any) as `<name>.bak`.
pub fn write_with_backup(path: &Path, bytes: &[u8]) -> io::Result<()> {
    if path.is_file() {
        let previous = fs::read(path)?;
        write_atomic(&backup_path(path), &previous)?;
    }
    write_atomic(path, bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_and_keeps_a_backup() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("yard.probes.json");
        write_with_backup(&path, b"one").unwrap();
        assert!(!backup_path(&path).exists());
        write_with_backup(&path, b"two").unwrap();
        assert_eq!(fs::read(&path).unwrap(), b"two");
        assert_eq!(fs::read(backup_path(&path)).unwrap(), b"one");
        let leftovers: Vec<_> = fs::read_dir(dir.path())
            .unwrap()
            .filter(|e| {
                e.as_ref()
                    .unwrap()
                    .file_name()
                    .to_string_lossy()
                    .ends_with(".tmp")
            })
            .collect();
        assert!(leftovers.is_empty());
    }

    #[test]
    fn a_failed_write_leaves_the_original_intact() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("missing-folder").join("x.json");
        assert!(write_atomic(&path, b"new").is_err());
        let target = dir.path().join("x.json");
        fs::write(&target, b"original").unwrap();
        // A directory where the temporary file would go cannot be replaced by a file.
        fs::create_dir(dir.path().join("x.json.d")).unwrap();
        assert!(write_atomic(&dir.path().join("x.json.d"), b"new").is_err());
        assert_eq!(fs::read(&target).unwrap(), b"original");
    }
}
