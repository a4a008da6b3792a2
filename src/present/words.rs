//! Sentences that state the model a study used, shared by the terminal summary, the JSON
//! and the review workbook.

use crate::model::Sequence;
use crate::model::{LoadModel, ResistanceModel, Summation};
use crate::study::operating::{OperatingPoint, PfVerdict};
use crate::study::remedy::RemedyResult;
use crate::study::resonance::{ResonanceRow, Verdict};

/// The model's scope in one sentence (input contract, version 2: sequences).
pub fn model_scope() -> &'static str {
    "Balanced three-phase model in symmetrical components: orders h = 3k+1 (and interharmonics) in the positive-sequence network, h = 3k−1 in the negative-sequence network (same impedances, opposite transformer phase shifts), triplen orders h = 3k of 4-wire loads (Loads `Connection`; electronic by default) and of the background in the zero-sequence network, those of 3-wire loads (every other type by default: no neutral, so their triplens, present under unbalance, flow as positive/negative sequence) in the positive-sequence network (equal passive impedances; under phasor summation with the positive sequence's winding shift), the two parts of one order adding at a bus by the summation law (phasors under phasor summation); the zero-sequence network's paths follow the transformer vector groups, bank connections and source grounding; loads and motors present no zero-sequence path; cables use their R0, X0 (Cables sheet) in the zero sequence, else 3 × the positive-sequence impedance (common practice); unbalance, non-characteristic harmonics from unbalance and mutual coupling are not modelled; switching transients by the time-domain simulation stated below."
}

/// What the switching simulation models, in one paragraph (report and review).
pub fn switching_scope() -> &'static str {
    "Switching: time-domain simulation (trapezoidal rule, companion models) of each capacitor step closing its three poles at once, exact for the balanced plant in Clarke components (the zero sequence is not excited, so the bank's connection does not change the peaks); the network at its fundamental parameters (R at h = 1 also under the skin model): sources as EMFs of Voltage (pu) behind R-L, transformers and cables as R-L with cable charging (C/2 at each end behind the cable's surge impedance), every energized step with its reactor and its inrush inductance (default 10 µH per step, common practice), linear loads as the parallel R-L drawing their P and Q at the load flow's voltage, motors as an EMF behind R + jX'', converters as their fundamental current, so the state before closing is the operating point of that configuration; every closing instant over a cycle at once by superposition, each figure at its worst; trapped charge as a balanced set whose largest phase holds the given value, at the worst polarity; the other banks at their highest studied step; peaks read in the first cycle at a time step of 1/60 of the fastest capacitor loop's period at the bus (at most 100,000 steps), then a step of 1/20 of it until the inrush decays below 5 % (at least 5 cycles, at most 60 cycles or 100,000 steps). Not modelled: arcs, restrikes and prestrikes, breaker pole scatter, surge arresters, saturation, frequency-dependent losses. Ringing: the largest mode of a matrix-pencil fit (Hua and Sarkar, 1990). IEEE C37.012 formulas (from memory; undamped, peak closing, × (1 + |trapped charge|)) as the hand check where they apply (alone; plain back-to-back)."
}

/// The damping models in a few words, as the verdict line states them.
pub fn damping_words(rm: ResistanceModel, lm: LoadModel) -> String {
    format!("{} R, {} loads", rm.word(), lm.word())
}

/// What the Study sheet's resistance and load models mean, in one paragraph (review
/// Assumptions, README).
pub fn damping_meaning(rm: ResistanceModel, lm: LoadModel) -> String {
    let r = match rm {
        ResistanceModel::Constant => {
            "resistance model constant: every R at its fundamental value at every order (the least damping, pessimistic)"
        }
        ResistanceModel::Skin => {
            "resistance model skin: R·√h on sources, transformers, cables and reactors, motors' R constant"
        }
        ResistanceModel::FrequencyDependent => {
            "resistance model frequency-dependent: sources and detuning reactors R·√h (IEEE harmonics-modelling task force, 1996); transformers and motors R·(1 + 0.1·h^1.5)/1.1 (Breuer et al., IEEE Trans. PAS, 1982, kept at R at h = 1); cables R·(1 + y_s(h))/(1 + y_s(1)) with the skin-effect factor y_s of IEC 60287-1-1"
        }
    };
    let l = match lm {
        LoadModel::ParallelRl => "linear loads as R = V²/P in parallel with X = h·V²/Q",
        LoadModel::Cigre => {
            "linear loads by the CIGRE model: R_s = V²/P in series with X_s = 0.073·h·R_s, in parallel with X_p = h·R_s/(6.7·Q/P − 0.74) (CIGRE WG 36-05, Electra 77, 1981)"
        }
    };
    format!(
        "Damping: {r}; {l}; motors R + jhX'' with X'' = 0.17 pu on kW·qty/pf and X''/R = 10 at the fundamental; converters add no damping. Every flagged resonance's amplification, bus THD and capacitor current are also given under the least-damped models (constant R, CIGRE loads)."
    )
}

/// What the Study sheet's summation law means for the results.
pub fn summation_meaning(law: Summation) -> &'static str {
    match law {
        Summation::Arithmetic => {
            "contributions of each injection bus and of the background combine by magnitude (arithmetic summation: an upper bound; spectrum angles are not used)."
        }
        Summation::Iec61000_3_6 => {
            "contributions of each injection bus and of the background combine by the IEC 61000-3-6 summation exponents (α = 1 below the 5th, 1.4 from the 5th to the 10th, 2 above; spectrum angles are not used)."
        }
        Summation::Phasor => {
            "contributions add as phasors (complex superposition): each load's harmonic current has the spectrum's angle plus h times the angle of its fundamental current at the operating point of the same scenario and configuration, carried through the transformer phase shifts; the background EMFs add with their own angles."
        }
    }
}

/// A power-factor verdict as the reports print it.
pub fn pf_word(v: PfVerdict) -> &'static str {
    match v {
        PfVerdict::Reaches => "reaches target",
        PfVerdict::BelowTarget => "below target",
        PfVerdict::Leading => "LEADING",
        PfVerdict::NoLoad => "no load",
    }
}

/// An operating point's verdict words: the PF verdict, and `OUT OF RANGE` when a bus is
/// outside its band.
pub fn operating_verdict(p: &OperatingPoint) -> String {
    match (p.pf_verdict, p.buses_out_of_range > 0) {
        (v, false) => pf_word(v).to_string(),
        (PfVerdict::Leading, true) => "LEADING, OUT OF RANGE".to_string(),
        (_, true) => "OUT OF RANGE".to_string(),
    }
}

/// A resonance verdict as the reports print it.
pub fn verdict_word(v: Verdict) -> &'static str {
    match v {
        Verdict::Resonant => "RESONANT",
        Verdict::Clear => "clear",
        Verdict::NoPeak => "no peak",
    }
}

/// A resonance row's verdict as printed: the word, marked `(zero seq)` for a zero-sequence
/// row.
pub fn resonance_verdict(r: &ResonanceRow) -> String {
    match r.sequence {
        Sequence::Zero => format!("{} (zero seq)", verdict_word(r.verdict)),
        _ => verdict_word(r.verdict).to_string(),
    }
}

/// A remedy option's verdict as printed: the bank's own checks, and whether plant-wide
/// limits still fail with the option in place.
pub fn remedy_verdict(x: &RemedyResult) -> &'static str {
    match (x.passes, x.after.limits_exceeded > 0) {
        (true, false) => "passes",
        (true, true) => "passes; plant limits over",
        (false, _) => "fails",
    }
}
