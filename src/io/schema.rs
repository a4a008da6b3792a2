//! The input contract's schema, one table for the reader, the template and the review: the
//! columns of every input sheet and the Study sheet's items, each with its header (and
//! unit), whether it is required, the note the template shows on it, what the cell accepts
//! (the template's data validation) and its width.

/// What a column accepts, for its data validation.
#[derive(Clone, Copy)]
pub enum Check {
    Text,
    List(&'static [&'static str]),
    Positive,
    NonNegative,
    Between(f64, f64),
    Whole(i32),
}

/// One column of an input sheet: its header as the contract spells it (with its unit),
/// whether the reader requires it, the note the template shows on it, what its cells accept
/// and the template's column width.
pub struct Col {
    pub header: &'static str,
    pub required: bool,
    pub note: &'static str,
    pub check: Check,
    pub width: f64,
}

const fn col(
    required: bool,
    header: &'static str,
    note: &'static str,
    check: Check,
    width: f64,
) -> Col {
    Col {
        header,
        required,
        note,
        check,
        width,
    }
}

/// A column as the reader matches it: its header and whether it must be present.
#[derive(Debug, Clone, Copy)]
pub struct Column {
    /// The header as the contract spells it (used in messages).
    pub header: &'static str,
    pub required: bool,
}

/// The columns the reader expects on `sheet` (an element sheet's name as the contract
/// spells it; none for another name).
pub fn columns(sheet: &str) -> Vec<Column> {
    sheets()
        .into_iter()
        .find(|(name, _)| *name == sheet)
        .map(|(_, cols)| {
            cols.iter()
                .map(|c| Column {
                    header: c.header,
                    required: c.required,
                })
                .collect()
        })
        .unwrap_or_default()
}

/// The Study sheet's item names as the contract spells them.
pub fn study_item_names() -> Vec<&'static str> {
    study_items().into_iter().map(|(item, _, _)| item).collect()
}

pub const YES_NO: &[&str] = &["yes", "no"];
/// Load types as the contract spells them (the dropdown of the Loads sheet).
pub const LOAD_TYPES: &[&str] = &[
    "linear",
    "motor",
    "6-pulse drive",
    "6-pulse drive with reactor",
    "12-pulse drive",
    "18-pulse drive",
    "active front end",
    "electronic",
    "custom",
];
pub const LIMITS: &[&str] = &[
    "IEEE 519-2014",
    "IEC 61000-2-4 class 1",
    "IEC 61000-2-4 class 2",
    "IEC 61000-2-4 class 3",
];
pub const SUMMATION: &[&str] = &["arithmetic", "IEC 61000-3-6", "phasor"];
pub const BANK_CONNECTIONS: &[&str] = &["delta", "wye", "wye grounded"];
pub const WIRINGS: &[&str] = &["3-wire", "4-wire"];
pub const SOURCE_KINDS: &[&str] = &["utility", "generator"];
pub const RESISTANCE: &[&str] = &["frequency-dependent", "constant", "skin"];
pub const LOAD_MODELS: &[&str] = &["CIGRE", "parallel R-L"];

pub const DATA_ROWS: u32 = 1000;

// Long: the contract's columns as one data table, a row per column.
pub fn sheets() -> Vec<(&'static str, Vec<Col>)> {
    use Check::*;
    vec![
        (
            "Buses",
            vec![
                col(
                    true,
                    "Bus",
                    "Bus id: text, unique, case-sensitive. Required.",
                    Text,
                    14.0,
                ),
                col(
                    true,
                    "Nominal kV",
                    "Line-to-line nominal voltage in kV, > 0. Required.",
                    Positive,
                    13.0,
                ),
                col(false, "Description", "Optional free text.", Text, 36.0),
                col(
                    false,
                    "Neutral rating (A)",
                    "Ampacity of the neutral conductor feeding the bus's 4-wire loads, A rms, > 0: their triplen currents add in the neutral (3 I0). Blank = the neutral current is reported, not checked.",
                    Positive,
                    12.0,
                ),
            ],
        ),
        (
            "Sources",
            vec![
                col(
                    true,
                    "Source",
                    "Source id (utility supply or generator as a Thevenin equivalent). Required.",
                    Text,
                    14.0,
                ),
                col(
                    true,
                    "Bus",
                    "Bus id the source is connected to. Required.",
                    Text,
                    12.0,
                ),
                col(
                    false,
                    "Scenario",
                    "Supply condition this row belongs to (max, min, generator...). Rows sharing a scenario are in service together; blank = in service in every named scenario. No scenario named anywhere = one scenario, base.",
                    Text,
                    14.0,
                ),
                col(
                    false,
                    "Short-circuit MVA",
                    "Three-phase fault level at the bus in MVA, > 0. Give this or Short-circuit kA, exactly one.",
                    Positive,
                    19.0,
                ),
                col(
                    false,
                    "Short-circuit kA",
                    "Three-phase fault current in kA, > 0 (S = sqrt(3) x kV x kA). Give this or Short-circuit MVA, exactly one.",
                    Positive,
                    18.0,
                ),
                col(
                    true,
                    "X/R",
                    "X/R ratio of the source impedance at fundamental, > 0. Required.",
                    Positive,
                    8.0,
                ),
                col(
                    false,
                    "Voltage (pu)",
                    "EMF behind the source impedance for the operating point (load flow), pu of the bus's nominal kV, angle 0; 0.5 to 1.5. Default 1.0.",
                    Between(0.5, 1.5),
                    12.0,
                ),
                col(
                    false,
                    "Zero-sequence MVA",
                    "Zero-sequence short-circuit power in MVA (Z0 = kV^2 / S0), > 0: the supply's zero-sequence equivalent for triplen orders. Default: equal to the positive sequence.",
                    Positive,
                    19.0,
                ),
                col(
                    false,
                    "Zero-sequence X/R",
                    "X/R of the zero-sequence source impedance, > 0. Default: the positive-sequence X/R.",
                    Positive,
                    12.0,
                ),
                col(
                    false,
                    "Kind",
                    "utility (the supply on the other side of the PCC) or generator (on-site generation, part of the plant). The PCC's power, harmonic currents and TDD are the flow between the PCC bus and the utility side. Default utility.",
                    List(SOURCE_KINDS),
                    11.0,
                ),
            ],
        ),
        (
            "Transformers",
            vec![
                col(true, "Transformer", "Transformer id. Required.", Text, 14.0),
                col(
                    true,
                    "HV bus",
                    "High-voltage bus id. The ratio is the ratio of the buses' nominal kV. Required.",
                    Text,
                    12.0,
                ),
                col(
                    true,
                    "LV bus",
                    "Low-voltage bus id; its nominal kV must differ from the HV bus's. Required.",
                    Text,
                    12.0,
                ),
                col(true, "kVA", "Rating in kVA, > 0. Required.", Positive, 10.0),
                col(
                    true,
                    "Impedance (%)",
                    "Impedance in % on its own rating, > 0. Required.",
                    Positive,
                    15.0,
                ),
                col(
                    true,
                    "X/R",
                    "X/R ratio at fundamental, > 0. Required.",
                    Positive,
                    8.0,
                ),
                col(
                    false,
                    "In service",
                    "yes/no (also y/n, true/false, 1/0, in/out). Default yes.",
                    List(YES_NO),
                    11.0,
                ),
                col(
                    false,
                    "Connection",
                    "IEC 60076-1 vector group, HV winding first: Dyn11, Dyn1, YNyn0, Yy0, Dd0, YNd1, Dzn0... Gives the phase shift (clock x 30 deg) and the zero-sequence path. Default Dyn1 at 60 Hz, Dyn11 at 50 Hz (common practice).",
                    Text,
                    12.0,
                ),
                col(
                    false,
                    "Zero-sequence impedance (%)",
                    "Zero-sequence impedance in % on its own rating, > 0, with the same X/R; only where a zero-sequence path exists (YN or ZN windings). Default: the positive-sequence impedance.",
                    Positive,
                    16.0,
                ),
            ],
        ),
        (
            "Cables",
            vec![
                col(true, "Cable", "Cable id. Required.", Text, 12.0),
                col(true, "From bus", "Bus id at one end. Required.", Text, 12.0),
                col(
                    true,
                    "To bus",
                    "Bus id at the other end, same nominal kV. Required.",
                    Text,
                    12.0,
                ),
                col(
                    true,
                    "Length (m)",
                    "Route length in m, > 0. Required.",
                    Positive,
                    12.0,
                ),
                col(
                    true,
                    "R (ohm/km)",
                    "Series resistance per phase at fundamental, ohm/km, >= 0. Required.",
                    NonNegative,
                    12.0,
                ),
                col(
                    true,
                    "X (ohm/km)",
                    "Series reactance per phase at fundamental, ohm/km, >= 0. Required.",
                    NonNegative,
                    12.0,
                ),
                col(
                    false,
                    "C (uF/km)",
                    "Shunt capacitance per phase, uF/km, >= 0 (pi model, half at each end). Default 0.",
                    NonNegative,
                    11.0,
                ),
                col(
                    false,
                    "Runs",
                    "Parallel runs, whole number >= 1. Default 1.",
                    Whole(1),
                    7.0,
                ),
                col(
                    false,
                    "R0 (ohm/km)",
                    "Zero-sequence series resistance per phase, ohm/km, >= 0 (the cable's data: return through its neutral or sheath). Default 3 x R (common practice).",
                    NonNegative,
                    12.0,
                ),
                col(
                    false,
                    "X0 (ohm/km)",
                    "Zero-sequence series reactance per phase, ohm/km, >= 0. Default 3 x X (common practice).",
                    NonNegative,
                    12.0,
                ),
            ],
        ),
        (
            "Capacitors",
            vec![
                col(
                    true,
                    "Bank",
                    "Bank id: no spaces or '='. Required.",
                    Text,
                    10.0,
                ),
                col(true, "Bus", "Bus id. Required.", Text, 10.0),
                col(
                    true,
                    "Rated kV",
                    "Capacitor rated voltage, line-to-line kV, > 0. Required.",
                    Positive,
                    10.0,
                ),
                col(
                    true,
                    "Step kvar",
                    "Rated kvar of one step at rated kV, > 0. Required.",
                    Positive,
                    11.0,
                ),
                col(
                    false,
                    "Steps",
                    "Number of equal steps, whole number >= 1. Default 1.",
                    Whole(1),
                    7.0,
                ),
                col(
                    false,
                    "Detuning (%)",
                    "Series reactor reactance as % of the capacitor reactance at fundamental (7 = 7 %). 0 or blank = plain bank. Give at most one of Detuning and Tuned order.",
                    Between(0.0, 99.0),
                    13.0,
                ),
                col(
                    false,
                    "Tuned order",
                    "Tuned filter order (p = 1/order^2), > 1, e.g. 4.7 for the 5th. Give at most one of Detuning and Tuned order.",
                    Between(1.0001, 100.0),
                    12.0,
                ),
                col(
                    false,
                    "Reactor Q",
                    "Reactor X/R at fundamental, > 0. Default 50.",
                    Positive,
                    10.0,
                ),
                col(
                    false,
                    "Status",
                    "existing or proposed. Default proposed.",
                    List(&["existing", "proposed"]),
                    10.0,
                ),
                col(
                    false,
                    "Studied steps",
                    "Which energized step counts to study: all (0..Steps, default), a list 0,2,4 or a range 1-3.",
                    Text,
                    14.0,
                ),
                col(
                    false,
                    "Inrush inductance (uH)",
                    "Inductance between the steps of a plain bank for back-to-back switching, uH per step, > 0. Default 10 (common practice). Not used with a series reactor.",
                    Positive,
                    14.0,
                ),
                col(
                    false,
                    "Connection",
                    "delta, wye (ungrounded) or wye grounded. Only a grounded-wye bank has a zero-sequence path (triplen orders). Default delta up to 1 kV, wye above (common practice).",
                    List(BANK_CONNECTIONS),
                    13.0,
                ),
                col(
                    false,
                    "Trapped charge (pu)",
                    "Capacitor voltage left on a step when it recloses, -1 to 1 per unit of nominal peak voltage (a controller that recloses before the discharge time). Switching simulation only. Default 0.",
                    Between(-1.0, 1.0),
                    12.0,
                ),
                col(
                    false,
                    "Switch inrush limit (kA)",
                    "Peak inrush current the step's switching device withstands, kA, > 0. Optional: blank = not checked.",
                    Positive,
                    12.0,
                ),
            ],
        ),
        (
            "Loads",
            vec![
                col(true, "Load", "Load tag. Required.", Text, 14.0),
                col(true, "Bus", "Bus id. Required.", Text, 10.0),
                col(
                    true,
                    "Type",
                    "linear, motor, 6-pulse drive, 6-pulse drive with reactor, 12-pulse drive, 18-pulse drive, active front end, electronic or custom. Required.",
                    List(LOAD_TYPES),
                    24.0,
                ),
                col(
                    true,
                    "kW",
                    "Electrical input per unit at full load, kW, >= 0. Required.",
                    NonNegative,
                    9.0,
                ),
                col(
                    false,
                    "Power factor",
                    "Displacement power factor, 0 < pf <= 1. Default 0.85 for linear and motor, 0.95 for converters.",
                    Between(0.01, 1.0),
                    13.0,
                ),
                col(
                    false,
                    "Quantity",
                    "Number of identical units, >= 0. Default 1.",
                    NonNegative,
                    9.0,
                ),
                col(
                    false,
                    "Load factor",
                    "Fraction of full load at the study point, 0 to 1. Default 1.",
                    Between(0.0, 1.0),
                    11.0,
                ),
                col(
                    false,
                    "Spectrum",
                    "Name of a spectrum on the Spectra sheet. Required for custom; overrides the type's built-in spectrum otherwise; not allowed for linear and motor.",
                    Text,
                    12.0,
                ),
                col(
                    false,
                    "Connection",
                    "3-wire (no neutral: its triplen harmonics flow as positive/negative sequence) or 4-wire (phase-to-neutral: triplens in the neutral, zero sequence). Default 4-wire for electronic, 3-wire for every other type.",
                    List(WIRINGS),
                    11.0,
                ),
            ],
        ),
        (
            "Spectra",
            vec![
                col(
                    true,
                    "Spectrum",
                    "Spectrum name; one row per harmonic. Required.",
                    Text,
                    12.0,
                ),
                col(
                    true,
                    "Order",
                    "Harmonic order h > 1 (may be non-integer), once per spectrum. Required.",
                    Between(1.0001, 1000.0),
                    8.0,
                ),
                col(
                    true,
                    "Magnitude (%)",
                    "Magnitude in % of the fundamental current, >= 0. Required.",
                    NonNegative,
                    15.0,
                ),
                col(
                    false,
                    "Angle (deg)",
                    "Phase angle in degrees, referred to h x the angle of the load's fundamental current. Required for every line under phasor summation; not used otherwise.",
                    Between(-360.0, 360.0),
                    12.0,
                ),
            ],
        ),
        (
            "Background",
            vec![
                col(
                    true,
                    "Source",
                    "Source id from the Sources sheet: the utility's own harmonic voltage behind that source (open-circuit EMF, plant disconnected). Required.",
                    Text,
                    12.0,
                ),
                col(
                    true,
                    "Order",
                    "Harmonic order h > 1, once per source. Required.",
                    Between(1.0001, 1000.0),
                    8.0,
                ),
                col(
                    true,
                    "Voltage (%)",
                    "Harmonic voltage in % of the nominal voltage, 0 to 100. Required.",
                    Between(0.0, 100.0),
                    12.0,
                ),
                col(
                    false,
                    "Angle (deg)",
                    "Angle in degrees referred to the source's fundamental EMF; used with phasor summation. Default 0.",
                    Between(-360.0, 360.0),
                    12.0,
                ),
            ],
        ),
        (
            "Design",
            vec![
                col(
                    true,
                    "Bus",
                    "For `overtone design`: a bus where a bank may go (Bus id from the Buses sheet), one row per bus; each plan puts one bank at one of these buses. A proposed bank on the Capacitors sheet at this bus is what is designed (the plan replaces it). Required.",
                    Text,
                    14.0,
                ),
                col(
                    true,
                    "Step kvar",
                    "Allowed step sizes, kvar of one step at the capacitor's rated voltage, separated by commas, e.g. 25, 50, 100. Required.",
                    Text,
                    16.0,
                ),
                col(
                    false,
                    "Steps",
                    "Allowed step counts: a count (4) or a range (2-8), 1 to 64. Default 1-8.",
                    Text,
                    9.0,
                ),
                col(
                    false,
                    "Detuning",
                    "Detuning choices separated by commas: plain, a detuning factor in % of X_C (5.67, 7, 14) or a tuned order (tuned 4.7). Default: plain, 5.67, 7, 14.",
                    Text,
                    22.0,
                ),
                col(
                    false,
                    "Rated kV",
                    "Capacitor voltage classes, kV line-to-line, separated by commas, e.g. 0.48, 0.525, 0.6. Default: the two standard ratings at or above the capacitor's voltage U/(1 - p) of each detuning choice.",
                    Text,
                    16.0,
                ),
                col(
                    false,
                    "Capacitor cost (per kvar)",
                    "Relative cost per rated kvar of capacitor: one number, or one per voltage class in the order of Rated kV. Default (invented): 1 x rated kV / bus kV.",
                    Text,
                    14.0,
                ),
                col(
                    false,
                    "Reactor cost (per kvar)",
                    "Relative cost per kvar of reactor (p x rated kvar of the step). Default (invented): 1.5.",
                    NonNegative,
                    12.0,
                ),
                col(
                    false,
                    "Step cost",
                    "Relative cost per switched step (contactor, fuses, controller output). Default (invented): 40.",
                    NonNegative,
                    10.0,
                ),
                col(
                    false,
                    "Leading PF limit",
                    "The lowest leading power factor the controller may leave at the PCC; 1 = never leading. Default 1.",
                    Between(0.5, 1.0),
                    11.0,
                ),
                col(
                    false,
                    "Replaces",
                    "Capacitor id(s) on this bus, existing or proposed, that the designed bank replaces (removed from the plant while the plans are tried), comma-separated: e.g. an existing plain bank the plan may detune. Blank = the proposed bank on this bus.",
                    Text,
                    14.0,
                ),
            ],
        ),
        (
            "Load levels",
            vec![
                col(
                    true,
                    "Level",
                    "For `overtone design`: a load level's name (full, night, weekend...); several rows with one name make one level. Without this sheet: full load (the Loads sheet) and light load (load factors halved). Required.",
                    Text,
                    14.0,
                ),
                col(
                    false,
                    "Hours per year",
                    "Hours per year at this level, its weight in the weighted power factor (0 to 8784); give it on any row of the level. Default 1.",
                    Between(0.0, 8784.0),
                    12.0,
                ),
                col(
                    false,
                    "Load",
                    "The loads this row sets: a Load id, a load type (motor, 6-pulse drive...), or blank for every load; the most specific row wins. Loads no row names keep their Loads-sheet factor.",
                    Text,
                    18.0,
                ),
                col(
                    true,
                    "Load factor",
                    "Fraction of full load at this level, 0 to 1 (replaces the Loads sheet's). Required.",
                    Between(0.0, 1.0),
                    11.0,
                ),
            ],
        ),
    ]
}

/// The Study sheet's items: (item, note, check).
pub fn study_items() -> Vec<(&'static str, &'static str, Check)> {
    use Check::*;
    vec![
        (
            "Title",
            "Study title, shown on every report page. Default: the file name.",
            Text,
        ),
        ("Plant", "Plant or site name.", Text),
        ("Prepared by", "Author.", Text),
        ("Frequency (Hz)", "50 or 60. Required.", List(&["50", "60"])),
        (
            "PCC bus",
            "Bus id of the point of common coupling. Default: the bus of the first source.",
            Text,
        ),
        (
            "Max demand current (A)",
            "I_L at the PCC for the TDD check, A. Default: estimated from the Loads sheet and flagged as an estimate.",
            Positive,
        ),
        (
            "Highest order",
            "Highest harmonic order studied. Default 50.",
            Between(1.0001, 1000.0),
        ),
        (
            "Scan step (order)",
            "Frequency-scan step in harmonic order. Default 0.01.",
            Between(0.0001, 1.0),
        ),
        (
            "Resistance model",
            "frequency-dependent (each element by its published law: sources and reactors R*sqrt(h), transformers and motors R*(1 + 0.1*h^1.5)/1.1, cables IEC 60287-1-1 skin effect), constant (R independent of frequency: the least damping) or skin (R*sqrt(h), motors constant). Default frequency-dependent.",
            List(RESISTANCE),
        ),
        (
            "Limits",
            "IEEE 519-2014, IEC 61000-2-4 class 1, class 2 or class 3. Default IEEE 519-2014.",
            List(LIMITS),
        ),
        (
            "Summation",
            "arithmetic (magnitudes add: an upper bound), IEC 61000-3-6 (summation exponents by order) or phasor (complex sum with spectrum angles referred to each load's fundamental current at the operating point). Default arithmetic.",
            List(SUMMATION),
        ),
        (
            "Resonance margin (%)",
            "A resonance peak within this many percent of a characteristic harmonic is flagged. Default 10.",
            Between(0.0, 99.0),
        ),
        (
            "Capacitance tolerance (%)",
            "Band such as -5/+10; the resonance band is reported across it. Default 0/+10.",
            Text,
        ),
        (
            "Target power factor",
            "Power factor wanted at the PCC, lagging, 0.5 to 1. Default 0.95.",
            Between(0.5, 1.0),
        ),
        (
            "Step voltage change (%)",
            "Largest acceptable bus voltage change when one capacitor step switches, %. Default 3 (common practice).",
            Between(0.01, 100.0),
        ),
        (
            "Voltage range (pu)",
            "Acceptable steady-state bus voltage band low/high in pu, e.g. 0.95/1.05. Default 0.95/1.05.",
            Text,
        ),
        (
            "Load model",
            "How linear loads damp harmonics: CIGRE (R_s = V^2/P in series with X_s = 0.073*h*R_s, in parallel with X_p = h*R_s/(6.7*Q/P - 0.74)) or parallel R-L (R = V^2/P parallel with X = h*V^2/Q). Default CIGRE.",
            List(LOAD_MODELS),
        ),
    ]
}
