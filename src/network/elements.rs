//! Element impedance models of the input contract, in per unit on [`super::BASE_MVA`] and
//! each bus's nominal kV, as functions of harmonic order h.
//!
//! k(h) is the resistance multiplier of the study's resistance model for the element's kind
//! ([`Growth::factor`], laws and sources in `damping.rs`).

use num_complex::Complex64;

use super::BASE_MVA;
use super::damping::{Growth, cable_xs2, linear_load_y_pu};
use crate::model::{
    BankConnection, Cable, CapacitorBank, Load, LoadModel, LoadType, ResistanceModel, Source,
    Transformer,
};

/// Motor subtransient reactance X'' on the motor's rated kVA, per unit (input contract,
/// sheet `Loads`; a typical value, common practice).
pub const MOTOR_X2_PU: f64 = 0.17;
/// Motor X''/R ratio (input contract, sheet `Loads`; common practice).
pub const MOTOR_X_OVER_R: f64 = 10.0;

/// A series R-L impedance: Z(h) = R·k(h) + j·h·X, per unit, with R and X at fundamental and
/// k(h) the law of `growth`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesImpedance {
    pub r_pu: f64,
    pub x_pu: f64,
    pub growth: Growth,
}

impl SeriesImpedance {
    /// Splits a magnitude |Z| into R and X by the X/R ratio:
    /// R = |Z| / √(1 + (X/R)²), X = R·(X/R) (input contract, sheet `Sources`).
    pub fn from_magnitude(z_pu: f64, x_over_r: f64, growth: Growth) -> Self {
        let r = z_pu / (1.0 + x_over_r * x_over_r).sqrt();
        SeriesImpedance {
            r_pu: r,
            x_pu: r * x_over_r,
            growth,
        }
    }

    /// A transformer's series impedance: z = (Z% / 100)·(S_base / S_rated) per unit on the
    /// system base (the same at either winding, the ratio being that of the bus bases).
    pub fn transformer(t: &Transformer) -> Self {
        let z_pu = t.impedance_percent / 100.0 * BASE_MVA / (t.kva / 1000.0);
        Self::from_magnitude(z_pu, t.x_over_r, Growth::Transformer)
    }

    /// A cable's series impedance: (R + jX)·length / runs ohm, over Z_base (input contract,
    /// sheet `Cables`); its resistance grows by the IEC 60287-1-1 skin effect of a conductor
    /// of that R per km at `frequency_hz`.
    pub fn cable(c: &Cable, z_base_ohm: f64, frequency_hz: f64) -> Self {
        let km_per_run = c.length_m / 1000.0 / f64::from(c.runs.max(1));
        SeriesImpedance {
            r_pu: c.r_ohm_per_km * km_per_run / z_base_ohm,
            x_pu: c.x_ohm_per_km * km_per_run / z_base_ohm,
            growth: Growth::Cable {
                xs2_fundamental: cable_xs2(c.r_ohm_per_km, frequency_hz),
            },
        }
    }

    /// Z(h) = R·k(h) + j·h·X, per unit.
    pub fn at(self, order: f64, rm: ResistanceModel) -> Complex64 {
        Complex64::new(self.r_pu * self.growth.factor(order, rm), order * self.x_pu)
    }
}

/// A shunt element from a bus to the reference.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ShuntModel {
    /// Series R-L to the reference (source Thevenin impedance): Y = 1 / (R·k(h) + j·h·X).
    SeriesRl(SeriesImpedance),
    /// Linear load drawing P and Q (per unit at nominal voltage) at the fundamental, by the
    /// study's load model (`damping::linear_load_y_pu`). The resistance model does not apply.
    LinearLoad {
        p_pu: f64,
        q_pu: f64,
        model: LoadModel,
    },
    /// Induction motor: Y = 1 / (R·k(h) + j·h·X''), k(h) the motor law of the resistance
    /// model (1 under `constant` and `skin`).
    Motor { r_pu: f64, x_pu: f64 },
    /// Shunt capacitance: Y = j·h·B, B the susceptance at fundamental, per unit.
    Capacitance { b_pu: f64 },
}

impl ShuntModel {
    /// A source's Thevenin impedance: |Z| = kV² / S ohm, i.e. z = S_base / S_sc per unit,
    /// split by X/R (input contract, sheet `Sources`).
    pub fn source(s: &Source, kv: f64) -> Self {
        ShuntModel::SeriesRl(SeriesImpedance::from_magnitude(
            BASE_MVA / s.short_circuit_mva(kv),
            s.x_over_r,
            Growth::Source,
        ))
    }

    /// Half the shunt charging of a cable, placed at each end (pi model):
    /// B/2 = ω·C·length·runs / 2, per unit of 1/Z_base. `None` when C = 0.
    pub fn cable_half_charging(c: &Cable, frequency_hz: f64, z_base_ohm: f64) -> Option<Self> {
        let c_farad = c.c_uf_per_km * 1e-6 * c.length_m / 1000.0 * f64::from(c.runs.max(1));
        (c_farad > 0.0).then(|| ShuntModel::Capacitance {
            b_pu: 2.0 * std::f64::consts::PI * frequency_hz * c_farad * z_base_ohm / 2.0,
        })
    }

    /// The network model of a load, `None` when it adds no admittance (harmonic-producing
    /// loads are current injections only; a linear load or motor of zero power is absent).
    pub fn load(l: &Load, model: LoadModel) -> Option<Self> {
        match l.kind {
            LoadType::Linear => {
                let p_mw = l.p_kw() / 1000.0;
                let q_mvar = p_mw * l.power_factor.acos().tan();
                (p_mw > 0.0).then_some(ShuntModel::LinearLoad {
                    p_pu: p_mw / BASE_MVA,
                    q_pu: q_mvar / BASE_MVA,
                    model,
                })
            }
            LoadType::Motor => {
                // Rated kVA = kW × Quantity / pf; the load factor does not change it.
                let rated_mva = l.kw * l.quantity / l.power_factor / 1000.0;
                (rated_mva > 0.0).then(|| {
                    let x_pu = MOTOR_X2_PU * BASE_MVA / rated_mva;
                    ShuntModel::Motor {
                        r_pu: x_pu / MOTOR_X_OVER_R,
                        x_pu,
                    }
                })
            }
            _ => None,
        }
    }

    /// The shunt's admittance at order h, per unit.
    pub fn y_pu(&self, order: f64, rm: ResistanceModel) -> Complex64 {
        match *self {
            ShuntModel::SeriesRl(z) => z.at(order, rm).inv(),
            ShuntModel::LinearLoad { p_pu, q_pu, model } => {
                linear_load_y_pu(p_pu, q_pu, order, model)
            }
            ShuntModel::Motor { r_pu, x_pu } => {
                Complex64::new(r_pu * Growth::Motor.factor(order, rm), order * x_pu).inv()
            }
            ShuntModel::Capacitance { b_pu } => Complex64::new(0.0, order * b_pu),
        }
    }
}

/// A capacitor bank in the network: one step's reactances in per unit at its bus.
///
/// With n equal steps in parallel, X_C(n) = X_C1 / n and X_L(n) = p·X_C(n), so the bank's
/// admittance is n times one step's: Y_bank(n, h) = n·y_step(h).
#[derive(Debug, Clone)]
pub struct BankModel {
    pub id: String,
    pub bus: usize,
    pub steps: u32,
    /// One step's capacitive reactance at fundamental, per unit: X_C1 = kV_rated² / Mvar_step / Z_base.
    pub xc_step_pu: f64,
    /// Detuning factor p = X_L / X_C.
    pub p: f64,
    /// Reactor X/R at fundamental.
    pub reactor_q: f64,
    /// The bank's phase connection (its default resolved).
    pub connection: BankConnection,
    /// False in the zero-sequence network for a bank without a zero-sequence path: its
    /// step admittance is then 0.
    pub conducts: bool,
}

impl BankModel {
    /// The bank `b` at bus index `bus` whose impedance base is `z_base_ohm`.
    pub fn new(b: &CapacitorBank, bus: usize, bus_kv: f64, z_base_ohm: f64) -> Self {
        BankModel {
            connection: b
                .connection
                .unwrap_or_else(|| BankConnection::default_for(bus_kv)),
            conducts: true,
            id: b.id.clone(),
            bus,
            steps: b.steps,
            xc_step_pu: b.step_xc_ohm() / z_base_ohm,
            p: b.reactor.p(),
            reactor_q: b.reactor_q,
        }
    }

    /// One step's admittance at order h, per unit: y = 1 / (R_L·k(h) + j(h·X_L − X_C/h)) with
    /// X_L = p·X_C and R_L = X_L / Q; a plain step is y = j·h / X_C (input contract, sheet
    /// `Capacitors`).
    pub fn y_step_pu(&self, order: f64, rm: ResistanceModel) -> Complex64 {
        if !self.conducts {
            return Complex64::default();
        }
        if self.p == 0.0 {
            return Complex64::new(0.0, order / self.xc_step_pu);
        }
        let xl = self.p * self.xc_step_pu;
        let rl = xl / self.reactor_q;
        let k = Growth::Reactor.factor(order, rm);
        Complex64::new(rl * k, order * xl - self.xc_step_pu / order).inv()
    }
}
