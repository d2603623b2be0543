//! `layflow report` and `--report`: the page is self-contained, every number on it reads back exactly from summary.csv, and bad input exits 2.

mod common;

use std::collections::HashMap;
use std::path::Path;

use common::{layflow, root, text};

/// Every element that carries a summary.csv cell: its data attributes.
fn number_cells(page: &str) -> Vec<HashMap<String, String>> {
    page.split('<')
        .filter(|tag| tag.contains(" data-study=\""))
        .map(|tag| {
            let head = tag.split('>').next().unwrap_or("");
            let mut attrs = HashMap::new();
            for part in head.split(" data-").skip(1) {
                if let Some((k, v)) = part.split_once("=\"") {
                    let v = v.split('"').next().unwrap_or("");
                    let v = v
                        .replace("&quot;", "\"")
                        .replace("&#39;", "'")
                        .replace("&lt;", "<")
                        .replace("&gt;", ">");
                    attrs.insert(k.to_string(), v.replace("&amp;", "&"));
                }
            }
            attrs
        })
        .collect()
}

/// summary.csv as (header, rows).
fn read_csv(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let mut r = csv::Reader::from_path(path).expect("summary.csv reads");
    let header = r.headers().expect("a header").iter().map(str::to_string).collect();
    let rows = r.records().map(|x| x.expect("a row").iter().map(str::to_string).collect()).collect();
    (header, rows)
}

/// Every number cell of `page` is the exact text of its summary.csv cell,
/// and names the same row (level or point or size, layout, bucket, scope,
/// subject, metric). Returns how many cells were checked.
fn numbers_read_back(page: &str, summary: &Path) -> usize {
    let (header, rows) = read_csv(summary);
    let col = |n: &str| header.iter().position(|h| h == n);
    let cells = number_cells(page);
    assert!(!cells.is_empty(), "the page has no number cells");
    for c in &cells {
        let row: usize = c["row"].parse().expect("a row number");
        let r = &rows[row];
        let have = &c["value"];
        let want = &r[col(&c["col"]).unwrap_or_else(|| panic!("no column {} in summary.csv", c["col"]))];
        assert_eq!(have, want, "row {row} column {}: the page says {have:?}, summary.csv {want:?}", c["col"]);
        let ident = ["demand_factor", "point", "movers", "layout", "bucket", "scope", "subject", "metric"];
        let key: Vec<&str> = ident.iter().filter_map(|n| col(n)).map(|i| r[i].as_str()).collect();
        assert_eq!(c["key"], key.join("|"), "row {row}: the cell names another row");
        assert!(!have.is_empty(), "row {row}: a shown number with an empty cell");
    }
    cells.len()
}

/// What makes the page self-contained: the CSP that forbids every request,
/// and nothing that would fetch (an address outside the SVG namespace, a
/// link, a src attribute).
fn self_contained(page: &str) {
    assert!(page.starts_with("<!doctype html>"));
    assert!(page.contains(
        "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; script-src 'unsafe-inline'; \
         style-src 'unsafe-inline'; img-src data:\">"
    ));
    let outside = page.replace("http://www.w3.org/2000/svg", "");
    assert!(!outside.contains("http://") && !outside.contains("https://"), "the page names an address");
    assert!(!page.contains("<link") && !page.contains(" src=\""), "the page loads something");
    assert!(page.contains("id=\"layflow-data\""));
    for section in ["answer", "plant", "assumptions"] {
        assert!(page.contains(&format!("<section id=\"{section}\"")), "no {section} section");
    }
    assert!(page.contains("Safety is not assessed"), "the cautions are missing");
}

#[test]
fn a_comparison_page_reads_back_exactly_and_is_the_same_from_the_folder() {
    let dir = tempfile::tempdir().unwrap();
    let res = dir.path().join("results");
    let a = dir.path().join("a.html");
    let o = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--replications",
        "4",
        "--horizon",
        "3 d",
        "--warmup",
        "1 d",
        "--by",
        "hour-of-day",
        "--out",
        res.to_str().unwrap(),
        "--report",
        a.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let page = std::fs::read_to_string(&a).unwrap();
    self_contained(&page);
    assert!(page.contains("<section id=\"comparison\"") && page.contains("<section id=\"over-time\""));
    let n = numbers_read_back(&page, &res.join("summary.csv"));
    // 10 plant metrics × 2 layouts + 10 differences at least, and the buckets.
    assert!(n > 100, "only {n} numbers on the page");
    // The answer names the layout with the lower mean flow time (summary.csv decides).
    let (h, rows) = read_csv(&res.join("summary.csv"));
    let c = |n: &str| h.iter().position(|x| x == n).unwrap();
    let flow = |l: &str| -> f64 {
        rows.iter()
            .find(|r| {
                r[c("layout")] == l
                    && r[c("bucket")] == "whole window"
                    && r[c("metric")] == "flow_time_s"
                    && r[c("scope")] == "plant"
            })
            .unwrap()[c("mean")]
        .parse()
        .unwrap()
    };
    let sure = rows
        .iter()
        .find(|r| {
            r[c("layout")] == "proposed"
                && r[c("bucket")] == "whole window"
                && r[c("metric")] == "flow_time_s"
                && r[c("scope")] == "plant"
        })
        .unwrap()[c("difference_excludes_zero")]
        == "true";
    let best = match (flow("proposed") < flow("current"), sure) {
        (true, true) => "<strong>Move to proposed</strong>",
        (true, false) => "<strong>proposed</strong> may be better, not yet shown to be",
        (false, _) => "<strong>Keep current</strong>",
    };
    let answer = page.split("<section id=\"answer\">").nth(1).unwrap().split("</section>").next().unwrap();
    assert!(answer.contains(best), "the answer does not say {best:?}: {answer}");

    // The same page from the folder: --report goes through the same code.
    let b = dir.path().join("b.html");
    let o = layflow(&["report", res.to_str().unwrap(), "-o", b.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert_eq!(page, std::fs::read_to_string(&b).unwrap(), "report DIR and --report differ");

    // Never overwritten silently.
    let o = layflow(&["report", res.to_str().unwrap(), "-o", b.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("--force"), "{}", text(&o.stderr));
}

#[test]
fn a_fleet_page_marks_the_recommended_size_and_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let res = dir.path().join("fleet");
    let a = dir.path().join("fleet.html");
    let o = layflow(&[
        "fleet",
        "scenarios/demo.yaml",
        "--fleet",
        "forklifts",
        "--sizes",
        "1..3",
        "--replications",
        "3",
        "--horizon",
        "3 d",
        "--warmup",
        "1 d",
        "--target",
        "move_wait_p95_s <= 3 min",
        "--out",
        res.to_str().unwrap(),
        "--report",
        a.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let manifest = std::fs::read_to_string(res.join("layflow-results.json")).unwrap();
    assert!(manifest.contains("\"kind\": \"fleet\""), "{manifest}");
    let page = std::fs::read_to_string(&a).unwrap();
    self_contained(&page);
    assert!(page.contains("<section id=\"fleet\""));
    assert!(numbers_read_back(&page, &res.join("summary.csv")) >= 18);
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(res.join("summary.json")).unwrap()).unwrap();
    match json["smallest_meeting_targets"].as_u64() {
        Some(n) => {
            assert!(page.contains(&format!("<strong>{n} forklifts</strong> is the smallest size")));
            assert!(page.contains(">recommended</text>"));
        }
        None => assert!(page.contains("No size of")),
    }
    let b = dir.path().join("b.html");
    let o = layflow(&["report", res.to_str().unwrap(), "-o", b.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert_eq!(page, std::fs::read_to_string(&b).unwrap());
}

#[test]
fn an_experiment_page_reads_back_and_a_comparison_joins_it() {
    let dir = tempfile::tempdir().unwrap();
    let plan = dir.path().join("plan.yaml");
    std::fs::write(
        &plan,
        format!(
            "scenario: {}\nreplications: 2\nseed: 7\nhorizon: 2 d\nwarmup: 1 d\nfactors:\n  layout: [current, proposed]\n",
            root().join("scenarios/demo.yaml").display()
        ),
    )
    .unwrap();
    let res = dir.path().join("exp");
    let a = dir.path().join("exp.html");
    let o = layflow(&[
        "experiment",
        plan.to_str().unwrap(),
        "--out",
        res.to_str().unwrap(),
        "--report",
        a.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let page = std::fs::read_to_string(&a).unwrap();
    self_contained(&page);
    assert!(page.contains("<section id=\"experiment\""));
    assert!(numbers_read_back(&page, &res.join("summary.csv")) >= 10);

    // A comparison of the same scenario and the experiment on one page.
    let cmp = dir.path().join("cmp");
    let o = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--replications",
        "2",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "--out",
        cmp.to_str().unwrap(),
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let both = dir.path().join("both.html");
    let o = layflow(&[
        "report",
        cmp.to_str().unwrap(),
        res.to_str().unwrap(),
        "--scenario",
        "scenarios/demo.yaml",
        "-o",
        both.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let page = std::fs::read_to_string(&both).unwrap();
    // The plant once; every section id once.
    assert_eq!(page.matches("<section id=\"plant\"").count(), 1);
    let ids: Vec<&str> = page.split("<section id=\"").skip(1).map(|x| x.split('"').next().unwrap()).collect();
    let mut unique = ids.clone();
    unique.sort_unstable();
    unique.dedup();
    assert_eq!(ids.len(), unique.len(), "duplicate section ids: {ids:?}");
    let cells = number_cells(&page);
    // Each study's cells read back against its own summary.csv.
    for (k, dir) in [(0, &cmp), (1, &res)] {
        let mine: Vec<_> = cells.iter().filter(|c| c["study"] == k.to_string()).collect();
        assert!(!mine.is_empty(), "no numbers of study {k}");
        let (header, rows) = read_csv(&dir.join("summary.csv"));
        for c in mine {
            let r = &rows[c["row"].parse::<usize>().unwrap()];
            assert_eq!(c["value"], r[header.iter().position(|h| *h == c["col"]).unwrap()]);
        }
    }
}

/// Run layflow and expect exit 2 with `fragment` in the message.
fn refused(args: &[&str], fragment: &str) {
    let o = layflow(args);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
    assert!(err.contains(fragment), "{args:?}: expected {fragment:?} in: {err}");
}

#[test]
fn bad_input_is_refused_with_exit_2() {
    let dir = tempfile::tempdir().unwrap();
    let d = |p: &str| dir.path().join(p).to_str().unwrap().to_string();
    let out = d("r.html");
    // Not a results folder.
    std::fs::create_dir(dir.path().join("empty")).unwrap();
    refused(&["report", &d("empty"), "-o", &out], "not a layflow results folder");
    refused(&["report", &d("nowhere"), "-o", &out], "not a folder");
    // A comparison to report on.
    let res = d("res");
    let o = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--replications",
        "2",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "--out",
        &res,
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    // An output path that cannot be written, or is not a page.
    refused(&["report", &res, "-o", &d("no/such/folder/r.html")], "does not exist");
    refused(&["report", &res, "-o", &d("r.txt")], "name a .html file");
    // A mixed folder: an experiment's file beside the comparison's.
    let mixed = d("mixed");
    std::fs::create_dir(&mixed).unwrap();
    for f in ["summary.json", "summary.csv", "layflow-results.json"] {
        std::fs::copy(Path::new(&res).join(f), Path::new(&mixed).join(f)).unwrap();
    }
    std::fs::write(Path::new(&mixed).join("results.csv"), "point,layout\n1,current\n").unwrap();
    refused(&["report", &mixed, "-o", &out], "comes from an experiment");
    // Results of another scenario.
    refused(&["report", &res, "--scenario", "scenarios/aisles-demo.yaml", "-o", &out], "another scenario");
    // A replay without a trace, and a window outside the traced one.
    refused(&["report", &res, "--replay", &d("no-trace"), "-o", &out], "no-trace");
    let trace = d("trace");
    let o = layflow(&[
        "run",
        "scenarios/demo.yaml",
        "--layout",
        "current",
        "--replications",
        "1",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "--trace",
        &trace,
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    refused(
        &["report", &res, "--replay", &trace, "--replay-window", "5 d..6 d", "-o", &out],
        "--replay-window",
    );
    // A trace of another scenario.
    let other = d("other-trace");
    let o = layflow(&[
        "run",
        "scenarios/aisles-demo.yaml",
        "--layout",
        "current",
        "--replications",
        "1",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "--trace",
        &other,
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    refused(&["report", &res, "--replay", &other, "-o", &out], "scenario");
    // --report on a shard; --replay without --report.
    refused(&["compare", "scenarios/demo.yaml", "--replications", "2", "--replay", &d("t")], "--report");
}
