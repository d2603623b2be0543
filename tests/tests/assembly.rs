//! Assembly: kits matched first come, first served on a schedule timed by hand, and flow balance with Little's law on a random plant.
//!
//! The hand-timed rows are exact: constant times, an order trace and
//! instant moves leave nothing random, so each lot's release and its time
//! out (shipped, or consumed into a kit) are compared to 1e-9 s (sums of a
//! few whole minutes, exact in f64).
//!
//! The flow-balance rows compare replication estimates with the trace's
//! exact counts under K = 4 half-widths of the 20-replication Student t
//! interval (t(0.975, 19) = 2.093, so 4 half-widths are 8.4 standard
//! errors: a correct model fails a row with probability below 1e-6), plus a
//! bias allowance for the window's edges (see the test), and a power limit:
//! each tolerance must stay under 2% of theory, so a kit lost or made twice
//! in fifty is caught.

use std::collections::BTreeMap;

use layflow_models::metrics::{value, Id};
use layflow_models::plant::Plant;
use layflow_models::sim::{simulate, Plan, RepStats, RunSpec};
use layflow_tests::{check_little, department, load, run_layout, scaled, traced_replication, Checks, HOUR};

const TOL: f64 = 1e-9;
const MIN: f64 = 60.0;
const K: f64 = 4.0;
const POWER: f64 = 0.02;

fn product(plant: &Plant, id: &str) -> usize {
    plant.products.iter().position(|p| p.id == id).unwrap_or_else(|| panic!("no product {id:?}"))
}

/// Rows of one trace file as maps column → value (the plant's names hold no commas).
fn rows(dir: &std::path::Path, file: &str) -> Vec<BTreeMap<String, String>> {
    let text = std::fs::read_to_string(dir.join(file)).expect("trace file");
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().expect("header").split(',').collect();
    lines
        .map(|l| head.iter().zip(l.split(',')).map(|(h, v)| (h.to_string(), v.to_string())).collect())
        .collect()
}

/// One replication traced: (lots.csv rows, visits.csv rows, its statistics).
type Traced = (Vec<BTreeMap<String, String>>, Vec<BTreeMap<String, String>>, RepStats);

fn traced(plant: &Plant) -> Traced {
    let (dir, rep) = traced_replication(plant);
    (rows(dir.path(), "lots.csv"), rows(dir.path(), "visits.csv"), rep)
}

/// The schedule worked by hand in scenarios/validation/assembly-hand-timed.yaml.
#[test]
fn kits_are_made_at_the_hand_timed_moments() {
    let file = "validation/assembly-hand-timed.yaml";
    let plant = load(file);
    let (lots, visits, rep) = traced(&plant);
    let mut c = Checks::new(file);
    // (trace lot number, product, released min, out min): lots are numbered
    // in release order, the trace's lines in order; a component is "out"
    // when it is consumed into its kit.
    let want = [
        (1, "pump", 0.0, 50.0),
        (2, "impeller", 0.0, 30.0),
        (3, "seal-kit", 0.0, 30.0),
        (4, "seal-kit", 20.0, 30.0),
        (5, "pump", 25.0, 90.0),
        (6, "impeller", 40.0, 70.0),
        (7, "seal-kit", 45.0, 70.0),
        (8, "seal-kit", 45.0, 70.0),
        (9, "pump", 50.0, 150.0),
        (10, "impeller", 100.0, 130.0),
        (11, "seal-kit", 110.0, 130.0),
        (12, "seal-kit", 110.0, 130.0),
        (13, "impeller", 120.0, 165.0),
        (14, "seal-kit", 140.0, 165.0),
        (15, "seal-kit", 140.0, 165.0),
        (16, "pump", 155.0, 185.0),
    ];
    c.holds(&format!("{} lots in lots.csv, want {}", lots.len(), want.len()), lots.len() == want.len());
    for (no, prod, born, out) in want {
        let Some(r) = lots.iter().find(|r| r["lot"] == no.to_string()) else {
            c.holds(&format!("lot {no} is in lots.csv"), false);
            continue;
        };
        c.holds(&format!("lot {no} is a {prod} (got {})", r["product"]), r["product"] == prod);
        let num = |k: &str| r[k].parse::<f64>().unwrap_or(f64::NAN);
        c.exact(&format!("lot {no} ({prod}) released, min"), born, num("released") / MIN, TOL);
        c.exact(&format!("lot {no} ({prod}) out, min"), out, num("shipped") / MIN, TOL);
    }
    // Each pump starts its assembly the moment its kit is complete (the machine is free each time).
    let assembly = "assembly";
    let starts: Vec<(u32, f64)> = visits
        .iter()
        .filter(|r| r["department"] == assembly)
        .map(|r| (r["lot"].parse().expect("lot"), r["start"].parse::<f64>().expect("start") / MIN))
        .collect();
    let kit_at = [(1, 30.0), (5, 70.0), (9, 130.0), (16, 165.0)];
    c.holds(
        &format!("{} assembly visits, want 4 (components are consumed, not worked)", starts.len()),
        starts.len() == 4,
    );
    for (no, at) in kit_at {
        let got = starts.iter().find(|s| s.0 == no).map_or(f64::NAN, |s| s.1);
        c.exact(&format!("pump lot {no}: kit complete and assembly starts, min"), at, got, TOL);
    }
    let (pump, imp, seal) =
        (product(&plant, "pump"), product(&plant, "impeller"), product(&plant, "seal-kit"));
    c.exact("pump kits_per_h (4 kits in 4 h)", 1.0, value(Id::ProductKits, &plant, &rep, pump), TOL);
    c.exact(
        "pump kit_wait_s: (20 + 35 + 70 + 0)/4 min",
        31.25 * MIN,
        value(Id::ProductKitWait, &plant, &rep, pump),
        TOL,
    );
    c.exact(
        "impeller part_wait_s: (0 + 0 + 0 + 5)/4 min",
        1.25 * MIN,
        value(Id::ProductPartWait, &plant, &rep, imp),
        TOL,
    );
    c.exact(
        "seal-kit part_wait_s: 180/8 min",
        22.5 * MIN,
        value(Id::ProductPartWait, &plant, &rep, seal),
        TOL,
    );
    // Little's law holds exactly here: every lot enters and leaves inside
    // the window (docs/formulas.md §4; the header's 560 lot-minutes).
    c.exact("plant WIP: 560 lot-min / 240 min", 560.0 / 240.0, rep.wip_total, TOL);
    c.exact("plant flow time: 560 / 16 min", 35.0 * MIN, rep.flow_time_all.mean(), TOL);
    c.exact(
        "lots out per hour (4 pumps, 4 impellers, 8 seal kits in 4 h)",
        4.0,
        value(Id::Throughput, &plant, &rep, 0),
        TOL,
    );
    let asm = department(&plant, assembly);
    c.exact("assembly utilisation: 4 × 20 min / 240 min", 80.0 / 240.0, rep.utilization[asm], TOL);
    c.finish();
}

/// Flow balance on scenarios/validation/assembly-flow-balance.yaml: kits
/// per hour equal the component lots released per hour ÷ lots per kit (the
/// trace's exact counts), and Little's law holds with consumed components
/// counted as lots out.
#[test]
fn kits_per_hour_balance_component_arrivals_and_little_holds() {
    let file = "validation/assembly-flow-balance.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    let (pump, imp, seal) =
        (product(&plant, "pump"), product(&plant, "impeller"), product(&plant, "seal-kit"));
    // The window is 20 whole plays of the 11948-min trace: 4000 impellers and
    // 8000 seal kits released in it (assembly-orders.csv; 200 orders a play).
    let window_h = (run.spec.horizon_s - run.spec.warmup_s) / HOUR;
    let per_h = |lots: f64| lots / window_h;
    let trace = plant.orders.as_ref().expect("an order trace");
    let released = |p: usize| trace.lots(p) as f64 * 20.0;
    c.exact("impellers released in the window", 4000.0, released(imp), 0.0);
    c.exact("seal kits released in the window", 8000.0, released(seal), 0.0);
    // Edge bias: lots in the plant when the window opens are out in it, and
    // those there at its close are not; the two cancel on average (same
    // phase of the trace), and either is at most the pump line's WIP (pumps
    // in process, kits waiting), about its throughput × flow time. 2 × that
    // ÷ window hours bounds the bias of kits per hour.
    let s = &run.summary;
    let p = &s.products[pump];
    let wip_pumps = p.throughput_per_h.mean * p.flow_time_s.mean / HOUR;
    let bias = 2.0 * wip_pumps / window_h;
    let kits = &p.kits.as_ref().expect("pump assembles kits").kits_per_h;
    c.estimate("kits_per_h = impellers released per hour ÷ 1", per_h(released(imp)), kits, K, bias, POWER);
    c.estimate(
        "kits_per_h = seal kits released per hour ÷ 2",
        per_h(released(seal) / 2.0),
        kits,
        K,
        bias,
        POWER,
    );
    // Consumed components leave the plant: their throughput is lots consumed.
    let seal_out = scaled(&s.products[seal].throughput_per_h, 0.5);
    c.estimate(
        "seal-kit lots consumed per hour ÷ 2 = seal kits released ÷ 2",
        per_h(released(seal) / 2.0),
        &seal_out,
        K,
        bias,
        POWER,
    );
    // Bookkeeping, every replication: a kit consumes exactly its parts.
    for (r, rep) in run.reps.iter().enumerate() {
        let a = rep.assembly.as_deref().expect("assembly statistics");
        c.holds(
            &format!(
                "replication {}: {} kits, {} impellers and {} seal kits consumed",
                r + 1,
                a.kits[pump],
                rep.shipped[imp],
                rep.shipped[seal]
            ),
            rep.shipped[imp] == a.kits[pump]
                && rep.shipped[seal] == 2 * a.kits[pump]
                && a.part_wait[seal].count() == rep.shipped[seal],
        );
    }
    check_little(&mut c, file, &run, layflow_tests::little_edge_bound(&run));
    c.finish();
}

/// A plant without assembly reports none of its metrics, and a component
/// is the only product with `part_wait_s`.
#[test]
fn assembly_metrics_appear_only_where_they_apply() {
    let demo = load("demo.yaml");
    let names: Vec<String> = layflow_models::metrics::metrics(&demo).iter().map(|m| m.label()).collect();
    assert!(!names.iter().any(|n| n.contains("kit") || n.contains("part_wait")), "demo: {names:?}");
    let plant = load("validation/assembly-hand-timed.yaml");
    let names: Vec<String> = layflow_models::metrics::metrics(&plant).iter().map(|m| m.label()).collect();
    for want in ["pump/kits_per_h", "pump/kit_wait_s", "impeller/part_wait_s", "seal-kit/part_wait_s"] {
        assert!(names.iter().any(|n| n == want), "{want} in {names:?}");
    }
    for not in ["impeller/kits_per_h", "pump/part_wait_s", "seal-kit/kit_wait_s"] {
        assert!(!names.iter().any(|n| n == not), "{not} not in {names:?}");
    }
}

/// A plant short of parts: pumps arrive at 1/h, impellers at 1/h, and a
/// kit takes 2 impellers, so kits can be made at 0.5/h (docs/formulas.md
/// §26) and pumps waiting for kits pile up at 0.5/h without end. The run
/// must stop through the overload rule, and the message must name the
/// stall on kits and the short component, with both rates.
#[test]
fn a_plant_short_of_parts_stops_with_a_message_about_kits() {
    let text = std::fs::read_to_string(layflow_tests::scenario_path("bad/assembly-quantity-zero.yaml"))
        .expect("the corpus file")
        .replace("impeller: 0", "impeller: 2")
        .replace("horizon: 1 d", "horizon: 2000 d");
    let plant =
        layflow_models::parse_scenario(&text, std::path::Path::new("short-of-parts.yaml")).expect("valid");
    let spec = RunSpec {
        layout: 0,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: 1.0,
        seed: 7,
    };
    let rep = simulate(&Plan::new(&plant, 0), &spec, 0);
    assert!(
        rep.overload.is_some(),
        "the pumps waiting for kits grow without end, so the overload rule stops the run"
    );
    let msg = layflow_models::study::replication_deadlock(&plant, &rep, 0).expect("a stop message");
    for want in [
        "stalled on kits",
        "of \"pump\" were waiting for their kits",
        "\"impeller\" arrives for 0.5",
        "against 1",
    ] {
        assert!(msg.contains(want), "{want:?} in: {msg}");
    }
}

/// The static picture's kits per hour, min(needed, each component's lots
/// per hour ÷ lots per kit) (docs/formulas.md §26), by hand: the order-trace
/// plant is balanced at 200 × 60 / 11948 kits/h; the plant short of
/// impellers (1/h, 2 per kit) allows 0.5/h against 1/h needed.
#[test]
fn the_static_picture_predicts_kits_per_hour() {
    use layflow_models::analysis::{kit_balance, StaticPicture};
    let plant = load("validation/assembly-flow-balance.yaml");
    let k = kit_balance(&plant, &StaticPicture::new(&plant, 1.0));
    assert_eq!(k.len(), 1);
    let want = 200.0 * 60.0 / 11948.0;
    assert!((k[0].kits_per_h - want).abs() < 1e-12 && (k[0].needed_per_h - want).abs() < 1e-12, "{:?}", k[0]);
    assert!(k[0].balanced());
    let text = std::fs::read_to_string(layflow_tests::scenario_path("bad/assembly-quantity-zero.yaml"))
        .expect("the corpus file")
        .replace("impeller: 0", "impeller: 2");
    let short =
        layflow_models::parse_scenario(&text, std::path::Path::new("short-of-parts.yaml")).expect("valid");
    let k = kit_balance(&short, &StaticPicture::new(&short, 1.0));
    assert!((k[0].kits_per_h - 0.5).abs() < 1e-12 && (k[0].needed_per_h - 1.0).abs() < 1e-12, "{:?}", k[0]);
    assert!(!k[0].balanced());
    // The from-to chart counts component moves: impellers foundry → assembly
    // and seal kits receiving → assembly, at their release rates.
    let pic = StaticPicture::new(&plant, 1.0);
    let d = |id: &str| department(&plant, id);
    let flow = |a: &str, b: &str| pic.from_to.get(d(a), d(b));
    assert!((flow("foundry", "assembly") - want).abs() < 1e-12, "{}", flow("foundry", "assembly"));
    assert!((flow("receiving", "assembly") - 2.0 * want).abs() < 1e-12, "{}", flow("receiving", "assembly"));
}
