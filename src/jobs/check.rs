//! The `check` job: every study of a plant ([`super::studies`]) and the remedies of its
//! flagged banks ([`super::remedies`]), as one [`CheckResults`] that the reports read.

use super::notes::Note;
pub use super::results::*;
use crate::model::Plant;

/// Runs every study that exists on `plant`, then the remedies of its flagged banks when
/// `options` asks for them (or, by default, when the plant has at most
/// [`AUTO_REMEDY_CONFIGURATIONS`] step combinations).
pub fn run_check(plant: &Plant, options: &CheckOptions) -> Result<CheckResults, CheckError> {
    let band = !options.scan_only && options.damping_band != Some(false);
    // The damping band's re-run needs only the resonance screen: it runs beside the
    // other studies.
    let (res, least) = super::studies::run_studies_beside(plant, options, |rows| {
        band.then(|| super::damping::least_damped_rerun(plant, rows, options))
            .flatten()
    });
    let mut res = res?;
    if band {
        // The band explains a verdict and never stops the check.
        match least.flatten().transpose() {
            Ok(least) => res.damping = super::damping::damping_bands(&res, least.as_ref()),
            Err(e) => res.notes.push(Note::DampingBand(e.to_string())),
        }
    }
    let auto = res.scan.configurations.len() <= AUTO_REMEDY_CONFIGURATIONS;
    match options.remedies {
        _ if options.scan_only => {}
        Some(true) => {
            res.remedies = super::remedies::remedies(&res, options);
            res.plant_remedies = super::remedies::plant_remedies(&res, options);
        }
        None if auto => {
            res.remedies = super::remedies::remedies(&res, options);
            res.plant_remedies = super::remedies::plant_remedies(&res, options);
        }
        None => res.notes.push(Note::RemediesNotStudied {
            combinations: res.scan.configurations.len(),
            auto_limit: AUTO_REMEDY_CONFIGURATIONS,
        }),
        Some(false) => {}
    }
    Ok(res)
}
