//! Output files written whole or not at all. Each file is written to a temporary name in
//! its destination folder, flushed to disk and renamed into place (a rename within one
//! folder replaces the name in one step), so a reader of the destination sees either the
//! old file, no file, or the complete new one. Temporary files of writes in progress are
//! registered so that an interrupted run can remove them ([`remove_pending`]).

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

/// An output path refused before the study runs.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{path}: {reason}")]
pub struct OutputPathError {
    pub path: String,
    pub reason: String,
}

/// The custom document property that marks a review workbook as this tool's (name, value).
pub const REVIEW_MARK: (&str, &str) = ("overtone", "review workbook");

/// What an output file is, for its extension and for recognizing a file it may replace.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutputKind {
    /// The review workbook (`-o`).
    Review,
    /// The blank input workbook (`template`).
    Template,
    /// A CSV of the input contract.
    Csv,
}

impl OutputKind {
    fn extension(self) -> &'static str {
        match self {
            OutputKind::Review | OutputKind::Template => "xlsx",
            OutputKind::Csv => "csv",
        }
    }
}

/// True when the existing file `path` is one this tool wrote: a review workbook (its
/// document property), a blank template (byte for byte the current one), or a CSV whose
/// first line is one of the input contract's headers. Anything else, a filled plant
/// workbook above all, is not replaced without `--force`.
pub fn written_by_us(path: &Path) -> bool {
    let Ok(bytes) = std::fs::read(path) else {
        return false;
    };
    if crate::io::template::template_bytes().is_ok_and(|t| t == bytes) {
        return true;
    }
    if let Ok(mut zip) = zip::ZipArchive::new(std::io::Cursor::new(&bytes)) {
        let mut xml = String::new();
        return zip.by_name("docProps/custom.xml").is_ok_and(|mut f| {
            std::io::Read::read_to_string(&mut f, &mut xml).is_ok()
                && xml.contains(&format!("name=\"{}\"", REVIEW_MARK.0))
                && xml.contains(REVIEW_MARK.1)
        });
    }
    let first = bytes.split(|&b| b == b'\n').next().unwrap_or_default();
    crate::io::csv::HEADERS
        .iter()
        .any(|h| first == h.as_bytes() || first == format!("{h}\r").as_bytes())
}

/// Checks before the study runs that `out` can be written as a `kind` file: the extension
/// fits, its folder exists and accepts a new file, it is not the input `input`, and an
/// existing file there is one this tool wrote (unless `force`).
pub fn check_output(
    out: &Path,
    kind: OutputKind,
    input: Option<&Path>,
    force: bool,
) -> Result<(), OutputPathError> {
    let fail = |reason: String| OutputPathError {
        path: out.display().to_string(),
        reason,
    };
    let ext = out
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase());
    if ext.as_deref() != Some(kind.extension()) {
        return Err(fail(format!(
            "this output is {}: give a name ending in .{}",
            match kind {
                OutputKind::Csv => "a CSV file",
                _ => "an .xlsx workbook",
            },
            kind.extension()
        )));
    }
    check_output_path(out, input)?;
    if out.exists() && !force && !written_by_us(out) {
        return Err(fail(
            "a file of that name exists and was not written by overtone (a plant workbook?): choose another name, or give --force to replace it".to_string(),
        ));
    }
    Ok(())
}

/// Checks before the study runs that `out` can be written (its folder exists and accepts a
/// new file) and is not the input `input`.
pub fn check_output_path(out: &Path, input: Option<&Path>) -> Result<(), OutputPathError> {
    let fail = |reason: &str| OutputPathError {
        path: out.display().to_string(),
        reason: reason.to_string(),
    };
    if let Some(inp) = input {
        let same = match (std::fs::canonicalize(inp), std::fs::canonicalize(out)) {
            (Ok(a), Ok(b)) => a == b,
            _ => inp == out,
        };
        if same {
            return Err(fail(
                "the output would overwrite the input workbook: choose another name",
            ));
        }
    }
    let dir = folder_of(out);
    if !dir.is_dir() {
        return Err(fail("the output folder does not exist"));
    }
    // The probe is registered like any temporary file, so that an interrupt arriving
    // while it exists removes it too.
    let probe = dir.join(format!(".overtone-write-test-{}", std::process::id()));
    pending().push(probe.clone());
    let written = std::fs::write(&probe, b"");
    let mut list = pending();
    let _ = std::fs::remove_file(&probe);
    list.retain(|p| p != &probe);
    match written {
        Ok(()) => Ok(()),
        Err(_) => Err(fail("the output folder is not writable")),
    }
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
