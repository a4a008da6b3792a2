//! The `overtone` binary as a user runs it.

use std::process::Command;

fn overtone(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_overtone"))
        .args(args)
        .output()
        .expect("runs")
}

#[test]
fn demo_prints_the_resonance_table_and_cautions() {
    let out = overtone(&["demo"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("Scenario max:"), "{text}");
    assert!(text.contains("Scenario min:"));
    assert!(text.contains("hand h"));
    assert!(text.contains("RESONANT"));
    assert!(text.contains("licensed professional engineer"));
}

#[test]
fn demo_writes_the_contract_csv() {
    let dir = std::env::temp_dir().join(format!("overtone-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("scan.csv");
    let out = overtone(&[
        "demo",
        "--scan-csv",
        path.to_str().unwrap(),
        "--configuration",
        "C1=3 C2=0",
        "--bus",
        "LV1",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let csv = std::fs::read_to_string(&path).unwrap();
    let mut lines = csv.lines();
    assert_eq!(
        lines.next(),
        Some("scenario,configuration,bus,order,frequency_hz,z_ohm,angle_deg")
    );
    // 2 scenarios × 1 configuration × 1 bus × 4901 points.
    assert_eq!(csv.lines().count(), 1 + 2 * 4901);
    let first: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(&first[..5], &["max", "C1=3 C2=0", "LV1", "1.0", "60.0"]);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn demo_json_is_valid() {
    let out = overtone(&["demo", "--json"]);
    assert!(out.status.success());
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
    assert_eq!(v["pcc_bus"], "MAIN");
    assert_eq!(v["scenarios"].as_array().unwrap().len(), 2);
    assert!(v["resonance"]["rows"].as_array().unwrap().len() > 10);
}

#[test]
fn bad_configuration_exits_2() {
    let out = overtone(&["demo", "--scan-csv", "/dev/null", "--configuration", "C9=1"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("there is no bank \"C9\""));
}
