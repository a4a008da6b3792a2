//! Where every built-in value comes from, with its confidence: the list the review's
//! Sources sheet prints, so that the reviewer holds it with the results. `verified` = seen
//! in more than one independent published source; `seen once` = one published source;
//! `from memory` = recalled, to be confirmed against the standard; `common practice` = a
//! fact of the trade; `textbook` = a published method or formula. A licensed copy of a
//! standard wins over any value here.

/// (what, where it comes from, confidence).
pub const SOURCES: &[(&str, &str, &str)] = &[
    (
        "Voltage distortion limits at the PCC",
        "IEEE Std 519-2014, Table 1",
        "verified",
    ),
    (
        "Current distortion limits, 120 V to 69 kV",
        "IEEE Std 519-2014, Table 2",
        "verified",
    ),
    (
        "Current distortion limits above 69 kV",
        "IEEE Std 519-2014, Tables 3 and 4",
        "from memory",
    ),
    (
        "Compatibility levels, classes 1 to 3",
        "IEC 61000-2-4",
        "from memory",
    ),
    (
        "Summation exponents 1 / 1.4 / 2 by order",
        "IEC TR 61000-3-6",
        "from memory",
    ),
    (
        "Capacitor limits: 110 % rms voltage, 120 % peak voltage, 135 % current, 135 % kvar",
        "IEEE Std 18 (2002 edition; kept in 2012)",
        "verified for 2002, from memory for 2012",
    ),
    (
        "Capacitor limits under IEC: 1.10 U_N, 1.30 I_N",
        "IEC 60831-1 (up to 1 kV), IEC 60871-1 (above)",
        "from memory",
    ),
    (
        "Capacitor switching overvoltage allowance: 2 × rated peak",
        "IEEE 18-2012 transient overvoltage capability (IEEE limit set); IEC 60831-1 / 60871-1 switching overvoltages (IEC sets)",
        "from memory",
    ),
    (
        "Capacitor discharge: 50 V within 1 min (up to 600 V), 5 min (above)",
        "IEEE Std 18",
        "1 min seen once, 5 min from memory",
    ),
    (
        "Built-in converter spectra and their current THD (6-pulse 77 %, with reactor 38 %, 12-pulse 10 %, 18-pulse 4.7 %, active front end 2.2 %, electronic 109 %)",
        "typical published spectra; ranges 70–120 %, 35–45 %, 8–12 %, 4–6 %, under 5 %",
        "from memory (ranges seen once)",
    ),
    (
        "Characteristic orders h = k·p ± 1, ideal magnitude 1/h",
        "converter theory",
        "textbook",
    ),
    (
        "Ideal six-pulse angles: 180° at 6k − 1, 0° at 6k + 1",
        "converter theory",
        "from memory",
    ),
    (
        "Detuning: p = X_L/X_C, tuning order 1/√p, capacitor voltage U/(1 − p), output U²/(X_C − X_L)",
        "reactor-capacitor series circuit",
        "textbook; 7 % tuned at 189 Hz (50 Hz) verified",
    ),
    (
        "Hand check h = √(S_sc/Q_c)",
        "parallel resonance of a capacitor with the supply inductance",
        "textbook; worked examples 7.05 and 13.7 seen once",
    ),
    (
        "S_sc by the series sum of per-unit source, transformer and cable impedances",
        "IEEE Std 141-1993 short-circuit hand method",
        "common practice",
    ),
    (
        "Tuned filter 3–10 % below the harmonic (4.7 for the 5th), reactor Q 30–60",
        "filter design practice",
        "common practice; Q from memory",
    ),
    (
        "Reactor linearity current 1.8 × I₁",
        "reactor specification practice",
        "common practice",
    ),
    (
        "Standard capacitor voltage ratings",
        "usual catalogue ratings",
        "common practice",
    ),
    (
        "Inrush inductance 10 µH per step when not given",
        "bus and cable inside a switched bank (5 to 20 µH)",
        "common practice, from memory",
    ),
    (
        "Inrush peak, frequency and damping formulas (isolated, back-to-back)",
        "IEEE Std C37.012, capacitance switching",
        "from memory",
    ),
    (
        "Switching simulation: trapezoidal companion models, backward-Euler half steps across the closing",
        "electromagnetic transients method (Dommel)",
        "textbook",
    ),
    (
        "Cable end seen through its surge impedance √(L/C) at high frequency",
        "travelling-wave theory",
        "textbook",
    ),
    (
        "Motor X'' = 0.17 pu on its kVA, X''/R = 10",
        "input contract defaults",
        "common practice",
    ),
    (
        "R·√h for sources and reactors (skin); motor R + jhX''; linear load as parallel R-L",
        "IEEE harmonics-modelling task force, IEEE Trans. PWRD 11(1), 1996",
        "from memory",
    ),
    (
        "Transformer, motor R·(1 + 0.1·h^1.5)/1.1; cable R by the IEC 60287-1-1 skin effect y_s",
        "Breuer et al., IEEE Trans. PAS-101(3), 1982; IEC 60287-1-1 clause 2.1.2",
        "from memory",
    ),
    (
        "CIGRE load: R_s = V²/P + jX_s = 0.073·h·R_s, parallel X_p = h·R_s/(6.7·Q/P − 0.74)",
        "CIGRE WG 36-05, Electra 77, 1981",
        "from memory",
    ),
    (
        "Step voltage change limit 3 %",
        "input contract default",
        "common practice, from memory",
    ),
    (
        "Connection defaults: Dyn1 at 60 Hz, Dyn11 at 50 Hz; delta banks up to 1 kV, wye above",
        "input contract defaults",
        "common practice",
    ),
];
