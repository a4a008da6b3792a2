//! Capacitor-step configurations: every combination of the studied step counts of every
//! bank, labelled as in the input contract (`C1=2 C2=0`, or `none` when every bank is off).

use serde::Serialize;

use crate::model::CapacitorBank;

/// The energized step count of every bank, in the order of the Capacitors sheet.
#[derive(Debug, Clone, PartialEq, Eq, Hash, Serialize)]
pub struct Configuration {
    pub steps: Vec<u32>,
}

impl Configuration {
    /// Every bank at 0 steps.
    pub fn none(banks: usize) -> Self {
        Configuration {
            steps: vec![0; banks],
        }
    }

    /// True when no bank is energized.
    pub fn is_none(&self) -> bool {
        self.steps.iter().all(|&n| n == 0)
    }

    /// The contract's label: `C1=2 C2=0`, or `none` with every bank at 0.
    pub fn label(&self, banks: &[CapacitorBank]) -> String {
        if self.is_none() {
            return "none".to_string();
        }
        banks
            .iter()
            .zip(&self.steps)
            .map(|(b, n)| format!("{}={n}", b.id))
            .collect::<Vec<_>>()
            .join(" ")
    }
}

/// Every combination of studied steps, the first bank varying slowest; the number of
/// combinations is the product of the studied-step counts.
pub fn all_configurations(banks: &[CapacitorBank]) -> Vec<Configuration> {
    let mut out = vec![Configuration { steps: Vec::new() }];
    for b in banks {
        let mut next = Vec::with_capacity(out.len() * b.studied_steps.len());
        for c in &out {
            for &n in &b.studied_steps {
                let mut steps = c.steps.clone();
                steps.push(n);
                next.push(Configuration { steps });
            }
        }
        out = next;
    }
    out
}

/// The number of combinations [`all_configurations`] would give, saturating.
pub fn configuration_count(banks: &[CapacitorBank]) -> u64 {
    banks.iter().fold(1u64, |acc, b| {
        acc.saturating_mul(b.studied_steps.len() as u64)
    })
}

/// A configuration named on the command line could not be understood.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ConfigurationError {
    #[error("configuration \"{text}\": \"{item}\" is not of the form BANK=STEPS")]
    Syntax { text: String, item: String },
    #[error("configuration \"{text}\": there is no bank \"{bank}\" on the Capacitors sheet")]
    UnknownBank { text: String, bank: String },
    #[error("configuration \"{text}\": bank \"{bank}\" is named twice")]
    Repeated { text: String, bank: String },
    #[error(
        "configuration \"{text}\": {steps} steps of bank \"{bank}\" is not among its studied steps ({studied})"
    )]
    NotStudied {
        text: String,
        bank: String,
        steps: String,
        studied: String,
    },
}

/// Parses `C2=1 C1=3` (banks in any order, banks not named at 0, `none` accepted) and
/// checks every count against the bank's studied steps.
pub fn parse_configuration(
    text: &str,
    banks: &[CapacitorBank],
) -> Result<Configuration, ConfigurationError> {
    let mut steps = vec![0u32; banks.len()];
    let mut named = vec![false; banks.len()];
    let trimmed = text.trim();
    if !trimmed.eq_ignore_ascii_case("none") {
        for item in trimmed.split_whitespace() {
            let syntax = || ConfigurationError::Syntax {
                text: text.to_string(),
                item: item.to_string(),
            };
            let (id, n) = item.split_once('=').ok_or_else(syntax)?;
            let b = banks.iter().position(|b| b.id == id).ok_or_else(|| {
                ConfigurationError::UnknownBank {
                    text: text.to_string(),
                    bank: id.to_string(),
                }
            })?;
            if named[b] {
                return Err(ConfigurationError::Repeated {
                    text: text.to_string(),
                    bank: id.to_string(),
                });
            }
            named[b] = true;
            let count: u32 = n.parse().map_err(|_| ConfigurationError::NotStudied {
                text: text.to_string(),
                bank: id.to_string(),
                steps: n.to_string(),
                studied: studied_list(&banks[b]),
            })?;
            steps[b] = count;
        }
    }
    for (b, &n) in banks.iter().zip(&steps) {
        if !b.studied_steps.contains(&n) {
            return Err(ConfigurationError::NotStudied {
                text: text.to_string(),
                bank: b.id.clone(),
                steps: n.to_string(),
                studied: studied_list(b),
            });
        }
    }
    Ok(Configuration { steps })
}

fn studied_list(b: &CapacitorBank) -> String {
    b.studied_steps
        .iter()
        .map(u32::to_string)
        .collect::<Vec<_>>()
        .join(",")
}
