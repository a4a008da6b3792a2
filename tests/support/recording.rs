//! Recordings synthesized by a circuit simulator (ngspice `.tran`, Debian package `ngspice`)
//! of a known invented plant, written to COMTRADE by this harness (IEEE Std C37.111-1999 and
//! -2013 layouts, from memory), for the calibration tests.
//!
//! The circuit, per phase of a balanced three-phase 4.16 kV system at 60 Hz: a source EMF
//! with a 5th (2 %) and 7th (1 %) background behind R + L (S_sc and X/R as given), an ammeter
//! into the PCC, a linear load (series R–L, 3 MW at 0.85 PF), a drive's harmonic currents
//! (5th 60 A, 7th 40 A, 11th 20 A, 13th 15 A) and capacitor steps of 600 kvar (20 µH inrush
//! inductance) closed by switches at the given times. Invented data.

#![allow(dead_code)]

use std::f64::consts::PI;
use std::path::{Path, PathBuf};

/// The circuit's parameters.
#[derive(Debug, Clone)]
pub struct Circuit {
    pub kv: f64,
    pub s_sc_mva: f64,
    pub x_over_r: f64,
    /// Background EMF, % of nominal phase voltage: (order, %, angle deg of phase a).
    pub background: Vec<(u32, f64, f64)>,
    /// Drive currents: (order, A rms, angle deg of phase a).
    pub drive: Vec<(u32, f64, f64)>,
    /// Closing times of the 600 kvar steps, s.
    pub closings: Vec<f64>,
    pub step_kvar: f64,
    pub stop_s: f64,
    /// A series R (ohm) and L (H) per phase between the recorded PCC and the bus of the
    /// loads and the bank (a transformer's leakage at 1:1), or none.
    pub transformer: Option<(f64, f64)>,
    /// The system's actual frequency, Hz (the plant's nominal is 60).
    pub hz: f64,
}

impl Circuit {
    pub fn standard() -> Self {
        Circuit {
            kv: 4.16,
            s_sc_mva: 50.0,
            x_over_r: 10.0,
            background: vec![(5, 2.0, 30.0), (7, 1.0, -40.0)],
            drive: vec![
                (5, 60.0, 200.0),
                (7, 40.0, 10.0),
                (11, 20.0, 150.0),
                (13, 15.0, -30.0),
            ],
            closings: vec![0.4, 0.7],
            step_kvar: 600.0,
            stop_s: 1.0,
            transformer: None,
            hz: 60.0,
        }
    }

    /// Source R and L per phase: |Z| = kV²/S_sc split by X/R.
    pub fn source_rl(&self) -> (f64, f64) {
        let z = self.kv * self.kv / self.s_sc_mva;
        let r = z / (1.0 + self.x_over_r * self.x_over_r).sqrt();
        (r, self.x_over_r * r / (2.0 * PI * 60.0))
    }

    /// A step's capacitance per phase (wye), F: C = Q/(ω·kV²).
    pub fn step_farad(&self) -> f64 {
        self.step_kvar * 1e3 / (2.0 * PI * 60.0 * (self.kv * 1e3).powi(2))
    }

    fn netlist(&self, out: &Path) -> String {
        let v_pk = self.kv * 1e3 / 3f64.sqrt() * 2f64.sqrt();
        let (r, l) = self.source_rl();
        let mut n = String::from("* synthesized recording\n");
        for (p, s) in [("a", 0.0), ("b", -120.0), ("c", 120.0)] {
            n += &format!("Vf{p} s{p}0 0 SIN(0 {v_pk} {} 0 0 {})\n", self.hz, 90.0 + s);
            let mut node = format!("s{p}0");
            for (k, &(h, pct, ang)) in self.background.iter().enumerate() {
                let next = format!("s{p}{}", k + 1);
                let amp = pct / 100.0 * v_pk;
                n += &format!(
                    "Vb{h}{p} {next} {node} SIN(0 {amp} {} 0 0 {})\n",
                    self.hz * h as f64,
                    90.0 + ang + h as f64 * s
                );
                node = next;
            }
            n += &format!("Rs{p} {node} r{p} {r}\nLs{p} r{p} m{p} {l}\nVm{p} m{p} p{p} 0\n");
            // The plant's bus: the PCC itself, or behind the transformer.
            let q = match self.transformer {
                Some((rt, lt)) => {
                    n += &format!("Rt{p} p{p} t{p} {rt}\nLt{p} t{p} q{p} {lt}\n");
                    format!("q{p}")
                }
                None => format!("p{p}"),
            };
            n += &format!("Rl{p} {q} l{p} 4.168\nLl{p} l{p} 0 6.85m\n");
            for &(h, a, ang) in &self.drive {
                n += &format!(
                    "Ih{h}{p} {q} 0 SIN(0 {} {} 0 0 {})\n",
                    a * 2f64.sqrt(),
                    self.hz * h as f64,
                    90.0 + ang + h as f64 * s
                );
            }
            for k in 0..self.closings.len() {
                n += &format!(
                    "S{k}{p} {q} c{k}{p} ct{k} 0 sw\nLr{k}{p} c{k}{p} d{k}{p} 20u\nC{k}{p} d{k}{p} 0 {}\n",
                    self.step_farad()
                );
            }
        }
        for (k, t) in self.closings.iter().enumerate() {
            n += &format!("Vct{k} ct{k} 0 PWL(0 0 {t} 0 {} 1)\n", t + 1e-6);
        }
        let dt = 1.0 / (60.0 * 3200.0);
        n += &format!(
            ".model sw sw vt=0.5 ron=1m roff=1e9\n.control\nset numdgt=12\ntran {dt:e} {} 0 {dt:e} uic\nlinearize\nwrdata {} v(pa) v(pb) v(pc) i(vma) i(vmb) i(vmc)\n.endc\n.end\n",
            self.stop_s,
            out.display()
        );
        n
    }

    /// Runs the simulation and returns (times from 0.1 s, [va, vb, vc, ia, ib, ic]) at
    /// 128 samples per cycle (every 25th point of the simulator's 3,200 per cycle).
    pub fn simulate(&self, dir: &Path) -> (Vec<f64>, Vec<Vec<f64>>) {
        std::fs::create_dir_all(dir).unwrap();
        let out = dir.join("wave.txt");
        let cir = dir.join("rec.cir");
        std::fs::write(&cir, self.netlist(&out)).unwrap();
        let run = std::process::Command::new("ngspice")
            .arg("-b")
            .arg(&cir)
            .output()
            .unwrap();
        assert!(
            out.is_file(),
            "ngspice wrote no data:\n{}",
            String::from_utf8_lossy(&run.stdout)
        );
        let text = std::fs::read_to_string(&out).unwrap();
        let (mut t, mut ch) = (Vec::new(), vec![Vec::new(); 6]);
        for (k, line) in text.lines().enumerate() {
            if k % 25 != 0 {
                continue;
            }
            let x: Vec<f64> = line
                .split_whitespace()
                .map(|s| s.parse().unwrap())
                .collect();
            if x[0] < 0.1 - 1e-9 {
                continue;
            }
            t.push(x[0] - 0.1);
            for c in 0..6 {
                ch[c].push(x[2 * c + 1]);
            }
        }
        (t, ch)
    }
}

/// The writer's resolution: the largest |value| of a channel maps to this many counts (as
/// a recorder's range is set), within BINARY's 16 bits.
pub const FULL_SCALE_COUNTS: f64 = 30_000.0;

/// Writes `name.cfg` + `name.dat` (ASCII, 2013 or 1999; BINARY 1999; BINARY32 or FLOAT32
/// 2013) of the six channels sampled at `rate_hz`, and returns the .cfg path. Phase-a
/// voltage is written as a secondary quantity behind a 4160:120 ratio, the others primary.
pub fn write_comtrade(
    dir: &Path,
    name: &str,
    format: &str,
    year: u32,
    rate_hz: f64,
    ch: &[Vec<f64>],
) -> PathBuf {
    let names = ["VA", "VB", "VC", "IA", "IB", "IC"];
    let phases = ["A", "B", "C", "A", "B", "C"];
    write_channels(dir, name, (format, year, rate_hz), &names, &phases, ch)
}

/// Writes the channels `ch` named `names` (a name starting with V is a voltage in V, else a
/// current in A) with `phases` as their `ph` fields; the first channel is written as a
/// secondary quantity behind 4160:120. Returns the .cfg path.
pub fn write_channels(
    dir: &Path,
    name: &str,
    (format, year, rate_hz): (&str, u32, f64),
    names: &[&str],
    phases: &[&str],
    ch: &[Vec<f64>],
) -> PathBuf {
    let n = ch[0].len();
    let count = ch.len();
    let vt = 4160.0 / 120.0;
    let mut cfg = format!("Invented substation,Synthesized,{year}\n{count},{count}A,0D\n");
    let mut scale = Vec::new();
    for k in 0..count {
        let unit = if names[k].starts_with('V') { "V" } else { "A" };
        let top = ch[k].iter().fold(0.0f64, |m, x| m.max(x.abs()));
        let a = (top / FULL_SCALE_COUNTS).max(1e-6);
        let (a, ps) = if k == 0 { (a / vt, "S") } else { (a, "P") };
        scale.push(if k == 0 { a * vt } else { a });
        let (lo, hi) = if format == "BINARY" {
            (-32767, 32767)
        } else {
            (-99999, 99999)
        };
        cfg += &format!(
            "{},{},{},Feeder,{unit},{a},0,0,{lo},{hi},{},{},{ps}\n",
            k + 1,
            names[k],
            phases[k],
            if k == 0 { 4160 } else { 1 },
            if k == 0 { 120 } else { 1 }
        );
    }
    cfg += &format!(
        "60\n1\n{rate_hz},{n}\n02/03/2026,10:00:00.000000\n02/03/2026,10:00:00.400000\n{format}\n1\n"
    );
    if year == 2013 {
        cfg += "0,0\nF,0\n";
    }
    std::fs::write(dir.join(format!("{name}.cfg")), cfg).unwrap();
    let counts = |k: usize, s: usize| (ch[k][s] / scale[k]).round();
    let mut dat: Vec<u8> = Vec::new();
    for s in 0..n {
        let stamp = (s as f64 * 1e6 / rate_hz).round() as u32;
        if format == "ASCII" {
            let vals: Vec<String> = (0..count)
                .map(|k| format!("{}", counts(k, s) as i64))
                .collect();
            dat.extend(format!("{},{stamp},{}\n", s + 1, vals.join(",")).bytes());
        } else {
            dat.extend((s as u32 + 1).to_le_bytes());
            dat.extend(stamp.to_le_bytes());
            for k in 0..count {
                match format {
                    // A recorder clips at its range (-32768 is the missing-value code).
                    "BINARY" => {
                        dat.extend((counts(k, s).clamp(-32767.0, 32767.0) as i16).to_le_bytes())
                    }
                    "BINARY32" => dat.extend((counts(k, s) as i32).to_le_bytes()),
                    _ => dat.extend((counts(k, s) as f32).to_le_bytes()),
                }
            }
        }
    }
    std::fs::write(dir.join(format!("{name}.dat")), dat).unwrap();
    dir.join(format!("{name}.cfg"))
}
