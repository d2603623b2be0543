//! Scenario sections read from tables: the table form of the demo plant is the demo plant, and every bad table in `scenarios/bad-tables/` fails at its file, row and column.
//!
//! The reference is the YAML form of the same plant (`scenarios/demo.yaml`),
//! compiled by the long-tested YAML path: a table that compiles to an equal
//! `Plant` cannot simulate differently (the seeded results are compared byte
//! for byte in `cli/tests/tables.rs`).

use std::path::{Path, PathBuf};

use layflow_models::{load_scenario, parse_scenario};

/// A temporary folder holding a copy of every file in `src`, to edit one table of it.
fn copy_of(src: &Path) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for e in std::fs::read_dir(src).unwrap() {
        let p = e.unwrap().path();
        std::fs::copy(&p, dir.path().join(p.file_name().unwrap())).unwrap();
    }
    dir
}

fn scenarios_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios")
}

#[test]
fn the_table_form_of_the_demo_is_the_demo_plant() {
    let yaml = load_scenario(&scenarios_dir().join("demo.yaml")).expect("the demo loads");
    let tables =
        load_scenario(&scenarios_dir().join("tables-demo/demo-tables.yaml")).expect("the tables demo loads");
    assert_eq!(yaml, tables);
}

/// The demand sheet as .ods (the same sheet make_spreadsheets.py writes) gives the same plant.
#[test]
fn the_demand_sheet_as_ods_gives_the_same_plant() {
    let path = scenarios_dir().join("tables-demo/demo-tables.yaml");
    let text = std::fs::read_to_string(&path).unwrap();
    assert!(text.contains("table: demand.xlsx"));
    let ods = parse_scenario(&text.replace("table: demand.xlsx", "table: demand.ods"), &path)
        .expect("the .ods loads");
    let yaml = load_scenario(&scenarios_dir().join("demo.yaml")).unwrap();
    assert_eq!(yaml, ods);
}

/// `text` with every `,` outside quotes replaced by `sep`.
fn with_separator(text: &str, sep: char) -> String {
    let mut quoted = false;
    text.chars()
        .map(|c| match c {
            '"' => {
                quoted = !quoted;
                c
            }
            ',' if !quoted => sep,
            _ => c,
        })
        .collect()
}

/// The routings table saved as a spreadsheet program would in other locales:
/// `;` or tab separated, with a byte-order mark and CRLF line ends.
#[test]
fn separators_byte_order_mark_and_crlf_read_alike() {
    let src = scenarios_dir().join("tables-demo");
    let yaml = load_scenario(&scenarios_dir().join("demo.yaml")).unwrap();
    let routings = std::fs::read_to_string(src.join("routings.csv")).unwrap();
    for (name, sep, bom, crlf) in
        [("semicolon", ';', true, true), ("tab", '\t', false, true), ("comma", ',', true, false)]
    {
        let dir = copy_of(&src);
        let mut t = with_separator(&routings, sep);
        if crlf {
            t = t.replace('\n', "\r\n");
        }
        let mut bytes = if bom { vec![0xEF, 0xBB, 0xBF] } else { Vec::new() };
        bytes.extend(t.as_bytes());
        std::fs::write(dir.path().join("routings.csv"), bytes).unwrap();
        let plant =
            load_scenario(&dir.path().join("demo-tables.yaml")).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(yaml, plant, "{name}");
    }
}

/// A case's expectations: `# expect:`, `# file:`, `# row:`, `# column:` at the top of its scenario.
fn header(text: &str, key: &str) -> Option<String> {
    text.lines()
        .take_while(|l| l.starts_with('#'))
        .find_map(|l| l.strip_prefix(&format!("# {key}:")).map(|v| v.trim().to_string()))
}

#[test]
fn every_bad_table_fails_at_its_file_row_and_column() {
    let dir = scenarios_dir().join("bad-tables");
    let mut cases: Vec<PathBuf> =
        std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.is_dir()).collect();
    cases.sort();
    assert!(cases.len() >= 15, "the corpus shrank to {} cases", cases.len());
    let mut problems = Vec::new();
    for case in &cases {
        let name = case.file_name().unwrap().to_string_lossy().to_string();
        let scenario = case.join("scenario.yaml");
        let text = std::fs::read_to_string(&scenario).unwrap();
        let (Some(fragment), Some(file)) = (header(&text, "expect"), header(&text, "file")) else {
            problems.push(format!("{name}: no `# expect:` or `# file:` line"));
            continue;
        };
        let err = match load_scenario(&scenario) {
            Ok(_) => {
                problems.push(format!("{name}: loaded, expected an error containing {fragment:?}"));
                continue;
            }
            Err(e) => e,
        };
        let shown = err.to_string();
        if !shown.contains(&fragment) {
            problems.push(format!("{name}:\n  expected: {fragment}\n  actual:   {shown}"));
        }
        if !err.file().contains(&file) {
            problems.push(format!("{name}: expected the error in {file}, got {}", err.file()));
        }
        let row = header(&text, "row").map(|r| r.parse::<usize>().expect("a row number"));
        if err.row() != row {
            problems.push(format!("{name}: expected row {row:?}, got {:?}: {shown}", err.row()));
        }
        let column = header(&text, "column");
        if err.column_name() != column.as_deref() {
            problems
                .push(format!("{name}: expected column {column:?}, got {:?}: {shown}", err.column_name()));
        }
        if err.hint().is_none() {
            problems.push(format!("{name}: no hint saying what to do: {shown}"));
        }
        if file.ends_with(".csv") && !shown.contains("scenario.yaml") {
            problems.push(format!(
                "{name}: the message does not name the scenario that reads the table: {shown}"
            ));
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// The corpus's base plant loads once its one mistake is fixed, so each case
/// fails for its own mistake alone.
#[test]
fn the_corpus_base_loads_when_fixed() {
    let case = scenarios_dir().join("bad-tables/unknown-department");
    let dir = copy_of(&case);
    let r = dir.path().join("routings.csv");
    let fixed = std::fs::read_to_string(&r).unwrap().replace("weldng", "welding");
    std::fs::write(&r, fixed).unwrap();
    let plant = load_scenario(&dir.path().join("scenario.yaml")).expect("the fixed base loads");
    assert_eq!(plant.products.len(), 2);
    assert_eq!(plant.products[0].routing.len(), 4, "operations 10, 20, 30, 40 of bracket");
}

/// `text` with every decimal point between digits outside quotes (and so outside YAML cells) made a comma.
fn with_decimal_commas(text: &str) -> String {
    let chars: Vec<char> = text.chars().collect();
    let mut quoted = false;
    let mut out = String::with_capacity(text.len());
    for (i, &c) in chars.iter().enumerate() {
        if c == '"' {
            quoted = !quoted;
        }
        let between_digits =
            i > 0 && chars[i - 1].is_ascii_digit() && chars.get(i + 1).is_some_and(char::is_ascii_digit);
        out.push(if c == '.' && !quoted && between_digits { ',' } else { c });
    }
    out
}

/// The routings and locations tables saved where the comma is the decimal
/// sign (`;`-separated, `0,4`, `0,92 / 0,08`, `2,5`) read as the demo plant;
/// a file that writes `0.4` beside `0,5` is refused at the point's cell.
#[test]
fn decimal_commas_are_read_per_file() {
    let src = scenarios_dir().join("tables-demo");
    let yaml = load_scenario(&scenarios_dir().join("demo.yaml")).unwrap();
    let dir = copy_of(&src);
    let routings = std::fs::read_to_string(src.join("routings.csv")).unwrap();
    let comma = with_decimal_commas(&with_separator(&routings, ';'));
    assert!(comma.contains(";0,4;") && comma.contains("0,92 / 0,08"), "{comma}");
    assert!(comma.contains("0.3]"), "a YAML cell keeps its points");
    std::fs::write(dir.path().join("routings.csv"), &comma).unwrap();
    let locations = std::fs::read_to_string(src.join("locations.csv")).unwrap();
    std::fs::write(dir.path().join("locations.csv"), locations.replacen(";35", ";35,0", 1)).unwrap();
    let plant = load_scenario(&dir.path().join("demo-tables.yaml")).expect("decimal commas read");
    assert_eq!(yaml, plant);

    // One point in a comma file: which is it?
    let mixed = comma.replacen(";0,5;", ";0.5;", 1);
    std::fs::write(dir.path().join("routings.csv"), &mixed).unwrap();
    let e = load_scenario(&dir.path().join("demo-tables.yaml")).expect_err("mixed decimal marks");
    assert!(
        e.to_string().contains(
            "\"0.5\" has a decimal point, but this file writes decimals with a comma (line 3, column CV)"
        ),
        "{e}"
    );
    assert_eq!((e.row(), e.column_name()), (Some(4), Some("CV")));
}

/// A section may mix YAML items and tables in one list; the items keep
/// their places (a YAML location before the table, a YAML department after
/// it), and an id given in both is an error naming both places.
#[test]
fn yaml_items_and_tables_mix_in_one_section() {
    let src = scenarios_dir().join("tables-demo");
    let yaml = load_scenario(&scenarios_dir().join("demo.yaml")).unwrap();
    let dir = copy_of(&src);
    let locations = std::fs::read_to_string(src.join("locations.csv")).unwrap();
    std::fs::write(dir.path().join("locations.csv"), locations.replacen("dock-west;0;35\r\n", "", 1))
        .unwrap();
    let departments = std::fs::read_to_string(src.join("departments.csv")).unwrap();
    std::fs::write(dir.path().join("departments.csv"), departments.replacen("shipping\t\tshipping\n", "", 1))
        .unwrap();
    let scenario = std::fs::read_to_string(src.join("demo-tables.yaml")).unwrap();
    let mixed = scenario
        .replacen(
            "locations:\n  table: locations.csv\n  columns: { id: Location, x: X, y: Y }",
            "locations:\n  - { id: dock-west, at: [0, 35] }\n  - table: locations.csv\n    columns: { id: Location, x: X, y: Y }",
            1,
        )
        .replacen(
            "departments:\n  table: departments.csv\n  columns: { id: Department, machines: Machines, dock: Dock }",
            "departments:\n  - table: departments.csv\n    columns: { id: Department, machines: Machines, dock: Dock }\n  - { id: shipping, dock: shipping }",
            1,
        );
    assert_ne!(mixed, scenario, "the sections were rewritten");
    let path = dir.path().join("mixed.yaml");
    std::fs::write(&path, &mixed).unwrap();
    assert_eq!(yaml, load_scenario(&path).expect("the mixed form loads"));

    // A YAML department after the table that names one the table has: both places named.
    let twice = mixed.replacen(
        "  - { id: shipping, dock: shipping }",
        "  - { id: shipping, dock: shipping }\n  - { id: wash, machines: 2 }",
        1,
    );
    std::fs::write(&path, &twice).unwrap();
    let e = load_scenario(&path).expect_err("wash twice");
    let line = twice.lines().position(|l| l.contains("id: wash, machines: 2")).unwrap() + 1;
    let shown = e.to_string();
    assert!(shown.contains("department \"wash\" is defined twice (first at "), "{shown}");
    assert!(
        shown.contains("(first at row 10 of ") && shown.contains("departments.csv"),
        "the table's row: {shown}"
    );
    assert_eq!(e.line(), Some(line), "the YAML item's own line: {shown}");

    // A YAML item after a table keeps its own line in other messages too.
    let bad = mixed.replacen("{ id: shipping, dock: shipping }", "{ id: shipping, dock: shiping }", 1);
    std::fs::write(&path, &bad).unwrap();
    let e = load_scenario(&path).expect_err("a misspelt dock");
    let line = bad.lines().position(|l| l.contains("dock: shiping")).unwrap() + 1;
    assert_eq!(e.line(), Some(line), "{e}");
}
