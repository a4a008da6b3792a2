//! Built-in data and helpers against published values: SHA-256 test vectors, the civil
//! date around leap days, the built-in spectra's THD and the characteristic orders.

use overtone::io::provenance::{civil_from_days, sha256_hex};

#[test]
fn sha256_matches_the_fips_180_2_test_vectors() {
    // FIPS 180-2, Appendix B.1 ("abc") and B.2 (the 448-bit message); the empty message's
    // digest as published with it (common practice).
    assert_eq!(
        sha256_hex(b"abc"),
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    );
    assert_eq!(
        sha256_hex(b"abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1"
    );
    assert_eq!(
        sha256_hex(b""),
        "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
    );
}

#[test]
fn civil_dates_across_leap_days_and_centuries() {
    // Day counts since 1970-01-01 of the proleptic Gregorian calendar, computed once with
    // a general-purpose date library (Python's datetime.date) and typed here: 2000 is a
    // leap year (divisible by 400), 2100 and 1900 are not (divisible by 100).
    assert_eq!(civil_from_days(0), (1970, 1, 1));
    assert_eq!(civil_from_days(11_016), (2000, 2, 29));
    assert_eq!(civil_from_days(11_017), (2000, 3, 1));
    assert_eq!(civil_from_days(19_782), (2024, 2, 29));
    assert_eq!(civil_from_days(47_541), (2100, 3, 1));
    assert_eq!(civil_from_days(47_540), (2100, 2, 28));
    assert_eq!(civil_from_days(-25_508), (1900, 3, 1));
    assert_eq!(civil_from_days(-25_509), (1900, 2, 28));
    assert_eq!(civil_from_days(20_789), (2026, 12, 2));
}

#[test]
fn built_in_spectra_thd_within_the_published_ranges() {
    // tests/references.md, Converter spectra (typical current THD, from memory): 6-pulse without
    // reactor about 70–120 %, with DC choke or 3 % line reactor 35–45 %, 12-pulse 8–12 %,
    // 18-pulse 4–6 %, active front end below 5 %.
    use overtone::model::LoadType::*;
    use overtone::study::spectra::{built_in, thd_percent};
    for (kind, lo, hi) in [
        (SixPulseDrive, 70.0, 120.0),
        (SixPulseDriveWithReactor, 35.0, 45.0),
        (TwelvePulseDrive, 8.0, 12.0),
        (EighteenPulseDrive, 4.0, 6.0),
        (ActiveFrontEnd, 0.0, 5.0),
    ] {
        let (lines, _) = built_in(kind).expect("built-in spectrum");
        let thd = thd_percent(lines);
        assert!((lo..=hi).contains(&thd), "{kind:?}: THD {thd:.1} %");
    }
}

#[test]
fn characteristic_orders_by_converter_type() {
    // h = k·p ± 1 for a p-pulse converter (textbook, tests/references.md); every odd order from
    // the 3rd for single-phase electronic loads (common practice); a custom load's own
    // spectrum orders; the Background sheet's orders.
    use crate::common::*;
    use overtone::model::*;
    use overtone::study::resonance::characteristic_orders;
    let plant = |kind: LoadType| {
        let mut p = Plant::new(60.0);
        p.loads.push(load("X", "B", kind, 100.0, 0.95));
        p
    };
    assert_eq!(
        characteristic_orders(&plant(LoadType::TwelvePulseDrive), 50.0),
        [11.0, 13.0, 23.0, 25.0, 35.0, 37.0, 47.0, 49.0]
    );
    assert_eq!(
        characteristic_orders(&plant(LoadType::EighteenPulseDrive), 50.0),
        [17.0, 19.0, 35.0, 37.0]
    );
    assert_eq!(
        characteristic_orders(&plant(LoadType::Electronic), 11.0),
        [3.0, 5.0, 7.0, 9.0, 11.0]
    );
    let mut p = plant(LoadType::Custom);
    p.loads[0].spectrum = Some("W".into());
    p.spectra
        .push(spectrum("W", &[(3.0, 10.0), (4.5, 2.0), (7.0, 5.0)]));
    p.background.push(BackgroundLine {
        source: "U".into(),
        order: 11.0,
        voltage_percent: 1.0,
        angle_deg: None,
    });
    assert_eq!(characteristic_orders(&p, 50.0), [3.0, 4.5, 7.0, 11.0]);
}
