//! End-to-end tests of `layflow draw` (the picture read back as SVG), and of `layflow run` over an aisle network.

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use common::{layflow, render_png, resvg, root, text, without_text};
use svg::parser::Event;

/// One element of interest read back from the picture.
#[derive(Debug, Default)]
struct Picture {
    department_labels: Vec<String>,
    locations: usize,
    aisles: usize,
    /// (loads per hour, stroke width) of each flow, in drawing order.
    flows: Vec<(f64, f64)>,
    legend: bool,
}

fn read_picture(path: &Path) -> Picture {
    let mut content = String::new();
    let mut pic = Picture::default();
    let mut in_label = false;
    // A flow is a <g class="flow" data-loads-per-h> whose first <path> carries the width.
    let mut pending_flow: Option<f64> = None;
    for event in svg::open(path, &mut content).expect("the picture parses as SVG") {
        match event {
            Event::Tag(name, _, attrs) => {
                let class = attrs.get("class").map(|v| v.to_string()).unwrap_or_default();
                in_label = name == "text" && class == "department-label";
                match (name, class.as_str()) {
                    ("rect", "location") => pic.locations += 1,
                    ("g", "aisle") => pic.aisles += 1,
                    ("g", "flow") => {
                        pending_flow = Some(attrs["data-loads-per-h"].parse().expect("a number"));
                    }
                    ("path", _) => {
                        if let (Some(f), Some(w)) = (pending_flow.take(), attrs.get("stroke-width")) {
                            pic.flows.push((f, w.parse().expect("a width")));
                        }
                    }
                    ("g", _) if attrs.get("id").is_some_and(|v| *v == "legend") => pic.legend = true,
                    _ => {}
                }
            }
            Event::Text(t) if in_label => {
                pic.department_labels.push(t.trim().to_string());
                in_label = false;
            }
            Event::Error(e) => panic!("SVG error: {e}"),
            _ => {}
        }
    }
    pic
}

fn draw(scenario: &str, layout: &str, dir: &Path, extra: &[&str]) -> PathBuf {
    let out = dir.join(format!("{layout}.svg"));
    let mut args = vec!["draw", scenario, "--layout", layout, "-o", out.to_str().expect("utf-8")];
    args.extend_from_slice(extra);
    let o = layflow(&args);
    assert!(o.status.success(), "draw failed:\n{}", text(&o.stderr));
    out
}

#[test]
fn the_aisle_demo_draws_with_every_part_and_flows_ordered_by_width() {
    let dir = tempfile::tempdir().expect("temp dir");
    let svg_path = draw("scenarios/aisles-demo.yaml", "current", dir.path(), &[]);
    let pic = read_picture(&svg_path);
    // The demo has 11 departments (2 docks) on 14 locations and 25 aisle segments.
    let mut labels = pic.department_labels.clone();
    labels.sort();
    let mut want: Vec<&str> = vec![
        "receiving",
        "saw",
        "turning",
        "milling",
        "drilling",
        "heat-treat",
        "grinding",
        "deburr",
        "wash",
        "inspection",
        "shipping",
    ];
    want.sort();
    assert_eq!(labels, want, "one label per department");
    assert_eq!(pic.locations, 14);
    assert_eq!(pic.aisles, 25);
    assert!(pic.legend, "the picture has a legend");
    assert!(pic.flows.len() >= 10, "flows: {:?}", pic.flows);
    // Widths follow flows: a larger flow is never drawn thinner.
    let mut by_flow = pic.flows.clone();
    by_flow.sort_by(|a, b| a.0.total_cmp(&b.0));
    for w in by_flow.windows(2) {
        assert!(w[0].1 <= w[1].1, "flow {} drawn {} px, flow {} drawn {} px", w[0].0, w[0].1, w[1].0, w[1].1);
    }
    let (small, large) = (by_flow[0], by_flow[by_flow.len() - 1]);
    assert!(large.1 > 3.0 * small.1, "widths should read at a glance: {small:?} against {large:?}");
    // Proportional above the floor width: the ratio of widths is the ratio of flows.
    for &(f, w) in &by_flow {
        if w > 1.0 {
            let want = 16.0 * f / large.0;
            assert!((w - want).abs() < 1e-2, "flow {f}: width {w}, expected {want}");
        }
    }
    fonts_are_listed(&svg_path);
    render_png_if_possible(&svg_path);
}

/// A PNG render proves the file is well-formed enough for a real renderer,
/// and, rendered again without its `<text>` elements, that the text was
/// drawn: resvg maps plain `sans-serif` to Arial, absent on most Linux
/// machines, so the picture must name fonts that are there (DejaVu Sans,
/// Liberation Sans, Noto Sans). No `--sans-serif-family` is passed: a user
/// running plain `resvg plant.svg plant.png` gets the text too.
/// resvg is optional, so without it the check is skipped with a notice.
fn render_png_if_possible(svg_path: &Path) {
    let Some(resvg) = resvg(&svg_path.display().to_string()) else { return };
    let bytes = render_png(&resvg, svg_path);
    assert!(bytes.starts_with(b"\x89PNG") && bytes.len() > 10_000, "PNG of {} bytes", bytes.len());
    let svg = std::fs::read_to_string(svg_path).expect("the picture reads");
    let bare_path = svg_path.with_file_name("without-text.svg");
    std::fs::write(&bare_path, without_text(&svg)).expect("written");
    assert_ne!(bytes, render_png(&resvg, &bare_path), "resvg drew no text: no font of the list was found");
}

/// Every text of the picture names the open-font list (issue 14).
fn fonts_are_listed(svg_path: &Path) {
    let svg = std::fs::read_to_string(svg_path).expect("the picture reads");
    for t in svg.split("<text").skip(1) {
        assert!(
            t.contains("font-family=\"DejaVu Sans, Liberation Sans, Noto Sans, sans-serif\""),
            "a text without the font list: {}",
            &t[..t.len().min(200)]
        );
    }
}

/// Issue 14: department names overflowed their boxes (the size was clamped
/// at 9 px whatever the name's length), and a flow of one load an hour read
/// "1 loads/h". A name now fits inside its box at 9 px or more, measured at
/// a conservative 0.68 em a letter (DejaVu Sans Bold), or goes below it; a
/// rate of one is singular. The rules check has flows of exactly 1 load/h
/// (cut → press, press → paint; see the scenario's comment).
#[test]
fn labels_fit_their_boxes_or_go_below_and_one_load_is_singular() {
    let dir = tempfile::tempdir().expect("temp dir");
    let scenario = std::fs::read_to_string(root().join("scenarios/validation/search-rules.yaml")).unwrap();
    let long = dir.path().join("long-names.yaml");
    std::fs::write(&long, scenario.replace("press", "pressing-and-forming-line")).unwrap();
    let out = draw(long.to_str().unwrap(), "current", dir.path(), &[]);
    let svg = std::fs::read_to_string(&out).unwrap();
    assert!(svg.contains("cut → pressing-and-forming-line: 1 load/h"), "{svg}");
    assert!(!svg.contains(" 1 loads/h"));
    let mut placements = HashMap::new();
    let mut content = String::new();
    let mut pending: Option<(String, String, f64, f64)> = None;
    for event in svg::open(&out, &mut content).expect("the picture parses as SVG") {
        match event {
            Event::Tag("text", _, attrs)
                if attrs.get("class").is_some_and(|c| **c == *"department-label") =>
            {
                pending = Some((
                    attrs["data-department"].to_string(),
                    attrs["data-placement"].to_string(),
                    attrs["font-size"].parse().unwrap(),
                    attrs["data-box-px"].parse().unwrap(),
                ));
            }
            Event::Text(t) => {
                if let Some((name, placement, size, box_px)) = pending.take() {
                    assert_eq!(t.trim(), name);
                    if placement == "inside" {
                        let width = 0.68 * size * name.chars().count() as f64;
                        assert!(
                            size >= 9.0 && width <= box_px + 1e-9,
                            "{name}: {width} px in a {box_px} px box"
                        );
                    }
                    placements.insert(name, placement);
                }
            }
            _ => {}
        }
    }
    assert_eq!(placements["pressing-and-forming-line"], "below", "{placements:?}");
    assert_eq!(placements["cut"], "inside", "{placements:?}");
    assert_eq!(placements["in"], "above", "a dock's name goes above its box: {placements:?}");
    fonts_are_listed(&out);
    render_png_if_possible(&out);
}

#[test]
fn a_plant_without_aisles_draws_too_and_results_are_noted() {
    let dir = tempfile::tempdir().expect("temp dir");
    let results = dir.path().to_str().expect("utf-8").to_string();
    let out = dir.path().join("plain.svg");
    let o = layflow(&["draw", "scenarios/demo.yaml", "--results", &results, "-o", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("segment-by-segment simulation"), "{}", text(&o.stderr));
    let pic = read_picture(&out);
    assert_eq!(pic.aisles, 0);
    assert_eq!(pic.department_labels.len(), 11);
}

#[test]
fn draw_refuses_bad_arguments_with_code_2() {
    let dir = tempfile::tempdir().expect("temp dir");
    let out = dir.path().join("x.svg");
    let out = out.to_str().unwrap();
    for args in [
        vec!["draw", "scenarios/aisles-demo.yaml", "--layout", "nowhere", "-o", out],
        vec!["draw", "scenarios/aisles-demo.yaml", "--results", "no/such/dir", "-o", out],
        vec!["draw", "scenarios/bad/aisles-unreachable-location.yaml", "-o", out],
    ] {
        let o = layflow(&args);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", text(&o.stderr));
    }
}

/// `layflow run`'s loaded distance against its static load-distance on the
/// one-way validation network: equal, since nothing there is random (see the
/// scenario's comment for the hand computation: 30 lots × 210 m / 24 h).
#[test]
fn run_reports_loaded_distance_equal_to_the_static_load_distance_over_aisles() {
    let p = root().join("scenarios/validation/aisles-one-way.yaml");
    let o = layflow(&["run", p.to_str().unwrap(), "--format", "json", "--quiet", "--no-wall-clock"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    let l: &HashMap<String, serde_json::Value> =
        &serde_json::from_value(v["layouts"][0].clone()).expect("a layout object");
    let loaded = l["distance_loaded_m_per_h"]["mean"].as_f64().expect("loaded distance");
    let stat = l["load_distance_static_m_per_h"].as_f64().expect("static load-distance");
    assert!((stat - 262.5).abs() < 1e-9, "static {stat}");
    assert!((loaded - stat).abs() < 1e-9 * stat, "simulated {loaded} against static {stat}");
}

/// `draw --results` on a `compare --out` folder of the aisle demo (whose
/// narrow crossing has a capacity): every segment carries the simulated
/// traffic and congestion, the colouring follows the congestion, and the
/// legend says so.
#[test]
fn draw_colours_the_aisles_by_simulated_congestion_from_a_results_folder() {
    let dir = tempfile::tempdir().expect("temp dir");
    let results = dir.path().join("cmp");
    let o = layflow(&[
        "compare",
        "scenarios/aisles-demo.yaml",
        "--replications",
        "3",
        "--horizon",
        "5d",
        "--quiet",
        "--out",
        results.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let out = dir.path().join("sim.svg");
    let o = layflow(&[
        "draw",
        "scenarios/aisles-demo.yaml",
        "--layout",
        "current",
        "--results",
        results.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let svg = std::fs::read_to_string(&out).unwrap();
    let segments = svg.matches("class=\"aisle\"").count();
    assert!(segments > 0);
    assert_eq!(svg.matches("data-congestion-s-per-h=").count(), segments, "every segment has its figure");
    assert_eq!(svg.matches("data-sim-traversals-per-h=").count(), segments);
    assert!(svg.contains("Aisle congestion, mover-s/h"), "the legend names what the colours mean");
    // Some segment saw traffic; the capacity-1 crossing some congestion.
    let figures = |attr: &str| -> Vec<f64> {
        svg.split(attr).skip(1).map(|t| t[1..].split('"').next().unwrap().parse().unwrap()).collect()
    };
    assert!(figures("data-sim-traversals-per-h=").iter().any(|&x| x > 0.0));
    assert!(figures("data-congestion-s-per-h=").iter().any(|&x| x > 0.0));
    // Another scenario with an aisle network of its own: its segments are
    // numbered too, but these results are not its results; refused.
    let other = root().join("scenarios/validation/aisles-single-lane.yaml");
    let o = layflow(&[
        "draw",
        other.to_str().unwrap(),
        "--results",
        results.to_str().unwrap(),
        "-o",
        dir.path().join("other.svg").to_str().unwrap(),
    ]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("made from another scenario"), "{err}");
    assert!(!dir.path().join("other.svg").exists());
}

/// `run --format json` of the single-lane check reports each segment and the
/// fleet's congestion share.
#[test]
fn run_reports_segments_and_congestion_in_json() {
    let p = root().join("scenarios/validation/aisles-single-lane.yaml");
    let o = layflow(&[
        "run",
        p.to_str().unwrap(),
        "--format",
        "json",
        "--quiet",
        "--no-wall-clock",
        "--replications",
        "2",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    let l = &v["layouts"][0];
    let segs = l["segments"].as_array().expect("segments");
    assert_eq!(segs.len(), 3);
    assert_eq!(segs[0]["from"], "in");
    assert!(segs[0]["congestion_delay_per_traversal_s"]["mean"].as_f64().unwrap() > 0.0);
    assert!(l["fleets"][0]["congestion_share"]["mean"].as_f64().unwrap() > 0.0);
    assert!(l["congestion_delay_s_per_h"]["mean"].as_f64().unwrap() > 0.0);
}

/// The narrow-passage plant deadlocks: `run` fails (exit 1) and names the trucks and segments.
#[test]
fn run_stops_on_an_aisle_deadlock_with_a_clear_message() {
    let p = root().join("scenarios/deadlock/aisles-narrow-passage.yaml");
    let o = layflow(&["run", p.to_str().unwrap(), "--quiet"]);
    assert_eq!(o.status.code(), Some(1), "{}", text(&o.stderr));
    let err = text(&o.stderr);
    assert!(err.contains("west-trucks #1") && err.contains("segment 1 (mid - east)"), "{err}");
}

/// `-o` never overwrites a file silently, and `--results` refuses a folder
/// whose files come from two studies (a comparison's beside an experiment's).
#[test]
fn draw_refuses_an_existing_file_and_a_mixed_results_folder() {
    let dir = tempfile::tempdir().expect("temp dir");
    let out = dir.path().join("kept.svg");
    std::fs::write(&out, "mine").unwrap();
    let o = layflow(&["draw", "scenarios/demo.yaml", "-o", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("--force"), "{}", text(&o.stderr));
    assert_eq!(std::fs::read_to_string(&out).unwrap(), "mine");
    let o = layflow(&["draw", "scenarios/demo.yaml", "-o", out.to_str().unwrap(), "--force"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(std::fs::read_to_string(&out).unwrap().starts_with("<svg"));

    let mixed = dir.path().join("mixed");
    std::fs::create_dir(&mixed).unwrap();
    std::fs::write(mixed.join("summary.csv"), "demand_factor,layout,scope,subject,metric,mean\n").unwrap();
    std::fs::write(mixed.join("results.csv"), "point,layout,replication,scope,subject,metric,value\n")
        .unwrap();
    let o = layflow(&[
        "draw",
        "scenarios/aisles-demo.yaml",
        "--results",
        mixed.to_str().unwrap(),
        "-o",
        dir.path().join("m.svg").to_str().unwrap(),
    ]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("summary.csv") && err.contains("results.csv") && err.contains("two studies"),
        "{err}"
    );
}

/// Issue 14: `--flows aisle` draws each flow along the aisles it uses (the
/// network's shortest path: a polyline through the aisle nodes) instead of a
/// curve; the default stays the curve, and a plant without aisles is refused.
#[test]
fn flows_can_be_drawn_along_the_aisles_they_use() {
    let dir = tempfile::tempdir().expect("temp dir");
    let out = draw("scenarios/aisles-demo.yaml", "current", dir.path(), &["--flows", "aisle"]);
    let svg = std::fs::read_to_string(&out).unwrap();
    let flows: Vec<&str> = svg.split("<g class=\"flow\"").skip(1).collect();
    assert!(flows.len() >= 10, "{} flows", flows.len());
    for f in &flows {
        assert!(f.contains("data-route=\"aisle\""), "{}", &f[..f.len().min(300)]);
        // Location → its node → … → location: straight legs, at least two.
        let d = f.split(" d=\"").nth(1).and_then(|d| d.split('"').next()).unwrap();
        assert!(d.matches('L').count() >= 2 && !d.contains('Q'), "{d}");
    }
    let curves = draw("scenarios/aisles-demo.yaml", "proposed", dir.path(), &[]);
    assert!(std::fs::read_to_string(curves).unwrap().contains("data-route=\"curve\""));
    let nowhere = dir.path().join("no-aisles.svg");
    let o = layflow(&["draw", "scenarios/demo.yaml", "--flows", "aisle", "-o", nowhere.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("no aisle network"), "{}", text(&o.stderr));
    render_png_if_possible(&out);
}
