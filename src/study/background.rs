//! How much of each bank's harmonic current the utility's background distortion drives:
//! the classic reason filters and detuned banks overload at plants whose own converters
//! are modest.

use serde::Serialize;

use super::Configuration;
use super::penetration::Penetration;
use crate::model::CapacitorBank;
use crate::network::Network;

/// The configuration where one bank draws the most background current in one scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BackgroundShare {
    pub bank: String,
    pub scenario: String,
    pub configuration: String,
    /// rms over the orders of the bank's harmonic current from every source (plant and
    /// background, by the summation law), A per phase.
    pub total_rms_a: f64,
    /// rms over the orders of the bank's harmonic current from the background alone, A.
    pub background_rms_a: f64,
    /// background / total × 100 (above 100 % under phasor summation where the plant's
    /// own currents partly cancel the background's).
    pub share_percent: Option<f64>,
}

/// Per bank and scenario, the studied configuration with the most background current in
/// the bank (none when the plant has no Background sheet or the bank never draws any).
pub fn background_shares(
    pen: &Penetration,
    net: &Network,
    banks: &[CapacitorBank],
    configurations: &[Configuration],
) -> Vec<BackgroundShare> {
    if !pen.injections.has_background() {
        return Vec::new();
    }
    let nc = configurations.len();
    let mut out = Vec::new();
    for (b, bank) in net.banks.iter().enumerate() {
        for (s, scenario) in net.scenarios.iter().enumerate() {
            let worst = (0..nc)
                .map(|c| (c, pen.result(s, c, nc)))
                .filter(|(_, d)| d.bank_background_rms_a[b] > 0.0)
                .max_by(|x, y| {
                    x.1.bank_background_rms_a[b].total_cmp(&y.1.bank_background_rms_a[b])
                });
            let Some((c, d)) = worst else { continue };
            let total = d.bank_current_a[b]
                .iter()
                .map(|a| a * a)
                .sum::<f64>()
                .sqrt();
            let bg = d.bank_background_rms_a[b];
            out.push(BackgroundShare {
                bank: bank.id.clone(),
                scenario: scenario.name.clone(),
                configuration: configurations[c].label(banks),
                total_rms_a: total,
                background_rms_a: bg,
                share_percent: (total > 0.0).then(|| bg / total * 100.0),
            });
        }
    }
    out
}
