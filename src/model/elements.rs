//! The element types of the input contract, one struct per sheet row.

use serde::Serialize;

use super::{BankConnection, Sequence, VectorGroup};

/// How series resistance varies with harmonic order h (Study sheet, `Resistance model`);
/// each element's law is in `network::damping`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ResistanceModel {
    /// R independent of frequency: the least damping, the pessimistic option.
    Constant,
    /// R scaled by √h on sources, transformers, cables and reactors (motors constant).
    Skin,
    /// Each element by its published law: √h for sources and reactors, (1 + 0.1·h^1.5)/1.1
    /// for transformers and motors, IEC 60287-1-1 skin effect for cables. The default.
    FrequencyDependent,
}

impl ResistanceModel {
    /// The word the workbook and the reports use.
    pub fn word(self) -> &'static str {
        match self {
            ResistanceModel::Constant => "constant",
            ResistanceModel::Skin => "skin",
            ResistanceModel::FrequencyDependent => "frequency-dependent",
        }
    }
}

/// How linear loads are modelled at harmonic orders (Study sheet, `Load model`); the
/// formulas are in `network::damping::linear_load_y_pu`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum LoadModel {
    /// R parallel with L drawing the load's P and Q (the model before the default changed).
    #[serde(rename = "parallel-r-l")]
    ParallelRl,
    /// The CIGRE load model: R_s + jX_s in parallel with jX_p. The default.
    #[serde(rename = "cigre")]
    Cigre,
}

impl LoadModel {
    /// The word the workbook and the reports use.
    pub fn word(self) -> &'static str {
        match self {
            LoadModel::ParallelRl => "parallel R-L",
            LoadModel::Cigre => "CIGRE",
        }
    }
}

/// The least-damped models: constant resistance and CIGRE loads (whose conductance at any
/// h > 0 is below the parallel R-L's 1/R for the same P). Every flagged resonance's key
/// figures are also given under them.
pub const LEAST_DAMPED: (ResistanceModel, LoadModel) =
    (ResistanceModel::Constant, LoadModel::Cigre);

/// The limit set the harmonic results are held against (Study sheet, `Limits`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum LimitSet {
    #[serde(rename = "ieee-519-2014")]
    Ieee519_2014,
    #[serde(rename = "iec-61000-2-4-class-1")]
    Iec61000_2_4Class1,
    #[serde(rename = "iec-61000-2-4-class-2")]
    Iec61000_2_4Class2,
    #[serde(rename = "iec-61000-2-4-class-3")]
    Iec61000_2_4Class3,
}

/// How the harmonic voltages that several loads cause at a bus add (Study sheet, `Summation`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Summation {
    /// Magnitudes add: an upper bound.
    #[serde(rename = "arithmetic")]
    Arithmetic,
    /// The summation exponents of IEC 61000-3-6 by order.
    #[serde(rename = "iec-61000-3-6")]
    Iec61000_3_6,
    /// Complex superposition of phasors (input contract, version 2): spectrum angles
    /// referred to each load's fundamental current at the operating point.
    #[serde(rename = "phasor")]
    Phasor,
}

/// Capacitance tolerance band in percent, e.g. −5 / +10 (Study sheet).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tolerance {
    /// Lower deviation in percent, ≤ 0 (e.g. −5).
    pub minus_percent: f64,
    /// Upper deviation in percent, ≥ 0 (e.g. +10).
    pub plus_percent: f64,
}

/// The Study sheet: settings that apply to the whole study.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StudySettings {
    pub title: String,
    pub plant: String,
    pub prepared_by: String,
    /// System frequency, 50 or 60 Hz.
    pub frequency_hz: f64,
    pub pcc_bus: Option<String>,
    /// I_L at the PCC for the TDD check, A; `None` = estimate from the loads.
    pub max_demand_current_a: Option<f64>,
    /// Highest harmonic order studied.
    pub highest_order: f64,
    /// Frequency-scan step in harmonic order.
    pub scan_step_order: f64,
    pub resistance_model: ResistanceModel,
    /// How linear loads are modelled at harmonic orders.
    pub load_model: LoadModel,
    pub limits: LimitSet,
    pub summation: Summation,
    /// A peak within this many percent of a characteristic order is flagged.
    pub resonance_margin_percent: f64,
    pub capacitance_tolerance: Tolerance,
    /// Power factor wanted at the PCC, lagging (0.5..1).
    pub target_power_factor: f64,
    /// Largest acceptable steady-state voltage change at a bank's bus when one step
    /// switches, % of the voltage before the switching.
    pub step_voltage_change_percent: f64,
    /// Acceptable steady-state bus voltage band, pu of nominal.
    pub voltage_range: VoltageRange,
}

/// An acceptable steady-state voltage band in per unit of nominal, e.g. 0.95/1.05.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct VoltageRange {
    pub low_pu: f64,
    pub high_pu: f64,
}

/// Default `Target power factor` (input contract, version 2): 0.95 lagging.
pub const DEFAULT_TARGET_POWER_FACTOR: f64 = 0.95;
/// Default `Step voltage change (%)` (input contract, version 2; common practice, from
/// memory).
pub const DEFAULT_STEP_VOLTAGE_CHANGE_PERCENT: f64 = 3.0;
/// Default `Voltage range (pu)` (input contract, version 2).
pub const DEFAULT_VOLTAGE_RANGE: VoltageRange = VoltageRange {
    low_pu: 0.95,
    high_pu: 1.05,
};

impl StudySettings {
    /// The contract's defaults at `frequency_hz`.
    pub fn new(frequency_hz: f64) -> Self {
        StudySettings {
            title: String::new(),
            plant: String::new(),
            prepared_by: String::new(),
            frequency_hz,
            pcc_bus: None,
            max_demand_current_a: None,
            highest_order: 50.0,
            scan_step_order: 0.01,
            resistance_model: ResistanceModel::FrequencyDependent,
            load_model: LoadModel::Cigre,
            limits: LimitSet::Ieee519_2014,
            summation: Summation::Arithmetic,
            resonance_margin_percent: 10.0,
            capacitance_tolerance: Tolerance {
                minus_percent: 0.0,
                plus_percent: 10.0,
            },
            target_power_factor: DEFAULT_TARGET_POWER_FACTOR,
            step_voltage_change_percent: DEFAULT_STEP_VOLTAGE_CHANGE_PERCENT,
            voltage_range: DEFAULT_VOLTAGE_RANGE,
        }
    }
}

/// A bus (node) of the plant.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Bus {
    pub id: String,
    /// Nominal line-to-line voltage, kV.
    pub nominal_kv: f64,
    pub description: String,
    /// The neutral conductor's rating, A rms (sheet `Buses`, `Neutral rating (A)`), for
    /// the neutral-current check of 4-wire loads; `None` = not checked.
    pub neutral_rating_a: Option<f64>,
}

/// Fault level of a source: exactly one of the two forms.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum ShortCircuit {
    /// Three-phase fault level, MVA.
    Mva(f64),
    /// Three-phase fault current, kA.
    Ka(f64),
}

/// A utility supply or generator as a Thevenin equivalent behind its bus.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Source {
    pub id: String,
    pub bus: String,
    /// Supply condition this row belongs to; `None` = in service in every scenario.
    pub scenario: Option<String>,
    pub short_circuit: ShortCircuit,
    /// X/R ratio at fundamental, > 0.
    pub x_over_r: f64,
    /// EMF behind the source impedance for the operating point, pu of the bus's nominal
    /// kV, angle 0 (input contract, version 2: `Voltage (pu)`, default 1.0).
    pub voltage_pu: f64,
    /// Zero-sequence short-circuit power, MVA (Z₀ = kV² / S₀); `None` = the positive
    /// sequence's (input contract, version 2).
    pub zero_short_circuit_mva: Option<f64>,
    /// Zero-sequence X/R; `None` = the positive sequence's.
    pub zero_x_over_r: Option<f64>,
    /// Whose source it is (sheet `Sources`, `Kind`): the utility's supply or the plant's own
    /// generation. The PCC's flow is what the utility side exchanges with the plant.
    pub kind: SourceKind,
}

/// Whose source a row of the Sources sheet is (input contract, version 2, `Kind`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum SourceKind {
    /// The utility's supply: the other side of the PCC (the default).
    #[default]
    Utility,
    /// On-site generation: part of the plant; its output is not drawn from the utility.
    Generator,
}

impl SourceKind {
    /// The word the input contract and the reports use.
    pub fn label(self) -> &'static str {
        match self {
            SourceKind::Utility => "utility",
            SourceKind::Generator => "generator",
        }
    }
}

/// Default source EMF `Voltage (pu)` (input contract, version 2).
pub const DEFAULT_SOURCE_VOLTAGE_PU: f64 = 1.0;

impl Source {
    /// Three-phase short-circuit power in MVA at a bus of `kv` kV: S = √3·kV·kA when given
    /// as a current (input contract, sheet `Sources`).
    pub fn short_circuit_mva(&self, kv: f64) -> f64 {
        match self.short_circuit {
            ShortCircuit::Mva(mva) => mva,
            ShortCircuit::Ka(ka) => 3f64.sqrt() * kv * ka,
        }
    }
}

/// A two-winding transformer; its ratio is the ratio of its buses' nominal kV.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Transformer {
    pub id: String,
    pub hv_bus: String,
    pub lv_bus: String,
    /// Rating, kVA.
    pub kva: f64,
    /// Impedance on its own rating, %.
    pub impedance_percent: f64,
    pub x_over_r: f64,
    pub in_service: bool,
    /// IEC 60076-1 vector group; `None` = [`VectorGroup::default_for`] the frequency.
    pub connection: Option<VectorGroup>,
    /// Zero-sequence impedance on its own rating, %; `None` = `impedance_percent`.
    pub zero_impedance_percent: Option<f64>,
}

impl Transformer {
    /// The vector group studied: the given one or the contract's default at `frequency_hz`.
    pub fn vector_group(&self, frequency_hz: f64) -> VectorGroup {
        self.connection
            .unwrap_or_else(|| VectorGroup::default_for(frequency_hz))
    }
}

/// A cable (or line) between two buses of the same nominal kV.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cable {
    pub id: String,
    pub from_bus: String,
    pub to_bus: String,
    pub length_m: f64,
    /// Series resistance per phase at fundamental, ohm/km.
    pub r_ohm_per_km: f64,
    /// Series reactance per phase at fundamental, ohm/km.
    pub x_ohm_per_km: f64,
    /// Shunt capacitance per phase, µF/km (0 = none).
    pub c_uf_per_km: f64,
    /// Parallel runs, ≥ 1.
    pub runs: u32,
    /// Zero-sequence series resistance and reactance per phase, ohm/km (sheet `Cables`,
    /// `R0 (ohm/km)`, `X0 (ohm/km)`); `None` = [`CABLE_ZERO_MULTIPLE`] × the positive
    /// sequence's.
    pub r0_ohm_per_km: Option<f64>,
    pub x0_ohm_per_km: Option<f64>,
}

/// Z₀/Z₁ of a cable without zero-sequence data: 3 (common practice for a cable returning
/// through its own neutral or sheath; the cable's data sheet gives R0 and X0).
pub const CABLE_ZERO_MULTIPLE: f64 = 3.0;

impl Cable {
    /// The zero-sequence R and X per phase, ohm/km: as given, else the multiple.
    pub fn zero_ohm_per_km(&self) -> (f64, f64) {
        (
            self.r0_ohm_per_km
                .unwrap_or(CABLE_ZERO_MULTIPLE * self.r_ohm_per_km),
            self.x0_ohm_per_km
                .unwrap_or(CABLE_ZERO_MULTIPLE * self.x_ohm_per_km),
        )
    }
}

/// The series reactor of a capacitor bank, if any.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Reactor {
    /// A plain bank.
    #[serde(rename = "plain")]
    None,
    /// Detuning factor p in percent of X_C (7 means p = 0.07).
    Detuning { percent: f64 },
    /// A tuned filter at this harmonic order: p = 1/order².
    Tuned { order: f64 },
}

impl Reactor {
    /// The detuning factor p = X_L / X_C (dimensionless); 0 for a plain bank.
    pub fn p(self) -> f64 {
        match self {
            Reactor::None => 0.0,
            Reactor::Detuning { percent } => percent / 100.0,
            Reactor::Tuned { order } => 1.0 / (order * order),
        }
    }
}

/// Whether a bank is installed already or proposed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum BankStatus {
    Existing,
    Proposed,
}

/// A shunt capacitor bank of `steps` equal steps.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CapacitorBank {
    pub id: String,
    pub bus: String,
    /// Capacitor rated voltage, line-to-line, kV.
    pub rated_kv: f64,
    /// Rated kvar of one step at rated kV.
    pub step_kvar: f64,
    pub steps: u32,
    pub reactor: Reactor,
    /// Reactor X/R at fundamental.
    pub reactor_q: f64,
    pub status: BankStatus,
    /// Energized step counts to study, ascending, each ≤ `steps`.
    pub studied_steps: Vec<u32>,
    /// Inductance between this bank's steps for back-to-back switching, µH per step;
    /// `None` = [`DEFAULT_INRUSH_UH`]. Not used for a detuned or tuned bank, whose reactors
    /// limit the inrush.
    pub inrush_uh: Option<f64>,
    /// Phase connection; `None` = [`BankConnection::default_for`] its bus's kV.
    pub connection: Option<BankConnection>,
    /// Capacitor voltage left on a step when it recloses, per unit of nominal peak phase
    /// voltage, −1..1 (switching simulation; 0 = fully discharged).
    pub trapped_charge_pu: f64,
    /// Peak inrush current the step's switching device withstands, kA; `None` = not checked.
    pub inrush_limit_ka: Option<f64>,
}

/// Default inductance between the steps of a plain bank, µH per step (common practice: the
/// few metres of bus and cable inside a switched bank give about 5 to 20 µH; from memory).
pub const DEFAULT_INRUSH_UH: f64 = 10.0;

impl CapacitorBank {
    /// Capacitive reactance of one step at fundamental, ohm per phase:
    /// X_C = (Rated kV)² / (Step kvar / 1000) (input contract, sheet `Capacitors`).
    pub fn step_xc_ohm(&self) -> f64 {
        self.rated_kv * self.rated_kv / (self.step_kvar / 1000.0)
    }

    /// Reactive power of `n` energized plain steps at a bus of `bus_kv`, kvar:
    /// Q = n·Step kvar·(kV_bus / kV_rated)².
    pub fn kvar_at(&self, n: u32, bus_kv: f64) -> f64 {
        let ratio = bus_kv / self.rated_kv;
        f64::from(n) * self.step_kvar * ratio * ratio
    }
}

/// The load types of the input contract.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LoadType {
    Linear,
    Motor,
    SixPulseDrive,
    SixPulseDriveWithReactor,
    TwelvePulseDrive,
    EighteenPulseDrive,
    ActiveFrontEnd,
    Electronic,
    Custom,
}

impl LoadType {
    /// Every type, in the contract's order.
    pub const ALL: [LoadType; 9] = [
        LoadType::Linear,
        LoadType::Motor,
        LoadType::SixPulseDrive,
        LoadType::SixPulseDriveWithReactor,
        LoadType::TwelvePulseDrive,
        LoadType::EighteenPulseDrive,
        LoadType::ActiveFrontEnd,
        LoadType::Electronic,
        LoadType::Custom,
    ];

    /// The contract's spelling of the type.
    pub fn label(self) -> &'static str {
        match self {
            LoadType::Linear => "linear",
            LoadType::Motor => "motor",
            LoadType::SixPulseDrive => "6-pulse drive",
            LoadType::SixPulseDriveWithReactor => "6-pulse drive with reactor",
            LoadType::TwelvePulseDrive => "12-pulse drive",
            LoadType::EighteenPulseDrive => "18-pulse drive",
            LoadType::ActiveFrontEnd => "active front end",
            LoadType::Electronic => "electronic",
            LoadType::Custom => "custom",
        }
    }

    /// The type a cell's text names, by the contract's matching rule ([`normalize`]).
    pub fn from_text(text: &str) -> Option<LoadType> {
        let key = normalize(text);
        LoadType::ALL
            .into_iter()
            .find(|t| normalize(t.label()) == key)
    }

    /// True for every type that injects harmonic current (all but linear and motor).
    pub fn is_harmonic_source(self) -> bool {
        !matches!(self, LoadType::Linear | LoadType::Motor)
    }

    /// The contract's default displacement power factor for the type.
    pub fn default_power_factor(self) -> f64 {
        match self {
            LoadType::Linear | LoadType::Motor => 0.85,
            _ => 0.95,
        }
    }
}

/// A load (or a group of identical loads) at a bus.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Load {
    pub id: String,
    pub bus: String,
    pub kind: LoadType,
    /// Electrical input per unit at full load, kW.
    pub kw: f64,
    /// Displacement power factor, 0 < pf ≤ 1.
    pub power_factor: f64,
    pub quantity: f64,
    /// Fraction of full load at the study point, 0..1.
    pub load_factor: f64,
    /// Name of a spectrum on the Spectra sheet.
    pub spectrum: Option<String>,
    /// `Connection`: 3-wire or 4-wire; `None` = the type's default ([`Wiring::default_for`]).
    pub wiring: Option<Wiring>,
}

/// How a load is wired (sheet `Loads`, `Connection`): whether its triplen currents can
/// return through a neutral.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Wiring {
    /// No neutral: line-to-line loads (welders, three-wire drives and rectifiers). Their
    /// triplen currents, present under unbalance, flow as positive/negative sequence.
    #[serde(rename = "3-wire")]
    ThreeWire,
    /// Phase-to-neutral loads: triplen currents flow in the neutral, zero sequence.
    #[serde(rename = "4-wire")]
    FourWire,
}

impl Wiring {
    /// The contract's default: 4-wire for electronic (single-phase rectifier) loads, 3-wire
    /// for every other type (common practice).
    pub fn default_for(kind: LoadType) -> Wiring {
        if kind == LoadType::Electronic {
            Wiring::FourWire
        } else {
            Wiring::ThreeWire
        }
    }

    /// The contract's spelling.
    pub fn label(self) -> &'static str {
        match self {
            Wiring::ThreeWire => "3-wire",
            Wiring::FourWire => "4-wire",
        }
    }
}

impl Load {
    /// The load's wiring, its default resolved.
    pub fn wiring(&self) -> Wiring {
        self.wiring
            .unwrap_or_else(|| Wiring::default_for(self.kind))
    }

    /// The sequence network that carries this load's current at order `order`: a triplen
    /// order of a 3-wire load flows in the positive/negative-sequence network (carried by
    /// the positive-sequence one, whose impedances equal the negative's); every other order
    /// by [`Sequence::of`].
    pub fn sequence_at(&self, order: f64) -> Sequence {
        match Sequence::of(order) {
            Sequence::Zero if self.wiring() == Wiring::ThreeWire => Sequence::Positive,
            s => s,
        }
    }

    /// Active power at the study point, kW: P = kW × Quantity × Load factor.
    pub fn p_kw(&self) -> f64 {
        self.kw * self.quantity * self.load_factor
    }
}

/// One harmonic of a spectrum.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SpectrumLine {
    /// Harmonic order h > 1 (may be non-integer).
    pub order: f64,
    /// Magnitude in % of the fundamental current.
    pub magnitude_percent: f64,
    /// Phase angle, degrees, referred to h × the fundamental current's angle; `None` when
    /// the cell is blank (refused under `phasor` summation).
    pub angle_deg: Option<f64>,
}

/// A named harmonic current spectrum.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Spectrum {
    pub name: String,
    pub lines: Vec<SpectrumLine>,
}

/// The contract's matching rule for sheet, column and type names: a trailing parenthesized
/// unit dropped, spaces, underscores, hyphens and tabs removed, lower case
/// (`Nominal kV (kV)` and `nominal_kv` match).
pub fn normalize(name: &str) -> String {
    let mut s = name.trim();
    if s.ends_with(')')
        && let Some(open) = s.rfind('(')
    {
        s = &s[..open];
    }
    s.chars()
        .filter(|c| !matches!(c, ' ' | '_' | '-' | '\t'))
        .flat_map(char::to_lowercase)
        .collect()
}
