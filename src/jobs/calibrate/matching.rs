//! Switching events matched to the plant's banks, and the step configuration in service
//! in each stretch of the recording.

use serde::Serialize;

use crate::model::Plant;

/// The bank and step count an event fits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Match {
    pub bank: String,
    /// Steps switched: positive in, negative out.
    pub steps: i32,
    /// The kvar those steps give at the measured voltage: n·Step kvar·(V/V_rated)².
    pub expected_kvar: f64,
    /// (|ΔQ| − expected)/expected, %.
    pub misfit_percent: f64,
    /// How the bank was chosen: `status channel` (a digital channel named after the bank
    /// changed within 2 cycles) or `kvar fit`.
    pub basis: &'static str,
}

/// Largest misfit accepted for a kvar fit, % (common practice: capacitor tolerance and
/// voltage uncertainty together).
pub const MAX_MISFIT_PERCENT: f64 = 25.0;

/// The bank and step count that fit a step of `delta_q_kvar` (plant's reactive power,
/// negative for capacitance switched in) at `v_pu` (the recording point's voltage, pu);
/// `named` restricts the search to one bank (a status channel named it).
pub fn match_event(
    plant: &Plant,
    delta_q_kvar: f64,
    v_pu: f64,
    named: Option<&str>,
) -> Option<Match> {
    let mut best: Option<Match> = None;
    for b in &plant.banks {
        if named.is_some_and(|n| n != b.id) {
            continue;
        }
        let bus_kv = plant
            .buses
            .iter()
            .find(|x| x.id == b.bus)
            .map_or(b.rated_kv, |x| x.nominal_kv);
        let per_step = b.step_kvar * (v_pu * bus_kv / b.rated_kv).powi(2);
        for n in 1..=b.steps {
            let expected = n as f64 * per_step;
            let misfit = 100.0 * (delta_q_kvar.abs() - expected) / expected;
            if best
                .as_ref()
                .is_none_or(|m| misfit.abs() < m.misfit_percent.abs())
            {
                let sign = if delta_q_kvar < 0.0 { 1 } else { -1 };
                best = Some(Match {
                    bank: b.id.clone(),
                    steps: sign * n as i32,
                    expected_kvar: expected,
                    misfit_percent: misfit,
                    basis: if named.is_some() {
                        "status channel"
                    } else {
                        "kvar fit"
                    },
                });
            }
        }
    }
    best.filter(|m| m.misfit_percent.abs() <= MAX_MISFIT_PERCENT || named.is_some())
}

/// The steps of each bank in service before the first event and after each event, given
/// the matched events: the start is `start` when given, else the fewest steps that never go
/// below 0 or above the bank's steps. Returns one state per stretch (events + 1).
pub fn states(plant: &Plant, matches: &[Option<Match>], start: Option<Vec<u32>>) -> Vec<Vec<u32>> {
    let nb = plant.banks.len();
    let index = |id: &str| plant.banks.iter().position(|b| b.id == id);
    let start = start.unwrap_or_else(|| {
        let mut lowest = vec![0i64; nb];
        let mut run = vec![0i64; nb];
        for m in matches.iter().flatten() {
            if let Some(k) = index(&m.bank) {
                run[k] += m.steps as i64;
                lowest[k] = lowest[k].min(run[k]);
            }
        }
        lowest.iter().map(|&l| (-l) as u32).collect()
    });
    let mut out = vec![start.clone()];
    let mut now = start;
    for m in matches {
        if let Some(m) = m
            && let Some(k) = index(&m.bank)
        {
            let top = plant.banks[k].steps as i64;
            now[k] = (now[k] as i64 + m.steps as i64).clamp(0, top) as u32;
        }
        out.push(now.clone());
    }
    out
}
