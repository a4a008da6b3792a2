//! The curves the review charts: per bank bus and scenario, the configurations of that bank
//! alone step by step, no banks, and the worst configuration of that bus (the resonance row
//! nearest a characteristic order), each |Z(h)| recomputed from the scan's kept points, with
//! the zero-sequence scan beside them where the bank has a zero-sequence path.

use super::check::CheckResults;
use crate::model::Sequence;
use crate::study::resonance::{ResonanceRow, Verdict};

/// Most curves drawn per chart (before the zero-sequence ones).
pub const MAX_CURVES: usize = 12;

/// One curve of a chart: |Z| at a bank's bus at every scan point.
#[derive(Debug, Clone)]
pub struct ChartCurve {
    /// The bus id.
    pub bus: String,
    pub scenario: usize,
    /// The configuration's label, `(worst)` or ` zero seq` added.
    pub label: String,
    /// |Z(h)| in ohms at every order of the scan grid.
    pub z_ohm: Vec<f64>,
}

/// One chart: a bank bus in one scenario, its curves and the worst configuration's label.
#[derive(Debug, Clone)]
pub struct ChartGroup {
    pub bus: String,
    pub scenario: usize,
    /// Its curves' positions in [`ScanCharts::curves`].
    pub columns: std::ops::Range<usize>,
    /// The worst configuration's label and the order of its peak.
    pub worst: Option<(String, Option<f64>)>,
}

/// How close a resonance row comes to a characteristic order: flagged rows first, then the
/// smallest |margin|, then the larger amplification.
fn closeness(r: &ResonanceRow) -> (bool, f64, f64) {
    (
        r.verdict != Verdict::Resonant,
        r.margin_percent.map_or(f64::INFINITY, f64::abs),
        -r.peak.as_ref().map_or(0.0, |p| p.amplification),
    )
}

/// The worst positive-sequence resonance row at `bus` in `scenario`.
fn worst_row<'a>(res: &'a CheckResults, bus: &str, scenario: &str) -> Option<&'a ResonanceRow> {
    res.resonance
        .rows
        .iter()
        .filter(|r| r.bus == bus && r.scenario == scenario && r.sequence != Sequence::Zero)
        .min_by(|a, b| {
            closeness(a)
                .partial_cmp(&closeness(b))
                .unwrap_or(std::cmp::Ordering::Equal)
        })
}

/// The charted curves and their charts.
#[derive(Debug, Clone, Default)]
pub struct ScanCharts {
    pub curves: Vec<ChartCurve>,
    pub groups: Vec<ChartGroup>,
}

/// The charts of `res`'s scan.
// Long: per bank bus and scenario the curves picked and recomputed, and their group, in one pass.
pub fn scan_charts(res: &CheckResults) -> ScanCharts {
    let mut columns: Vec<ChartCurve> = Vec::new();
    let mut groups: Vec<ChartGroup> = Vec::new();
    let none = res.scan.configurations.iter().position(|c| c.is_none());
    for (scenario, scenario_name) in res.scan.scenarios.iter().enumerate() {
        let mut seen: Vec<String> = Vec::new();
        for (b, bank) in res.network.banks.iter().enumerate() {
            let Some(sb) = res.scan.buses.iter().position(|&x| x == bank.bus) else {
                continue;
            };
            let bus = res.network.buses[bank.bus].id.clone();
            if seen.contains(&bus) {
                continue;
            }
            seen.push(bus.clone());
            let mut picks: Vec<usize> = none.into_iter().collect();
            for (c, cfg) in res.scan.configurations.iter().enumerate() {
                let only = cfg.steps.iter().enumerate().all(|(j, &s)| j == b || s == 0);
                if only && cfg.steps[b] > 0 && picks.len() < MAX_CURVES {
                    picks.push(c);
                }
            }
            let worst_row = worst_row(res, &bus, scenario_name);
            let worst = worst_row.and_then(|w| {
                (0..res.scan.configurations.len()).find(|&c| res.label(c) == w.configuration)
            });
            if let Some(w) = worst
                && !picks.contains(&w)
            {
                picks.push(w);
            }
            let start = columns.len();
            for &c in &picks {
                if let Some(curve) = res.scan.curve(scenario, c, sb) {
                    let mut label = res.label(c);
                    if Some(c) == worst {
                        label = format!("{label} (worst)");
                    }
                    columns.push(ChartCurve {
                        bus: bus.clone(),
                        scenario,
                        label,
                        z_ohm: curve.iter().map(|z| z.norm()).collect(),
                    });
                }
            }
            // Where the bank has a zero-sequence path, its zero-sequence scan beside.
            if let Some(z) = &res.zero_scan
                && bank.connection.has_zero_path()
                && let Some(zb) = z.buses.iter().position(|&x| x == bank.bus)
            {
                for &c in &picks {
                    if let Some(curve) = res
                        .zero_map
                        .get(c)
                        .and_then(|&zc| z.curve(scenario, zc, zb))
                    {
                        columns.push(ChartCurve {
                            bus: bus.clone(),
                            scenario,
                            label: format!("{} zero seq", res.label(c)),
                            z_ohm: curve.iter().map(|z| z.norm()).collect(),
                        });
                    }
                }
            }
            groups.push(ChartGroup {
                bus,
                scenario,
                columns: start..columns.len(),
                worst: worst.map(|c| {
                    (
                        res.label(c),
                        worst_row.and_then(|w| w.peak.as_ref().map(|p| p.order)),
                    )
                }),
            });
        }
    }
    ScanCharts {
        curves: columns,
        groups,
    }
}
