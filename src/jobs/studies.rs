//! The studies of one plant, run in order on a context built once: the validated plant, its
//! positive- and zero-sequence networks, the buses to scan and the step combinations. Each
//! step here composes studies of [`crate::study`]; none formats output. The result is
//! [`CheckResults`], which every report reads.

pub use super::context::Context;
use super::context::zero_projections;
use super::notes::Note;
use super::results::{CheckError, CheckOptions, CheckResults};
use crate::model::{Plant, Sequence};
use crate::network::Network;
use crate::solve::Engine;
use crate::study::background::background_shares;
use crate::study::limits::{LimitContext, LimitRow, estimated_demand_a, limit_row};
use crate::study::operating::{OperatingSolver, OperatingStudy};
use crate::study::penetration::{Injections, Penetration, SequenceEngines, bank_amplification};
use crate::study::resonance::ZeroScan;
use crate::study::scan::ScanOptions;
use crate::study::switching::SwitchingStudy;
use crate::study::tolerance::{ToleranceBand, bands};
use crate::study::{Configuration, ResonanceRow, ResonanceStudy, Scan, ScanGrid};

/// With on-site generation (a `Kind = generator` source), the active power the PCC draws
/// from the utility without banks, kW, the largest over the scenarios; `None` without
/// generation or without that operating point (I_L is then estimated from the loads).
fn pcc_draw_kw(ctx: &Context<'_>, operating: &OperatingStudy) -> Option<f64> {
    let generation =
        (ctx.plant.sources.iter()).any(|s| s.kind == crate::model::SourceKind::Generator);
    if !generation {
        return None;
    }
    (operating.points.iter())
        .filter(|p| p.configuration == "none")
        .map(|p| p.pcc_p_kw)
        .reduce(f64::max)
}

/// The PCC's short-circuit current Isc, kA, as IEEE 519-2014 takes it (the available
/// short-circuit current at the PCC): the largest fault current over the scenarios from the
/// fundamental Thevenin impedance of the sources, transformers and cables alone (loads,
/// motors, cable charging and banks left out), I = S_base / (|Z_pu| · √3 · kV).
fn pcc_isc_ka(ctx: &Context<'_>) -> Result<f64, CheckError> {
    let engine = Engine::new(&ctx.short_circuit, &[ctx.pcc]);
    let mut s_sc_mva: f64 = 0.0;
    for s in 0..ctx.network.scenarios.len() {
        let z = engine.point(1.0, s)?.z0_pu(0);
        s_sc_mva = s_sc_mva.max(crate::network::BASE_MVA / z.norm());
    }
    Ok(s_sc_mva / (3f64.sqrt() * ctx.network.buses[ctx.pcc].kv))
}

/// Per scenario and bank, the fundamental Thevenin impedance without banks at the bank's
/// bus, (R, X) in ohms, for the switching simulation.
fn switching_z_th_ohm(
    network: &Network,
    engine: &Engine<'_>,
    scan: &Scan,
) -> Result<Vec<Vec<(f64, f64)>>, CheckError> {
    let mut z_th_ohm = Vec::new();
    for s in 0..network.scenarios.len() {
        let fundamental = scan.fundamental(engine, s)?;
        z_th_ohm.push(
            network
                .banks
                .iter()
                .enumerate()
                .map(|(b, model)| {
                    let z = fundamental.bank_bus_z0_pu(b) * network.buses[model.bus].z_base_ohm;
                    (z.re, z.im)
                })
                .collect(),
        );
    }
    Ok(z_th_ohm)
}

/// The positive-sequence scan, the zero-sequence scan where it matters and the resonance
/// screen: what the `scan` command needs and every other study starts from.
struct Screen {
    scan: Scan,
    zero_scan: Option<Scan>,
    zero_map: Vec<usize>,
    resonance: ResonanceStudy,
}

/// Scans every scenario × configuration and screens each bank's resonance. The
/// zero-sequence scan runs at the grounded-wye banks' buses only when some characteristic
/// order is zero sequence (otherwise no bank can amplify a zero-sequence order).
fn screen(
    ctx: &Context<'_>,
    engine: &Engine<'_>,
    zero_engine: &Engine<'_>,
    options: &CheckOptions,
) -> Result<Screen, CheckError> {
    let plant = ctx.plant;
    let (_, zero_chars) =
        crate::study::resonance::sequence_orders(plant, plant.study.highest_order);
    let zero_orders = !zero_chars.is_empty();
    let grid = ScanGrid::new(plant.study.highest_order, plant.study.scan_step_order);
    let quiet = |_: u64, _: u64| {};
    let progress: &(dyn Fn(u64, u64) + Sync) = match &options.progress {
        Some(p) => p.as_ref(),
        None => &quiet,
    };
    let zero_grid = grid.clone();
    let known = (options.known_points.as_ref()).map(|(k, network)| (&**k, *network));
    // A run scanning some banks alone (a prescreen, the damping band) reads their peaks
    // alone: no dips.
    let with = ScanOptions {
        known,
        dips: options.screened_banks.is_none(),
    };
    let scan = Scan::run_with(engine, grid, ctx.configurations.clone(), progress, with)?;
    let (zero_scan, zero_map) = if zero_orders && !ctx.zero_buses.is_empty() {
        let (distinct, map) = zero_projections(&ctx.network, &scan.configurations);
        (
            Some(Scan::run(zero_engine, zero_grid, distinct, &|_, _| {})?),
            map,
        )
    } else {
        (None, Vec::new())
    };
    let zero_view = zero_scan.as_ref().map(|scan| ZeroScan {
        engine: zero_engine,
        network: &ctx.zero,
        scan,
        map: &zero_map,
    });
    let sc_buses: Vec<usize> = ctx.network.banks.iter().map(|b| b.bus).collect();
    let short_circuit = Engine::new(&ctx.short_circuit, &sc_buses);
    let mut resonance = ResonanceStudy::run(
        plant,
        &ctx.network,
        &short_circuit,
        &scan,
        zero_view.as_ref(),
        ctx.pcc,
    )?;
    if options.mode_analysis != Some(false) {
        modes(plant, &mut resonance, &scan, engine, zero_view.as_ref());
    }
    Ok(Screen {
        scan,
        zero_scan,
        zero_map,
        resonance,
    })
}

/// The critical mode at the worst peak of every `RESONANT` row (resonance mode analysis),
/// in the row's own sequence network. A row whose Y(h) cannot be factored at the peak (a
/// lossless network exactly at its resonance) keeps no mode: the analysis explains a
/// verdict and never stops the check.
fn modes(
    plant: &Plant,
    resonance: &mut ResonanceStudy,
    scan: &Scan,
    engine: &Engine<'_>,
    zero: Option<&ZeroScan<'_, '_>>,
) {
    use rayon::prelude::*;
    let label_of: std::collections::HashMap<String, usize> = (0..scan.configurations.len())
        .map(|c| (scan.configurations[c].label(&plant.banks), c))
        .collect();
    let scenario_of = |name: &str| scan.scenarios.iter().position(|s| s == name);
    resonance
        .rows
        .par_iter_mut()
        .filter(|r| r.verdict == crate::study::Verdict::Resonant)
        .for_each(|r| {
            let (Some(peak), Some(s), Some(&c)) = (
                r.peak,
                scenario_of(&r.scenario),
                label_of.get(&r.configuration),
            ) else {
                return;
            };
            r.mode = match (r.sequence, zero) {
                (Sequence::Zero, Some(z)) => {
                    let steps = &z.scan.configurations[z.map[c]].steps;
                    crate::study::modal::critical_mode(z.engine, peak.order, s, steps).ok()
                }
                _ => {
                    let steps = &scan.configurations[c].steps;
                    crate::study::modal::critical_mode(engine, peak.order, s, steps).ok()
                }
            };
        });
}

/// The notes of the penetration, limits and load-flow studies, in report order.
fn study_notes(
    ctx: &Context<'_>,
    penetration: &Penetration,
    limits: &LimitContext,
    operating: &OperatingStudy,
) -> Vec<Note> {
    let mut notes: Vec<Note> = (penetration.injections.blocked.iter().cloned())
        .map(Note::Injections)
        .collect();
    if penetration.angle_fallbacks > 0 {
        notes.push(Note::AngleFallbacks {
            count: penetration.angle_fallbacks,
        });
    }
    if limits.i_l_estimated {
        let from_pcc = pcc_draw_kw(ctx, operating);
        let (_, before_kva, after_kva) =
            estimated_demand_a(ctx.plant, ctx.network.buses[ctx.pcc].kv, from_pcc);
        notes.push(Note::DemandEstimated {
            i_l_a: limits.i_l_a,
            before_kva,
            after_kva,
            target_power_factor: ctx.plant.study.target_power_factor,
            from_pcc: from_pcc.is_some(),
        });
    }
    if let Some(first) = operating.collapsed.first() {
        let mut scenarios: Vec<String> = Vec::new();
        for c in &operating.collapsed {
            if !scenarios.contains(&c.scenario) {
                scenarios.push(c.scenario.clone());
            }
        }
        // First in the notes: every figure of those configurations is missing.
        notes.insert(
            0,
            Note::Collapse {
                count: operating.collapsed.len(),
                first: first.to_string(),
                scenarios,
                tightest: crate::model::loading::tightest(ctx.plant),
            },
        );
    }
    notes
}

/// The grounded-wye banks whose bus has no zero-sequence path in some scenario, as one
/// note (`None` when every such bank has one).
fn no_zero_path(ctx: &Context<'_>) -> Option<Note> {
    let banks: Vec<(String, String, Vec<String>)> = (ctx.network.banks.iter())
        .filter(|b| b.connection.has_zero_path())
        .filter_map(|b| {
            let scenarios: Vec<String> = (ctx.zero.scenarios.iter().enumerate())
                .filter(|(s, _)| !ctx.zero.conducts_at(*s, b.bus))
                .map(|(_, sc)| sc.name.clone())
                .collect();
            (!scenarios.is_empty())
                .then(|| (b.id.clone(), ctx.network.buses[b.bus].id.clone(), scenarios))
        })
        .collect();
    (!banks.is_empty()).then_some(Note::NoZeroPath(banks))
}

/// The note for a plant that exceeds a harmonic limit with no bank in service (`None`
/// when the configuration without banks meets every limit in every scenario).
pub fn plant_level_limits(rows: &[LimitRow], pcc: &str) -> Option<Note> {
    let over: Vec<&LimitRow> = rows
        .iter()
        .filter(|r| r.configuration == "none" && r.exceeds)
        .collect();
    let first = over.first()?;
    Some(Note::PlantLevelLimits {
        scenarios: over.iter().map(|r| r.scenario.clone()).collect(),
        pcc: pcc.to_string(),
        pcc_thd_percent: first.pcc_thd.value,
        tdd_percent: first.tdd.value,
        worst_thd_percent: first.worst_thd.value,
        worst_thd_bus: first.worst_thd_bus.clone(),
    })
}

/// Harmonic penetration of every configuration and the limits it is judged by. Isc at the
/// PCC comes from the scan's fundamental Thevenin impedance.
fn harmonics(
    ctx: &Context<'_>,
    engines: &SequenceEngines<'_, '_>,
    scan: &Scan,
    operating: &OperatingStudy,
    options: &CheckOptions,
) -> Result<(Penetration, LimitContext), CheckError> {
    let (plant, network) = (ctx.plant, &ctx.network);
    let isc_ka = pcc_isc_ka(ctx)?;
    let injections = if options.scan_only {
        Injections::none()
    } else {
        Injections::new(plant, network, &ctx.zero)
    };
    let limits = LimitContext::new(
        plant,
        network,
        &injections,
        (ctx.pcc, pcc_draw_kw(ctx, operating)),
        isc_ka,
    );
    let thd_limits: Vec<f64> = limits.thd_limit.iter().map(|l| l.value).collect();
    let penetration = Penetration::run(
        plant,
        engines,
        injections,
        &scan.configurations,
        operating,
        &limits.individual,
        &thd_limits,
        ctx.pcc,
        options.evaluation,
    )?;
    Ok((penetration, limits))
}

/// One limits summary per scenario × configuration, in that nesting order.
fn limit_rows(
    ctx: &Context<'_>,
    scan: &Scan,
    penetration: &Penetration,
    limits: &LimitContext,
) -> Vec<LimitRow> {
    use rayon::prelude::*;
    let network = &ctx.network;
    penetration
        .results
        .par_iter()
        .map(|d| {
            limit_row(
                d,
                limits,
                network,
                &penetration.injections.orders,
                &network.scenarios[d.scenario].name,
                scan.configurations[d.configuration].label(&ctx.plant.banks),
            )
        })
        .collect()
}

/// Each bank's resonance band across the capacitance tolerance and the scenarios.
fn tolerance(ctx: &Context<'_>, resonance: &ResonanceStudy) -> Vec<ToleranceBand> {
    let tol = ctx.plant.study.capacitance_tolerance;
    let p_of = |id: &str| {
        (ctx.network.banks.iter())
            .find(|b| b.id == id)
            .map_or(0.0, |b| b.p)
    };
    bands(
        &resonance.rows,
        &p_of,
        tol.minus_percent,
        tol.plus_percent,
        (&resonance.positive_orders, &resonance.zero_orders),
        resonance.margin_percent,
    )
}

/// The switching simulation of every step of every bank at its operating point.
fn switching(
    ctx: &Context<'_>,
    engine: &Engine<'_>,
    scan: &Scan,
    (operating, load_flow): (&OperatingStudy, &OperatingSolver),
) -> Result<SwitchingStudy, CheckError> {
    Ok(crate::study::switching::run(
        &crate::study::switching::Inputs {
            plant: ctx.plant,
            net: &ctx.network,
            operating,
            load_flow,
            z_th_ohm: &switching_z_th_ohm(&ctx.network, engine, scan)?,
        },
    ))
}

/// Runs every study `options` asks for on `plant` (remedies excepted: see
/// [`super::check::run_check`]).
pub fn run_studies(plant: &Plant, options: &CheckOptions) -> Result<CheckResults, CheckError> {
    run_studies_beside(plant, options, |_| ()).0
}

/// [`run_studies`], with `beside(rows)` run on the resonance screen's rows in parallel with
/// every study after the screen (the damping band's re-run needs nothing more): (the
/// results, what `beside` returned; `None` when the check stopped before the screen was
/// done).
pub fn run_studies_beside<T: Send>(
    plant: &Plant,
    options: &CheckOptions,
    beside: impl FnOnce(&[ResonanceRow]) -> T + Send,
) -> (Result<CheckResults, CheckError>, Option<T>) {
    let ctx = match Context::build(plant, options) {
        Ok(ctx) => ctx,
        Err(e) => return (Err(e), None),
    };
    let engine = Engine::new(&ctx.network, &ctx.buses);
    let zero_engine = Engine::new(&ctx.zero, &ctx.zero_buses);
    let screened = match screen(&ctx, &engine, &zero_engine, options) {
        Ok(s) => s,
        Err(e) => return (Err(e), None),
    };
    let (studies, side) = rayon::join(
        || after_screen(&ctx, (&engine, &zero_engine), &screened, options),
        || beside(&screened.resonance.rows),
    );
    let results = studies.map(|studies| {
        let Screen {
            scan,
            zero_scan,
            zero_map,
            resonance,
        } = screened;
        CheckResults {
            plant: plant.clone(),
            network: ctx.network.clone(),
            scan,
            zero_scan,
            zero_map,
            zero_network: ctx.zero.clone(),
            resonance,
            operating: studies.operating,
            load_flow: studies.load_flow,
            penetration: studies.penetration,
            limits: studies.limits,
            limit_rows: studies.limit_rows,
            duty: studies.duty,
            duty_envelope: studies.duty_envelope,
            neutral: studies.neutral,
            tolerance: studies.tolerance,
            switching: studies.switching,
            background: studies.background,
            amplification: studies.amplification,
            remedies: Vec::new(),
            plant_remedies: Vec::new(),
            damping: Vec::new(),
            notes: studies.notes,
            pcc: ctx.pcc,
        }
    });
    (results, Some(side))
}

/// What the studies after the resonance screen give (see [`CheckResults`]).
struct Studies {
    operating: OperatingStudy,
    load_flow: OperatingSolver,
    penetration: Penetration,
    limits: LimitContext,
    limit_rows: Vec<LimitRow>,
    duty: Vec<crate::study::duty::DutyRow>,
    duty_envelope: Option<crate::study::duty::DutyEnvelope>,
    neutral: Vec<crate::study::neutral::NeutralRow>,
    tolerance: Vec<ToleranceBand>,
    switching: SwitchingStudy,
    background: Vec<crate::study::background::BackgroundShare>,
    amplification: Vec<Vec<crate::study::penetration::BankAmplification>>,
    notes: Vec<Note>,
}

/// Every study after the screen: load flows, penetration and limits, duty, the tolerance
/// band, switching, and their notes.
fn after_screen(
    ctx: &Context<'_>,
    (engine, zero_engine): (&Engine<'_>, &Engine<'_>),
    screened: &Screen,
    options: &CheckOptions,
) -> Result<Studies, CheckError> {
    let (plant, network, scan) = (ctx.plant, &ctx.network, &screened.scan);
    let studied: &[Configuration] = if options.scan_only {
        &[]
    } else {
        &scan.configurations
    };
    let load_flow = OperatingSolver::new(network);
    let operating = OperatingStudy::run(plant, network, &load_flow, studied);
    let engines = SequenceEngines {
        positive: engine,
        zero: zero_engine,
    };
    let (penetration, limits) = harmonics(ctx, &engines, scan, &operating, options)?;
    let mut notes = study_notes(ctx, &penetration, &limits, &operating);
    if screened.zero_scan.is_some() {
        notes.extend(no_zero_path(ctx));
    }
    let limit_rows = if options.scan_only {
        Vec::new()
    } else {
        limit_rows(ctx, scan, &penetration, &limits)
    };
    // Empty under scan_only: the scan injects nothing.
    let neutral = crate::study::neutral::neutral_rows(plant, network, &penetration.injections);
    let (duty, duty_envelope) = if options.scan_only {
        (Vec::new(), None)
    } else {
        super::duty::duty(ctx, scan, &operating, &penetration)
    };
    let tolerance = tolerance(ctx, &screened.resonance);
    let switching = if options.scan_only || !options.switching {
        SwitchingStudy::default()
    } else {
        switching(ctx, engine, scan, (&operating, &load_flow))?
    };
    notes.extend(switching.failures.iter().cloned().map(Note::Switching));
    let background = background_shares(&penetration, network, &plant.banks, &scan.configurations);
    let amplification = amplification(scan, &penetration);
    if let Some(note) = plant_level_limits(&limit_rows, &network.buses[ctx.pcc].id) {
        let at = usize::from(matches!(notes.first(), Some(Note::Collapse { .. })));
        notes.insert(at, note);
    }
    Ok(Studies {
        operating,
        load_flow,
        penetration,
        limits,
        limit_rows,
        duty,
        duty_envelope,
        neutral,
        tolerance,
        switching,
        background,
        amplification,
        notes,
    })
}

/// Per penetration result (same order), each bank bus's harmonic amplification against the
/// configuration without banks of the same scenario (empty when that was not studied).
fn amplification(
    scan: &Scan,
    penetration: &Penetration,
) -> Vec<Vec<crate::study::penetration::BankAmplification>> {
    let nc = scan.configurations.len();
    let none = scan.configurations.iter().position(|c| c.is_none());
    let orders = &penetration.injections.orders;
    penetration
        .results
        .iter()
        .map(|d| {
            none.map_or_else(Vec::new, |n0| {
                bank_amplification(d, penetration.result(d.scenario, n0, nc), orders)
            })
        })
        .collect()
}
