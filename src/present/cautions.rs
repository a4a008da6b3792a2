//! The cautions of SAFETY.md, adapted for reports. Every report prints them.

/// Short cautions for the terminal summary and every report.
pub const CAUTIONS: &[&str] = &[
    "Screening-level results: a balanced model in symmetrical components built from the input as given. \
     Verify the input data and the models against the plant before relying on them.",
    "Local electrical codes, the utility's interconnection rules and the review and seal of a \
     licensed professional engineer govern the final design; this output does not replace them.",
    "Capacitors store charge after disconnection: only qualified persons may work near them, \
     after the rated discharge time has passed and every terminal is verified de-energized and grounded.",
    "Switching capacitor banks causes inrush currents and transient overvoltages; energizing a \
     resonant configuration can damage equipment. Do not energize a configuration flagged RESONANT \
     before a qualified review.",
];
