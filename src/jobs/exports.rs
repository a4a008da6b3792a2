//! What each CSV of the input contract covers, and the numbers it carries, computed here so
//! that the CSV writers of [`crate::present::csv`] only format: the selection from the
//! command line's bus ids and configuration labels, the row bounds, and the scan curves,
//! harmonic voltages and operating points of the selected configurations, streamed one
//! configuration at a time (a whole plant's voltages need not fit in memory).

use num_complex::Complex64;

use super::check::{CheckError, CheckResults};

/// Which buses and configurations go into a CSV.
#[derive(Debug, Clone, Default)]
pub struct ScanSelection {
    /// Network bus indices; empty = the PCC and every bank bus (scan CSV) or every bus.
    pub buses: Vec<usize>,
    /// Configuration indices into the scan; empty = every configuration.
    pub configurations: Vec<usize>,
}

/// Rows above which a scan or operating CSV is refused (input contract).
pub const MAX_SCAN_ROWS: u64 = 5_000_000;

/// A CSV refused before it is written.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    #[error(
        "the CSV would have {0} rows, more than {MAX_SCAN_ROWS}: narrow it with --bus and --configuration"
    )]
    TooLarge(u64),
}

/// Builds the selection from command-line names: bus ids and configuration labels (a label
/// that names no studied configuration selects nothing).
pub fn selection(
    res: &CheckResults,
    buses: &[String],
    configurations: &[String],
) -> Result<ScanSelection, CheckError> {
    let mut sel = ScanSelection::default();
    for id in buses {
        let i = res
            .network
            .bus_index(id)
            .ok_or_else(|| CheckError::UnknownBus(id.clone()))?;
        sel.buses.push(i);
    }
    for text in configurations {
        let cfg = crate::study::parse_configuration(text, &res.plant.banks)?;
        if let Some(c) = res.scan.configurations.iter().position(|x| *x == cfg) {
            sel.configurations.push(c);
        }
    }
    Ok(sel)
}

/// One scanned curve: |Z| and angle at every grid point of `res.scan.grid`.
#[derive(Debug, Clone)]
pub struct ScanCurve {
    pub scenario: usize,
    pub configuration: usize,
    /// Network bus index.
    pub bus: usize,
    /// Z(h) at the bus, ohms, one per grid point.
    pub z: Vec<Complex64>,
}

/// The scan CSV's rows: (bus position in the scan, configuration) lists and the row count.
#[derive(Debug, Clone)]
pub struct ScanTable {
    /// Positions in `res.scan.buses`.
    pub positions: Vec<usize>,
    pub configurations: Vec<usize>,
    pub rows: u64,
}

impl ScanTable {
    /// The rows `sel` selects: the PCC and every bank bus unless `--bus` names others.
    pub fn new(res: &CheckResults, sel: &ScanSelection) -> Self {
        let buses: Vec<usize> = if sel.buses.is_empty() {
            let mut v = vec![res.pcc];
            for b in &res.network.banks {
                if !v.contains(&b.bus) {
                    v.push(b.bus);
                }
            }
            v
        } else {
            sel.buses.clone()
        };
        let positions: Vec<usize> = buses
            .into_iter()
            .filter_map(|bus| res.scan.buses.iter().position(|&b| b == bus))
            .collect();
        let configurations: Vec<usize> = if sel.configurations.is_empty() {
            (0..res.scan.configurations.len()).collect()
        } else {
            sel.configurations.clone()
        };
        let rows = res.scan.scenarios.len() as u64
            * configurations.len() as u64
            * positions.len() as u64
            * res.scan.grid.orders.len() as u64;
        ScanTable {
            positions,
            configurations,
            rows,
        }
    }

    /// Refuses more than [`MAX_SCAN_ROWS`] rows.
    pub fn bounded(self) -> Result<Self, ExportError> {
        if self.rows > MAX_SCAN_ROWS {
            return Err(ExportError::TooLarge(self.rows));
        }
        Ok(self)
    }

    /// The curves in CSV order (scenario, configuration, bus), each recomputed from the
    /// scan's kept points.
    pub fn curves<'a>(&'a self, res: &'a CheckResults) -> impl Iterator<Item = ScanCurve> + 'a {
        (0..res.scan.scenarios.len()).flat_map(move |s| {
            self.configurations.iter().flat_map(move |&c| {
                self.positions.iter().filter_map(move |&b| {
                    res.scan.curve(s, c, b).map(|z| ScanCurve {
                        scenario: s,
                        configuration: c,
                        bus: res.scan.buses[b],
                        z,
                    })
                })
            })
        })
    }
}

/// The per-bus CSVs' rows: every bus (sheet order) and every configuration unless `--bus`
/// / `--configuration` narrow them.
#[derive(Debug, Clone)]
pub struct BusTable {
    /// Network bus indices.
    pub buses: Vec<usize>,
    pub configurations: Vec<usize>,
}

/// The harmonic voltages of one scenario and configuration: `v_pu[bus][order]` over
/// `res.penetration.injections.orders`, every bus of the network.
#[derive(Debug, Clone)]
pub struct VoltageBlock {
    pub scenario: usize,
    pub configuration: usize,
    pub v_pu: Vec<Vec<f64>>,
}

/// The operating point of one scenario and configuration: every bus's voltage, pu, with
/// the transformer phase shifts.
#[derive(Debug, Clone)]
pub struct OperatingBlock {
    pub scenario: usize,
    pub configuration: usize,
    pub v_pu: Vec<Complex64>,
}

impl BusTable {
    /// The rows `sel` selects.
    pub fn new(res: &CheckResults, sel: &ScanSelection) -> Self {
        let or_all = |v: &[usize], n: usize| {
            if v.is_empty() {
                (0..n).collect()
            } else {
                v.to_vec()
            }
        };
        BusTable {
            buses: or_all(&sel.buses, res.network.buses.len()),
            configurations: or_all(&sel.configurations, res.scan.configurations.len()),
        }
    }

    /// Refuses an operating CSV of more than [`MAX_SCAN_ROWS`] rows (one per scenario,
    /// configuration and bus).
    pub fn bounded(self, res: &CheckResults) -> Result<Self, ExportError> {
        let rows = (res.scan.scenarios.len() * self.configurations.len() * self.buses.len()) as u64;
        if rows > MAX_SCAN_ROWS {
            return Err(ExportError::TooLarge(rows));
        }
        Ok(self)
    }

    /// `solve` for every selected configuration, scenario by scenario, as (scenario,
    /// configuration, value); a configuration `solve` gives nothing for is left out.
    fn each<'a, T>(
        &'a self,
        res: &'a CheckResults,
        solve: impl Fn(usize, &[u32]) -> Option<T> + Copy + 'a,
    ) -> impl Iterator<Item = (usize, usize, T)> + 'a {
        (0..res.scan.scenarios.len()).flat_map(move |s| {
            (self.configurations.iter()).filter_map(move |&c| {
                solve(s, &res.scan.configurations[c].steps).map(|v| (s, c, v))
            })
        })
    }

    /// The harmonic voltages of every selected configuration, scenario by scenario (a
    /// configuration the penetration cannot evaluate is left out).
    pub fn voltages<'a>(
        &'a self,
        res: &'a CheckResults,
    ) -> impl Iterator<Item = VoltageBlock> + 'a {
        self.each(res, move |s, steps| res.penetration.voltages(s, steps))
            .map(|(scenario, configuration, v_pu)| VoltageBlock {
                scenario,
                configuration,
                v_pu,
            })
    }

    /// The operating point of every selected configuration, scenario by scenario (a
    /// configuration without load-flow solution is left out).
    pub fn operating<'a>(
        &'a self,
        res: &'a CheckResults,
    ) -> impl Iterator<Item = OperatingBlock> + 'a {
        self.each(res, move |s, steps| res.load_flow.voltages(s, steps).ok())
            .map(|(scenario, configuration, v_pu)| OperatingBlock {
                scenario,
                configuration,
                v_pu,
            })
    }
}
