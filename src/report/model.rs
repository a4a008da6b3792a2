//! Sentences that state the model a study used, shared by the terminal summary, the JSON
//! and the review workbook.

use crate::model::Summation;

/// The model's scope in one sentence (input contract, version 2: sequences).
pub fn model_scope() -> &'static str {
    "Balanced three-phase model in symmetrical components: orders h = 3k+1 (and interharmonics) in the positive-sequence network, h = 3k−1 in the negative-sequence network (same impedances, opposite transformer phase shifts), triplen orders h = 3k in the zero-sequence network, whose paths follow the transformer vector groups, bank connections and source grounding; loads and motors present no zero-sequence path; cables use their positive-sequence impedance in the zero sequence (no zero-sequence cable data in the input); unbalance, non-characteristic harmonics from unbalance and mutual coupling are not modelled; transients only by the simple formulas stated."
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
