//! Checks a [`Plant`] once, collecting every problem, each naming the element and field.

use std::collections::{HashMap, HashSet};
use std::fmt;

use super::{LoadType, Plant, Reactor, ShortCircuit};

/// The smallest non-zero magnitude a rating, impedance or length may have: below it (down to
/// subnormal numbers) quotients of ratings overflow to infinity.
pub const MIN_MAGNITUDE: f64 = 1e-9;
/// The largest magnitude a rating, impedance or length may have.
pub const MAX_MAGNITUDE: f64 = 1e12;

/// One problem with the plant: the element (sheet and id), the field and what is wrong.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct ModelError {
    /// Sheet of the contract the element belongs to, e.g. `Capacitors`.
    pub sheet: &'static str,
    /// The element's id (empty for the Study sheet).
    pub id: String,
    /// Position of the element in its list (its data row among the sheet's rows), `None`
    /// for the Study sheet and sheet-wide problems.
    pub index: Option<usize>,
    /// The field (column or Study item) at fault.
    pub field: &'static str,
    pub message: String,
}

impl fmt::Display for ModelError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.id.is_empty() {
            write!(f, "{} \"{}\": {}", self.sheet, self.field, self.message)
        } else {
            write!(
                f,
                "{} \"{}\", \"{}\": {}",
                self.sheet, self.id, self.field, self.message
            )
        }
    }
}

/// Every problem found in a plant.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{} problem(s) in the plant:\n{}", .0.len(), .0.iter().map(|e| format!("  {e}")).collect::<Vec<_>>().join("\n"))]
pub struct ModelErrors(pub Vec<ModelError>);

pub(super) struct Collector<'a> {
    /// Nominal kV of each valid bus, by id.
    bus_kv: HashMap<&'a str, f64>,
    errors: Vec<ModelError>,
    /// Index of the element being checked.
    pub(super) index: Option<usize>,
    bus_ids: HashSet<&'a str>,
    /// The bus ids in sheet order (for suggestions).
    bus_order: Vec<&'a str>,
}

impl<'a> Collector<'a> {
    pub(super) fn push(
        &mut self,
        sheet: &'static str,
        id: &str,
        field: &'static str,
        message: String,
    ) {
        self.errors.push(ModelError {
            sheet,
            id: id.to_string(),
            index: self.index,
            field,
            message,
        });
    }

    /// A finite number > 0 within [`MIN_MAGNITUDE`, `MAX_MAGNITUDE`].
    pub(super) fn positive(&mut self, sheet: &'static str, id: &str, field: &'static str, v: f64) {
        if !(v.is_finite() && v > 0.0) {
            self.push(
                sheet,
                id,
                field,
                format!("must be a positive number, found {v}"),
            );
        } else {
            self.magnitude(sheet, id, field, v);
        }
    }

    /// A finite number ≥ 0, and 0 or within [`MIN_MAGNITUDE`, `MAX_MAGNITUDE`].
    pub(super) fn non_negative(
        &mut self,
        sheet: &'static str,
        id: &str,
        field: &'static str,
        v: f64,
    ) {
        if !(v.is_finite() && v >= 0.0) {
            self.push(
                sheet,
                id,
                field,
                format!("must be zero or positive, found {v}"),
            );
        } else if v > 0.0 {
            self.magnitude(sheet, id, field, v);
        }
    }

    /// A magnitude inside the range the studies compute in.
    pub(super) fn magnitude(&mut self, sheet: &'static str, id: &str, field: &'static str, v: f64) {
        if !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&v) {
            self.push(
                sheet,
                id,
                field,
                format!(
                    "must be between {MIN_MAGNITUDE:e} and {MAX_MAGNITUDE:e} (the range the studies compute in), found {v:e}"
                ),
            );
        }
    }

    fn bus(&mut self, sheet: &'static str, id: &str, field: &'static str, bus: &str) {
        if !self.bus_ids.contains(bus) {
            let known = self.bus_order.clone();
            let hint = match super::names::nearest(bus, &known).as_slice() {
                [] => String::new(),
                [one] => format!(": did you mean \"{one}\"?"),
                many => format!(
                    ": did you mean one of {}?",
                    many.iter()
                        .map(|m| format!("\"{m}\""))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            };
            self.push(
                sheet,
                id,
                field,
                format!("bus \"{bus}\" does not exist{hint}"),
            );
        }
    }

    /// Ids of one kind that differ only by letter case (ids are case-sensitive, so they
    /// would be two elements where the engineer meant one): each later one is an error.
    fn case_unique<'b>(
        &mut self,
        sheet: &'static str,
        field: &'static str,
        what: &str,
        ids: impl Iterator<Item = (usize, &'b str)>,
    ) {
        let saved = self.index;
        let mut seen: Vec<&str> = Vec::new();
        for (i, id) in ids {
            if let Some(first) = seen
                .iter()
                .find(|s| **s != id && s.to_lowercase() == id.to_lowercase())
            {
                self.index = Some(i);
                self.push(
                    sheet,
                    id,
                    field,
                    format!(
                        "{what} \"{id}\" differs from \"{first}\" only by letter case: names are case-sensitive, so these would be two; spell them alike"
                    ),
                );
            } else if !seen.contains(&id) {
                seen.push(id);
            }
        }
        self.index = saved;
    }

    fn unique<'b>(
        &mut self,
        sheet: &'static str,
        field: &'static str,
        ids: impl Iterator<Item = &'b str>,
    ) {
        let mut seen = HashSet::new();
        let saved = self.index;
        for (i, id) in ids.enumerate() {
            self.index = Some(i);
            if id.trim().is_empty() {
                self.push(sheet, id, field, "an id is required".to_string());
            } else if !seen.insert(id) {
                self.push(sheet, id, field, format!("duplicate id \"{id}\""));
            }
        }
        self.index = saved;
    }
}

impl Plant {
    /// Checks the whole plant and returns every problem found, or `Ok(())`.
    pub fn validate(&self) -> Result<(), ModelErrors> {
        let mut c = Collector {
            bus_kv: self
                .buses
                .iter()
                .filter(|b| b.nominal_kv.is_finite() && b.nominal_kv > 0.0)
                .map(|b| (b.id.as_str(), b.nominal_kv))
                .collect(),
            errors: Vec::new(),
            index: None,
            bus_ids: self.buses.iter().map(|b| b.id.as_str()).collect(),
            bus_order: self.buses.iter().map(|b| b.id.as_str()).collect(),
        };
        self.validate_study(&mut c);
        c.unique("Buses", "Bus", self.buses.iter().map(|b| b.id.as_str()));
        c.case_unique(
            "Buses",
            "Bus",
            "bus",
            self.buses.iter().map(|b| b.id.as_str()).enumerate(),
        );
        c.case_unique(
            "Sources",
            "Scenario",
            "scenario",
            (self.sources.iter().enumerate())
                .filter_map(|(i, s)| s.scenario.as_deref().map(|n| (i, n))),
        );
        for (i, b) in self.buses.iter().enumerate() {
            c.index = Some(i);
            c.positive("Buses", &b.id, "Nominal kV", b.nominal_kv);
        }
        self.validate_sources(&mut c);
        self.validate_branches(&mut c);
        self.validate_banks(&mut c);
        self.validate_loads(&mut c);
        self.validate_sequences(&mut c);
        if c.errors.is_empty() {
            Ok(())
        } else {
            Err(ModelErrors(c.errors))
        }
    }

    // Long: one check per Study item, in the contract's order.
    fn validate_study(&self, c: &mut Collector<'_>) {
        c.index = None;
        let s = &self.study;
        const SHEET: &str = "Study";
        if !(s.frequency_hz == 50.0 || s.frequency_hz == 60.0) {
            c.push(
                SHEET,
                "",
                "Frequency",
                format!("must be 50 or 60, found {}", s.frequency_hz),
            );
        }
        if !(s.highest_order.is_finite() && s.highest_order > 1.0 && s.highest_order <= 1000.0) {
            c.push(
                SHEET,
                "",
                "Highest order",
                format!(
                    "must be a number above 1 and at most 1000, found {}",
                    s.highest_order
                ),
            );
        }
        if !(s.scan_step_order.is_finite() && s.scan_step_order >= 1e-4 && s.scan_step_order <= 1.0)
        {
            c.push(
                SHEET,
                "",
                "Scan step",
                format!("must be between 0.0001 and 1, found {}", s.scan_step_order),
            );
        }
        if !(s.resonance_margin_percent.is_finite()
            && s.resonance_margin_percent >= 0.0
            && s.resonance_margin_percent < 100.0)
        {
            c.push(
                SHEET,
                "",
                "Resonance margin",
                format!(
                    "must be between 0 and 100 %, found {}",
                    s.resonance_margin_percent
                ),
            );
        }
        let t = s.capacitance_tolerance;
        if !(t.minus_percent.is_finite()
            && t.plus_percent.is_finite()
            && t.minus_percent <= 0.0
            && t.minus_percent > -100.0
            && t.plus_percent >= 0.0
            && t.plus_percent <= 100.0)
        {
            c.push(
                SHEET,
                "",
                "Capacitance tolerance",
                format!(
                    "must be a band like -5/+10 with -100 < minus <= 0 <= plus <= 100, found {}/{}",
                    t.minus_percent, t.plus_percent
                ),
            );
        }
        let pf = s.target_power_factor;
        if !(pf.is_finite() && (0.5..=1.0).contains(&pf)) {
            c.push(
                SHEET,
                "",
                "Target power factor",
                format!("must be a power factor between 0.5 and 1 (lagging), found {pf}"),
            );
        }
        let dv = s.step_voltage_change_percent;
        if !(dv.is_finite() && dv > 0.0 && dv <= 100.0) {
            c.push(
                SHEET,
                "",
                "Step voltage change",
                format!("must be a percentage above 0 and at most 100, found {dv}"),
            );
        }
        let r = s.voltage_range;
        if !(r.low_pu.is_finite()
            && r.high_pu.is_finite()
            && r.low_pu > 0.0
            && r.low_pu < r.high_pu
            && r.high_pu <= 2.0)
        {
            c.push(
                SHEET,
                "",
                "Voltage range",
                format!(
                    "must be a band low/high in pu like 0.95/1.05 with 0 < low < high <= 2, found {}/{}",
                    r.low_pu, r.high_pu
                ),
            );
        }
        if let Some(i_l) = s.max_demand_current_a {
            c.positive(SHEET, "", "Max demand current", i_l);
        }
        if let Some(pcc) = &s.pcc_bus
            && !c.bus_ids.contains(pcc.as_str())
        {
            c.push(
                SHEET,
                "",
                "PCC bus",
                format!("bus \"{pcc}\" does not exist"),
            );
        }
    }

    fn validate_sources(&self, c: &mut Collector<'_>) {
        const SHEET: &str = "Sources";
        c.index = None;
        if self.sources.is_empty() {
            c.push(
                SHEET,
                "",
                "Source",
                "at least one source is required".to_string(),
            );
        }
        c.unique(SHEET, "Source", self.sources.iter().map(|s| s.id.as_str()));
        for (i, s) in self.sources.iter().enumerate() {
            c.index = Some(i);
            c.bus(SHEET, &s.id, "Bus", &s.bus);
            match s.short_circuit {
                ShortCircuit::Mva(v) => c.positive(SHEET, &s.id, "Short-circuit MVA", v),
                ShortCircuit::Ka(v) => c.positive(SHEET, &s.id, "Short-circuit kA", v),
            }
            c.positive(SHEET, &s.id, "X/R", s.x_over_r);
            if !(s.voltage_pu.is_finite() && (0.5..=1.5).contains(&s.voltage_pu)) {
                c.push(
                    SHEET,
                    &s.id,
                    "Voltage (pu)",
                    format!("must be between 0.5 and 1.5 pu, found {}", s.voltage_pu),
                );
            }
        }
    }

    // Long: one check per Transformers and Cables field, in the contract's order.
    fn validate_branches(&self, c: &mut Collector<'_>) {
        const TX: &str = "Transformers";
        c.unique(
            TX,
            "Transformer",
            self.transformers.iter().map(|t| t.id.as_str()),
        );
        for (i, t) in self.transformers.iter().enumerate() {
            c.index = Some(i);
            c.bus(TX, &t.id, "HV bus", &t.hv_bus);
            c.bus(TX, &t.id, "LV bus", &t.lv_bus);
            c.positive(TX, &t.id, "kVA", t.kva);
            c.positive(TX, &t.id, "Impedance", t.impedance_percent);
            c.positive(TX, &t.id, "X/R", t.x_over_r);
            if let (Some(&hv), Some(&lv)) = (
                c.bus_kv.get(t.hv_bus.as_str()),
                c.bus_kv.get(t.lv_bus.as_str()),
            ) {
                if t.hv_bus == t.lv_bus {
                    c.push(
                        TX,
                        &t.id,
                        "LV bus",
                        "must differ from the HV bus".to_string(),
                    );
                } else if hv == lv {
                    c.push(
                        TX,
                        &t.id,
                        "LV bus",
                        format!("connects two buses of the same nominal kV ({hv} kV): use a cable"),
                    );
                } else if lv > hv {
                    c.push(
                        TX,
                        &t.id,
                        "LV bus",
                        format!(
                            "\"{}\" is at {lv} kV, above the HV bus \"{}\" at {hv} kV: swap the HV and LV buses, or check the Buses sheet's Nominal kV (kV, not V)",
                            t.lv_bus, t.hv_bus
                        ),
                    );
                }
            }
        }
        const CB: &str = "Cables";
        c.unique(CB, "Cable", self.cables.iter().map(|t| t.id.as_str()));
        for (i, k) in self.cables.iter().enumerate() {
            c.index = Some(i);
            c.bus(CB, &k.id, "From bus", &k.from_bus);
            c.bus(CB, &k.id, "To bus", &k.to_bus);
            c.positive(CB, &k.id, "Length", k.length_m);
            c.non_negative(CB, &k.id, "R", k.r_ohm_per_km);
            c.non_negative(CB, &k.id, "X", k.x_ohm_per_km);
            c.non_negative(CB, &k.id, "C", k.c_uf_per_km);
            if k.r_ohm_per_km == 0.0 && k.x_ohm_per_km == 0.0 {
                c.push(CB, &k.id, "X", "R and X cannot both be zero".to_string());
            }
            if k.runs == 0 {
                c.push(CB, &k.id, "Runs", "must be at least 1".to_string());
            }
            if k.from_bus == k.to_bus {
                c.push(
                    CB,
                    &k.id,
                    "To bus",
                    "must differ from the from bus".to_string(),
                );
            } else if let (Some(&a), Some(&b)) = (
                c.bus_kv.get(k.from_bus.as_str()),
                c.bus_kv.get(k.to_bus.as_str()),
            ) && a != b
            {
                c.push(
                    CB,
                    &k.id,
                    "To bus",
                    format!(
                        "connects buses of different nominal kV ({a} and {b} kV): use a transformer"
                    ),
                );
            }
        }
    }

    // Long: one check per Capacitors field, in the contract's order.
    fn validate_banks(&self, c: &mut Collector<'_>) {
        const SHEET: &str = "Capacitors";
        c.unique(SHEET, "Bank", self.banks.iter().map(|b| b.id.as_str()));
        for (i, b) in self.banks.iter().enumerate() {
            c.index = Some(i);
            if b.id.contains(char::is_whitespace) || b.id.contains('=') {
                c.push(
                    SHEET,
                    &b.id,
                    "Bank",
                    "a bank id may not contain spaces or '='".to_string(),
                );
            }
            c.bus(SHEET, &b.id, "Bus", &b.bus);
            c.positive(SHEET, &b.id, "Rated kV", b.rated_kv);
            if let Some(&kv) = c.bus_kv.get(b.bus.as_str()) {
                let ratio = b.rated_kv / kv;
                // A rating below 0.8 × or above 2 × the bus voltage cannot be the bank's
                // (a detuned step sees U/(1 − p), at most about 1.2 ×; common practice).
                if ratio.is_finite() && !(0.8..=2.0).contains(&ratio) {
                    c.push(
                        SHEET,
                        &b.id,
                        "Rated kV",
                        format!(
                            "{} kV is {:.2} × its bus \"{}\" at {kv} kV: a capacitor is rated from about 1 × (plain) to 1.25 × (detuned) its bus voltage; check kV against V (0.48, not 480) and the bus",
                            b.rated_kv, ratio, b.bus
                        ),
                    );
                }
            }
            c.positive(SHEET, &b.id, "Step kvar", b.step_kvar);
            c.positive(SHEET, &b.id, "Reactor Q", b.reactor_q);
            if let Some(l) = b.inrush_uh {
                c.positive(SHEET, &b.id, "Inrush inductance", l);
            }
            if !(b.trapped_charge_pu.is_finite() && b.trapped_charge_pu.abs() <= 1.0) {
                c.push(
                    SHEET,
                    &b.id,
                    "Trapped charge",
                    format!(
                        "must be between -1 and 1 pu of nominal peak voltage, found {}",
                        b.trapped_charge_pu
                    ),
                );
            }
            if let Some(l) = b.inrush_limit_ka {
                c.positive(SHEET, &b.id, "Switch inrush limit", l);
            }
            if b.steps == 0 {
                c.push(SHEET, &b.id, "Steps", "must be at least 1".to_string());
            }
            match b.reactor {
                Reactor::None => {}
                Reactor::Detuning { percent } => {
                    if !(percent.is_finite() && percent > 0.0 && percent < 100.0) {
                        c.push(
                            SHEET,
                            &b.id,
                            "Detuning",
                            format!("must be between 0 and 100 %, found {percent}"),
                        );
                    } else {
                        c.magnitude(SHEET, &b.id, "Detuning", percent);
                    }
                }
                Reactor::Tuned { order } => {
                    if !(order.is_finite() && order > 1.0) {
                        c.push(
                            SHEET,
                            &b.id,
                            "Tuned order",
                            format!("must be above 1, found {order}"),
                        );
                    } else {
                        c.magnitude(SHEET, &b.id, "Tuned order", order);
                    }
                }
            }
            if b.studied_steps.is_empty() {
                c.push(
                    SHEET,
                    &b.id,
                    "Studied steps",
                    "no step count to study".to_string(),
                );
            }
            if let Some(&n) = b.studied_steps.iter().find(|&&n| n > b.steps) {
                c.push(
                    SHEET,
                    &b.id,
                    "Studied steps",
                    format!("step count {n} exceeds the bank's {} steps", b.steps),
                );
            }
            if b.studied_steps.windows(2).any(|w| w[0] >= w[1]) {
                c.push(
                    SHEET,
                    &b.id,
                    "Studied steps",
                    "must be ascending without repeats".to_string(),
                );
            }
        }
    }

    // Long: one check per Loads field, in the contract's order.
    fn validate_loads(&self, c: &mut Collector<'_>) {
        const SHEET: &str = "Loads";
        c.unique(SHEET, "Load", self.loads.iter().map(|l| l.id.as_str()));
        for (i, l) in self.loads.iter().enumerate() {
            c.index = Some(i);
            c.bus(SHEET, &l.id, "Bus", &l.bus);
            c.non_negative(SHEET, &l.id, "kW", l.kw);
            c.non_negative(SHEET, &l.id, "Quantity", l.quantity);
            if !(l.power_factor.is_finite() && l.power_factor > 0.0 && l.power_factor <= 1.0) {
                c.push(
                    SHEET,
                    &l.id,
                    "Power factor",
                    format!("must be above 0 and at most 1, found {}", l.power_factor),
                );
            } else {
                c.magnitude(SHEET, &l.id, "Power factor", l.power_factor);
            }
            if !(l.load_factor.is_finite() && (0.0..=1.0).contains(&l.load_factor)) {
                c.push(
                    SHEET,
                    &l.id,
                    "Load factor",
                    format!("must be between 0 and 1, found {}", l.load_factor),
                );
            } else if l.load_factor > 0.0 {
                c.magnitude(SHEET, &l.id, "Load factor", l.load_factor);
            }
            match (&l.spectrum, l.kind) {
                (Some(_), LoadType::Linear | LoadType::Motor) => c.push(
                    SHEET,
                    &l.id,
                    "Spectrum",
                    format!(
                        "a {} load injects no harmonics and takes no spectrum",
                        l.kind.label()
                    ),
                ),
                (None, LoadType::Custom) => c.push(
                    SHEET,
                    &l.id,
                    "Spectrum",
                    "a custom load needs a spectrum from the Spectra sheet".to_string(),
                ),
                (Some(name), _) if self.spectrum(name).is_none() => c.push(
                    SHEET,
                    &l.id,
                    "Spectrum",
                    format!("spectrum \"{name}\" is not on the Spectra sheet"),
                ),
                _ => {}
            }
        }
        const SP: &str = "Spectra";
        c.unique(SP, "Spectrum", self.spectra.iter().map(|s| s.name.as_str()));
        for (i, s) in self.spectra.iter().enumerate() {
            c.index = Some(i);
            if s.lines.is_empty() {
                c.push(
                    SP,
                    &s.name,
                    "Order",
                    "the spectrum has no harmonic".to_string(),
                );
            }
            let mut seen = HashSet::new();
            for line in &s.lines {
                if !(line.order.is_finite() && line.order > 1.0) {
                    c.push(
                        SP,
                        &s.name,
                        "Order",
                        format!("must be above 1, found {}", line.order),
                    );
                } else {
                    c.magnitude(SP, &s.name, "Order", line.order);
                }
                // Orders compared by value (a hash of the bits; -0.0 cannot occur above 1).
                if !seen.insert(line.order.to_bits()) {
                    c.push(
                        SP,
                        &s.name,
                        "Order",
                        format!("order {} appears twice", line.order),
                    );
                }
                c.non_negative(SP, &s.name, "Magnitude", line.magnitude_percent);
                if let Some(a) = line.angle_deg
                    && !a.is_finite()
                {
                    c.push(SP, &s.name, "Angle", format!("must be a number, found {a}"));
                }
            }
        }
    }
}
