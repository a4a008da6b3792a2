//! Which channels of a recording are the phase voltages and line currents, and the
//! waveforms resampled for the analysis.

use crate::io::recordings::Quantity;
use crate::io::recordings::comtrade::Waveforms;
use crate::study::measured::signals::{Sampled, resample};

use super::CalibrateError;

/// The phase a channel's `ph` field (or, when blank, its id) names: 0, 1, 2 for a/b/c (also
/// R/S/T, L1/L2/L3, 1/2/3), 10, 11, 12 for ab/bc/ca, `None` for a neutral or anything else.
fn phase_key(ph: &str, id: &str) -> Option<u8> {
    let norm = |s: &str| s.trim().to_ascii_uppercase().replace(['-', '_', ' '], "");
    let key = |s: &str| match s {
        "A" | "R" | "L1" | "1" => Some(0),
        "B" | "S" | "L2" | "2" => Some(1),
        "C" | "T" | "L3" | "3" => Some(2),
        "AB" | "RS" | "L1L2" | "12" => Some(10),
        "BC" | "ST" | "L2L3" | "23" => Some(11),
        "CA" | "TR" | "L3L1" | "31" => Some(12),
        _ => None,
    };
    let p = norm(ph);
    if !p.is_empty() {
        return key(&p);
    }
    // No phase field: the id's last letters (VA, IA, UAB, VL1 ...).
    let i = norm(id);
    let tail = i.trim_start_matches(['V', 'U', 'I']);
    key(tail)
}

/// The voltage and current channels of `w` in phase order, resampled: three phases (or one)
/// of each; phase-to-phase voltages are marked. The currents are the recorded line currents
/// at the recording point (positive into the plant; reversed later if the power says
/// otherwise).
pub fn sampled(w: &Waveforms, f1_hz: f64) -> Result<Sampled, CalibrateError> {
    let pick = |q: Quantity| -> Vec<(u8, usize)> {
        let mut v: Vec<(u8, usize)> = w
            .analog
            .iter()
            .enumerate()
            .filter(|(_, c)| c.quantity == q)
            .filter_map(|(k, c)| phase_key(&c.spec.phase, &c.spec.id).map(|p| (p, k)))
            .collect();
        v.sort();
        v.dedup_by_key(|x| x.0);
        v
    };
    let (vs, is) = (pick(Quantity::Voltage), pick(Quantity::Current));
    let complete = |v: &[(u8, usize)]| {
        let keys: Vec<u8> = v.iter().map(|x| x.0).collect();
        keys == [0, 1, 2] || keys == [10, 11, 12] || keys.len() == 1
    };
    let take = |v: Vec<(u8, usize)>| -> Vec<(u8, usize)> {
        if v.len() > 3 {
            let ln: Vec<(u8, usize)> = v.iter().copied().filter(|x| x.0 < 10).collect();
            if ln.len() == 3 {
                ln
            } else {
                v.into_iter().filter(|x| x.0 >= 10).collect()
            }
        } else {
            v
        }
    };
    let (vs, is) = (take(vs), take(is));
    if !complete(&vs) || !complete(&is) || is.iter().any(|x| x.0 >= 10) {
        return Err(CalibrateError::Channels {
            file: w.file.clone(),
            voltages: vs.len(),
            currents: is.len(),
        });
    }
    let line_to_line = vs.iter().any(|x| x.0 >= 10);
    let chans: Vec<&[f64]> = vs
        .iter()
        .chain(&is)
        .map(|&(_, k)| w.analog[k].values.as_slice())
        .collect();
    let at = |f: f64| {
        let (per_cycle, t0_s, mut out) = resample(&w.time_s, &chans, f);
        let currents = out.split_off(vs.len());
        Sampled {
            f1_hz: f,
            per_cycle,
            t0_s,
            voltages: out,
            currents,
            line_to_line,
        }
    };
    // Windows of whole cycles of the frequency the system actually ran at (within ±5 % of
    // nominal; beyond that the recording is not of this system).
    let nominal = at(f1_hz);
    let f = crate::study::measured::signals::system_frequency(&nominal);
    if (f - f1_hz).abs() > 1e-4 * f1_hz && (f - f1_hz).abs() < 0.05 * f1_hz {
        return Ok(at(f));
    }
    Ok(nominal)
}
