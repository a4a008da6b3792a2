//! The files each command writes: the numbers computed by the jobs, formatted by
//! [`crate::present`], written through a checked [`ExportPlan`], in a fixed order (scan,
//! voltages, operating and transients CSVs, then the review workbook).

use std::path::Path;

use rust_xlsxwriter::XlsxError;

use super::plan::{ExportPlan, OutputPathError};
use crate::io::provenance::Provenance;
use crate::jobs::charts::scan_charts;
use crate::jobs::check::{CheckError, CheckResults};
use crate::jobs::design::{DesignError, DesignResult, recommended_study};
use crate::jobs::exports::{BusTable, ExportError, ScanTable, selection};
use crate::present::{csv, review};

/// An output that could not be made or written.
#[derive(Debug, thiserror::Error)]
pub enum ExportFailure {
    #[error(transparent)]
    Path(#[from] OutputPathError),
    #[error(transparent)]
    Rows(#[from] ExportError),
    #[error(transparent)]
    Selection(#[from] CheckError),
    #[error(transparent)]
    Design(#[from] DesignError),
    #[error("{path}: the review workbook cannot be written ({source})")]
    Review { path: String, source: XlsxError },
    #[error("{path}: the workbook cannot be written ({source})")]
    Workbook { path: String, source: XlsxError },
    #[error("{path}: the report cannot be written ({source})")]
    Report {
        path: String,
        source: crate::present::report::RenderError,
    },
}

/// The outputs of `check` and `demo` (`None` = not asked for) and the command line's
/// narrowing of the CSVs.
#[derive(Debug, Clone, Copy, Default)]
pub struct CheckOutputs<'a> {
    pub review: Option<&'a Path>,
    pub report: Option<&'a Path>,
    pub scan_csv: Option<&'a Path>,
    pub voltages_csv: Option<&'a Path>,
    pub operating_csv: Option<&'a Path>,
    pub transients_csv: Option<&'a Path>,
    /// `--bus` ids.
    pub buses: &'a [String],
    /// `--configuration` labels.
    pub configurations: &'a [String],
}

impl ExportPlan {
    /// Writes every output of a check that `out` asks for.
    pub fn write_check(
        &self,
        res: &CheckResults,
        out: &CheckOutputs<'_>,
        prov: &Provenance,
    ) -> Result<(), ExportFailure> {
        let sel = selection(res, out.buses, out.configurations)?;
        if let Some(path) = out.scan_csv {
            let table = ScanTable::new(res, &sel).bounded()?;
            self.write_with(path, |w| csv::write_scan_csv(w, res, table.curves(res)))?;
        }
        if let Some(path) = out.voltages_csv {
            let t = BusTable::new(res, &sel);
            self.write_with(path, |w| {
                csv::write_voltages_csv(w, res, &t.buses, t.voltages(res))
            })?;
        }
        if let Some(path) = out.operating_csv {
            let t = BusTable::new(res, &sel).bounded(res)?;
            self.write_with(path, |w| {
                csv::write_operating_csv(w, res, &t.buses, t.operating(res))
            })?;
        }
        if let Some(path) = out.transients_csv {
            self.write_with(path, |w| csv::write_transients_csv(w, res))?;
        }
        if let Some(path) = out.review {
            let bytes = review::review_bytes(res, &scan_charts(res), prov).map_err(|source| {
                ExportFailure::Review {
                    path: path.display().to_string(),
                    source,
                }
            })?;
            self.write(path, &bytes)?;
        }
        if let Some(path) = out.report {
            self.write_report(path, res, prov, None)?;
        }
        Ok(())
    }

    /// Writes the study report of `res` (with the design `d` before it).
    fn write_report(
        &self,
        path: &Path,
        res: &CheckResults,
        prov: &Provenance,
        d: Option<&DesignResult>,
    ) -> Result<(), ExportFailure> {
        let bytes = crate::present::report::report_bytes(res, &scan_charts(res), prov, d).map_err(
            |source| ExportFailure::Report {
                path: path.display().to_string(),
                source,
            },
        )?;
        self.write(path, &bytes)?;
        Ok(())
    }

    /// Writes the scan CSV of the `scan` command, narrowed by `--bus` and
    /// `--configuration`.
    pub fn write_scan(
        &self,
        res: &CheckResults,
        path: &Path,
        buses: &[String],
        configurations: &[String],
    ) -> Result<(), ExportFailure> {
        let sel = selection(res, buses, configurations)?;
        let table = ScanTable::new(res, &sel).bounded()?;
        self.write_with(path, |w| csv::write_scan_csv(w, res, table.curves(res)))?;
        Ok(())
    }

    /// Writes the outputs of `design`: the plant with the recommended plan (nothing when no
    /// plan passes), the design review and the report, whose recommended plan is studied
    /// first.
    pub fn write_design(
        &self,
        d: &DesignResult,
        write_plant: Option<&Path>,
        (review, report): (Option<&Path>, Option<&Path>),
        prov: &Provenance,
    ) -> Result<(), ExportFailure> {
        if let Some(path) = write_plant
            && let Some(i) = d.recommended
        {
            let bytes =
                crate::io::template::plant_workbook(&d.plant_with(i)).map_err(|source| {
                    ExportFailure::Workbook {
                        path: path.display().to_string(),
                        source,
                    }
                })?;
            self.write(path, &bytes)?;
        }
        if review.is_none() && report.is_none() {
            return Ok(());
        }
        let study = recommended_study(d)?;
        if let Some(path) = review {
            let bytes = review::design_review_bytes(d, &study, &scan_charts(&study), prov)
                .map_err(|source| ExportFailure::Review {
                    path: path.display().to_string(),
                    source,
                })?;
            self.write(path, &bytes)?;
        }
        if let Some(path) = report {
            self.write_report(path, &study, prov, Some(d))?;
        }
        Ok(())
    }

    /// Writes the calibrated plant of `c` (nothing without one), its added rows noted with
    /// their provenance.
    pub fn write_calibrated(
        &self,
        c: &crate::jobs::calibrate::CalibrationResults,
        path: &Path,
        provenance: &str,
    ) -> Result<bool, ExportFailure> {
        let Some(plant) = &c.calibrated else {
            return Ok(false);
        };
        let notes = crate::jobs::calibrate::provenance_notes(c, provenance);
        let bytes = crate::io::template::plant_workbook_noted(plant, &notes).map_err(|source| {
            ExportFailure::Workbook {
                path: path.display().to_string(),
                source,
            }
        })?;
        self.write(path, &bytes)?;
        Ok(true)
    }

    /// Writes the calibration's review workbook and study report (each when asked): the
    /// calibration, then the calibrated plant's study. Nothing without a calibrated plant.
    pub fn write_calibration_documents(
        &self,
        c: &crate::jobs::calibrate::CalibrationResults,
        (review, report): (Option<&Path>, Option<&Path>),
        prov: &Provenance,
    ) -> Result<bool, ExportFailure> {
        let Some(res) = c.study.as_deref() else {
            return Ok(false);
        };
        let charts = scan_charts(res);
        if let Some(path) = review {
            let bytes =
                review::calibration_review_bytes(c, res, &charts, prov).map_err(|source| {
                    ExportFailure::Review {
                        path: path.display().to_string(),
                        source,
                    }
                })?;
            self.write(path, &bytes)?;
        }
        if let Some(path) = report {
            let bytes = crate::present::report::calibration_report_bytes(c, res, &charts, prov)
                .map_err(|source| ExportFailure::Report {
                    path: path.display().to_string(),
                    source,
                })?;
            self.write(path, &bytes)?;
        }
        Ok(true)
    }

    /// Writes the blank template.
    pub fn write_template(&self, path: &Path) -> Result<(), ExportFailure> {
        let bytes =
            crate::io::template::template_bytes().map_err(|source| ExportFailure::Workbook {
                path: path.display().to_string(),
                source,
            })?;
        self.write(path, &bytes)?;
        Ok(())
    }
}
