//! The design search itself, step by step (the steps of the module doc of
//! [`super`]): the rows and the plant each joins, the step count of each family from the
//! controller, the levels where no plan reaches the target, the plant without the bank,
//! every plan scanned and the survivors checked, then ranked.

use rayon::prelude::*;

use super::kits::{self, Kit};
use super::levels::{self, Control, Level};
use super::outcome::{evaluate, notes, rank, reason};
use super::plans::{self, Family, Plan};
use super::prescreen::studied;
use super::*;
use crate::jobs::check::{CheckError, CheckOptions, run_check};
use crate::jobs::notes::Note;
use crate::study::scan::KnownPoints;

/// The design rows: the `Design` sheet's, or one per proposed bank (its bus, steps of half,
/// one and two times its step, 1 to 8 steps, the default detuning choices and classes).
fn design_rows(plant: &Plant) -> Result<(Vec<DesignRow>, bool), DesignError> {
    if !plant.design.is_empty() {
        return Ok((plant.design.clone(), false));
    }
    let mut rows: Vec<DesignRow> = Vec::new();
    for b in plant
        .banks
        .iter()
        .filter(|b| b.status == BankStatus::Proposed)
    {
        if rows.iter().any(|r| r.bus == b.bus) {
            continue;
        }
        rows.push(row_for(b, DEFAULT_STEPS.1, Vec::new()));
    }
    if rows.is_empty() {
        return Err(DesignError::Sheet(
            "Design: the workbook has no Design sheet and no proposed bank on the Capacitors sheet: name the bus(es) where a bank may go and the allowed step sizes on a Design sheet (`overtone template FILE.xlsx` writes one)".into(),
        ));
    }
    Ok((rows, true))
}

/// The check options of the search: no remedies, no switching simulation.
pub(super) fn check_options(options: &DesignOptions, scan_only: bool) -> CheckOptions {
    CheckOptions {
        remedies: Some(false),
        scan_only,
        switching: false,
        evaluation: options.evaluation,
        damping_band: Some(false),
        mode_analysis: Some(false),
        ..Default::default()
    }
}

/// A kit's plans at their bounded step counts (one per bank, in the kit's order), with the
/// controller's choices at the largest counts and at those counts (`[level][scenario]`).
type Bounded = (Vec<Plan>, Vec<Vec<Control>>, Vec<Vec<Control>>);

/// One plan to scan: its kit, its banks' plans, the controller's choices.
struct Candidate {
    kit: usize,
    plans: Vec<Plan>,
    control: Vec<Vec<Control>>,
}

/// What the search holds for its design rows: the plant each row's plans join (the banks
/// the row replaces removed; every other bank stays as on the Capacitors sheet) and, with
/// several rows, the plant the plans at every row together join (every row's replaced banks
/// removed); the bank a row's plan stands in for, the designed bank's id per row, the load
/// levels of each plant, every family of plans and the kits tried.
struct Search<'p> {
    plant: &'p Plant,
    rows: Vec<DesignRow>,
    derived: bool,
    bases: Vec<Plant>,
    templates: Vec<Option<&'p CapacitorBank>>,
    bank_ids: Vec<String>,
    row_levels: Vec<Vec<Level>>,
    families: Vec<Family>,
    kits: Vec<Kit>,
    joint_note: Option<String>,
}

impl<'p> Search<'p> {
    /// Checks the design input and lays out the search.
    fn new(plant: &'p Plant) -> Result<Self, DesignError> {
        plant.validate().map_err(CheckError::from)?;
        if let Some(p) = design_problems(plant).into_iter().next() {
            return Err(DesignError::Input {
                sheet: p.sheet,
                cell: p.cell,
                message: p.message,
            });
        }
        let (rows, derived) = design_rows(plant)?;
        // The banks a row's plan replaces: those it names, else the proposed bank there.
        let replaced_by = |b: &CapacitorBank, r: &DesignRow| {
            if r.replaces.is_empty() {
                b.status == BankStatus::Proposed && b.bus == r.bus
            } else {
                r.replaces.contains(&b.id)
            }
        };
        let without = |gone: &dyn Fn(&CapacitorBank) -> bool| {
            let mut base = plant.clone();
            base.banks.retain(|b| !gone(b));
            base
        };
        let mut bases: Vec<Plant> = (rows.iter())
            .map(|r| without(&|b| replaced_by(b, r)))
            .collect();
        let templates: Vec<Option<&CapacitorBank>> = rows
            .iter()
            .map(|r| plant.banks.iter().find(|b| replaced_by(b, r)))
            .collect();
        let bank_ids: Vec<String> = rows
            .iter()
            .zip(&templates)
            .map(|(r, t)| t.map_or_else(|| format!("PFC-{}", r.bus), |b| b.id.clone()))
            .collect();
        let bus_kv = |bus: &str| {
            (plant.buses.iter())
                .find(|b| b.id == bus)
                .map_or(f64::NAN, |b| b.nominal_kv)
        };
        let families: Vec<Family> = rows
            .iter()
            .enumerate()
            .flat_map(|(i, r)| plans::families(i, r, bus_kv(&r.bus)))
            .collect();
        let mut kits: Vec<Kit> = (0..families.len())
            .map(|i| Kit {
                families: vec![i],
                base: families[i].row,
            })
            .collect();
        let mut joint_note = None;
        let distinct = (0..bank_ids.len()).all(|i| !bank_ids[..i].contains(&bank_ids[i]));
        if rows.len() > 1 && distinct {
            bases.push(without(&|b| rows.iter().any(|r| replaced_by(b, r))));
            let (joint, note) = kits::joint_kits(&families, rows.len(), rows.len());
            kits.extend(joint);
            joint_note = note;
        }
        let mut row_levels: Vec<Vec<Level>> = Vec::new();
        for base in &bases {
            row_levels.push(levels::levels(base)?);
        }
        Ok(Search {
            plant,
            rows,
            derived,
            bases,
            templates,
            bank_ids,
            row_levels,
            families,
            kits,
            joint_note,
        })
    }

    /// The leading power-factor limit of kit `k`: the strictest of its rows'.
    fn leading(&self, k: &Kit) -> f64 {
        (k.families.iter())
            .map(|&f| {
                let row = &self.rows[self.families[f].row];
                row.leading_pf_limit.unwrap_or(DEFAULT_LEADING_PF_LIMIT)
            })
            .fold(f64::NEG_INFINITY, f64::max)
    }

    /// Family `f`'s plan with `steps` steps.
    fn plan_of(&self, f: &Family, steps: u32) -> Plan {
        Plan {
            bus: self.rows[f.row].bus.clone(),
            step_kvar: f.step_kvar,
            steps,
            reactor: f.reactor,
            rated_kv: f.rated_kv,
        }
    }

    /// The banks of kit `k`'s `plans` (one per family of the kit, in its order).
    fn banks(&self, k: &Kit, plans: &[Plan]) -> Vec<CapacitorBank> {
        (k.families.iter().zip(plans))
            .map(|(&fi, plan)| {
                let f = &self.families[fi];
                plans::bank(plan, &self.bank_ids[f.row], self.templates[f.row], f.bus_kv)
            })
            .collect()
    }

    /// Every plan allowed: per kit, the product of its rows' step-count ranges.
    fn enumerated(&self) -> usize {
        (self.kits.iter())
            .map(|k| {
                (k.families.iter())
                    .map(|&f| {
                        let row = &self.rows[self.families[f].row];
                        (row.steps_max - row.steps_min + 1) as usize
                    })
                    .fold(1usize, usize::saturating_mul)
            })
            .fold(0usize, usize::saturating_add)
    }

    /// Step 2: each kit at the step counts the controller uses at the largest counts.
    fn bounded(&self) -> Result<Vec<Bounded>, DesignError> {
        let bounded: Vec<Result<Bounded, DesignError>> = self
            .kits
            .par_iter()
            .map(|k| {
                let lv = &self.row_levels[k.base];
                let leading = self.leading(k);
                let largest: Vec<Plan> = (k.families.iter())
                    .map(|&fi| {
                        let f = &self.families[fi];
                        self.plan_of(f, self.rows[f.row].steps_max)
                    })
                    .collect();
                let at_max = kits::controls(lv, &self.banks(k, &largest), leading)?;
                let first = self.bases[k.base].banks.len();
                let plans: Vec<Plan> = (k.families.iter().enumerate())
                    .map(|(i, &fi)| {
                        let f = &self.families[fi];
                        let row = &self.rows[f.row];
                        let n = kits::most_steps(&at_max, first + i);
                        self.plan_of(f, n.clamp(row.steps_min, row.steps_max))
                    })
                    .collect();
                let at_n = if plans == largest {
                    at_max.clone()
                } else {
                    kits::controls(lv, &self.banks(k, &plans), leading)?
                };
                Ok((plans, at_max, at_n))
            })
            .collect();
        bounded.into_iter().collect()
    }

    /// Per level and scenario, whether any allowed plan reaches the target; an error when
    /// none reaches it anywhere (the design limits contradict the target).
    fn reachable(&self, bounded: &[Bounded]) -> Result<Vec<Vec<bool>>, DesignError> {
        let ns = self.plant.scenarios().len();
        let mut reachable = vec![vec![false; ns]; self.row_levels[0].len()];
        for (_, at_max, _) in bounded {
            for (l, per) in at_max.iter().enumerate() {
                for (s, c) in per.iter().enumerate() {
                    reachable[l][s] |= c.reaches;
                }
            }
        }
        if reachable.iter().flatten().any(|&r| r) {
            return Ok(reachable);
        }
        let best_pf = bounded
            .iter()
            .filter_map(|(_, at_max, _)| levels::lowest_pf(at_max.iter().flatten()))
            .fold(f64::NAN, f64::max);
        let r = &self.rows[0];
        Err(DesignError::Input {
            sheet: "Design",
            cell: r.cells.steps.clone(),
            message: format!(
                "no allowed plan reaches the target power factor {} at any load level: the best leaves {best_pf:.3} at the PCC; allow more steps here or larger sizes in \"Step kvar\" ({}), or lower \"Target power factor\" on the Study sheet",
                self.plant.study.target_power_factor, r.cells.step_kvar
            ),
        })
    }

    /// Per plant of `bases`, the plant without the designed bank(s) (for the limits
    /// comparison) with the controller's choices there, and the notes of the first check.
    fn baselines(
        &self,
        options: &DesignOptions,
    ) -> Result<(Vec<Baseline>, Vec<Note>), DesignError> {
        let mut baselines = Vec::new();
        let mut base_notes = Vec::new();
        for (r, base) in self.bases.iter().enumerate() {
            let leading = (self.rows.get(r).and_then(|row| row.leading_pf_limit))
                .unwrap_or(DEFAULT_LEADING_PF_LIMIT);
            let control = kits::controls(&self.row_levels[r], &[], leading)?;
            let base_res = run_check(base, &check_options(options, false))?;
            let rows = &base_res.limit_rows;
            baselines.push(Baseline {
                control,
                pcc_thd_percent: rows.iter().map(|r| r.pcc_thd.value).fold(0.0, f64::max),
                tdd_percent: rows.iter().map(|r| r.tdd.value).fold(0.0, f64::max),
                limits_exceeded: rows.iter().filter(|r| r.exceeds).count(),
            });
            if base_notes.is_empty() {
                base_notes = base_res.notes;
            }
        }
        Ok((baselines, base_notes))
    }

    /// Steps 3 and 4 for one plan: scanned, and checked when clear of resonance.
    fn check_plan(
        &self,
        c: &Candidate,
        options: &DesignOptions,
        reachable: &[Vec<bool>],
        baselines: &[Baseline],
        known: &std::sync::Arc<KnownPoints>,
    ) -> Result<PlanResult, DesignError> {
        let k = &self.kits[c.kit];
        let banks = self.banks(k, &c.plans);
        let ids: Vec<&str> = banks.iter().map(|b| b.id.as_str()).collect();
        let mut p = self.bases[k.base].clone();
        p.banks.extend(banks.iter().cloned());
        let known = (known.clone(), k.base);
        let (res, clear) = studied(&p, (&ids, &c.control), known, options)?;
        let mut cost = 0.0;
        let mut parts = Vec::new();
        for ((&fi, plan), bank) in k.families.iter().zip(&c.plans).zip(banks) {
            let f = &self.families[fi];
            cost += plans::cost(f, &self.rows[f.row], plan.steps);
            parts.push(Part {
                effective_kvar: f64::from(plan.steps) * plan.effective_step_kvar(f.bus_kv),
                plan: plan.clone(),
                bank,
                row: f.row,
            });
        }
        Ok(evaluate(
            &res,
            parts,
            cost,
            c.control.clone(),
            &self.row_levels[k.base],
            reachable,
            &baselines[k.base],
            self.plant.study.target_power_factor,
            !clear,
            k.base,
        ))
    }

    /// The design's notes: its assumptions, then the several-bus and no-step sentences, then
    /// the estimated I_L of the plant's own check.
    fn notes(
        &self,
        unreachable: &[(String, String)],
        baselines: &[Baseline],
        base_notes: &[Note],
    ) -> Vec<Note> {
        let target = self.plant.study.target_power_factor;
        let mut notes = notes(
            &self.row_levels[0],
            &self.rows,
            self.derived,
            unreachable,
            target,
        );
        if self.rows.len() > 1 {
            notes.push(Note::Design("Several design buses, searched one at a time and together: a plan puts one bank at one of them, or a bank at every one of them (one detuning choice for all, each bus's own step sizes and classes: the kvar split across the buses; their steps counted by the controller switching them in rotation after the plant's other banks). Each plan replaces the banks its rows replace (the proposed bank at the bus by default) and is scanned and checked over every configuration of the whole plant.".into()));
        }
        if let Some(n) = &self.joint_note {
            notes.push(Note::Design(n.clone()));
        }
        if baselines
            .iter()
            .all(|b| b.control.iter().flatten().all(|c| c.reaches))
        {
            notes.insert(
                0,
                Note::Design("The plant reaches the target power factor at every level and scenario without the designed bank (its other banks or its loads suffice): the controller switches no designed step, and the plans are the smallest allowed.".into()),
            );
        }
        notes.extend(
            base_notes
                .iter()
                .filter(|n| matches!(n, Note::DemandEstimated { .. }))
                .cloned(),
        );
        notes
    }
}

/// The (level, scenario) pairs where no allowed plan reaches the target (waived there).
fn unreachable(
    levels: &[Level],
    scenarios: &[String],
    reachable: &[Vec<bool>],
) -> Vec<(String, String)> {
    let mut out = Vec::new();
    for (l, per) in reachable.iter().enumerate() {
        for (s, ok) in per.iter().enumerate() {
            if !ok {
                out.push((levels[l].name.clone(), scenarios[s].clone()));
            }
        }
    }
    out
}

/// Runs the design search on `plant` (its `Design` and `Load levels` rows). When no plan
/// passes and the controller never switches a row's plans in because other banks' steps
/// alone reach the target, those banks are designed too: the search runs once more with a
/// derived Design row replacing each of them, and says so.
pub fn run_design(plant: &Plant, options: &DesignOptions) -> Result<DesignResult, DesignError> {
    let first = search_once(plant, options)?;
    if first.recommended.is_some() {
        return Ok(first);
    }
    let others = other_banks_used(&first);
    if others.is_empty() {
        return Ok(first);
    }
    let mut wider = plant.clone();
    if wider.design.is_empty() {
        // The rows the first search derived from the proposed banks, made explicit.
        wider.design = Search::new(plant)?.rows;
    }
    for id in &others {
        let Some(b) = plant.banks.iter().find(|b| &b.id == id) else {
            continue;
        };
        match wider.design.iter_mut().find(|r| r.bus == b.bus) {
            // One row per bus: that row's bank replaces this one too (and, as before, the
            // proposed bank there).
            Some(r) => {
                if r.replaces.is_empty() {
                    r.replaces = (plant.banks.iter())
                        .filter(|x| x.bus == r.bus && x.status == BankStatus::Proposed)
                        .map(|x| x.id.clone())
                        .collect();
                }
                r.replaces.push(id.clone());
            }
            None => wider
                .design
                .push(row_for(b, DEFAULT_STEPS.1.max(b.steps), vec![b.id.clone()])),
        }
    }
    // The wider search answers only if it runs; else the first one's answer stands.
    let Ok(mut second) = search_once(&wider, options) else {
        return Ok(first);
    };
    second.plant = plant.clone();
    second.notes.insert(
        0,
        Note::Design(format!(
            "No plan at the design bus(es) is ever switched in: the other banks' steps alone reach the target ({}), so {} designed too (a derived Design row replacing each, steps of half, one and two times its own, 1 to 8 steps, the default detuning choices).",
            others.join(", "),
            if others.len() == 1 { "it is" } else { "they are" }
        )),
    );
    Ok(second)
}

/// The banks (ids) other than the designed one that the controller switches in, over the
/// plans whose failures include "never switches it in" (empty unless every plan of some
/// row has that failure).
fn other_banks_used(d: &DesignResult) -> Vec<String> {
    let never = |p: &PlanResult| p.fails.iter().any(|f| f.contains("never switches it in"));
    let mut out: Vec<String> = Vec::new();
    for (r, base) in d.bases.iter().enumerate() {
        let plans: Vec<&PlanResult> = d.plans.iter().filter(|p| p.row == r).collect();
        if plans.is_empty() || !plans.iter().all(|p| never(p)) {
            continue;
        }
        for p in plans {
            for c in p.control.iter().flatten() {
                for (b, &k) in c.steps.iter().enumerate().take(base.banks.len()) {
                    let id = &base.banks[b].id;
                    if k > 0 && !out.contains(id) {
                        out.push(id.clone());
                    }
                }
            }
        }
    }
    // A bank some Design row already replaces is designed already.
    out.retain(|id| !d.plant.design.iter().any(|r| r.replaces.contains(id)));
    out
}

/// A derived Design row at bank `b`'s bus: steps of half, one and two times its step, 1 to
/// `steps_max` steps, the default detuning choices and classes, replacing `replaces`.
fn row_for(b: &CapacitorBank, steps_max: u32, replaces: Vec<String>) -> DesignRow {
    DesignRow {
        bus: b.bus.clone(),
        step_kvar: vec![b.step_kvar / 2.0, b.step_kvar, b.step_kvar * 2.0],
        steps_min: DEFAULT_STEPS.0,
        steps_max,
        reactors: DEFAULT_REACTORS.to_vec(),
        rated_kv: Vec::new(),
        capacitor_cost_per_kvar: Vec::new(),
        reactor_cost_per_kvar: None,
        step_cost: None,
        leading_pf_limit: None,
        replaces,
        cells: DesignCells::default(),
    }
}

/// One design search over `plant`'s rows.
fn search_once(plant: &Plant, options: &DesignOptions) -> Result<DesignResult, DesignError> {
    let search = Search::new(plant)?;
    let mut counts = Counts {
        families: search.kits.len(),
        enumerated: search.enumerated(),
        ..Default::default()
    };
    // Step 2, and where no allowed plan reaches the target it is waived.
    let bounded = search.bounded()?;
    let reachable = search.reachable(&bounded)?;
    let scenarios = plant.scenarios();
    let unreachable = unreachable(&search.row_levels[0], &scenarios, &reachable);
    let mut candidates: Vec<Candidate> = Vec::new();
    for (kit, (plans, _, control)) in bounded.into_iter().enumerate() {
        let base = search.kits[kit].base;
        let seen = (candidates.iter()).any(|c| search.kits[c.kit].base == base && c.plans == plans);
        if !seen {
            candidates.push(Candidate {
                kit,
                plans,
                control,
            });
        }
    }
    counts.after_pf_bound = candidates.len();
    let (baselines, base_notes) = search.baselines(options)?;
    // Steps 3 and 4: scan every plan, check the ones clear of resonance.
    let known = std::sync::Arc::new(KnownPoints::default());
    let total = candidates.len() as u64;
    let done = std::sync::atomic::AtomicU64::new(0);
    let results: Vec<Result<PlanResult, DesignError>> = candidates
        .par_iter()
        .map(|c| {
            let out = search.check_plan(c, options, &reachable, &baselines, &known);
            let k = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
            if let Some(pr) = &options.progress {
                pr(k, total);
            }
            out
        })
        .collect();
    let mut plans_out = results
        .into_iter()
        .collect::<Result<Vec<PlanResult>, _>>()?;
    counts.scanned = plans_out.len();
    counts.checked = plans_out.iter().filter(|p| !p.scan_only).count();
    counts.passed = plans_out.iter().filter(|p| p.passes()).count();
    rank(&mut plans_out);
    let recommended = plans_out.first().filter(|p| p.passes()).map(|_| 0);
    let reason = reason(&plans_out, recommended);
    let notes = search.notes(&unreachable, &baselines, &base_notes);
    let levels = &search.row_levels[0];
    Ok(DesignResult {
        plant: plant.clone(),
        levels: levels.iter().map(|l| (l.name.clone(), l.hours)).collect(),
        scenarios,
        target_power_factor: plant.study.target_power_factor,
        plans: plans_out,
        recommended,
        reason,
        baselines,
        counts,
        unreachable,
        bank_ids: search.bank_ids,
        bases: search.bases,
        notes,
    })
}
