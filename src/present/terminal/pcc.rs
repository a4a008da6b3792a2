//! The PCC's lines under the limits table: what the TDD judges when a background is given,
//! and under `phasor` summation the bounds beside the stated-angle figures.

use std::io::{self, Write};

use super::table::write_hanging;
use crate::jobs::check::CheckResults;
use crate::model::Summation;
use crate::study::limits::LimitRow;

/// Writes, for scenario `s`, the background's part of the TDD (when the plant has a
/// background) and the phasor bounds of the configuration with the highest PCC THD.
pub fn write_pcc_lines(out: &mut dyn Write, res: &CheckResults, s: usize) -> io::Result<()> {
    let nc = res.scan.configurations.len();
    let Some(rows) = res.limit_rows.get(s * nc..(s + 1) * nc) else {
        return Ok(());
    };
    let by_tdd = |a: &(usize, &LimitRow), b: &(usize, &LimitRow)| {
        (a.1.tdd_with_background_percent).total_cmp(&b.1.tdd_with_background_percent)
    };
    if !res.plant.background.is_empty()
        && let Some((c, r)) = rows.iter().enumerate().max_by(by_tdd)
    {
        let text = format!(
            "TDD and Ih are the plant's own emission (IEEE 519-2014 clause 5.2); with the background-driven part the TDD reaches {:.2} % ({}), reported, not judged.",
            r.tdd_with_background_percent,
            res.label(c)
        );
        write_hanging(out, "  ", "    ", &text, 100)?;
    }
    if res.plant.study.summation != Summation::Phasor {
        return Ok(());
    }
    let worst = (rows.iter().enumerate())
        .filter(|(_, r)| r.pcc_phasor.is_some())
        .max_by(|a, b| a.1.pcc_thd.value.total_cmp(&b.1.pcc_thd.value));
    if let Some((c, r)) = worst {
        let Some(ph) = r.pcc_phasor else {
            return Ok(());
        };
        let free = ph
            .thd_worst_angle_percent
            .map(|v| format!(" ({v:.2} % at the worst of the blank background angles)"))
            .unwrap_or_default();
        let text = format!(
            "phasor at the PCC ({}): THD {:.2} %{free}, arithmetic bound {:.2} %; TDD {:.2} %, arithmetic bound {:.2} %.",
            res.label(c),
            r.pcc_thd.value,
            ph.thd_arithmetic_percent,
            r.tdd.value,
            ph.tdd_arithmetic_percent
        );
        write_hanging(out, "  ", "    ", &text, 100)?;
    }
    Ok(())
}
