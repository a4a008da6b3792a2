//! How each element's losses grow with harmonic order h: the resistance multiplier k(h) of
//! every series element under each [`ResistanceModel`], and the harmonic model of linear
//! loads under each [`LoadModel`].
//!
//! Every multiplier is 1 at the fundamental: the workbook's R and X/R are fundamental
//! values, and the load flow (h = 1) is the same under every model.

use num_complex::Complex64;

use crate::model::{LoadModel, ResistanceModel};

/// Which law an element's resistance follows with frequency.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Growth {
    /// A supply's Thevenin resistance.
    Source,
    /// A transformer's winding resistance.
    Transformer,
    /// A cable conductor: `xs2_fundamental` is the IEC 60287-1-1 skin-effect argument x_s²
    /// at the fundamental (x_s² grows in proportion to h).
    Cable { xs2_fundamental: f64 },
    /// A detuning reactor's resistance.
    Reactor,
    /// An induction motor's subtransient resistance.
    Motor,
}

/// √h: skin-effect growth of a conductor's resistance, used for sources and reactors
/// (IEEE Task Force on Harmonics Modeling and Simulation, "Modeling and simulation of the
/// propagation of harmonics in electric power networks, Part I", IEEE Trans. Power Delivery
/// 11(1), 1996; from memory).
pub fn skin_factor(order: f64) -> f64 {
    order.sqrt()
}

/// Transformer and induction-motor resistance multiplier, dimensionless:
/// k(h) = (1 + 0.1·h^1.5) / 1.1.
///
/// The published law is R(h) = R·(1 + 0.1·h^1.5) (Breuer et al., "HVDC-AC harmonic
/// interaction, Part II: AC system harmonic model with comparison of calculated and
/// measured data", IEEE Trans. Power Apparatus and Systems PAS-101(3), 1982; from memory);
/// it is divided by its value at h = 1 so that the workbook's fundamental R is kept.
pub fn winding_factor(order: f64) -> f64 {
    (1.0 + 0.1 * order.powf(1.5)) / 1.1
}

/// The skin-effect factor y_s of a round conductor, dimensionless, from its argument
/// x_s² (IEC 60287-1-1, clause 2.1.2, with k_s = 1; from memory):
/// y_s = x_s⁴ / (192 + 0.8·x_s⁴) for x_s ≤ 2.8;
/// y_s = −0.136 − 0.0177·x_s + 0.0563·x_s² for 2.8 < x_s ≤ 3.8;
/// y_s = 0.354·x_s − 0.733 above.
pub fn skin_effect_ys(xs2: f64) -> f64 {
    let xs = xs2.max(0.0).sqrt();
    if xs <= 2.8 {
        xs2 * xs2 / (192.0 + 0.8 * xs2 * xs2)
    } else if xs <= 3.8 {
        -0.136 - 0.0177 * xs + 0.0563 * xs2
    } else {
        0.354 * xs - 0.733
    }
}

/// The IEC 60287-1-1 argument x_s² at the fundamental for a conductor of `r_ohm_per_km`
/// at `frequency_hz`: x_s² = 8π·f / R' · 10⁻⁷ · k_s, R' in ohm per metre, k_s = 1.
pub fn cable_xs2(r_ohm_per_km: f64, frequency_hz: f64) -> f64 {
    let r_per_m = r_ohm_per_km / 1000.0;
    if r_per_m > 0.0 {
        8.0 * std::f64::consts::PI * frequency_hz / r_per_m * 1e-7
    } else {
        0.0
    }
}

/// A cable's resistance multiplier: (1 + y_s(h·x_s1²)) / (1 + y_s(x_s1²)), the AC
/// resistance at order h over that at the fundamental (IEC 60287-1-1, clause 2.1.2).
pub fn cable_factor(order: f64, xs2_fundamental: f64) -> f64 {
    (1.0 + skin_effect_ys(order * xs2_fundamental)) / (1.0 + skin_effect_ys(xs2_fundamental))
}

impl Growth {
    /// The resistance multiplier k(h) of this element under `model`, dimensionless.
    ///
    /// `constant`: 1 for every element. `skin`: √h for sources, transformers, cables and
    /// reactors, 1 for motors (the models before the frequency-dependent default).
    /// `frequency-dependent`: √h for sources and reactors, [`winding_factor`] for
    /// transformers and motors, [`cable_factor`] for cables.
    pub fn factor(self, order: f64, model: ResistanceModel) -> f64 {
        match (model, self) {
            (ResistanceModel::Constant, _) => 1.0,
            (ResistanceModel::Skin, Growth::Motor) => 1.0,
            (ResistanceModel::Skin, _) => skin_factor(order),
            (ResistanceModel::FrequencyDependent, Growth::Source | Growth::Reactor) => {
                skin_factor(order)
            }
            (ResistanceModel::FrequencyDependent, Growth::Transformer | Growth::Motor) => {
                winding_factor(order)
            }
            (ResistanceModel::FrequencyDependent, Growth::Cable { xs2_fundamental }) => {
                cable_factor(order, xs2_fundamental)
            }
        }
    }
}

/// A linear load's admittance at order h, per unit, from its P and Q (per unit of the
/// system base at nominal voltage, Q ≥ 0 lagging).
///
/// `parallel R-L`: Y = P − j·Q/h (R = V²/P in parallel with X_L = h·V²/Q; input contract).
///
/// `CIGRE`: R_s = V²/P in series with X_s = 0.073·h·R_s, the pair in parallel with
/// X_p = h·R_s / (6.7·Q/P − 0.74) (CIGRE Working Group 36-05, "Harmonics, characteristic
/// parameters, methods of study, estimates of existing values in the network", Electra 77,
/// 1981; from memory). Below Q/P = 0.74/6.7 the parallel branch is absent (X_p infinite).
pub fn linear_load_y_pu(p_pu: f64, q_pu: f64, order: f64, model: LoadModel) -> Complex64 {
    match model {
        LoadModel::ParallelRl => Complex64::new(p_pu, -q_pu / order),
        LoadModel::Cigre => {
            if p_pu <= 0.0 {
                return Complex64::default();
            }
            let r_s = 1.0 / p_pu;
            let series = Complex64::new(r_s, 0.073 * order * r_s).inv();
            let k = 6.7 * q_pu / p_pu - 0.74;
            let parallel = if k > 0.0 {
                Complex64::new(0.0, -k / (order * r_s))
            } else {
                Complex64::default()
            };
            series + parallel
        }
    }
}
