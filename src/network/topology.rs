//! Topology checks: in every scenario each bus must reach an in-service source.

use super::Network;

/// A network that cannot be solved as described.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum TopologyError {
    #[error("{element}: bus \"{bus}\" does not exist")]
    UnknownBus { element: String, bus: String },
    #[error(
        "scenario \"{scenario}\": bus(es) {} reach no source in service (check the Sources, Transformers and Cables sheets)",
        .buses.iter().map(|b| format!("\"{b}\"")).collect::<Vec<_>>().join(", ")
    )]
    Isolated {
        scenario: String,
        buses: Vec<String>,
    },
    #[error(
        "Transformers: {element} closes a loop whose phase shifts do not agree ({shift_deg}° around it): transformers of different vector groups cannot run in parallel; check the \"Connection\" column"
    )]
    ShiftLoop { element: String, shift_deg: String },
    #[error(
        "Sources: in scenario \"{scenario}\" no utility source is in service, so the PCC bus \"{pcc}\" has no utility side: IEEE 519-2014 judges what the plant exchanges with the utility at the PCC; mark the supply's row Kind = utility (only on-site generation is Kind = generator)"
    )]
    PccWithoutUtility { scenario: String, pcc: String },
}

fn find(parent: &mut [usize], mut i: usize) -> usize {
    while parent[i] != i {
        parent[i] = parent[parent[i]];
        i = parent[i];
    }
    i
}

impl Network {
    /// For each scenario, the buses that no in-service branch path connects to a bus with
    /// an in-service source (union-find over the branches).
    pub(super) fn check_topology(&self) -> Result<(), TopologyError> {
        let n = self.buses.len();
        let mut parent: Vec<usize> = (0..n).collect();
        for br in &self.branches {
            let (a, b) = (find(&mut parent, br.from), find(&mut parent, br.to));
            if a != b {
                parent[a] = b;
            }
        }
        for sc in &self.scenarios {
            let mut fed = vec![false; n];
            for &s in &sc.sources {
                let root = find(&mut parent, self.sources[s].bus);
                fed[root] = true;
            }
            let isolated: Vec<String> = (0..n)
                .filter(|&i| !fed[find(&mut parent, i)])
                .map(|i| self.buses[i].id.clone())
                .collect();
            if !isolated.is_empty() {
                return Err(TopologyError::Isolated {
                    scenario: sc.name.clone(),
                    buses: isolated,
                });
            }
        }
        Ok(())
    }
}
