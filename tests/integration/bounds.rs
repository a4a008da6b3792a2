//! Resource bounds of the reader: cells beyond the row limit, more cells than the bound,
//! and workbooks that expand beyond the bound are refused with a sentence, each before the
//! memory is spent. (Time and memory of a 1,000,000-row read: `cargo bench --bench reader`.)

use std::io::{Read, Write};
use std::path::Path;

use calamine::{Data, Reader, open_workbook_auto_from_rs};
use overtone::io::workbook_in::{
    MAX_ROWS, ReadError, ReadLimits, SHEETS, normalize, read_workbook_bytes,
    read_workbook_bytes_within,
};

fn case(name: &str) -> Vec<u8> {
    std::fs::read(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("cases")
            .join(name),
    )
    .unwrap()
}

fn reason(r: Result<overtone::io::workbook_in::ReadOutcome, ReadError>) -> String {
    match r {
        Err(ReadError::File { reason, .. }) => reason,
        other => panic!("expected a file-level refusal, got {other:?}"),
    }
}

/// `bytes` with every worksheet part rewritten by `edit`.
fn rewrite_sheets(bytes: &[u8], edit: impl Fn(&str) -> String) -> Vec<u8> {
    let mut zin = zip::ZipArchive::new(std::io::Cursor::new(bytes)).unwrap();
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    for i in 0..zin.len() {
        let mut f = zin.by_index(i).unwrap();
        let name = String::from_utf8_lossy(f.name_raw()).into_owned();
        let mut data = Vec::new();
        f.read_to_end(&mut data).unwrap();
        if name.starts_with("xl/worksheets/sheet") && name.ends_with(".xml") {
            data = edit(&String::from_utf8(data).unwrap()).into_bytes();
        }
        out.start_file(name, zip::write::SimpleFileOptions::default())
            .unwrap();
        out.write_all(&data).unwrap();
    }
    out.finish().unwrap().into_inner()
}

#[test]
fn a_cell_beyond_the_row_limit_is_refused() {
    // 1,048,576 rows is the row limit of the .xlsx format (ECMA-376 / the spreadsheet
    // programs' own limit, common practice); a cell in row 1,048,577 is hostile.
    assert_eq!(MAX_ROWS, 1_048_576);
    let r = MAX_ROWS + 1;
    let bytes = rewrite_sheets(&case("food-plant.xlsx"), |xml| {
        xml.replace(
            "</sheetData>",
            &format!("<row r=\"{r}\"><c r=\"A{r}\" t=\"inlineStr\"><is><t>x</t></is></c></row></sheetData>"),
        )
    });
    assert_eq!(
        reason(read_workbook_bytes("far.xlsx", "far", &bytes)),
        "sheet \"Study\" has a cell in row 1048577, beyond the 1048576 rows a sheet may have: remove the stray cells"
    );
    // The same edit one row lower is a blank-but-present row: accepted (text in column A
    // of the Study sheet is an unknown item, a warning).
    let r = MAX_ROWS;
    let ok = rewrite_sheets(&case("food-plant.xlsx"), |xml| {
        xml.replace(
            "</sheetData>",
            &format!("<row r=\"{r}\"><c r=\"Z{r}\" t=\"inlineStr\"><is><t> </t></is></c></row></sheetData>"),
        )
    });
    assert!(read_workbook_bytes("edge.xlsx", "edge", &ok).is_ok());
}

/// Non-blank cells of the contract's sheets, counted by calamine's own ranges.
fn non_blank_cells(bytes: &[u8]) -> usize {
    let mut wb = open_workbook_auto_from_rs(std::io::Cursor::new(bytes)).unwrap();
    let names = wb.sheet_names();
    let mut n = 0;
    for name in names {
        if !SHEETS.iter().any(|(s, _)| normalize(s) == normalize(&name)) {
            continue;
        }
        let range = wb.worksheet_range(&name).unwrap();
        n += range
            .used_cells()
            .filter(|(_, _, d)| match d {
                Data::Empty => false,
                Data::String(s) => !s.trim().is_empty(),
                _ => true,
            })
            .count();
    }
    n
}

#[test]
fn more_cells_than_the_bound_are_refused_at_the_exact_count() {
    let bytes = case("large-site.xlsx");
    let cells = non_blank_cells(&bytes);
    assert!(cells > 300, "{cells}");
    let within = |max_cells| {
        read_workbook_bytes_within(
            "l.xlsx",
            "l",
            &bytes,
            &ReadLimits {
                max_cells,
                ..ReadLimits::default()
            },
        )
    };
    assert!(within(cells).is_ok());
    let refused = reason(within(cells - 1));
    assert!(
        refused.starts_with(&format!(
            "the workbook has more than {} non-blank cells (reached in sheet \"",
            cells - 1
        )),
        "{refused}"
    );
    assert!(refused.ends_with("more than the reader accepts: remove unused rows and columns or split the plant into several studies"));
}

#[test]
fn a_workbook_expanding_beyond_the_bound_is_refused_before_it_is_opened() {
    let bytes = case("large-site.xlsx");
    let refused = reason(read_workbook_bytes_within(
        "l.xlsx",
        "l",
        &bytes,
        &ReadLimits {
            max_expanded_bytes: 100_000,
            ..ReadLimits::default()
        },
    ));
    assert!(
        refused.starts_with("the workbook expands to ")
            && refused.contains(" MB, more than the 0 MB the reader accepts"),
        "{refused}"
    );
    // A deflate bomb: one part of 64 MiB of zeros compresses to about 64 KB. With the bound
    // at 32 MiB it is refused from the zip directory, without inflating it.
    let mut out = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    out.start_file(
        "xl/sharedStrings.xml",
        zip::write::SimpleFileOptions::default(),
    )
    .unwrap();
    let zeros = vec![0u8; 1 << 20];
    for _ in 0..64 {
        out.write_all(&zeros).unwrap();
    }
    let bomb = out.finish().unwrap().into_inner();
    assert!(bomb.len() < 1 << 20, "{}", bomb.len());
    let refused = reason(read_workbook_bytes_within(
        "bomb.xlsx",
        "bomb",
        &bomb,
        &ReadLimits {
            max_expanded_bytes: 32 << 20,
            ..ReadLimits::default()
        },
    ));
    assert_eq!(
        refused,
        "the workbook expands to 67 MB, more than the 33 MB the reader accepts: remove unused sheets, rows and columns or split the plant into several studies"
    );
}

#[test]
fn ods_and_xls_have_their_own_bounds() {
    let ods =
        std::fs::read(Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/water-plant.ods"))
            .unwrap();
    let limits = ReadLimits {
        max_ods_expanded_bytes: 1000,
        max_xls_bytes: 1000,
        ..ReadLimits::default()
    };
    // The .xlsx bound does not apply to an .ods, its own does.
    assert!(
        read_workbook_bytes_within(
            "w.ods",
            "w",
            &ods,
            &ReadLimits {
                max_expanded_bytes: 1000,
                ..ReadLimits::default()
            }
        )
        .is_ok()
    );
    let refused = reason(read_workbook_bytes_within("w.ods", "w", &ods, &limits));
    assert!(
        refused.starts_with("the workbook expands to ")
            && refused.contains("more than the 0 MB the reader accepts"),
        "{refused}"
    );
    let mut ole = vec![0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];
    ole.resize(4096, 0);
    assert_eq!(
        reason(read_workbook_bytes_within("big.xls", "big", &ole, &limits)),
        "the workbook is 0 MB, more than the 0 MB the reader accepts: remove unused sheets, rows and columns or split the plant into several studies"
    );
}
