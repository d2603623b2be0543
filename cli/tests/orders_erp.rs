//! An order trace exported by an ERP system (date-times, `;` cells, decimal commas)
//! gives exactly the seeded results of the same orders written in hours since the start.

mod common;

use std::path::Path;
use std::process::Command;

use common::{root, text};

/// The demo trace's orders with their times in seconds (each `H h` of the file).
fn demo_orders() -> Vec<(u64, String, String)> {
    let csv = std::fs::read_to_string(root().join("scenarios/orders-demo.csv")).expect("the demo trace");
    csv.lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty() && !l.starts_with("time"))
        .map(|l| {
            let cells: Vec<&str> = l.split(',').map(str::trim).collect();
            let hours: f64 = cells[0].strip_suffix(" h").expect("hours in the demo trace").parse().unwrap();
            let seconds = hours * 3600.0;
            assert_eq!(seconds.fract(), 0.0, "the demo's times are whole seconds");
            (seconds as u64, cells[1].to_string(), cells[2].to_string())
        })
        .collect()
}

/// `2026-03-02` is a Monday; `s` seconds later, written as an ERP export would,
/// alternating the forms the reader accepts.
fn stamp(s: u64, k: usize) -> String {
    // Day of month from 2 March 2026 (the trace is one week, so March holds it).
    let (day, sod) = (2 + s / 86_400, s % 86_400);
    let (h, m, sec) = (sod / 3600, sod % 3600 / 60, sod % 60);
    match k % 3 {
        0 => format!("2026-03-{day:02} {h:02}:{m:02}"),
        1 => format!("2026-03-{day:02}T{h:02}:{m:02}:{sec:02}"),
        _ => format!("2026-03-{day:02}T{h:02}:{m:02}:{sec:02}+01:00"),
    }
}

fn run_json(dir: &Path) -> String {
    let o = Command::new(env!("CARGO_BIN_EXE_layflow"))
        .args([
            "run",
            "orders-demo.yaml",
            "--format",
            "json",
            "--quiet",
            "--no-wall-clock",
            "--replications",
            "4",
        ])
        .current_dir(dir)
        .output()
        .expect("the layflow binary runs");
    assert!(o.status.success(), "{}", text(&o.stderr));
    text(&o.stdout)
}

#[test]
fn erp_timestamps_give_the_results_of_the_same_orders_in_hours() {
    let scenario = std::fs::read_to_string(root().join("scenarios/orders-demo.yaml")).expect("the demo");
    let hours = tempfile::tempdir().unwrap();
    std::fs::write(hours.path().join("orders-demo.yaml"), &scenario).unwrap();
    std::fs::copy(root().join("scenarios/orders-demo.csv"), hours.path().join("orders-demo.csv")).unwrap();

    // The same orders as a `;`-separated export with a BOM, CRLF line ends,
    // quantities with a decimal comma, and the start in +01:00 so the cells
    // with an offset and those without land on the same clock.
    let erp = tempfile::tempdir().unwrap();
    let with_start = scenario.replace(
        "  file: orders-demo.csv  # relative to this file: time,product,quantity\n",
        "  file: orders-demo.csv\n  start: 2026-03-02T00:00+01:00\n",
    );
    assert_ne!(with_start, scenario, "the demo's orders block moved: update this test");
    std::fs::write(erp.path().join("orders-demo.yaml"), with_start).unwrap();
    let mut csv = String::from("\u{feff}Time;Product;Quantity\r\n");
    for (k, (s, product, quantity)) in demo_orders().iter().enumerate() {
        csv.push_str(&format!("{};{product};{quantity},0\r\n", stamp(*s, k)));
    }
    std::fs::write(erp.path().join("orders-demo.csv"), csv).unwrap();

    let (a, b) = (run_json(hours.path()), run_json(erp.path()));
    assert!(a.len() > 1000, "a run's JSON: {a}");
    assert!(a == b, "the ERP trace changed the results:\n{a}\n---\n{b}");
}
