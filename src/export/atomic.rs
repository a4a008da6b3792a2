//! Output files written whole or not at all. Each file is written to a temporary name in
//! its destination folder, flushed to disk and renamed into place (a rename within one
//! folder replaces the name in one step), so a reader of the destination sees either the
//! old file, no file, or the complete new one. Temporary files of writes in progress are
//! registered so that an interrupted run can remove them ([`remove_pending`]). This module
//! knows no output format: it writes bytes.

use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard};

/// Temporary files being written now.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn pending() -> MutexGuard<'static, Vec<PathBuf>> {
    PENDING
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// The folder `path` will be written in (`.` for a bare file name).
pub fn folder_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Probes that a new file can be created in `dir`: the probe is registered like any
/// temporary file, so that an interrupt arriving while it exists removes it too.
pub fn folder_accepts_files(dir: &Path) -> bool {
    let probe = dir.join(format!(".overtone-write-test-{}", std::process::id()));
    pending().push(probe.clone());
    let written = std::fs::write(&probe, b"");
    let mut list = pending();
    let _ = std::fs::remove_file(&probe);
    list.retain(|p| p != &probe);
    written.is_ok()
}

/// The temporary name a write of `path` uses: hidden, beside it, unique to this process.
pub fn temporary_name(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "output".into(), |n| n.to_string_lossy().into_owned());
    folder_of(path).join(format!(".{name}.{}.tmp", std::process::id()))
}

/// Writes `path` through `write` and a temporary file renamed into place. On any error the
/// temporary file is removed and `path` is left as it was.
pub fn write_file(
    path: &Path,
    write: impl FnOnce(&mut dyn Write) -> io::Result<()>,
) -> io::Result<()> {
    let tmp = temporary_name(path);
    pending().push(tmp.clone());
    let written = (|| {
        let file = std::fs::File::create(&tmp)?;
        let mut w = BufWriter::new(file);
        write(&mut w)?;
        let file = w.into_inner().map_err(|e| e.into_error())?;
        file.sync_all()
    })();
    // The rename and the registry change happen under the lock, so an interrupt either
    // removes the temporary file or finds the complete file already in place.
    let mut list = pending();
    list.retain(|p| p != &tmp);
    let done = written.and_then(|()| std::fs::rename(&tmp, path));
    if done.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    done
}

/// Writes `bytes` to `path` as [`write_file`] does.
pub fn write_bytes(path: &Path, bytes: &[u8]) -> io::Result<()> {
    write_file(path, |w| w.write_all(bytes))
}

/// Removes the temporary files of writes in progress and keeps the registry locked, so that
/// no write in this process completes afterwards: for an interrupt handler that exits next.
/// Returns how many files it removed.
pub fn remove_pending() -> usize {
    let list = pending();
    let removed = list
        .iter()
        .filter(|p| std::fs::remove_file(p).is_ok())
        .count();
    // Held until the process exits: a writer waiting to rename stays blocked.
    std::mem::forget(list);
    removed
}

/// The temporary files being written now (for tests).
pub fn pending_files() -> Vec<PathBuf> {
    pending().clone()
}
