//! Side by side with a general-purpose circuit simulator: the per-phase equivalent netlist of
//! one configuration of the generated 300-bus plant (4 banks of 6 steps, 2 scenarios) is
//! written in per unit, ngspice (Debian package `ngspice`, batch mode) runs an AC analysis
//! at the scan's 4,901 frequencies with a 1 A injection at the PCC, and its driving-point
//! impedance is checked against overtone's (1e-6 relative). Then the cost per configuration
//! of both: overtone's whole exhaustive study (2,401 configurations × 2 scenarios, five buses
//! each, peaks refined) divided by the configurations it covered, against one ngspice run
//! (one configuration, one scenario, one bus). Run: `cargo bench --bench spice`.

#[path = "../support/synthetic.rs"]
mod synthetic;

use std::fmt::Write as _;
use std::process::Command;
use std::time::Instant;

use overtone::jobs::check::run_check;
use overtone::network::{Network, ShuntModel};
use synthetic::{generated_plant, with_two_scenarios};

/// The netlist of `net` in scenario `s` with `steps` bank steps, per unit (1 A = 1 pu
/// current), injection at bus `at`; frequencies 60·order for the orders 1..50 at 0.01.
fn netlist(net: &Network, s: usize, steps: &[u32], at: usize, out: &str) -> String {
    let w1 = 2.0 * std::f64::consts::PI * net.frequency_hz;
    let mut n = String::from("overtone equivalent circuit (per unit)\n");
    let mut k = 0usize;
    let mut id = move || {
        k += 1;
        k
    };
    let rl_to = |n: &mut String, i: usize, from: String, to: &str, r: f64, x: f64| {
        let mid = format!("m{i}");
        let _ = writeln!(n, "R{i} {from} {mid} {r:e}");
        let _ = writeln!(n, "L{i} {mid} {to} {:e}", x / w1);
    };
    for br in &net.branches {
        rl_to(
            &mut n,
            id(),
            format!("n{}", br.from),
            &format!("n{}", br.to),
            br.z.r_pu,
            br.z.x_pu,
        );
    }
    let shunts = net
        .shunts
        .iter()
        .chain(net.scenarios[s].sources.iter().map(|&i| &net.sources[i]));
    for sh in shunts {
        let node = format!("n{}", sh.bus);
        match sh.model {
            ShuntModel::SeriesRl(z) => rl_to(&mut n, id(), node, "0", z.r_pu, z.x_pu),
            ShuntModel::Motor { r_pu, x_pu } => rl_to(&mut n, id(), node, "0", r_pu, x_pu),
            // The netlist holds the parallel R-L load model (the plant is studied under it).
            ShuntModel::LinearLoad { p_pu, q_pu, .. } => {
                let i = id();
                let _ = writeln!(n, "R{i} {node} 0 {:e}", 1.0 / p_pu);
                if q_pu > 0.0 {
                    let _ = writeln!(n, "L{i} {node} 0 {:e}", 1.0 / q_pu / w1);
                }
            }
            ShuntModel::Capacitance { b_pu } => {
                let i = id();
                let _ = writeln!(n, "C{i} {node} 0 {:e}", b_pu / w1);
            }
        }
    }
    for (b, &count) in net.banks.iter().zip(steps) {
        if count == 0 {
            continue;
        }
        let c = f64::from(count);
        let i = id();
        let node = format!("n{}", b.bus);
        if b.p == 0.0 {
            let _ = writeln!(n, "C{i} {node} 0 {:e}", c / (b.xc_step_pu * w1));
        } else {
            let xl = b.p * b.xc_step_pu;
            let _ = writeln!(n, "R{i} {node} a{i} {:e}", xl / b.reactor_q / c);
            let _ = writeln!(n, "L{i} a{i} b{i} {:e}", xl / c / w1);
            let _ = writeln!(n, "C{i} b{i} 0 {:e}", c / (b.xc_step_pu * w1));
        }
    }
    let f0 = net.frequency_hz;
    let _ = writeln!(n, "Iinj 0 n{at} DC 0 AC 1");
    let _ = writeln!(
        n,
        ".control\nset wr_singlescale\nset wr_vecnames\noption numdgt=15\nac lin 4901 {f0} {}\nwrdata {out} vm(n{at})\n.endc\n.end",
        50.0 * f0
    );
    n
}

fn main() {
    if Command::new("ngspice").arg("--version").output().is_err() {
        println!("ngspice is not installed (Debian: apt-get install ngspice); nothing to compare");
        return;
    }
    let mut plant = with_two_scenarios(generated_plant(300, 0, 4, 6, 17));
    // The netlist's elements are frequency-independent R, L and C: the constant-R,
    // parallel R-L models.
    plant.study.resistance_model = overtone::model::ResistanceModel::Constant;
    plant.study.load_model = overtone::model::LoadModel::ParallelRl;
    let t = Instant::now();
    let res = run_check(&plant, &Default::default()).expect("runs");
    let overtone_s = t.elapsed().as_secs_f64();
    let configs = res.scan.configurations.len() * res.scan.scenarios.len();
    let net = &res.network;
    let dir = std::env::temp_dir().join(format!("overtone-spice-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut spice_s = Vec::new();
    let mut worst: f64 = 0.0;
    let picks: Vec<usize> = (0..res.scan.configurations.len()).step_by(600).collect();
    for &c in &picks {
        let steps = &res.scan.configurations[c].steps;
        let out = dir.join(format!("z{c}.txt"));
        let cir = dir.join(format!("c{c}.cir"));
        std::fs::write(&cir, netlist(net, 0, steps, res.pcc, out.to_str().unwrap()))
            .expect("netlist");
        let t = Instant::now();
        let status = Command::new("ngspice")
            .arg("-b")
            .arg(&cir)
            .output()
            .expect("ngspice runs");
        spice_s.push(t.elapsed().as_secs_f64());
        let text = std::fs::read_to_string(&out).unwrap_or_else(|_| {
            panic!(
                "ngspice wrote no output: {}",
                String::from_utf8_lossy(&status.stderr)
            )
        });
        let spice: Vec<f64> = text
            .lines()
            .skip(1)
            .filter_map(|l| l.split_whitespace().nth(1)?.parse().ok())
            .collect();
        let b = res
            .scan
            .buses
            .iter()
            .position(|&x| x == res.pcc)
            .expect("PCC scanned");
        let ours = res.scan.curve(0, c, b).expect("curve");
        assert_eq!(spice.len(), ours.len());
        let zb = net.buses[res.pcc].z_base_ohm;
        for (s, o) in spice.iter().zip(&ours) {
            let rel = (s * zb - o.norm()).abs() / o.norm();
            worst = worst.max(rel);
        }
    }
    std::fs::remove_dir_all(&dir).ok();
    assert!(worst < 1e-6, "ngspice and overtone differ by {worst:e}");
    let spice_mean = spice_s.iter().sum::<f64>() / spice_s.len() as f64;
    let ours_per = overtone_s / configs as f64;
    println!(
        "curves compared: {} configurations at the PCC, worst relative difference {worst:.2e}",
        picks.len()
    );
    println!(
        "overtone: {overtone_s:.2} s for {configs} configurations (5 buses each) = {:.1} us per configuration",
        ours_per * 1e6
    );
    println!("ngspice:  {spice_mean:.3} s per configuration (1 bus)");
    println!(
        "ratio:    overtone {:.0}x cheaper per configuration",
        spice_mean / ours_per
    );
}
