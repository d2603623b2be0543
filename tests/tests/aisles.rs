//! Aisle networks: shortest paths checked by hand and by brute force, one-way rules, and the simulated loaded distance against the static load-distance over the same network.

use layflow_models::analysis::StaticPicture;
use layflow_models::parse_scenario;
use layflow_models::plant::{DistanceRule, Plant};
use layflow_tests::{load, run_layout, scenario_path, Checks};

const ONE_WAY: &str = "validation/aisles-one-way.yaml";

fn location(plant: &Plant, id: &str) -> usize {
    plant.locations.iter().position(|l| l.id == id).unwrap_or_else(|| panic!("no location {id}"))
}

fn dist(plant: &Plant, a: &str, b: &str) -> f64 {
    plant.distance(location(plant, a), location(plant, b))
}

/// The hand-computed network in the comment of `validation/aisles-one-way.yaml`.
#[test]
fn shortest_paths_match_the_hand_computed_network() {
    let plant = load(ONE_WAY);
    assert_eq!(plant.distance_rule, DistanceRule::Aisles);
    let net = plant.aisles.as_ref().expect("the network is kept in the plant");
    // By hand: in -> b over a (40 + 30); b -> a round by out and the diagonal
    // (40 + 50), since a -> b is one-way; a -> out on the diagonal.
    let hand = [
        ("door-in", "bay-b", 70.0),
        ("bay-b", "bay-a", 90.0),
        ("bay-a", "door-out", 50.0),
        ("door-in", "bay-a", 40.0),
        ("bay-a", "bay-b", 30.0),
        ("door-out", "door-in", 30.0),
        // in -> out: out -> in is one-way, so in -> a -> out = 40 + 50.
        ("door-in", "door-out", 90.0),
        // b -> in: b -> out -> in = 40 + 30.
        ("bay-b", "door-in", 70.0),
    ];
    for (a, b, want) in hand {
        assert_eq!(dist(&plant, a, b), want, "{a} -> {b}");
    }
    // The stored path of b -> a: s2 (b - out, backwards), then s4 (the diagonal, out -> a).
    let (b, a) = (location(&plant, "bay-b"), location(&plant, "bay-a"));
    assert_eq!(net.path(b, a), &[2, 4]);
    assert_eq!(net.steps(b, a).collect::<Vec<_>>(), vec![(2, true), (4, false)]);
    let node = |i: usize| net.nodes[i].id.as_str();
    let visited: Vec<&str> = net.path_nodes(b, a).into_iter().map(node).collect();
    assert_eq!(visited, ["b", "out", "a"]);
    // Static load-distance: 30 lots over 24 h at 210 m each.
    let pic = StaticPicture::new(&plant, 1.0);
    let want = 30.0 * 210.0 / 24.0;
    assert!(
        (pic.layouts[0].load_distance_m_per_h - want).abs() < 1e-9,
        "{}",
        pic.layouts[0].load_distance_m_per_h
    );
}

/// The same network with every segment two-way: by hand b -> a is then the
/// direct 30 m, in -> out the 30 m side, and a lot travels 70 + 30 + 50 = 150 m.
#[test]
fn one_way_segments_change_the_distances_as_computed_by_hand() {
    let path = scenario_path(ONE_WAY);
    let text = std::fs::read_to_string(&path).unwrap();
    let two_way = text.replace(", one_way: true", "");
    assert_ne!(two_way, text, "the scenario lost its one-way segments");
    let plant = parse_scenario(&two_way, &path).unwrap_or_else(|e| panic!("{e}"));
    for (a, b, want) in [
        ("bay-b", "bay-a", 30.0),
        ("door-in", "door-out", 30.0),
        ("door-in", "bay-b", 70.0),
        ("bay-b", "door-in", 70.0),
        ("bay-a", "door-out", 50.0),
    ] {
        assert_eq!(dist(&plant, a, b), want, "two-way {a} -> {b}");
    }
    // Every distance is now symmetric.
    let n = plant.locations.len();
    for i in 0..n {
        for j in 0..n {
            assert_eq!(plant.distance(i, j), plant.distance(j, i));
        }
    }
    let pic = StaticPicture::new(&plant, 1.0);
    assert!((pic.layouts[0].load_distance_m_per_h - 30.0 * 150.0 / 24.0).abs() < 1e-9);
}

/// With unlimited capacity, movers travel the stored shortest paths, so the
/// loaded metres equal the static load-distance. Nothing in the scenario is
/// random and every lot finishes long before the horizon, so the equality is
/// exact per replication (to floating point), not only in expectation.
#[test]
fn simulated_loaded_distance_equals_the_static_load_distance() {
    let plant = load(ONE_WAY);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(ONE_WAY);
    let static_m_per_h = run.summary.load_distance_static_m_per_h;
    c.relative("static load-distance = 30 × 210 m / 24 h", 262.5, static_m_per_h, 1e-12);
    for (r, rep) in run.reps.iter().enumerate() {
        let f = &rep.fleets[0];
        c.relative(&format!("rep {r}: loaded metres = 30 lots × 210 m"), 6300.0, f.distance_loaded_m, 1e-12);
        c.relative(&format!("rep {r}: moves = 30 lots × 3"), 90.0, f.moves as f64, 0.0);
    }
    c.relative(
        "simulated loaded m/h = static load-distance",
        static_m_per_h,
        run.summary.distance_loaded_m_per_h.mean,
        1e-12,
    );
    c.finish();
}

/// Every stored path of the demo network is a chain of segments from one
/// location's node to the other's that respects one-way rules, its length is
/// the distance, and no shorter route exists (Floyd–Warshall in the test, an
/// independent method).
#[test]
fn demo_paths_are_connected_legal_and_shortest() {
    let plant = load("aisles-demo.yaml");
    let net = plant.aisles.as_ref().expect("aisles-demo has a network");
    let nn = net.nodes.len();
    let mut fw = vec![f64::INFINITY; nn * nn];
    for i in 0..nn {
        fw[i * nn + i] = 0.0;
    }
    for s in &net.segments {
        fw[s.from * nn + s.to] = fw[s.from * nn + s.to].min(s.length_m);
        if !s.one_way {
            fw[s.to * nn + s.from] = fw[s.to * nn + s.from].min(s.length_m);
        }
    }
    for k in 0..nn {
        for i in 0..nn {
            for j in 0..nn {
                let via = fw[i * nn + k] + fw[k * nn + j];
                if via < fw[i * nn + j] {
                    fw[i * nn + j] = via;
                }
            }
        }
    }
    let n = plant.locations.len();
    for a in 0..n {
        for b in 0..n {
            let mut at = net.location_node[a];
            let mut length = 0.0;
            for &s in net.path(a, b) {
                let seg = &net.segments[s as usize];
                at = if seg.from == at {
                    seg.to
                } else {
                    assert!(seg.to == at && !seg.one_way, "path {a} -> {b} breaks at segment {s}");
                    seg.from
                };
                length += seg.length_m;
            }
            assert_eq!(at, net.location_node[b], "path {a} -> {b} ends elsewhere");
            assert_eq!(length, plant.distance(a, b), "path {a} -> {b}: length against the matrix");
            let best = fw[net.location_node[a] * nn + net.location_node[b]];
            assert!((length - best).abs() < 1e-9, "path {a} -> {b}: {length} m, shortest {best} m");
        }
    }
}

/// Scenarios without `aisles` keep their old rule and carry no network.
#[test]
fn scenarios_without_aisles_are_unchanged() {
    let plant = load("demo.yaml");
    assert_eq!(plant.distance_rule, DistanceRule::Rectilinear);
    assert!(plant.aisles.is_none());
}
