//! Malformed workbooks, generated here cell by cell: each gives its exact message and
//! `Sheet!Cell`; accepted loose forms; files that are not workbooks. With
//! `OVERTONE_WRITE_CORPUS=1` they are also written as seeds of the reader's fuzz corpus.

use std::path::{Path, PathBuf};

use overtone::io::workbook_in::{ReadError, read_workbook, read_workbook_bytes};
use rust_xlsxwriter::{ExcelDateTime, Formula, Workbook};

#[derive(Clone)]
enum C {
    N(f64),
    S(String),
    B(bool),
    /// A formula with an error result, e.g. "#DIV/0!".
    E(&'static str),
    /// A formula with a cached numeric result.
    F(&'static str, f64),
    /// A date cell.
    D,
    Blank,
}

fn s(x: &str) -> C {
    C::S(x.to_string())
}

#[derive(Clone)]
struct Book(Vec<(String, Vec<Vec<C>>)>);

impl Book {
    /// A small valid plant: 13.8 kV service, one transformer, a 480 V bus with a detuned bank,
    /// a drive with a custom spectrum and a motor.
    fn base() -> Book {
        use C::*;
        Book(vec![
            (
                "Study".into(),
                vec![
                    vec![s("Item"), s("Value")],
                    vec![s("Frequency (Hz)"), N(60.0)],
                    vec![s("PCC bus"), s("HV")],
                    vec![s("Resistance model"), s("constant")],
                    vec![s("Limits"), s("IEEE 519-2014")],
                    vec![s("Capacitance tolerance (%)"), s("-5/+10")],
                ],
            ),
            (
                "Buses".into(),
                vec![
                    vec![s("Bus"), s("Nominal kV")],
                    vec![s("HV"), N(13.8)],
                    vec![s("LV"), N(0.48)],
                    vec![s("LV2"), N(0.48)],
                ],
            ),
            (
                "Sources".into(),
                vec![
                    vec![
                        s("Source"),
                        s("Bus"),
                        s("Scenario"),
                        s("Short-circuit MVA"),
                        s("Short-circuit kA"),
                        s("X/R"),
                    ],
                    vec![s("U"), s("HV"), Blank, N(250.0), Blank, N(12.0)],
                ],
            ),
            (
                "Transformers".into(),
                vec![
                    vec![
                        s("Transformer"),
                        s("HV bus"),
                        s("LV bus"),
                        s("kVA"),
                        s("Impedance (%)"),
                        s("X/R"),
                        s("In service"),
                    ],
                    vec![
                        s("T1"),
                        s("HV"),
                        s("LV"),
                        N(1500.0),
                        N(5.75),
                        N(6.0),
                        s("yes"),
                    ],
                ],
            ),
            (
                "Cables".into(),
                vec![
                    vec![
                        s("Cable"),
                        s("From bus"),
                        s("To bus"),
                        s("Length (m)"),
                        s("R (ohm/km)"),
                        s("X (ohm/km)"),
                    ],
                    vec![s("K1"), s("LV"), s("LV2"), N(40.0), N(0.1), N(0.08)],
                ],
            ),
            (
                "Capacitors".into(),
                vec![
                    vec![
                        s("Bank"),
                        s("Bus"),
                        s("Rated kV"),
                        s("Step kvar"),
                        s("Steps"),
                        s("Detuning (%)"),
                        s("Tuned order"),
                        s("Studied steps"),
                    ],
                    vec![
                        s("C1"),
                        s("LV"),
                        N(0.525),
                        N(100.0),
                        N(4.0),
                        N(7.0),
                        Blank,
                        s("all"),
                    ],
                ],
            ),
            (
                "Loads".into(),
                vec![
                    vec![
                        s("Load"),
                        s("Bus"),
                        s("Type"),
                        s("kW"),
                        s("Power factor"),
                        s("Load factor"),
                        s("Spectrum"),
                    ],
                    vec![
                        s("D1"),
                        s("LV"),
                        s("6-pulse drive"),
                        N(200.0),
                        N(0.95),
                        N(0.8),
                        s("SP"),
                    ],
                    vec![s("M1"), s("LV2"), s("motor"), N(150.0), Blank, Blank, Blank],
                ],
            ),
            (
                "Spectra".into(),
                vec![
                    vec![s("Spectrum"), s("Order"), s("Magnitude (%)")],
                    vec![s("SP"), N(5.0), N(30.0)],
                    vec![s("SP"), N(7.0), N(12.0)],
                ],
            ),
        ])
    }

    /// Appends a data row to `sheet`.
    fn add_row(mut self, sheet: &str, row: Vec<C>) -> Book {
        let grid = &mut self.0.iter_mut().find(|(n, _)| n == sheet).unwrap().1;
        grid.push(row);
        self
    }

    fn set(mut self, sheet: &str, cell: &str, v: C) -> Book {
        let col = (cell.as_bytes()[0] - b'A') as usize;
        let row: usize = cell[1..].parse::<usize>().unwrap() - 1;
        let grid = &mut self.0.iter_mut().find(|(n, _)| n == sheet).unwrap().1;
        while grid.len() <= row {
            grid.push(Vec::new());
        }
        while grid[row].len() <= col {
            grid[row].push(C::Blank);
        }
        grid[row][col] = v;
        self
    }

    fn without_sheet(mut self, sheet: &str) -> Book {
        self.0.retain(|(n, _)| n != sheet);
        self
    }

    fn bytes(&self) -> Vec<u8> {
        let mut wb = Workbook::new();
        for (name, grid) in &self.0 {
            let ws = wb.add_worksheet().set_name(name).unwrap();
            for (r, row) in grid.iter().enumerate() {
                for (c, v) in row.iter().enumerate() {
                    let (r, c) = (r as u32, c as u16);
                    match v {
                        C::N(x) => {
                            ws.write_number(r, c, *x).unwrap();
                        }
                        C::S(t) => {
                            ws.write_string(r, c, t).unwrap();
                        }
                        C::B(b) => {
                            ws.write_boolean(r, c, *b).unwrap();
                        }
                        C::E(e) => {
                            ws.write_formula(r, c, Formula::new("=1/0").set_result(*e))
                                .unwrap();
                        }
                        C::F(f, v) => {
                            ws.write_formula(r, c, Formula::new(*f).set_result(v.to_string()))
                                .unwrap();
                        }
                        C::D => {
                            let d = ExcelDateTime::from_ymd(2026, 3, 1).unwrap();
                            let fmt = rust_xlsxwriter::Format::new().set_num_format("yyyy-mm-dd");
                            ws.write_datetime_with_format(r, c, &d, &fmt).unwrap();
                        }
                        C::Blank => {}
                    }
                }
            }
        }
        wb.save_to_buffer().unwrap()
    }

    fn warnings(&self) -> Vec<String> {
        match read_workbook_bytes("case.xlsx", "case", &self.bytes()) {
            Ok(read) => read.warnings.iter().map(|w| w.to_string()).collect(),
            Err(e) => panic!("{e}"),
        }
    }

    fn errors(&self) -> Vec<String> {
        match read_workbook_bytes("case.xlsx", "case", &self.bytes()) {
            Ok(_) => Vec::new(),
            Err(ReadError::Cells { errors, .. }) => errors.iter().map(|e| e.to_string()).collect(),
            Err(e) => vec![e.to_string()],
        }
    }
}

#[test]
fn base_workbook_is_valid() {
    let read = read_workbook_bytes("b.xlsx", "b", &Book::base().bytes()).expect("valid");
    assert_eq!(read.plant.banks[0].studied_steps, vec![0, 1, 2, 3, 4]);
    assert_eq!(
        read.plant.loads[1].power_factor, 0.85,
        "contract default for a motor"
    );
    assert!(read.warnings.iter().any(|w| w.to_string() == "Loads: \"Power factor\" blank at E3: default 0.85 (linear, motor) or 0.95 (converters) applied"));
}

/// With `OVERTONE_WRITE_CORPUS=1`, keeps `bytes` as a seed of the reader's fuzz corpus
/// (`tests/fuzz/corpus/read_workbook/NAME`).
fn keep_in_corpus(name: &str, bytes: &[u8]) {
    if std::env::var_os("OVERTONE_WRITE_CORPUS").is_some() {
        let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/fuzz/corpus/read_workbook");
        std::fs::write(dir.join(name), bytes).expect("corpus folder");
    }
}

/// One malformed workbook: the mutation and the one error it must give, exactly.
fn expect_one(book: Book, expected: &str) {
    let bytes = book.bytes();
    let tag: String = expected
        .chars()
        .take_while(|c| *c != ':')
        .map(|c| if c.is_ascii_alphanumeric() { c } else { '-' })
        .collect();
    keep_in_corpus(
        &format!("malformed-{tag}-{:08x}.xlsx", fnv(expected)),
        &bytes,
    );
    let got = book.errors();
    assert_eq!(
        got,
        vec![expected.to_string()],
        "expected exactly: {expected}"
    );
}

/// FNV-1a hash of `s` (32 bits), to name corpus files.
fn fnv(s: &str) -> u32 {
    s.bytes().fold(0x811c_9dc5, |h, b| {
        (h ^ u32::from(b)).wrapping_mul(0x0100_0193)
    })
}

#[test]
fn malformed_cells_each_give_their_message_and_cell() {
    use C::*;
    let cases: Vec<(Book, &str)> = vec![
        (
            Book::base().set("Buses", "B3", s("0.48 kV")),
            "Buses!B3: \"Nominal kV\" must be a positive number, found \"0.48 kV\"",
        ),
        (
            Book::base().set("Transformers", "D2", N(-1500.0)),
            "Transformers!D2: \"kVA\" must be a positive number, found -1500",
        ),
        (
            Book::base().set("Capacitors", "D2", N(0.0)),
            "Capacitors!D2: \"Step kvar\" must be a positive number, found 0",
        ),
        (
            Book::base().set("Loads", "E2", N(1.2)),
            "Loads!E2: \"Power factor\" must be above 0 and at most 1, found 1.2",
        ),
        (
            Book::base().set("Loads", "F2", N(1.5)),
            "Loads!F2: \"Load factor\" must be between 0 and 1, found 1.5",
        ),
        (
            Book::base().set("Capacitors", "B2", s("LV9")),
            "Capacitors!B2: \"Bus\": bus \"LV9\" does not exist: did you mean one of \"LV\", \"LV2\"?",
        ),
        (
            Book::base()
                .set("Buses", "A5", s("HV"))
                .set("Buses", "B5", N(13.8)),
            "Buses!A5: \"Bus\": duplicate id \"HV\"",
        ),
        (
            Book::base().set("Sources", "E2", N(10.0)),
            "Sources!E2: give either \"Short-circuit MVA\" or \"Short-circuit kA\", not both",
        ),
        (
            Book::base().set("Sources", "D2", Blank),
            "Sources!D2: \"Short-circuit MVA\" or \"Short-circuit kA\" is required, found both blank",
        ),
        (
            Book::base().set("Capacitors", "G2", N(4.7)),
            "Capacitors!G2: give either \"Detuning (%)\" or \"Tuned order\", not both",
        ),
        (
            Book::base().set("Capacitors", "H2", s("0,2,x")),
            "Capacitors!H2: \"Studied steps\" must be all, a list like 0,2,4 or a range like 1-3, found \"0,2,x\"",
        ),
        (
            Book::base().set("Capacitors", "H2", s("0-7")),
            "Capacitors!H2: \"Studied steps\" names 5 steps but the bank has 4, found \"0-7\"",
        ),
        (
            Book::base().set("Transformers", "E2", E("#DIV/0!")),
            "Transformers!E2: \"Impedance (%)\" must be a positive number, found the error #DIV/0!",
        ),
        (
            Book::base().set("Study", "B2", N(55.0)),
            "Study!B2: \"Frequency\" must be 50 or 60, found 55",
        ),
        (
            Book::base()
                .set("Study", "A2", s("Frequency"))
                .set("Study", "B2", Blank),
            "Study!B2: \"Frequency (Hz)\" must be 50 or 60, found a blank cell",
        ),
        (
            Book::base().set("Study", "B4", s("linear")),
            "Study!B4: \"Resistance model\" must be frequency-dependent, constant or skin, found \"linear\"",
        ),
        (
            Book::base().set("Study", "B5", s("IEEE 519-1992")),
            "Study!B5: \"Limits\" must be IEEE 519-2014, IEC 61000-2-4 class 1, class 2 or class 3, found \"IEEE 519-1992\"",
        ),
        (
            Book::base().set("Study", "B6", s("10")),
            "Study!B6: \"Capacitance tolerance (%)\" must be a band like -5/+10, found \"10\"",
        ),
        (
            Book::base().set("Study", "B3", s("NOWHERE")),
            "Study!B3: \"PCC bus\": bus \"NOWHERE\" does not exist",
        ),
        (
            // Input contract: Loads `Connection` is 3-wire or 4-wire (a new header in H1).
            Book::base()
                .set("Loads", "H1", s("Connection"))
                .set("Loads", "H2", s("5-wire")),
            "Loads!H2: \"Connection\" must be 3-wire or 4-wire, found \"5-wire\"",
        ),
        (
            Book::base().set("Loads", "C2", s("VFD")),
            "Loads!C2: \"Type\" must be one of linear, motor, 6-pulse drive, 6-pulse drive with reactor, 12-pulse drive, 18-pulse drive, active front end, electronic, custom, found \"VFD\"",
        ),
        (
            Book::base()
                .set("Loads", "C2", s("custom"))
                .set("Loads", "G2", Blank),
            "Loads!G2: \"Spectrum\": a custom load needs a spectrum from the Spectra sheet",
        ),
        (
            Book::base().set("Loads", "G3", s("SP")),
            "Loads!G3: \"Spectrum\": a motor load injects no harmonics and takes no spectrum",
        ),
        (
            Book::base().set("Loads", "G2", s("SP9")),
            "Loads!G2: \"Spectrum\": spectrum \"SP9\" is not on the Spectra sheet",
        ),
        (
            Book::base().set("Spectra", "B3", N(1.0)),
            "Spectra!B3: \"Order\" must be a harmonic order above 1, found 1",
        ),
        (
            Book::base().set("Spectra", "B3", N(5.0)),
            "Spectra!B3: order 5 appears twice in spectrum \"SP\"",
        ),
        (
            Book::base().set("Cables", "C2", s("HV")),
            "Cables!C2: \"To bus\": connects buses of different nominal kV (0.48 and 13.8 kV): use a transformer",
        ),
        (
            Book::base()
                .set("Transformers", "C2", s("LV2"))
                .set("Transformers", "B2", s("LV")),
            "Transformers!C2: \"LV bus\": connects two buses of the same nominal kV (0.48 kV): use a cable",
        ),
        (
            Book::base().set("Capacitors", "E2", N(2.5)),
            "Capacitors!E2: \"Steps\" must be a whole number of at least 1, found 2.5",
        ),
        (
            Book::base().set("Transformers", "G2", s("maybe")),
            "Transformers!G2: \"In service\" must be yes or no, found \"maybe\"",
        ),
        (
            Book::base().set("Capacitors", "A2", s("C 1")),
            "Capacitors!A2: \"Bank\": a bank id may not contain spaces or '='",
        ),
        (
            Book::base()
                .set("Capacitors", "I1", s("Status"))
                .set("Capacitors", "I2", s("planned")),
            "Capacitors!I2: \"Status\" must be existing or proposed, found \"planned\"",
        ),
        (
            Book::base().set("Cables", "D2", D),
            "Cables!D2: \"Length (m)\" must be a positive number, found a date (46082)",
        ),
        (
            Book::base().set("Buses", "C1", s("nominal_kv")),
            "Buses!C1: column \"nominal_kv\" appears twice in the header row",
        ),
        (
            Book::base().set("Buses", "B1", s("Voltage")),
            "Buses!C1: required column \"Nominal kV\" is missing from the header row (row 1); found Bus",
        ),
        (
            // A renamed header is reported at its own cell (words reordered, a typo).
            Book::base().set("Buses", "B1", s("kV nominal")),
            "Buses!B1: required column \"Nominal kV\" is missing; this header \"kV nominal\" is not in the contract (renamed? the header must read \"Nominal kV\")",
        ),
        (
            Book::base().set("Buses", "B1", s("Nominl kV")),
            "Buses!B1: required column \"Nominal kV\" is missing; this header \"Nominl kV\" is not in the contract (renamed? the header must read \"Nominal kV\")",
        ),
        (
            Book::base().set("Buses", "B5", N(0.48)),
            "Buses!A5: \"Bus\" is required, found a blank cell",
        ),
        (
            Book::base().set("Cables", "F2", N(-0.08)),
            "Cables!F2: \"X\" must be zero or positive, found -0.08",
        ),
        (
            Book::base().set("Sources", "F2", s("twelve")),
            "Sources!F2: \"X/R\" must be a positive number, found \"twelve\"",
        ),
    ];
    assert!(cases.len() >= 30);
    for (book, expected) in cases {
        expect_one(book, expected);
    }
}

#[test]
fn accepted_forms() {
    use C::*;
    // Text holding numbers, formula cells by cached value, Excel booleans, in/out, loose
    // header spelling (input contract, general rules).
    let book = Book::base()
        .set("Buses", "B2", s(" 13.8 "))
        .set("Transformers", "D2", F("=1000+500", 1500.0))
        .set("Transformers", "G2", B(true))
        .set("Sources", "D1", s("short circuit mva"))
        .set("Capacitors", "H2", s("0,2-4"));
    let read = read_workbook_bytes("ok.xlsx", "ok", &book.bytes()).expect("valid");
    assert_eq!(read.plant.buses[0].nominal_kv, 13.8);
    assert_eq!(read.plant.transformers[0].kva, 1500.0);
    assert_eq!(read.plant.banks[0].studied_steps, vec![0, 2, 3, 4]);
    let out = Book::base().set("Transformers", "G2", s("out"));
    let read = read_workbook_bytes("ok.xlsx", "ok", &out.bytes());
    // With T1 out of service the LV buses are isolated: the reader accepts the cell and the
    // topology check (not the reader) will refuse the plant.
    assert!(!read.expect("cells valid").plant.transformers[0].in_service);
}

#[test]
fn every_error_at_once_up_to_100() {
    use C::*;
    let mut book = Book::base();
    for r in 0..150 {
        book = book
            .set("Spectra", &format!("A{}", r + 4), s("SP2"))
            .set("Spectra", &format!("B{}", r + 4), s("x"))
            .set("Spectra", &format!("C{}", r + 4), N(1.0));
    }
    keep_in_corpus("many-errors.xlsx", &book.bytes());
    match read_workbook_bytes("many.xlsx", "many", &book.bytes()) {
        Err(ReadError::Cells { errors, more, .. }) => {
            assert_eq!(errors.len(), 100);
            assert_eq!(more, 50);
            assert_eq!(
                errors[0].to_string(),
                "Spectra!B4: \"Order\" must be a harmonic order above 1, found \"x\""
            );
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn files_that_are_not_workbooks() {
    let file_error = |name: &str, bytes: &[u8]| match read_workbook_bytes(name, "x", bytes) {
        Err(ReadError::File { reason, .. }) => reason,
        other => panic!("{other:?}"),
    };
    assert_eq!(file_error("e.xlsx", b""), "the file is empty");
    assert_eq!(
        file_error("t.xlsx", b"Bus,Nominal kV\nB1,13.8\n"),
        "this is not a spreadsheet workbook (.xlsx, .xlsm, .xls or .ods)"
    );
    let good = Book::base().bytes();
    keep_in_corpus("base.xlsx", &good);
    keep_in_corpus("truncated.xlsx", &good[..good.len() / 2]);
    let truncated = file_error("cut.xlsx", &good[..good.len() / 2]);
    assert!(
        truncated.starts_with("the workbook cannot be read; it may be truncated or damaged"),
        "{truncated}"
    );
    let mut ole = vec![0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];
    ole.extend(std::iter::repeat_n(0u8, 1024));
    keep_in_corpus("ole-header.xls", &ole);
    let locked = file_error("locked.xlsx", &ole);
    assert!(
        locked.starts_with("the workbook is password-protected or encrypted"),
        "{locked}"
    );
    let no_sources = file_error("ns.xlsx", &Book::base().without_sheet("Sources").bytes());
    assert_eq!(
        no_sources,
        "the workbook has no sheet \"Sources\" (sheets found: Study, Buses, Transformers, Cables, Capacitors, Loads, Spectra); `overtone template FILE.xlsx` writes a blank workbook with every sheet"
    );
    let missing = read_workbook(Path::new("/nonexistent/plant.xlsx"))
        .unwrap_err()
        .to_string();
    assert_eq!(missing, "/nonexistent/plant.xlsx: the file does not exist");
}

#[test]
fn operating_point_settings_out_of_range() {
    // Input contract, version 2: Voltage (pu) 0.5..1.5, target PF 0.5..1, a voltage range
    // low/high with low < high; each located at its cell.
    for (book, expected) in [
        (
            Book::base()
                .set("Sources", "G1", s("Voltage (pu)"))
                .set("Sources", "G2", C::N(1.7)),
            "Sources!G2: \"Voltage (pu)\" must be between 0.5 and 1.5 pu, found 1.7",
        ),
        (
            Book::base()
                .set("Study", "A7", s("Target power factor"))
                .set("Study", "B7", C::N(0.4)),
            "Study!B7: \"Target power factor\" must be a power factor between 0.5 and 1 (lagging), found 0.4",
        ),
        (
            Book::base()
                .set("Study", "A7", s("Voltage range (pu)"))
                .set("Study", "B7", s("1.05/0.95")),
            "Study!B7: \"Voltage range\" must be a band low/high in pu like 0.95/1.05 with 0 < low < high <= 2, found 1.05/0.95",
        ),
        (
            Book::base()
                .set("Study", "A7", s("Voltage range (pu)"))
                .set("Study", "B7", s("low")),
            "Study!B7: \"Voltage range (pu)\" must be a band low/high in pu like 0.95/1.05, found \"low\"",
        ),
    ] {
        expect_one(book, expected);
    }
}

impl Book {
    /// `self` with a `Background` sheet of `rows` (after its header row).
    fn with_background(mut self, rows: Vec<Vec<C>>) -> Book {
        let mut grid = vec![vec![
            s("Source"),
            s("Order"),
            s("Voltage (%)"),
            s("Angle (deg)"),
        ]];
        grid.extend(rows);
        self.0.push(("Background".into(), grid));
        self
    }

    /// Adds a Design sheet (`design`: its header row, then its rows) and a Load levels
    /// sheet with every column and `levels` as its rows.
    fn with_design_sheets(mut self, design: Vec<Vec<C>>, levels: Vec<Vec<C>>) -> Book {
        self.0.push(("Design".into(), design));
        let mut l = vec![vec![
            s("Level"),
            s("Hours per year"),
            s("Load"),
            s("Load factor"),
        ]];
        l.extend(levels);
        self.0.push(("Load levels".into(), l));
        self
    }
}

#[test]
fn sequence_and_background_inputs_out_of_range() {
    // Input contract, version 2 (sequences, background): a vector group IEC 60076-1 does
    // not define, background on a source that does not exist, a negative voltage, and a
    // zero-sequence impedance for a transformer without a zero-sequence path; each at its
    // cell.
    use C::*;
    for (book, expected) in [
        (
            Book::base().set("Transformers", "H1", s("Connection")).set(
                "Transformers",
                "H2",
                s("Dyx5"),
            ),
            "Transformers!H2: \"Connection\" must be an IEC 60076-1 vector group such as Dyn11, Dyn1, YNyn0, Yy0, Dd0, YNd1 (windings D, Y, YN, Z, ZN then d, y, yn, z, zn and a clock number 0 to 11 that the windings allow), found \"Dyx5\"",
        ),
        (
            Book::base().set("Transformers", "H1", s("Connection")).set(
                "Transformers",
                "H2",
                s("Dyn0"),
            ),
            "Transformers!H2: \"Connection\" must be an IEC 60076-1 vector group such as Dyn11, Dyn1, YNyn0, Yy0, Dd0, YNd1 (windings D, Y, YN, Z, ZN then d, y, yn, z, zn and a clock number 0 to 11 that the windings allow), found \"Dyn0\"",
        ),
        (
            Book::base().with_background(vec![vec![s("GRID"), N(5.0), N(1.5)]]),
            "Background!A2: \"Source\": source \"GRID\" is not on the Sources sheet",
        ),
        (
            Book::base().with_background(vec![vec![s("U"), N(5.0), N(-1.0)]]),
            "Background!C2: \"Voltage\" must be a percentage of nominal voltage from 0 to 100, found -1",
        ),
        (
            Book::base()
                .set("Transformers", "H1", s("Connection"))
                .set("Transformers", "H2", s("Dd0"))
                .set("Transformers", "I1", s("Zero-sequence impedance (%)"))
                .set("Transformers", "I2", N(5.0)),
            "Transformers!I2: \"Zero-sequence impedance\": is given but a Dd0 transformer has no zero-sequence path (it needs a grounded wye or zigzag winding, YN/yn or ZN/zn): leave it blank",
        ),
        (
            Book::base().set("Capacitors", "I1", s("Connection")).set(
                "Capacitors",
                "I2",
                s("zigzag"),
            ),
            "Capacitors!I2: \"Connection\" must be delta, wye or wye grounded, found \"zigzag\"",
        ),
    ] {
        expect_one(book, expected);
    }
}

#[test]
fn phasor_summation_needs_every_spectrum_angle() {
    // Input contract, version 2: under `phasor` summation a spectrum line without an angle
    // is an input error at its cell.
    let book = Book::base()
        .set("Study", "A7", s("Summation"))
        .set("Study", "B7", s("phasor"));
    assert_eq!(
        book.errors(),
        [
            "Spectra!A1: the header row needs an \"Angle (deg)\" column: \"phasor\" summation needs every spectrum line's angle"
        ]
    );
    let book = book
        .set("Spectra", "D1", s("Angle (deg)"))
        .set("Spectra", "D2", C::N(180.0));
    expect_one(
        book,
        "Spectra!D3: \"Angle (deg)\" is blank for order 7 of spectrum \"SP\": \"phasor\" summation needs every spectrum line's angle",
    );
}

#[test]
fn every_study_item_out_of_range_at_its_cell() {
    // Each Study sheet item with a value outside its range (input contract, sheet Study and
    // version 2 items): one located error each, at the item's value cell (the base
    // workbook's rows 2-6, a new item in row 7).
    use C::*;
    for (cell, item, value, expected) in [
        (
            "B2",
            None,
            N(55.0),
            "Study!B2: \"Frequency\" must be 50 or 60, found 55",
        ),
        (
            "B4",
            None,
            s("quadratic"),
            "Study!B4: \"Resistance model\" must be frequency-dependent, constant or skin, found \"quadratic\"",
        ),
        (
            "B5",
            None,
            s("EN 50160"),
            "Study!B5: \"Limits\" must be IEEE 519-2014, IEC 61000-2-4 class 1, class 2 or class 3, found \"EN 50160\"",
        ),
        (
            "B6",
            None,
            s("+10/-5"),
            "Study!B6: \"Capacitance tolerance\" must be a band like -5/+10 with -100 < minus <= 0 <= plus <= 100, found 10/-5",
        ),
        (
            "B7",
            Some("Max demand current (A)"),
            N(-5.0),
            "Study!B7: \"Max demand current\" must be a positive number, found -5",
        ),
        (
            "B7",
            Some("Highest order"),
            N(0.5),
            "Study!B7: \"Highest order\" must be a number above 1 and at most 1000, found 0.5",
        ),
        (
            "B7",
            Some("Scan step (order)"),
            N(0.0),
            "Study!B7: \"Scan step\" must be between 0.0001 and 1, found 0",
        ),
        (
            "B7",
            Some("Resonance margin (%)"),
            N(150.0),
            "Study!B7: \"Resonance margin\" must be between 0 and 100 %, found 150",
        ),
        (
            "B7",
            Some("Load model"),
            s("constant impedance"),
            "Study!B7: \"Load model\" must be CIGRE or parallel R-L, found \"constant impedance\"",
        ),
        (
            "B7",
            Some("Summation"),
            s("rms"),
            "Study!B7: \"Summation\" must be arithmetic, IEC 61000-3-6 or phasor, found \"rms\"",
        ),
        (
            "B7",
            Some("Step voltage change (%)"),
            N(0.0),
            "Study!B7: \"Step voltage change\" must be a percentage above 0 and at most 100, found 0",
        ),
    ] {
        let mut book = Book::base();
        if let Some(item) = item {
            book = book.set("Study", "A7", s(item));
        }
        let got = book.set("Study", cell, value).errors();
        assert_eq!(got, [expected], "{cell}");
    }
}

#[test]
fn switching_columns_out_of_range_are_located() {
    // Input contract, version 2: `Trapped charge (pu)` within −1..1, `Switch inrush limit
    // (kA)` positive; each an error at its cell, nothing studied.
    for (book, expected) in [
        (
            Book::base()
                .set("Capacitors", "I1", s("Trapped charge (pu)"))
                .set("Capacitors", "I2", C::N(1.5)),
            "Capacitors!I2: \"Trapped charge\" must be between -1 and 1 pu of nominal peak voltage, found 1.5",
        ),
        (
            Book::base()
                .set("Capacitors", "I1", s("Trapped charge (pu)"))
                .set("Capacitors", "I2", C::N(-1.01)),
            "Capacitors!I2: \"Trapped charge\" must be between -1 and 1 pu of nominal peak voltage, found -1.01",
        ),
        (
            Book::base()
                .set("Capacitors", "I1", s("Switch inrush limit (kA)"))
                .set("Capacitors", "I2", C::N(0.0)),
            "Capacitors!I2: \"Switch inrush limit\" must be a positive number, found 0",
        ),
        (
            Book::base()
                .set("Capacitors", "I1", s("Switch inrush limit (kA)"))
                .set("Capacitors", "I2", C::N(-3.0)),
            "Capacitors!I2: \"Switch inrush limit\" must be a positive number, found -3",
        ),
    ] {
        expect_one(book, expected);
    }
    // The edges are accepted.
    for v in [-1.0, 1.0] {
        let book = Book::base()
            .set("Capacitors", "I1", s("Trapped charge (pu)"))
            .set("Capacitors", "I2", C::N(v));
        assert!(book.errors().is_empty(), "{v}: {:?}", book.errors());
    }
}

#[test]
fn implausible_values_warn_at_their_cells() {
    // Values that validate but look like a unit typed wrong or a capacitor rated too low:
    // each a warning at its own cell naming the row, the plant still read.
    use C::N;
    for (book, expected) in [
        (
            Book::base().set("Transformers", "E2", N(0.0575)),
            "Transformers!E2: transformer T1: \"Impedance (%)\" 0.0575 % is below 1 %: a fraction typed for a percentage? (5.75 % is entered as 5.75)",
        ),
        (
            Book::base().set("Buses", "B2", N(13800.0)),
            "Buses!B2: bus HV: \"Nominal kV\" 13800 is 28750 times the 0.48 kV across transformer T1: volts typed for kV?",
        ),
        (
            Book::base().set("Capacitors", "F2", N(0.07)),
            "Capacitors!F2: bank C1: \"Detuning (%)\" 0.07 is below 1 %: a fraction typed for a percentage? (7 % is entered as 7)",
        ),
        (
            // 480/(1 − 0.07) = 516.1 V on a 480 V capacitor (tests/references.md's table).
            Book::base().set("Capacitors", "C2", N(0.48)),
            "Capacitors!C2: bank C1: \"Rated kV\" 0.48 is below what it sees: the 7.00 % reactor raises the capacitor's voltage to U/(1-p) = 0.516 kV (7.5 % over its rating; IEEE 18 allows 110 % of rated voltage with harmonics on top)",
        ),
    ] {
        let w = book.warnings();
        assert!(w.iter().any(|x| x == expected), "{expected}\n{w:#?}");
    }
    // The base plant: no plausibility warning.
    assert!(
        Book::base()
            .warnings()
            .iter()
            .all(|w| !w.contains("typed") && !w.contains("below what it sees")),
    );
}

#[test]
fn design_input_is_checked_against_the_plant_at_its_cells() {
    // Input contract, design section: a Design row's bus must be on the Buses sheet, a bus
    // is listed once, and a Load levels row's `Load` names a load or a load type. The reader
    // reports each at its cell (for every command, not only `design`), and accepts a load
    // type spelled loosely ("6-Pulse Drive").
    use C::*;
    let with = |design: Vec<Vec<C>>, levels: Vec<Vec<C>>| {
        let mut d = vec![vec![s("Bus"), s("Step kvar")]];
        d.extend(design);
        Book::base().with_design_sheets(d, levels)
    };
    let full = |load: &str| vec![s("full"), N(6000.0), s(load), N(1.0)];
    expect_one(
        with(vec![vec![s("NOPE"), N(50.0)]], vec![full("motor")]),
        "Design!A2: \"Bus\" names \"NOPE\", which is not on the Buses sheet",
    );
    expect_one(
        with(
            vec![vec![s("LV"), N(50.0)], vec![s("LV"), N(25.0)]],
            vec![full("motor")],
        ),
        "Design!A3: bus \"LV\" is listed twice: one row per bus",
    );
    expect_one(
        with(vec![vec![s("LV"), N(50.0)]], vec![full("blender")]),
        "Load levels!C2: \"Load\" names \"blender\", which is neither a load on the Loads sheet nor a load type",
    );
    let ok = with(vec![vec![s("LV"), N(50.0)]], vec![full("6-Pulse Drive")]);
    assert_eq!(ok.errors(), Vec::<String>::new());
}

#[test]
fn impossible_plants_are_located_errors() {
    // Data that cannot be a plant (issue 31): a 480 kV "LV" bus behind a 13.8 kV primary, a
    // capacitor rated 1,000 times its bus voltage, bus ids and scenario names that differ
    // only by letter case; and an unknown bus with the nearest id suggested. Each at its
    // cell, exit 2 through the binary (malformed_cells...), nothing studied.
    use C::*;
    let cases: Vec<(Book, &str)> = vec![
        (
            Book::base()
                .set("Transformers", "C2", s("LV3"))
                .add_row("Buses", vec![s("LV3"), N(480.0)]),
            "Transformers!C2: \"LV bus\": \"LV3\" is at 480 kV, above the HV bus \"HV\" at 13.8 kV: swap the HV and LV buses, or check the Buses sheet's Nominal kV (kV, not V)",
        ),
        (
            Book::base().set("Capacitors", "C2", N(480.0)),
            "Capacitors!C2: \"Rated kV\": 480 kV is 1000.00 × its bus \"LV\" at 0.48 kV: a capacitor is rated from about 1 × (plain) to 1.25 × (detuned) its bus voltage; check kV against V (0.48, not 480) and the bus",
        ),
        (
            Book::base().add_row("Buses", vec![s("lv2"), N(0.48)]),
            "Buses!A5: \"Bus\": bus \"lv2\" differs from \"LV2\" only by letter case: names are case-sensitive, so these would be two; spell them alike",
        ),
        (
            Book::base().set("Sources", "C2", s("strong")).add_row(
                "Sources",
                vec![s("U2"), s("HV"), s("Strong"), N(90.0), Blank, N(12.0)],
            ),
            "Sources!C3: \"Scenario\": scenario \"Strong\" differs from \"strong\" only by letter case: names are case-sensitive, so these would be two; spell them alike",
        ),
        (
            Book::base().set("Loads", "B3", s("lv2")),
            "Loads!B3: \"Bus\": bus \"lv2\" does not exist: did you mean \"LV2\"?",
        ),
    ];
    for (book, expected) in cases {
        expect_one(book, expected);
    }
}

#[test]
fn implausible_supply_and_steps_warn_at_their_cells() {
    // Possible but unusual (issue 31): a transformer below the load it feeds (the base
    // plant's 200 kW × 0.8 / 0.95 + 150 kW / 0.85 = 344.9 kVA on 300 kVA), a 0.5 kvar step,
    // and a source of 0.6 MVA, 1.7 × that load (weaker than 2 ×); the strong 250 MVA source
    // of the base plant is 250,000 / 344.9 = 724.9 × its load. Each a warning at its cell, the plant still read.
    use C::*;
    let warnings = |book: Book| -> Vec<String> {
        read_workbook_bytes("w.xlsx", "w", &book.bytes())
            .expect("reads")
            .warnings
            .iter()
            .map(|w| w.to_string())
            .collect()
    };
    let base = warnings(Book::base());
    assert!(
        base.iter().any(|w| w.starts_with("Sources!D2: source U: short-circuit power 250.0 MVA is 724.9 × the plant's 345 kVA of load, unusually strong")),
        "{base:?}"
    );
    let w = warnings(
        Book::base()
            .set("Transformers", "D2", N(300.0))
            .set("Capacitors", "D2", N(0.5))
            .set("Sources", "D2", N(0.6)),
    );
    for expected in [
        "Transformers!D2: transformer T1: feeds 345 kVA of load (the loads at its LV bus and beyond, at the study point, no diversity) on a 300 kVA rating (115 %)",
        "Capacitors!D2: bank C1: \"Step kvar\" 0.5 is below 1 kvar",
        "Sources!D2: source U: short-circuit power 0.6 MVA is 1.7 × the plant's 345 kVA of load, too weak to carry the plant's load",
    ] {
        assert!(
            w.iter().any(|x| x.starts_with(expected)),
            "{expected}\n{w:?}"
        );
    }
    let w = warnings(Book::base().set("Capacitors", "D2", N(2000.0)));
    assert!(
        w.iter().any(|x| x.starts_with("Capacitors!D2: bank C1: one step of 2000 kvar is above the 1500 kVA of transformer T1 that feeds its bus")),
        "{w:?}"
    );
}

#[test]
fn design_sheets_that_contradict_themselves_are_located() {
    // Issue 31: a Design voltage class below its bus voltage, every level at 0 hours, and
    // two rows of one level that disagree (hours; the factor of every load), each at its
    // cell.
    use C::*;
    let with = |design: Vec<C>, levels: Vec<Vec<C>>| {
        let head = ["Bus", "Step kvar", "Steps", "Detuning", "Rated kV"]
            .map(s)
            .to_vec();
        Book::base().with_design_sheets(vec![head, design], levels)
    };
    let lv = || vec![s("LV"), N(50.0), Blank, Blank, Blank];
    expect_one(
        with(
            vec![s("LV"), N(50.0), Blank, Blank, s("0.4, 0.525")],
            vec![vec![s("full"), N(6000.0), Blank, N(1.0)]],
        ),
        "Design!E2: \"Rated kV\" lists 0.4 kV, below the bus \"LV\" at 0.48 kV: a capacitor's voltage class is at or above its bus voltage (above U/(1 − p) when detuned)",
    );
    expect_one(
        with(
            lv(),
            vec![
                vec![s("full"), N(0.0), Blank, N(1.0)],
                vec![s("night"), N(0.0), Blank, N(0.5)],
            ],
        ),
        "Load levels!B2: \"Hours per year\" is 0 at every level: the levels would weigh nothing; give each level its hours per year",
    );
    expect_one(
        with(
            lv(),
            vec![
                vec![s("day"), N(6000.0), Blank, N(1.0)],
                vec![s("day"), N(3001.0), s("motor"), N(0.6)],
            ],
        ),
        "Load levels!B3: level \"day\" has 6000 hours per year on an earlier row and 3001 here: give its hours once, or the same on every row",
    );
    expect_one(
        with(
            lv(),
            vec![
                vec![s("day"), N(6000.0), Blank, N(1.0)],
                vec![s("day"), Blank, Blank, N(0.6)],
            ],
        ),
        "Load levels!D3: level \"day\" sets every load (blank Load) to load factor 1 on an earlier row and 0.6 here: one factor per level and load",
    );
}
