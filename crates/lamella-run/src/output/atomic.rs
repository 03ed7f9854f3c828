//! Crash-safe file replacement: write a temporary file beside the target, flush, sync, rename.
//!
//! A crash, a kill or a full disk at any moment leaves either the old file or the new one under
//! the final name, never a half-written file.

use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

use super::OutputError;

/// The temporary name used while `path` is being written: `.<name>.partial` in the same folder
/// (same file system, so the final rename is atomic; hidden, so listings skip it).
pub fn partial_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    path.with_file_name(format!(".{name}.partial"))
}

/// Writes `path` atomically: `fill` writes the content into a buffered temporary file, which is
/// then flushed, synced to disk and renamed over `path`; finally the folder is synced so the
/// rename itself is durable. On any error the temporary file is removed and `path` is untouched.
pub fn write_atomically(
    path: &Path,
    fill: impl FnOnce(&mut BufWriter<File>) -> io::Result<()>,
) -> Result<(), OutputError> {
    let partial = partial_path(path);
    let result = write_and_sync(&partial, fill).and_then(|()| fs::rename(&partial, path));
    if let Err(err) = result {
        // Best effort: the partial file is garbage either way and is never read.
        let _ = fs::remove_file(&partial);
        return Err(OutputError::write(path, err));
    }
    if let Some(folder) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        sync_folder(folder).map_err(|err| OutputError::write(folder, err))?;
    }
    Ok(())
}

/// Writes `bytes` to `path` atomically (see [`write_atomically`]).
pub fn write_bytes(path: &Path, bytes: &[u8]) -> Result<(), OutputError> {
    write_atomically(path, |w| w.write_all(bytes))
}

fn write_and_sync(
    partial: &Path,
    fill: impl FnOnce(&mut BufWriter<File>) -> io::Result<()>,
) -> io::Result<()> {
    let mut writer = BufWriter::new(File::create(partial)?);
    fill(&mut writer)?;
    writer.flush()?;
    let file = writer.into_inner().map_err(|err| err.into_error())?;
    file.sync_all()
}

/// Syncs a folder's entries (makes a finished rename durable).
pub fn sync_folder(folder: &Path) -> io::Result<()> {
    File::open(folder)?.sync_all()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_the_file_and_leaves_no_partial() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.txt");
        fs::write(&path, "old").unwrap();
        write_atomically(&path, |w| w.write_all(b"new")).unwrap();
        assert_eq!(fs::read_to_string(&path).unwrap(), "new");
        assert!(!partial_path(&path).exists());
    }

    #[test]
    fn a_failing_writer_keeps_the_old_file_whole() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.txt");
        fs::write(&path, "old").unwrap();
        let err = write_atomically(&path, |w| {
            w.write_all(b"half")?;
            Err(io::ErrorKind::StorageFull.into())
        })
        .unwrap_err();
        assert!(err.to_string().contains("disk is full"), "{err}");
        assert_eq!(fs::read_to_string(&path).unwrap(), "old");
        assert!(!partial_path(&path).exists());
    }

    #[test]
    fn an_unwritable_place_is_a_clear_error() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.txt");
        fs::write(&path, "old").unwrap();
        // A folder squatting on the temporary name makes creating it fail even for root.
        fs::create_dir(partial_path(&path)).unwrap();
        let err = write_atomically(&path, |w| w.write_all(b"new")).unwrap_err();
        assert!(err.to_string().contains("a.txt"), "{err}");
        assert_eq!(fs::read_to_string(&path).unwrap(), "old");
    }
}
