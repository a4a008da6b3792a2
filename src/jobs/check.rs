//! The main job end to end: validate a plant, build its network, scan every scenario ×
//! configuration and screen each bank's resonance. Writers in [`crate::io`] and
//! [`crate::present`] read the [`CheckResults`] only.

use crate::model::Sequence;
use crate::model::{ModelErrors, Plant};
use crate::network::{Network, TopologyError};
use crate::solve::{Engine, SolveError};
use crate::study::config::{ConfigurationError, configuration_count};
use crate::study::duty::{DutyRow, duty_rows};
use crate::study::limits::{LimitContext, LimitRow, limit_row};
use crate::study::operating::OperatingStudy;
use crate::study::penetration::{Injections, Penetration, SequenceEngines};
use crate::study::remedy::{Outcome, RemedyResult};
use crate::study::resonance::ZeroScan;
use crate::study::switching::SwitchingStudy;
use crate::study::tolerance::{ToleranceBand, bands};
use crate::study::{Configuration, ResonanceStudy, Scan, ScanGrid, all_configurations};

/// Most step combinations studied in one run; above it the engineer is asked to narrow
/// `Studied steps` (a guard against runs of hours).
pub const MAX_CONFIGURATIONS: u64 = 100_000;

/// Why a check could not run.
#[derive(Debug, thiserror::Error)]
pub enum CheckError {
    #[error(transparent)]
    Model(#[from] ModelErrors),
    #[error(transparent)]
    Topology(#[from] TopologyError),
    #[error(transparent)]
    Solve(#[from] SolveError),
    #[error(transparent)]
    Configuration(#[from] ConfigurationError),
    #[error("--bus: there is no bus \"{0}\" on the Buses sheet")]
    UnknownBus(String),
    #[error(
        "{count} step combinations exceed the limit of {MAX_CONFIGURATIONS}: narrow \"Studied steps\" on the Capacitors sheet (for example 0,2,4 or 1-3)"
    )]
    TooManyConfigurations { count: u64 },
}

/// What the engineer asked for beyond the defaults.
#[derive(Clone, Default)]
pub struct CheckOptions {
    /// Extra buses to scan (ids), beyond the PCC and the bank buses.
    pub buses: Vec<String>,
    /// Configurations to study (labels such as `C1=2 C2=0`); empty = every combination of
    /// studied steps. `none`, the reference, is always studied.
    pub configurations: Vec<String>,
    /// Called with (done, total) as the scan advances; `None` = silent.
    pub progress: Option<std::sync::Arc<dyn Fn(u64, u64) + Send + Sync>>,
    /// Size and re-run remedies for flagged banks: `None` = only when the plant has at
    /// most [`AUTO_REMEDY_CONFIGURATIONS`] step combinations (each option re-runs every
    /// study).
    pub remedies: Option<bool>,
    /// Only the frequency scan and the resonance screen (the `scan` command): no operating
    /// point, penetration, duty or remedies (their results are empty).
    pub scan_only: bool,
    /// How penetration sums every configuration (bounded on large plants by default; the
    /// figures reported are the same, `Direct` is the reference the tests compare with).
    pub evaluation: crate::study::penetration::Evaluation,
    /// Simulate the switching events (`check` does; remedy re-runs do not).
    pub switching: bool,
}

/// Step combinations up to which remedies are studied without being asked.
pub const AUTO_REMEDY_CONFIGURATIONS: usize = 200;

/// The remedy options studied for one bank.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BankRemedies {
    pub bank: String,
    /// Why the bank was flagged.
    pub reason: String,
    /// The configurations compared before and after (labels).
    pub configurations: Vec<String>,
    /// Options in rank order.
    pub results: Vec<RemedyResult>,
}

/// Everything the studies found.
#[derive(Debug, Clone)]
pub struct CheckResults {
    pub plant: Plant,
    pub network: Network,
    pub scan: Scan,
    /// The zero-sequence scan at the grounded-wye banks' buses, when a characteristic order
    /// is zero sequence; its configurations are the distinct projections of `scan`'s onto
    /// those banks (`zero_map[c]`).
    pub zero_scan: Option<Scan>,
    pub zero_map: Vec<usize>,
    /// The zero-sequence network.
    pub zero_network: Network,
    pub resonance: ResonanceStudy,
    /// The fundamental load flow of every scenario × configuration.
    pub operating: OperatingStudy,
    pub penetration: Penetration,
    pub limits: LimitContext,
    /// One limits summary per scenario × configuration, in that nesting order.
    pub limit_rows: Vec<LimitRow>,
    /// Capacitor duty of every energized bank in every scenario × configuration.
    pub duty: Vec<DutyRow>,
    /// Resonance bands across capacitance tolerance and scenarios.
    pub tolerance: Vec<ToleranceBand>,
    /// Energizing every step of every bank, per scenario: simulated, with the formulas
    /// beside each event.
    pub switching: SwitchingStudy,
    /// Per bank and scenario, the configuration drawing the most background current.
    pub background: Vec<crate::study::background::BackgroundShare>,
    /// Remedies for the flagged banks (empty when not studied; see `notes`).
    pub remedies: Vec<BankRemedies>,
    /// Assumptions the study made that the report must state.
    pub notes: Vec<String>,
    /// Network index of the PCC bus.
    pub pcc: usize,
}

impl CheckResults {
    /// True when any bank's resonance is flagged or any limit exceeded (the `--strict`
    /// criterion).
    pub fn flagged(&self) -> bool {
        self.resonance
            .rows
            .iter()
            .any(|r| r.verdict == crate::study::Verdict::Resonant)
            || self.limit_rows.iter().any(|r| r.exceeds)
            || self.duty.iter().any(|r| r.exceeds)
            || self.tolerance.iter().any(|t| t.flagged)
            || self.operating.points.iter().any(|p| p.flagged())
            || !self.operating.collapsed.is_empty()
            || self.operating.step_changes.iter().any(|s| s.exceeds)
            || self.switching.events.iter().any(|e| e.flagged())
    }

    /// The before/after outcome for `bank` over the configurations labelled `labels`.
    pub fn outcome(&self, bank: &str, labels: &[String]) -> Outcome {
        let has = |c: &str| labels.iter().any(|l| l == c);
        let limits: Vec<&LimitRow> = self
            .limit_rows
            .iter()
            .filter(|r| has(&r.configuration))
            .collect();
        let bands: Vec<&ToleranceBand> = self
            .tolerance
            .iter()
            .filter(|t| t.bank == bank && has(&t.configuration))
            .collect();
        let chars = &self.resonance.characteristic_orders;
        let of_sequence = |seq: Sequence| -> Vec<f64> {
            chars
                .iter()
                .copied()
                .filter(|&h| (Sequence::of(h) == Sequence::Zero) == (seq == Sequence::Zero))
                .collect()
        };
        let margin_percent = bands
            .iter()
            .filter_map(|t| {
                crate::study::remedy::band_margin_percent(
                    t.low_order,
                    t.high_order,
                    &of_sequence(t.sequence),
                )
            })
            .min_by(f64::total_cmp);
        Outcome {
            configurations: labels.len(),
            tolerance_flagged: bands.iter().filter(|t| t.flagged).count(),
            margin_percent,
            resonant: self
                .resonance
                .rows
                .iter()
                .filter(|r| {
                    r.bank == bank
                        && has(&r.configuration)
                        && r.verdict == crate::study::Verdict::Resonant
                })
                .count(),
            limits_exceeded: limits.iter().filter(|r| r.exceeds).count(),
            duty_exceeded: self
                .duty
                .iter()
                .filter(|r| r.bank == bank && has(&r.configuration) && r.exceeds)
                .count(),
            worst_thd_percent: limits.iter().map(|r| r.worst_thd.value).fold(0.0, f64::max),
            worst_tdd_percent: limits.iter().map(|r| r.tdd.value).fold(0.0, f64::max),
        }
    }

    /// The one sentence for a plant that exceeds a harmonic limit with no bank in service:
    /// no bank choice fixes that (`None` when the plant without banks meets every limit).
    pub fn plant_level_limits(&self) -> Option<String> {
        let over: Vec<&LimitRow> = self
            .limit_rows
            .iter()
            .filter(|r| r.configuration == "none" && r.exceeds)
            .collect();
        let first = over.first()?;
        let scenarios: Vec<&str> = over.iter().map(|r| r.scenario.as_str()).collect();
        let pcc = &self.network.buses[self.pcc].id;
        Some(format!(
            "With no capacitor bank in service the plant already exceeds its harmonic limits (scenario {}; at the PCC {pcc}: voltage THD {:.2} %, TDD {:.2} %; worst in-plant voltage THD {:.2} % at {}): the converters need their own mitigation (line reactors, multi-pulse or active front ends, harmonic filters), and no bank choice fixes it.",
            scenarios.join(", "),
            first.pcc_thd.value,
            first.tdd.value,
            first.worst_thd.value,
            first.worst_thd_bus,
        ))
    }

    /// The labels of the studied configurations in which bank `b` is energized.
    pub fn energized_labels(&self, b: usize) -> Vec<String> {
        self.scan
            .configurations
            .iter()
            .filter(|cfg| cfg.steps.get(b).is_some_and(|&k| k > 0))
            .map(|cfg| cfg.label(&self.plant.banks))
            .collect()
    }

    /// The label of configuration `c`.
    pub fn label(&self, c: usize) -> String {
        self.scan.configurations[c].label(&self.plant.banks)
    }
}

/// Runs every study that exists on `plant`.
pub fn run_check(plant: &Plant, options: &CheckOptions) -> Result<CheckResults, CheckError> {
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
    let mut buses = vec![pcc];
    for b in &network.banks {
        if !buses.contains(&b.bus) {
            buses.push(b.bus);
        }
    }
    for id in &options.buses {
        let i = network
            .bus_index(id)
            .ok_or_else(|| CheckError::UnknownBus(id.clone()))?;
        if !buses.contains(&i) {
            buses.push(i);
        }
    }
    let mut configurations: Vec<Configuration> = if options.configurations.is_empty() {
        all_configurations(&plant.banks)
    } else {
        let mut chosen = Vec::new();
        for text in &options.configurations {
            let c = crate::study::parse_configuration(text, &plant.banks)?;
            if !chosen.contains(&c) {
                chosen.push(c);
            }
        }
        chosen
    };
    let none = Configuration::none(plant.banks.len());
    if !configurations.contains(&none) {
        configurations.push(none);
    }
    let engine = Engine::new(&network, &buses);
    let zero = network.build_zero(plant)?;
    // The zero-sequence scan: at the grounded-wye banks' buses, when some characteristic
    // order is zero sequence (otherwise no bank can amplify a zero-sequence order).
    let mut zero_buses: Vec<usize> = Vec::new();
    for b in network
        .banks
        .iter()
        .filter(|b| b.connection.has_zero_path())
    {
        if !zero_buses.contains(&b.bus) {
            zero_buses.push(b.bus);
        }
    }
    let zero_engine = Engine::new(&zero, &zero_buses);
    let chars = crate::study::resonance::characteristic_orders(plant, plant.study.highest_order);
    let zero_orders = chars.iter().any(|&h| Sequence::of(h) == Sequence::Zero);
    let grid = ScanGrid::new(plant.study.highest_order, plant.study.scan_step_order);
    let quiet = |_: u64, _: u64| {};
    let progress: &(dyn Fn(u64, u64) + Sync) = match &options.progress {
        Some(p) => p.as_ref(),
        None => &quiet,
    };
    let zero_grid = grid.clone();
    let scan = Scan::run(&engine, grid, configurations, progress)?;
    let (zero_scan, zero_map) = if zero_orders && !zero_buses.is_empty() {
        // Configurations that differ only in banks without a zero-sequence path have the
        // same zero-sequence network: scan each distinct one once.
        let mut distinct: Vec<Configuration> = Vec::new();
        let map: Vec<usize> = scan
            .configurations
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
        (
            Some(Scan::run(&zero_engine, zero_grid, distinct, &|_, _| {})?),
            map,
        )
    } else {
        (None, Vec::new())
    };
    let zero_view = zero_scan.as_ref().map(|scan| ZeroScan {
        engine: &zero_engine,
        scan,
        map: &zero_map,
    });
    let resonance = ResonanceStudy::run(plant, &network, &engine, &scan, zero_view.as_ref())?;
    let operating = if options.scan_only {
        OperatingStudy::run(plant, &network, &[])
    } else {
        OperatingStudy::run(plant, &network, &scan.configurations)
    };

    // Harmonic penetration and limits. Isc: the largest fault current at the PCC over the
    // scenarios, from the fundamental Thevenin impedance without banks (the PCC is the
    // first bus scanned).
    let pcc_kv = network.buses[pcc].kv;
    let mut s_sc_mva: f64 = 0.0;
    for s in 0..network.scenarios.len() {
        let z = scan.fundamental(&engine, s)?.z0_pu(0);
        s_sc_mva = s_sc_mva.max(crate::network::BASE_MVA / z.norm());
    }
    let isc_ka = s_sc_mva / (3f64.sqrt() * pcc_kv);
    let injections = if options.scan_only {
        Injections::none()
    } else {
        Injections::new(plant, &network, &zero)
    };
    let limits = LimitContext::new(plant, &network, &injections, pcc, isc_ka);
    let engines = SequenceEngines {
        positive: &engine,
        zero: &zero_engine,
    };
    let penetration = Penetration::run(
        plant,
        &engines,
        injections,
        &scan.configurations,
        &operating,
        &limits.individual,
        &limits
            .thd_limit
            .iter()
            .map(|l| l.value)
            .collect::<Vec<f64>>(),
        pcc,
        options.evaluation,
    )?;
    let mut notes = Vec::new();
    notes.extend(penetration.injections.blocked.iter().cloned());
    if penetration.angle_fallbacks > 0 {
        notes.push(format!(
            "phasor summation: {} scenario-configuration(s) have no load-flow solution; their harmonic current angles use the configuration without banks (or 0° where that has none either)",
            penetration.angle_fallbacks
        ));
    }
    if limits.i_l_estimated {
        let (_, before_kva, after_kva) =
            crate::study::limits::estimated_demand_a(plant, network.buses[pcc].kv);
        notes.push(format!(
            "I_L ESTIMATED from the Loads sheet: {:.1} A at the PCC, the demand after correction ({after_kva:.0} kVA: the loads' P at the study point at the better of the target PF {} and their own; {before_kva:.0} kVA before correction; no diversity); give \"Max demand current (A)\" on the Study sheet (IEEE 519-2014 takes the average of the 12 monthly maximum demands)",
            limits.i_l_a, plant.study.target_power_factor
        ));
    }
    if let Some(first) = operating.collapsed.first() {
        notes.push(format!(
            "load flow: {} scenario-configuration(s) have no solution (voltage collapse), the first: {first}; their capacitor duty uses the nominal bus voltage",
            operating.collapsed.len()
        ));
    }
    let nc = scan.configurations.len();
    let limit_rows: Vec<LimitRow> = penetration
        .results
        .iter()
        .filter(|_| !options.scan_only)
        .map(|d| {
            limit_row(
                d,
                &limits,
                &network,
                &penetration.injections.orders,
                &network.scenarios[d.scenario].name,
                scan.configurations[d.configuration].label(&plant.banks),
            )
        })
        .collect();
    debug_assert_eq!(penetration.results.len(), network.scenarios.len() * nc);
    debug_assert!(options.scan_only || limit_rows.len() == penetration.results.len());
    let orders = &penetration.injections.orders;
    let duty = penetration
        .results
        .iter()
        .filter(|_| !options.scan_only)
        .flat_map(|d| {
            let cfg = &scan.configurations[d.configuration];
            let bank_v = operating
                .point_at(d.scenario, d.configuration, nc)
                .map_or(&[][..], |p| &p.bank_bus_v_pu[..]);
            duty_rows(
                d,
                &plant.banks,
                &cfg.steps,
                bank_v,
                &network,
                orders,
                plant.study.limits,
                &network.scenarios[d.scenario].name,
                &cfg.label(&plant.banks),
            )
        })
        .collect();
    let tol = plant.study.capacitance_tolerance;
    let p_of = |id: &str| {
        network
            .banks
            .iter()
            .find(|b| b.id == id)
            .map_or(0.0, |b| b.p)
    };
    let tolerance = bands(
        &resonance.rows,
        &p_of,
        tol.minus_percent,
        tol.plus_percent,
        &resonance.characteristic_orders,
        resonance.margin_percent,
    );
    let switching = if options.scan_only || !options.switching {
        SwitchingStudy::default()
    } else {
        let mut z_th_ohm = Vec::new();
        for s in 0..network.scenarios.len() {
            let fundamental = scan.fundamental(&engine, s)?;
            z_th_ohm.push(
                network
                    .banks
                    .iter()
                    .enumerate()
                    .map(|(b, model)| {
                        let z = fundamental.bank_bus_z0_pu(b) * network.buses[model.bus].z_base_ohm;
                        (z.re, z.im)
                    })
                    .collect::<Vec<_>>(),
            );
        }
        crate::study::switching::run(&crate::study::switching::Inputs {
            plant,
            net: &network,
            operating: &operating,
            z_th_ohm: &z_th_ohm,
        })
    };
    notes.extend(switching.failures.iter().cloned());
    let background = crate::study::background::background_shares(
        &penetration,
        &network,
        &plant.banks,
        &scan.configurations,
    );
    let mut res = CheckResults {
        plant: plant.clone(),
        network: network.clone(),
        scan,
        zero_scan,
        zero_map,
        zero_network: zero.clone(),
        resonance,
        operating,
        penetration,
        limits,
        limit_rows,
        duty,
        tolerance,
        switching,
        background,
        remedies: Vec::new(),
        notes,
        pcc,
    };
    if let Some(sentence) = res.plant_level_limits() {
        res.notes.insert(0, sentence);
    }
    let auto = res.scan.configurations.len() <= AUTO_REMEDY_CONFIGURATIONS;
    match options.remedies {
        _ if options.scan_only => {}
        Some(true) => res.remedies = remedies(&res, options),
        None if auto => res.remedies = remedies(&res, options),
        None => res.notes.push(format!(
            "remedies not studied: {} step combinations exceed {AUTO_REMEDY_CONFIGURATIONS} (each option re-runs every study); ask for them with --remedies",
            res.scan.configurations.len()
        )),
        Some(false) => {}
    }
    Ok(res)
}

/// Sizes the remedy options of every flagged bank and re-runs the studies with each.
fn remedies(res: &CheckResults, options: &CheckOptions) -> Vec<BankRemedies> {
    let plant = &res.plant;
    let mut out = Vec::new();
    for (b, bank) in plant.banks.iter().enumerate() {
        let resonant = res
            .resonance
            .rows
            .iter()
            .any(|r| r.bank == bank.id && r.verdict == crate::study::Verdict::Resonant);
        let duty = res.duty.iter().any(|r| r.bank == bank.id && r.exceeds);
        let band = res.tolerance.iter().any(|t| t.bank == bank.id && t.flagged);
        if !resonant && !duty && !band {
            continue;
        }
        let mut why = Vec::new();
        if resonant {
            why.push("resonates near a characteristic order");
        } else if band {
            why.push("reaches a characteristic order across its capacitance tolerance");
        }
        if duty {
            why.push("exceeds its duty limits");
        }
        let reason = why.join(" and ");
        // Every studied configuration in which the bank is energized: the option must hold
        // where the bank was clear as well as where it was flagged.
        let labels = res.energized_labels(b);
        if labels.is_empty() {
            continue;
        }
        let before = res.outcome(&bank.id, &labels);
        let bus_kv = res.network.buses[res.network.banks[b].bus].kv;
        let mut results = Vec::new();
        for option in crate::study::remedy::options(
            plant,
            bank,
            bus_kv,
            &res.resonance.characteristic_orders,
            res.resonance.margin_percent,
        ) {
            let mut changed = plant.clone();
            changed.banks[b] = crate::study::remedy::apply(bank, &option);
            let rerun = CheckOptions {
                buses: options.buses.clone(),
                configurations: labels.clone(),
                progress: None,
                remedies: Some(false),
                scan_only: false,
                switching: false,
                evaluation: options.evaluation,
            };
            let Ok(after_res) = run_check(&changed, &rerun) else {
                continue;
            };
            let after = after_res.outcome(&bank.id, &labels);
            let orders: Vec<f64> = after_res
                .resonance
                .rows
                .iter()
                .filter(|r| r.bank == bank.id)
                .filter_map(|r| r.peak.map(|p| p.order))
                .collect();
            let resonance_after = (!orders.is_empty()).then(|| {
                (
                    orders.iter().copied().fold(f64::INFINITY, f64::min),
                    orders.iter().copied().fold(f64::NEG_INFINITY, f64::max),
                )
            });
            let i_rated_step =
                option.step.capacitor_kvar / (3f64.sqrt() * option.step.capacitor_rated_kv);
            let step_rms_a = after_res
                .duty
                .iter()
                .filter(|r| r.bank == bank.id)
                .map(|r| r.ratios.rms_current * i_rated_step)
                .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))));
            let linearity_ratio = (option.step.linearity_a > 0.0)
                .then(|| {
                    after_res
                        .duty
                        .iter()
                        .filter(|r| r.bank == bank.id)
                        .map(|r| r.ratios.step_peak_a / (2f64.sqrt() * option.step.linearity_a))
                        .fold(None, |m: Option<f64>, v| Some(m.map_or(v, |m| m.max(v))))
                })
                .flatten();
            // The bank's own checks: plant-wide limits are reported, not required (a bank
            // change may not be able to fix them).
            let passes = after.resonant == 0
                && after.tolerance_flagged == 0
                && after.duty_exceeded == 0
                && linearity_ratio.is_none_or(|r| r <= 1.0);
            results.push(RemedyResult {
                option,
                before: before.clone(),
                after,
                passes,
                rank: 0,
                resonance_after,
                step_rms_a,
                linearity_ratio,
            });
        }
        crate::study::remedy::rank(&mut results);
        out.push(BankRemedies {
            bank: bank.id.clone(),
            reason,
            configurations: labels,
            results,
        });
    }
    out
}
