//! Writing user files safely: a temporary file in the same folder, flushed to disk, renamed over the
//! target, and the folder flushed; a replaced file can keep its previous version as `<name>.bak`.
//!
//! The temporary file is `.<name>.<process id>.tmp`. It is removed when the write fails or is dropped
//! unfinished; [`remove_unfinished`] removes those of writes in progress (the command line calls it
//! when interrupted); and the temporary files that runs killed outright left behind are cleaned up
//! the next time the same file is written (their process is gone).

use std::fs::{self, File, OpenOptions};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The temporary files of writes in progress, for [`remove_unfinished`].
static IN_PROGRESS: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// A file being written atomically: write to it, then [`AtomicFile::commit`]. Dropped without a
/// commit, it leaves the target untouched and removes its temporary file.
pub struct AtomicFile {
    target: PathBuf,
    folder: PathBuf,
    temp: PathBuf,
    out: Option<BufWriter<File>>,
}

impl AtomicFile {
    /// Starts writing `path` (nothing is visible there until the commit). Leftover temporary files of
    /// earlier runs that were killed while writing the same file are removed first. Refused when
    /// `path` (or what a link there points to) exists and is not a regular file: the rename would
    /// put a file in place of a device such as `/dev/null`, a pipe or a socket. A link to a file
    /// is written through: the file it points to is replaced and the link kept (a probe set linked
    /// into a level's folder stays linked).
    pub fn create(path: &Path) -> io::Result<AtomicFile> {
        // What is there now, a link followed: its kind is checked and its permissions kept.
        let previous = fs::metadata(path).ok();
        if previous.as_ref().is_some_and(|found| !found.is_file()) {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                "not a regular file (a folder, device, pipe or socket); give the path of a file \
                 to write",
            ));
        }
        let linked = fs::symlink_metadata(path).is_ok_and(|m| m.file_type().is_symlink());
        // A link that leads nowhere is replaced, as a missing file would be created.
        let through = linked.then(|| fs::canonicalize(path).ok()).flatten();
        let path = through.as_deref().unwrap_or(path);
        let folder = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = path
            .file_name()
            .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "no file name"))?
            .to_string_lossy()
            .into_owned();
        remove_stale(&folder, &name);
        let temp = folder.join(format!(".{name}.{}.tmp", std::process::id()));
        let file = OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&temp)?;
        register(&temp, true);
        // The file replaced keeps its permissions (a probe set shared through a group's folder
        // stays writable by the group).
        if let Some(previous) = previous {
            file.set_permissions(previous.permissions())?;
        }
        Ok(AtomicFile {
            target: path.to_path_buf(),
            folder,
            temp,
            out: Some(BufWriter::with_capacity(1 << 16, file)),
        })
    }

    /// Flushes the file to disk and puts it in place of the target.
    pub fn commit(mut self) -> io::Result<()> {
        let out = self.out.take().expect("an uncommitted file has its writer");
        let file = out.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()?;
        drop(file);
        fs::rename(&self.temp, &self.target)?;
        register(&self.temp, false);
        // Make the rename itself durable (not possible on every platform; harmless where not).
        if let Ok(dir) = File::open(&self.folder) {
            let _ = dir.sync_all();
        }
        Ok(())
    }

    /// Writes `bytes` over what was written at `offset` (the file grows only if they run past its
    /// end); later writes continue at the end.
    pub fn write_at(&mut self, offset: u64, bytes: &[u8]) -> io::Result<()> {
        use std::io::{Seek, SeekFrom};
        let out = self.writer()?;
        out.seek(SeekFrom::Start(offset))?;
        out.write_all(bytes)?;
        out.seek(SeekFrom::End(0))?;
        Ok(())
    }

    /// Asks the system to start writing what has been written so far to disk, without waiting
    /// for it, so that the commit's flush of a large file has little left to wait for. Only a
    /// hint: where it is not available (or fails), the commit still flushes everything.
    pub fn start_writeback(&mut self) -> io::Result<()> {
        let out = self.writer()?;
        out.flush()?;
        #[cfg(target_os = "linux")]
        {
            use std::os::fd::AsRawFd;
            let fd = out.get_ref().as_raw_fd();
            // SAFETY: `fd` is this file's open descriptor for the whole call, and the call only
            // schedules the writing of its pages (offset 0 and length 0: the whole file).
            unsafe {
                libc::sync_file_range(fd, 0, 0, libc::SYNC_FILE_RANGE_WRITE);
            }
        }
        Ok(())
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.writer()?.write(buf)
    }

    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        self.writer()?.write_all(buf)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.writer()?.flush()
    }
}

impl AtomicFile {
    fn writer(&mut self) -> io::Result<&mut BufWriter<File>> {
        self.out
            .as_mut()
            .ok_or_else(|| io::Error::other("the file was committed"))
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        if self.out.take().is_some() {
            let _ = fs::remove_file(&self.temp);
            register(&self.temp, false);
        }
    }
}

/// A scratch file beside an output, for the part of it that is written before what must come first
/// is known (a results file's summary precedes its results): appended to, then copied into the
/// output and removed. Removed when dropped, and when the run is interrupted.
pub struct Spill {
    path: PathBuf,
    out: BufWriter<File>,
}

impl Spill {
    /// A scratch file for one `part` of the output `target`: `.<name>.<part>.<pid>.tmp` in its
    /// folder (an output made of several parts has a scratch file for each).
    pub fn beside(target: &Path, part: &str) -> io::Result<Spill> {
        let mut name = target.file_name().unwrap_or_default().to_os_string();
        name.push(format!(".{part}"));
        let part = target.with_file_name(name);
        let folder = match part.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = part
            .file_name()
            .unwrap_or_default()
            .to_string_lossy()
            .into_owned();
        remove_stale(&folder, &name);
        let path = folder.join(format!(".{name}.{}.tmp", std::process::id()));
        let file = OpenOptions::new()
            .read(true)
            .write(true)
            .create_new(true)
            .open(&path)?;
        register(&path, true);
        Ok(Spill {
            path,
            out: BufWriter::with_capacity(1 << 16, file),
        })
    }

    /// Copies everything written so far to the end of `into`, and removes the scratch file.
    pub fn copy_into(mut self, into: &mut AtomicFile) -> io::Result<()> {
        use std::io::{Seek, SeekFrom};
        self.out.flush()?;
        let file = self.out.get_mut();
        file.seek(SeekFrom::Start(0))?;
        // File to (buffered) file: the standard library flushes the buffer and has the kernel copy
        // the bytes (`copy_file_range` on Linux), with no round trip through this process.
        io::copy(file, into.writer()?)?;
        Ok(())
    }
}

impl Write for Spill {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.out.write(buf)
    }

    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        self.out.write_all(buf)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.out.flush()
    }
}

impl Drop for Spill {
    fn drop(&mut self) {
        let _ = fs::remove_file(&self.path);
        register(&self.path, false);
    }
}

fn register(temp: &Path, writing: bool) {
    if let Ok(mut list) = IN_PROGRESS.lock() {
        if writing {
            list.push(temp.to_path_buf());
        } else {
            list.retain(|p| p != temp);
        }
    }
}

/// Removes the temporary files of every write in progress (for an interrupted run, just before it
/// exits). Safe to call from a signal handler thread.
pub fn remove_unfinished() {
    if let Ok(list) = IN_PROGRESS.lock() {
        for temp in list.iter() {
            let _ = fs::remove_file(temp);
        }
    }
}

/// Removes `.<name>.<pid>.tmp` files in `folder` whose process no longer runs.
fn remove_stale(folder: &Path, name: &str) {
    let prefix = format!(".{name}.");
    let Ok(entries) = fs::read_dir(folder) else {
        return;
    };
    for entry in entries.flatten() {
        let file_name = entry.file_name();
        let Some(pid) = file_name
            .to_str()
            .and_then(|n| n.strip_prefix(&prefix))
            .and_then(|rest| rest.strip_suffix(".tmp"))
            .and_then(|pid| pid.parse::<u32>().ok())
        else {
            continue;
        };
        if !process_runs(pid) {
            let _ = fs::remove_file(entry.path());
        }
    }
}

/// True when a process with this id runs (on Linux, by /proc; elsewhere every other id counts as
/// running, so nothing that might be in use is removed).
fn process_runs(pid: u32) -> bool {
    if pid == std::process::id() {
        return true;
    }
    if Path::new("/proc/self").exists() {
        Path::new(&format!("/proc/{pid}")).exists()
    } else {
        true
    }
}

/// Writes `bytes` to `path` atomically: readers see the old file or the new one, never a mix.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut file = AtomicFile::create(path)?;
    file.write_all(bytes)?;
    file.commit()
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

    fn leftovers(dir: &Path) -> Vec<String> {
        fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".tmp"))
            .collect()
    }

    #[test]
    fn what_is_not_a_regular_file_is_never_replaced() {
        // A folder, and on Unix a device and a pipe: refused before anything is written, and
        // left as they were (common practice: an output path names a file).
        let dir = tempfile::tempdir().unwrap();
        let mut refused = vec![dir.path().to_path_buf()];
        if cfg!(unix) {
            refused.push(PathBuf::from("/dev/null"));
            let pipe = dir.path().join("pipe");
            let made = std::process::Command::new("mkfifo").arg(&pipe).status();
            if made.is_ok_and(|s| s.success()) {
                refused.push(pipe);
            }
        }
        for path in refused {
            let before = fs::metadata(&path).unwrap().file_type();
            let error = AtomicFile::create(&path).err().expect("refused");
            assert_eq!(
                error.kind(),
                io::ErrorKind::InvalidInput,
                "{}",
                path.display()
            );
            assert!(error.to_string().contains("not a regular file"));
            assert_eq!(fs::metadata(&path).unwrap().file_type(), before);
        }
        assert!(leftovers(dir.path()).is_empty());
    }

    #[cfg(unix)]
    #[test]
    fn a_link_is_written_through_and_kept() {
        // The file a link points to gets the new text and the link stays a link (common
        // practice for editors' safe saves), with the backup beside the link.
        let dir = tempfile::tempdir().unwrap();
        let real = dir.path().join("kept").join("yard.probes.json");
        fs::create_dir(real.parent().unwrap()).unwrap();
        fs::write(&real, b"one").unwrap();
        let link = dir.path().join("yard.probes.json");
        std::os::unix::fs::symlink(&real, &link).unwrap();
        write_with_backup(&link, b"two").unwrap();
        assert!(
            fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(fs::read(&real).unwrap(), b"two");
        assert_eq!(fs::read(backup_path(&link)).unwrap(), b"one");
        assert!(leftovers(dir.path()).is_empty());
        assert!(leftovers(real.parent().unwrap()).is_empty());
    }

    #[cfg(unix)]
    #[test]
    fn a_replaced_file_keeps_its_permissions() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("yard.probes.json");
        fs::write(&path, b"one").unwrap();
        fs::set_permissions(&path, fs::Permissions::from_mode(0o664)).unwrap();
        write_atomic(&path, b"two").unwrap();
        assert_eq!(
            fs::metadata(&path).unwrap().permissions().mode() & 0o777,
            0o664
        );
        assert_eq!(fs::read(&path).unwrap(), b"two");
    }

    #[test]
    fn replaces_and_keeps_a_backup() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("yard.probes.json");
        write_with_backup(&path, b"one").unwrap();
        assert!(!backup_path(&path).exists());
        write_with_backup(&path, b"two").unwrap();
        assert_eq!(fs::read(&path).unwrap(), b"two");
        assert_eq!(fs::read(backup_path(&path)).unwrap(), b"one");
        assert!(leftovers(dir.path()).is_empty());
    }

    #[test]
    fn a_file_written_early_to_disk_and_patched_at_its_head_holds_every_byte() {
        // Writing starts early between writes, and the head is written over at the end (as a
        // results file's summary is): the committed file holds exactly what was meant.
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("big.results.json");
        let mut file = AtomicFile::create(&path).unwrap();
        let mut expected = b"head:????\n".to_vec();
        file.write_all(&expected).unwrap();
        for k in 0..300u32 {
            let line = format!("{k:>65535}\n");
            file.write_all(line.as_bytes()).unwrap();
            expected.extend_from_slice(line.as_bytes());
            if k % 50 == 0 {
                file.start_writeback().unwrap();
            }
        }
        file.write_at(5, b"done").unwrap();
        expected[5..9].copy_from_slice(b"done");
        file.write_all(b"tail\n").unwrap();
        expected.extend_from_slice(b"tail\n");
        file.commit().unwrap();
        assert!(fs::read(&path).unwrap() == expected);
        assert!(leftovers(dir.path()).is_empty());
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

    #[test]
    fn an_unfinished_write_leaves_nothing_behind_and_stale_temporaries_are_swept() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("run.results.json");
        fs::write(&path, b"before").unwrap();
        let mut file = AtomicFile::create(&path).unwrap();
        file.write_all(b"half of it").unwrap();
        assert_eq!(leftovers(dir.path()).len(), 1);
        drop(file);
        assert!(leftovers(dir.path()).is_empty());
        assert_eq!(fs::read(&path).unwrap(), b"before");
        // A run killed while writing (its process id long gone) left its temporary file.
        let stale = dir.path().join(".run.results.json.4294967294.tmp");
        fs::write(&stale, b"partial").unwrap();
        write_atomic(&path, b"after").unwrap();
        assert!(!stale.exists());
        assert_eq!(fs::read(&path).unwrap(), b"after");
    }

    #[test]
    fn a_spill_lands_after_what_is_written_first_and_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("run.junit.xml");
        let mut body = Spill::beside(&path, "part").unwrap();
        body.write_all(b"<case/>").unwrap();
        let mut file = AtomicFile::create(&path).unwrap();
        file.write_all(b"<suite>").unwrap();
        body.copy_into(&mut file).unwrap();
        file.write_all(b"</suite>").unwrap();
        file.commit().unwrap();
        assert_eq!(fs::read(&path).unwrap(), b"<suite><case/></suite>");
        assert!(leftovers(dir.path()).is_empty());
    }
}
