//! What every study of one plant shares, built once per check: the validated plant, its
//! positive- and zero-sequence networks, the buses to scan and the step combinations.

use super::results::{CheckError, CheckOptions, MAX_CONFIGURATIONS};
use crate::model::Plant;
use crate::network::Network;
use crate::study::config::configuration_count;
use crate::study::{Configuration, all_configurations};

/// What every study of a plant shares: built once per check.
pub struct Context<'p> {
    pub plant: &'p Plant,
    pub network: Network,
    /// The zero-sequence network on the same buses.
    pub zero: Network,
    /// Network index of the PCC bus.
    pub pcc: usize,
    /// The buses scanned: the PCC first, then the bank buses, then those asked for (under
    /// `screened_banks`, those banks' buses alone).
    pub buses: Vec<usize>,
    /// The step combinations studied (`none` always among them).
    pub configurations: Vec<Configuration>,
    /// The grounded-wye banks' buses (the zero-sequence scan's buses).
    pub zero_buses: Vec<usize>,
    /// The positive-sequence network without shunts: sources, transformers and cables
    /// alone (Isc at the PCC, the hand check's S_sc where the path is not unique).
    pub short_circuit: Network,
}

impl<'p> Context<'p> {
    /// Validates `plant`, builds its networks and resolves the buses and configurations of
    /// `options`.
    pub fn build(plant: &'p Plant, options: &CheckOptions) -> Result<Self, CheckError> {
        plant.validate()?;
        let count = configuration_count(&plant.banks);
        if options.configurations.is_empty() && count > MAX_CONFIGURATIONS {
            return Err(CheckError::TooManyConfigurations { count });
        }
        let network = Network::build(plant)?;
        let pcc_id = plant.pcc_bus().unwrap_or_default().to_string();
        let pcc = network
            .bus_index(&pcc_id)
            .ok_or_else(|| CheckError::UnknownBus(pcc_id.clone()))?;
        let screened = |id: &str| {
            (options.screened_banks.as_ref()).is_none_or(|ids| ids.iter().any(|i| i == id))
        };
        let buses = match &options.screened_banks {
            None => scan_buses(&network, pcc, &options.buses)?,
            Some(_) => {
                let mut buses: Vec<usize> = Vec::new();
                for b in network.banks.iter().filter(|b| screened(&b.id)) {
                    if !buses.contains(&b.bus) {
                        buses.push(b.bus);
                    }
                }
                buses
            }
        };
        let configurations = configurations(plant, &options.configurations)?;
        let zero = network.build_zero(plant)?;
        let mut zero_buses: Vec<usize> = Vec::new();
        for b in (network.banks.iter()).filter(|b| b.connection.has_zero_path() && screened(&b.id))
        {
            if !zero_buses.contains(&b.bus) {
                zero_buses.push(b.bus);
            }
        }
        Ok(Context {
            plant,
            short_circuit: network.short_circuit_network(),
            network,
            zero,
            pcc,
            buses,
            configurations,
            zero_buses,
        })
    }
}

/// The buses to scan: the PCC, every bank bus, then `extra` (ids), each once.
fn scan_buses(network: &Network, pcc: usize, extra: &[String]) -> Result<Vec<usize>, CheckError> {
    let mut buses = vec![pcc];
    for b in &network.banks {
        if !buses.contains(&b.bus) {
            buses.push(b.bus);
        }
    }
    for id in extra {
        let i = network
            .bus_index(id)
            .ok_or_else(|| CheckError::UnknownBus(id.clone()))?;
        if !buses.contains(&i) {
            buses.push(i);
        }
    }
    Ok(buses)
}

/// The configurations to study: every combination of studied steps, or those `labels`
/// name (each once); `none` is always added.
fn configurations(plant: &Plant, labels: &[String]) -> Result<Vec<Configuration>, CheckError> {
    let mut configurations: Vec<Configuration> = if labels.is_empty() {
        all_configurations(&plant.banks)
    } else {
        let mut chosen = Vec::new();
        let mut seen = std::collections::HashSet::new();
        for text in labels {
            let c = crate::study::parse_configuration(text, &plant.banks)?;
            if seen.insert(c.steps.clone()) {
                chosen.push(c);
            }
        }
        chosen
    };
    let none = Configuration::none(plant.banks.len());
    if !configurations.contains(&none) {
        configurations.push(none);
    }
    Ok(configurations)
}

/// Configurations that differ only in banks without a zero-sequence path have the same
/// zero-sequence network: the distinct projections of `configurations` onto the banks with
/// one, and for each configuration the index of its projection.
pub(super) fn zero_projections(
    network: &Network,
    configurations: &[Configuration],
) -> (Vec<Configuration>, Vec<usize>) {
    let mut distinct: Vec<Configuration> = Vec::new();
    let map = configurations
        .iter()
        .map(|c| {
            let steps: Vec<u32> = c
                .steps
                .iter()
                .zip(&network.banks)
                .map(|(&k, b)| if b.connection.has_zero_path() { k } else { 0 })
                .collect();
            let projected = Configuration { steps };
            distinct
                .iter()
                .position(|d| *d == projected)
                .unwrap_or_else(|| {
                    distinct.push(projected);
                    distinct.len() - 1
                })
        })
        .collect();
    (distinct, map)
}
