//! The static picture of a hand-checked plant: from-to chart, visit ratios with a rework loop, load-distance per layout (rectilinear and Euclidean) and the fleet's static figures.
//!
//! Everything here is arithmetic, so every check is exact up to floating
//! point: relative 1e-9 (docs/validation.md asks for 1e-6 on formula code; the sums
//! here have a handful of terms, so 1e-9 is ample and still catches any
//! wrong flow or distance). The plant is `scenarios/validation/hand-checked-static.yaml`
//! and its Euclidean copy; its comment gives the routings.

use layflow_models::analysis::{load_distance, visit_ratios, FlowChart, StaticPicture};
use layflow_models::plant::Plant;
use layflow_tests::{department, load, Checks};

const REL: f64 = 1e-9;
const RECT: &str = "validation/hand-checked-static.yaml";
const EUCL: &str = "validation/hand-checked-static-euclidean.yaml";

/// Department indices (receiving, A, B, C, shipping) by id.
fn depts(plant: &Plant) -> [usize; 5] {
    ["receiving", "punching", "bending", "plating", "shipping"].map(|d| department(plant, d))
}

/// The from-to chart worked out by hand from the routings (loads/h, demand factor 1):
/// hinge (10/h) gives R→A 10, A→B 10, B→C 10·0.8 = 8, B→S 10·0.2 = 2, C→B 8·3/8 = 3,
/// C→S 8·5/8 = 5, and b2 at B → S 3; latch (4/h) gives R→A 4, A→C 4, C→S 4·(10/9)·0.9 = 4.
fn from_to_by_hand() -> Vec<(usize, usize, f64)> {
    // (from, to, loads/h) in the order receiving 0, A 1, B 2, C 3, shipping 4.
    vec![(0, 1, 14.0), (1, 2, 10.0), (1, 3, 4.0), (2, 3, 8.0), (3, 2, 3.0), (2, 4, 5.0), (3, 4, 9.0)]
}

#[test]
fn from_to_chart_matches_the_hand_calculation() {
    let mut c = Checks::new("from-to chart (docs/formulas.md §9 flows A→B 10, B→C 8, A→C 4, C→B 3)");
    for file in [RECT, EUCL] {
        let plant = load(file);
        let ix = depts(&plant);
        let nd = plant.departments.len();
        let pic = StaticPicture::new(&plant, 1.0);
        let mut want = vec![0.0; nd * nd];
        for (i, j, f) in from_to_by_hand() {
            want[ix[i] * nd + ix[j]] = f;
        }
        // Every entry, the zeros included (no flow may appear where none is routed).
        for i in 0..nd {
            for j in 0..nd {
                let (w, g) = (want[i * nd + j], pic.from_to.get(i, j));
                let what =
                    format!("{file}: from-to {} → {}", plant.departments[i].id, plant.departments[j].id);
                c.exact(&what, w, g, REL * w.max(1.0));
            }
        }
        // Per product: latch carries R→A 4, A→C 4, C→S 4 and nothing else.
        let latch = &pic.from_to_by_product[1];
        let total: f64 = latch.total();
        c.relative(&format!("{file}: latch loads/h over the chart = 12"), 12.0, total, REL);
        c.relative(&format!("{file}: latch A → C"), 4.0, latch.get(ix[1], ix[3]), REL);
        c.relative(&format!("{file}: latch C → shipping"), 4.0, latch.get(ix[3], ix[4]), REL);
        // The demand factor scales the chart linearly.
        let twice = StaticPicture::new(&plant, 2.0);
        c.relative(
            &format!("{file}: from-to A → B at demand factor 2"),
            20.0,
            twice.from_to.get(ix[1], ix[2]),
            REL,
        );
    }
    c.finish();
}

#[test]
fn visit_ratios_and_department_loads_by_hand() {
    let mut c = Checks::new("visit ratios with a rework loop, arrivals and utilisation (by hand)");
    let plant = load(RECT);
    let ix = depts(&plant);
    // hinge: a 1, b 1, c 0.8, b2 0.8·3/8 = 0.3, ship 1.
    let hinge = visit_ratios(&plant, 0).expect("hinge solves");
    for (k, want) in [1.0, 1.0, 0.8, 0.3, 1.0].into_iter().enumerate() {
        c.relative(&format!("hinge visit ratio of step {k}"), want, hinge[k], REL);
    }
    // latch: a 1; c is re-entered after redo, which follows c w.p. 0.1:
    // v_c = 1 + v_redo, v_redo = 0.1·v_c, so v_c = 1/0.9 = 10/9 and v_redo = 1/9
    // (the geometric number of passes through a loop left w.p. 0.9).
    let latch = visit_ratios(&plant, 1).expect("latch solves");
    for (k, want) in [1.0, 1.0 / 0.9, 0.1 / 0.9, 1.0].into_iter().enumerate() {
        c.relative(&format!("latch visit ratio of step {k}"), want, latch[k], REL);
    }
    let pic = StaticPicture::new(&plant, 1.0);
    c.relative("StaticPicture.visits agrees for latch's looped step", 10.0 / 9.0, pic.visits[1][1], REL);
    // Arrivals for processing: A 10 + 4 = 14; B 10 + 3 = 13;
    // C 8 (hinge) + 4·10/9 (latch c) + 4·1/9 (redo) = 116/9 lots/h.
    for (d, want) in [(1, 14.0), (2, 13.0), (3, 116.0 / 9.0)] {
        c.relative(
            &format!("arrivals/h at {}", plant.departments[ix[d]].id),
            want,
            pic.arrivals_per_h[ix[d]],
            REL,
        );
    }
    c.exact("arrivals/h at the receiving dock (not a work department)", 0.0, pic.arrivals_per_h[ix[0]], 0.0);
    // Utilisation λE[S]/c: A 14·2 min/60 = 0.466667 (1 machine); B 13·3 min/60 = 0.65;
    // C (8·3 + (40/9)·3 + (4/9)·1.5) min/h / (60·2) = 38/120.
    for (d, want) in [(1, 14.0 * 2.0 / 60.0), (2, 13.0 * 3.0 / 60.0), (3, 38.0 / 120.0)] {
        c.relative(
            &format!("predicted utilisation of {}", plant.departments[ix[d]].id),
            want,
            pic.utilization[ix[d]],
            REL,
        );
    }
    c.finish();
}

/// The A, B, C part of a chart: the flows docs/formulas.md §9 tabulates.
fn abc_only(plant: &Plant, from_to: &FlowChart) -> FlowChart {
    let ix = depts(plant);
    let nd = plant.departments.len();
    let mut out = vec![0.0; nd * nd];
    for &i in &ix[1..4] {
        for &j in &ix[1..4] {
            out[i * nd + j] = from_to.get(i, j);
        }
    }
    FlowChart::from_dense(nd, &out)
}

/// Checks every layout's load-distance against the docs/formulas.md §9 table (A, B, C
/// flows) and, with the dock moves added by hand, against the picture's total.
///
/// `d_in[k]` is the distance from dock-in (−10, 0) to L(k+1), `d_out[k]` from
/// L(k+1) to dock-out (50, 30); `table` is the §9 row in the order of the
/// layouts (1,2,3) (1,3,2) (2,1,3) (2,3,1) (3,1,2) (3,2,1).
fn check_layouts(c: &mut Checks, file: &str, table: [f64; 6], d_in: [f64; 3], d_out: [f64; 3]) {
    let plant = load(file);
    let pic = StaticPicture::new(&plant, 1.0);
    let abc = abc_only(&plant, &pic.from_to);
    let perms = [[0, 1, 2], [0, 2, 1], [1, 0, 2], [1, 2, 0], [2, 0, 1], [2, 1, 0]];
    for (l, (perm, z)) in perms.iter().zip(table).enumerate() {
        let name = &plant.layouts[l].name;
        c.relative(
            &format!("{file} {name}: Σ f·d over A, B, C (docs/formulas.md §9)"),
            z,
            load_distance(&plant, l, &abc),
            REL,
        );
        // Dock moves: 14 loads/h dock-in → A, 5 B → dock-out, 9 C → dock-out.
        let [a, b, cc] = *perm;
        let total = z + 14.0 * d_in[a] + 5.0 * d_out[b] + 9.0 * d_out[cc];
        let lp = &pic.layouts[l];
        c.relative(
            &format!("{file} {name}: load-distance with the dock moves"),
            total,
            lp.load_distance_m_per_h,
            REL,
        );
        c.relative(
            &format!("{file} {name}: static handling cost = 0.012/load-m × load-distance"),
            0.012 * total,
            lp.handling_cost_per_h,
            REL,
        );
    }
}

#[test]
fn load_distance_per_layout_matches_the_reference_table() {
    let mut c = Checks::new("load-distance per layout (docs/formulas.md §9, Koopmans–Beckmann with c = 0)");
    // Distances: L1(0,0)–L3(40,30) is 70 rectilinear and 50 Euclidean (docs/formulas.md §9).
    let (rect, eucl) = (load(RECT), load(EUCL));
    c.relative("rectilinear L1–L3 = 70 m", 70.0, rect.distance(0, 2), REL);
    c.relative("Euclidean L1–L3 = 50 m", 50.0, eucl.distance(0, 2), REL);
    // docs/formulas.md §9 rows; the dock distances by hand: rectilinear dock-in to
    // L1, L2, L3 = 10, 50, 50 + 30; L1, L2, L3 to dock-out = 50 + 30, 10 + 30, 10.
    check_layouts(
        &mut c,
        RECT,
        [1010.0, 1190.0, 1290.0, 1230.0, 1260.0, 1020.0],
        [10.0, 50.0, 80.0],
        [80.0, 40.0, 10.0],
    );
    // Euclidean: dock-in to L1, L2, L3 = 10, 50, √(50² + 30²); L1, L2, L3 to dock-out = √(50² + 30²), √(10² + 30²), 10.
    let (s3400, s1000) = (3400f64.sqrt(), 1000f64.sqrt());
    check_layouts(
        &mut c,
        EUCL,
        [930.0, 990.0, 1070.0, 1010.0, 1060.0, 940.0],
        [10.0, 50.0, s3400],
        [s3400, s1000, 10.0],
    );
    c.finish();
}

#[test]
fn fleet_static_figures_at_double_demand() {
    // docs/formulas.md §7 (from-to chart form, [M] Tompkins et al.): at twice the
    // §9 flows — A→B 20, B→C 16, A→C 8, C→B 6, 50 trips — layout (1,2,3) has
    // 2020 m/h loaded, i.e. 2020/2.0 m/s = 16.8333 min/h of loaded travel, and
    // 50 trips × 1 min of handling.
    let mut c = Checks::new("fleet static figures (docs/formulas.md §7)");
    let plant = load(RECT);
    let pic = StaticPicture::new(&plant, 2.0);
    let abc = abc_only(&plant, &pic.from_to);
    let fl = &plant.fleets()[0];
    c.relative("§7 chart: loaded metres/h over A, B, C = 2020", 2020.0, load_distance(&plant, 0, &abc), REL);
    c.exact(
        "§7 chart: loaded travel 16.8333 min/h",
        16.8333,
        load_distance(&plant, 0, &abc) / fl.speed_loaded / 60.0,
        5e-5,
    );
    c.relative("§7 chart: 50 trips/h over A, B, C", 50.0, abc.total(), REL);
    c.relative("handling h = load + unload = 1 min", 60.0, fl.load_s + fl.unload_s, REL);
    // The model's fleet figures include the dock moves: 2 × 53 = 106 trips/h
    // and 2 × 1440 = 2880 m/h loaded, so the lower bound on utilisation of
    // 3 trucks is (2880/2.0 + 106 × 60) s/h / (3600 s × 3) = 7800/10800.
    let lp = &pic.layouts[0];
    c.relative("trips/h the fleet must make = 106", 106.0, lp.fleet_trips_per_h[0], REL);
    c.relative("load-distance at double demand = 2880 m/h", 2880.0, lp.load_distance_m_per_h, REL);
    c.relative(
        "utilisation lower bound = 7800/10800",
        7800.0 / 10800.0,
        lp.fleet_utilization_lower_bound[0],
        REL,
    );
    c.finish();
}

/// A generated plant of `nd` departments and `np` products, each routed
/// s0 → s1 → s2 → s3 → ship through departments drawn by a fixed linear
/// congruential sequence, with a rework branch s1 → s0 (p 0.1); returns the
/// scenario text and each product's (rate per hour, departments of s0..s3).
fn generated_plant(nd: usize, np: usize) -> (String, Vec<(f64, [usize; 4])>) {
    use std::fmt::Write as _;
    let mut s = String::from("plant: generated\nrun: { horizon: 2 d, warmup: 1 d }\nlocations:\n");
    for d in 0..nd {
        let _ = writeln!(s, "  - {{ id: L{d}, at: [{}, {}] }}", (d % 20) * 10, (d / 20) * 10);
    }
    s.push_str(
        "  - { id: dock-in, at: [-10, 0] }\n  - { id: dock-out, at: [-10, 20] }\ndistance: rectilinear\n",
    );
    s.push_str(
        "departments:\n  - { id: receiving, dock: receiving }\n  - { id: shipping, dock: shipping }\n",
    );
    for d in 0..nd {
        let _ = writeln!(s, "  - {{ id: D{d}, machines: 50 }}");
    }
    s.push_str("layouts:\n  grid:\n    receiving: dock-in\n    shipping: dock-out\n");
    for d in 0..nd {
        let _ = writeln!(s, "    D{d}: L{d}");
    }
    s.push_str("products:\n");
    let mut x: u64 = 7;
    let mut next = || {
        x = x.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (x >> 33) as usize % nd
    };
    let mut products = Vec::new();
    for p in 0..np {
        let d = [next(), next(), next(), next()];
        let rate = 0.01 + (p % 7) as f64 * 0.005;
        let _ = write!(
            s,
            "  - id: P{p}\n    demand: {{ per_hour: {rate} }}\n    routing:\n\
             \x20     - {{ step: s0, at: D{}, time: 2 min }}\n\
             \x20     - {{ step: s1, at: D{}, time: 3 min, then: [{{ step: s2, p: 0.9 }}, {{ step: s0, p: 0.1 }}] }}\n\
             \x20     - {{ step: s2, at: D{}, time: 2 min }}\n\
             \x20     - {{ step: s3, at: D{}, time: 1 min }}\n\
             \x20     - {{ step: ship, at: shipping }}\n",
            d[0], d[1], d[2], d[3]
        );
        products.push((rate, d));
    }
    s.push_str(
        "fleets:\n  - { id: trucks, kind: forklift, count: 3, speed: { loaded: 2.0 m/s, empty: 2.5 m/s }, \
         handling: { load: 30 s, unload: 30 s }, home: receiving }\n",
    );
    (s, products)
}

#[test]
fn a_big_plant_gets_a_sparse_chart_equal_to_the_hand_calculation() {
    // Issue 15, class 7: the chart used to be departments² per product. Here
    // 400 departments × 3,000 products (a dense chart per product would be
    // 3,000 × 402² ≈ 485 million numbers); each product's chart holds its
    // own moves only, and every pair agrees with the visit ratios by hand:
    // s1 → s0 w.p. 0.1 gives v(s0) = v(s1) = 1/0.9 = 10/9 (the
    // visit equations v = e₁ + Pᵀv, solved by hand as for latch above), v(s2) = v(s3) = 1, so
    // per lot/h: R→s0 1, s0→s1 10/9, s1→s0 1/9, s1→s2 1, s2→s3 1, s3→S 1
    // (a move within one department is not a move). Relative 1e-12: a pair
    // adds at most a few dozen terms of one rounding each.
    let (nd, np) = (400, 3000);
    let (text, products) = generated_plant(nd, np);
    let plant = layflow_models::parse_scenario(&text, std::path::Path::new("generated.yaml"))
        .unwrap_or_else(|e| panic!("generated plant: {e}"));
    let pic = StaticPicture::new(&plant, 1.0);
    let dep = |d: usize| department(&plant, &format!("D{d}"));
    let (rx, sx) = (department(&plant, "receiving"), department(&plant, "shipping"));
    let n = plant.departments.len();
    let mut want = std::collections::BTreeMap::new();
    let mut c = Checks::new("sparse from-to chart of a generated 400 × 3,000 plant (by hand)");
    for (p, &(rate, d)) in products.iter().enumerate() {
        let (s0, s1, s2, s3) = (dep(d[0]), dep(d[1]), dep(d[2]), dep(d[3]));
        let moves = [
            (rx, s0, rate),
            (s0, s1, rate * 10.0 / 9.0),
            (s1, s0, rate / 9.0),
            (s1, s2, rate),
            (s2, s3, rate),
            (s3, sx, rate),
        ];
        let ft = &pic.from_to_by_product[p];
        // Memory follows the routing: at most its six moves, never n².
        c.holds(&format!("P{p}: {} pairs ≤ 6", ft.len()), ft.len() <= 6 && ft.departments() == n);
        for (i, j, f) in moves.into_iter().filter(|m| m.0 != m.1) {
            *want.entry((i, j)).or_insert(0.0) += f;
        }
    }
    c.holds("every pair with flow is expected", pic.from_to.len() == want.len());
    for (&(i, j), &w) in &want {
        c.relative(&format!("pair {i} → {j}"), w, pic.from_to.get(i, j), 1e-12);
    }
    c.finish();
}
