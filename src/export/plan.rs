//! The export plan: every output a command will write, checked before the work starts (the
//! extension of its kind, a folder that accepts files, not the input, no two outputs on one
//! path, and no existing file replaced that this tool did not write unless forced), then
//! written whole through [`super::atomic`].

use std::path::{Path, PathBuf};

use super::atomic::{folder_accepts_files, folder_of, write_file};
use crate::present::review::REVIEW_MARK;

/// An output path refused before the study runs.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{path}: {reason}")]
pub struct OutputPathError {
    pub path: String,
    pub reason: String,
}

/// What an output file is, for its extension and for recognizing a file it may replace.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutputKind {
    /// The review workbook (`-o`).
    Review,
    /// The blank input workbook (`template`).
    Template,
    /// A CSV of the input contract.
    Csv,
    /// The typeset study report (`--report`).
    Report,
}

impl OutputKind {
    fn extension(self) -> &'static str {
        match self {
            OutputKind::Review | OutputKind::Template => "xlsx",
            OutputKind::Csv => "csv",
            OutputKind::Report => "pdf",
        }
    }
}

/// True when the existing file `path` is one this tool wrote: a review workbook (its
/// document property), a blank template (byte for byte the current one), a study report
/// (its mark), or a CSV whose
/// first line is one of the input contract's headers. Anything else, a filled plant
/// workbook above all, is not replaced without `--force`.
pub fn written_by_us(path: &Path) -> bool {
    let Ok(bytes) = std::fs::read(path) else {
        return false;
    };
    if crate::io::template::template_bytes().is_ok_and(|t| t == bytes) {
        return true;
    }
    if bytes.starts_with(b"%PDF") {
        return crate::present::report::is_ours(&bytes);
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
    crate::present::csv::HEADERS
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
                OutputKind::Report => "a PDF report",
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
    if !folder_accepts_files(&dir) {
        return Err(fail("the output folder is not writable"));
    }
    Ok(())
}

/// The outputs of one command, checked together before the work.
#[derive(Debug, Clone, Default)]
pub struct ExportPlan {
    outputs: Vec<(PathBuf, OutputKind)>,
}

impl ExportPlan {
    /// Checks every given output (`None` = not asked for) in order: each as
    /// [`check_output`] does, and no path given for two outputs.
    pub fn check(
        outputs: &[(Option<&Path>, OutputKind)],
        input: Option<&Path>,
        force: bool,
    ) -> Result<Self, OutputPathError> {
        let mut plan = ExportPlan::default();
        for &(path, kind) in outputs {
            let Some(path) = path else { continue };
            check_output(path, kind, input, force)?;
            if plan.outputs.iter().any(|(p, _)| p == path) {
                return Err(OutputPathError {
                    path: path.display().to_string(),
                    reason: "given for two outputs: choose a name for each".to_string(),
                });
            }
            plan.outputs.push((path.to_path_buf(), kind));
        }
        Ok(plan)
    }

    /// Writes `path` whole or not at all through `write`; `path` must be one the plan
    /// checked. A failure names the path and, for a workbook, what could not be written.
    pub fn write_with(
        &self,
        path: &Path,
        write: impl FnOnce(&mut dyn std::io::Write) -> std::io::Result<()>,
    ) -> Result<(), OutputPathError> {
        let fail = |reason: String| OutputPathError {
            path: path.display().to_string(),
            reason,
        };
        let Some(&(_, kind)) = self.outputs.iter().find(|(p, _)| p == path) else {
            return Err(fail(
                "this output was not checked before the study (a defect)".to_string(),
            ));
        };
        write_file(path, write).map_err(|e| {
            fail(match kind {
                OutputKind::Review => format!("the review workbook cannot be written ({e})"),
                OutputKind::Template => format!("the workbook cannot be written ({e})"),
                OutputKind::Csv => e.to_string(),
                OutputKind::Report => format!("the report cannot be written ({e})"),
            })
        })
    }

    /// Writes `bytes` to `path` as [`ExportPlan::write_with`] does.
    pub fn write(&self, path: &Path, bytes: &[u8]) -> Result<(), OutputPathError> {
        self.write_with(path, |w| w.write_all(bytes))
    }
}
