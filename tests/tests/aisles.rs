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

/// The one-way check plant with one segment given a speed limit equal to the
/// carts' loaded speed (1 m/s = 3.6 km/h): movers now travel segment by
/// segment, and the loaded metres must still be exactly the static
/// load-distance (30 lots × 210 m per replication).
#[test]
fn segment_by_segment_travel_keeps_the_static_load_distance() {
    let path = scenario_path(ONE_WAY);
    let text = std::fs::read_to_string(&path).unwrap();
    let limited = text.replace("- { from: in, to: a }", "- { from: in, to: a, speed_limit: 3.6 km/h }");
    assert_ne!(limited, text, "the scenario's first segment changed");
    let plant = parse_scenario(&limited, &path).unwrap_or_else(|e| panic!("{e}"));
    assert!(plant.aisles.as_ref().unwrap().needs_simulation());
    let run = run_layout(&plant, 0);
    let mut c = Checks::new("segment by segment, speed limit = loaded speed");
    for (r, rep) in run.reps.iter().enumerate() {
        let f = &rep.fleets[0];
        c.relative(&format!("rep {r}: loaded metres = 30 lots × 210 m"), 6300.0, f.distance_loaded_m, 1e-12);
        c.exact(&format!("rep {r}: moves = 30 lots × 3"), 90.0, f.moves as f64, 0.0);
        c.exact(&format!("rep {r}: no congestion without capacities"), 0.0, f.congestion_s, 0.0);
        // Every lot crosses s0 (in -> a) once: 30 loaded traversals, plus empty ones.
        c.holds(&format!("rep {r}: s0 carried at least the 30 lots"), rep.segments[0].traversals >= 30);
    }
    c.relative(
        "simulated loaded m/h = static load-distance",
        run.summary.load_distance_static_m_per_h,
        run.summary.distance_loaded_m_per_h.mean,
        1e-12,
    );
    c.finish();
}

/// A capacity no one can reach switches segment-by-segment travel on without
/// changing anything: every replication must match the one-leg run (travel
/// time is the sum of the segments' times, equal to the leg's to rounding).
#[test]
fn an_unreachable_capacity_reproduces_one_leg_travel() {
    unreachable_capacity_matches("", "capacity 99 = one leg");
    // With an acceleration the trip's allowance goes on its first segment, so
    // a trip still takes the trapezoidal profile's time over its whole length.
    unreachable_capacity_matches("    acceleration: 0.5 m/s2\n", "capacity 99 = one leg, with acceleration");
}

fn unreachable_capacity_matches(fleet_extra: &str, title: &str) {
    let path = scenario_path(ONE_WAY);
    let text = std::fs::read_to_string(&path).unwrap();
    let text =
        text.replace("    dispatch: first-come\n", &format!("    dispatch: first-come\n{fleet_extra}"));
    let wide = text.replace("- { from: in, to: a }", "- { from: in, to: a, capacity: 99 }");
    let plant = parse_scenario(&wide, &path).unwrap_or_else(|e| panic!("{e}"));
    let base = parse_scenario(&text, &path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(base.fleets()[0].accel.is_some(), !fleet_extra.is_empty());
    let one_leg = run_layout(&base, 0);
    let walked = run_layout(&plant, 0);
    assert!(one_leg.reps[0].segments.is_empty() && !walked.reps[0].segments.is_empty());
    let mut c = Checks::new(title);
    for (r, (a, b)) in one_leg.reps.iter().zip(&walked.reps).enumerate() {
        let (fa, fb) = (&a.fleets[0], &b.fleets[0]);
        c.exact(&format!("rep {r}: moves"), fa.moves as f64, fb.moves as f64, 0.0);
        c.relative(&format!("rep {r}: loaded m"), fa.distance_loaded_m, fb.distance_loaded_m, 1e-12);
        c.relative(&format!("rep {r}: empty m"), fa.distance_empty_m, fb.distance_empty_m, 1e-12);
        c.relative(&format!("rep {r}: loaded s"), fa.loaded_s, fb.loaded_s, 1e-9);
        c.relative(&format!("rep {r}: empty s"), fa.empty_s, fb.empty_s, 1e-9);
        c.relative(&format!("rep {r}: handling s"), fa.handling_s, fb.handling_s, 1e-9);
        c.relative(&format!("rep {r}: flow time"), a.flow_time_all.mean(), b.flow_time_all.mean(), 1e-9);
    }
    c.finish();
}

const LANE: &str = "validation/aisles-single-lane.yaml";

/// The single-lane plant (its comment derives the numbers): the lane is an
/// M/D/1 server with λ = 42/h and τ = 60 s, so by Pollaczek–Khinchine
/// (docs/formulas.md §2, Cooper 1981 p. 189) a cart waits Wq = ρτ/(2(1 − ρ)) = 70 s
/// at its entry, the lane holds ρ = 0.7 carts on average and the fleet of 30
/// loses λ·Wq/30 of its time to congestion. Tolerance: 3 half-widths of the
/// 20-replication interval (a 0.3% chance of a false alarm per check, if the
/// intervals were exact), and each check must be sharp to within 10% of theory.
#[test]
fn a_single_lane_waits_as_an_md1_queue() {
    let plant = load(LANE);
    let run = run_layout(&plant, 0);
    let (lambda, tau) = (42.0 / 3600.0, 60.0);
    let q = layflow_tests::pollaczek_khinchine(lambda, tau, 0.0);
    let mut c = Checks::new(LANE);
    c.relative("P-K by hand: Wq = 0.7 × 60 / 0.6", 70.0, q.wq, 1e-12);
    let segs = run.summary.segments.as_ref().expect("the lane is simulated segment by segment");
    let lane = &segs[0];
    c.estimate("lane wait per traversal Wq (s)", q.wq, &lane.congestion_delay_per_traversal_s, 3.0, 0.0, 0.1);
    c.estimate("lane mean occupancy ρ", lambda * tau, &lane.occupancy_mean, 3.0, 0.0, 0.1);
    c.estimate("lane traffic λ (per h)", 42.0, &lane.traversals_per_h, 3.0, 0.0, 0.1);
    let share = run.summary.fleets[0].congestion_share.as_ref().expect("congestion share");
    c.estimate("fleet share lost to congestion λ·Wq/30", lambda * q.wq / 30.0, share, 3.0, 0.0, 0.1);
    // Flow time = load 10 s + Wq + τ + unload 10 s: nobody waits for a cart.
    c.estimate("flow time (s)", 10.0 + q.wq + tau + 10.0, &run.summary.flow_time_s.estimate(), 3.0, 0.0, 0.1);
    c.exact("no wait for a cart", 0.0, run.summary.move_wait_s.mean, 1e-9);
    // The way home has room for all: no congestion there.
    c.exact(
        "no delay on the way home",
        0.0,
        segs[1].congestion_delay_s_per_h.mean + segs[2].congestion_delay_s_per_h.mean,
        0.0,
    );
    c.finish();
}

/// Zone control at the lane's exit node instead of a capacity on the lane:
/// a cart books the zone as it turns into the lane and frees it when its trip
/// ends there, so for the loaded carts the zone acts exactly as a capacity of
/// 1 on the lane (same seeds: the same waits, to rounding). Empty carts
/// leaving the exit node must wait while the zone is booked, so the way home
/// now has congestion too.
#[test]
fn a_zone_at_the_lane_exit_holds_the_lane_as_capacity_one_does() {
    let path = scenario_path(LANE);
    let text = std::fs::read_to_string(&path).unwrap();
    let zoned = text
        .replace("one_way: true, capacity: 1 }", "one_way: true }")
        .replace("- { id: out, at: [60, 0] }", "- { id: out, at: [60, 0], zone: true }");
    assert_ne!(zoned, text);
    let plant = parse_scenario(&zoned, &path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(plant.aisles.as_ref().unwrap().segments[0].capacity, None);
    let (a, b) = (run_layout(&load(LANE), 0), run_layout(&plant, 0));
    let mut c = Checks::new("zone at the lane exit");
    for (r, (x, y)) in a.reps.iter().zip(&b.reps).enumerate() {
        c.relative(&format!("rep {r}: lane delay"), x.segments[0].delay_s, y.segments[0].delay_s, 1e-9);
        c.exact(
            &format!("rep {r}: lane traffic"),
            x.segments[0].traversals as f64,
            y.segments[0].traversals as f64,
            0.0,
        );
        c.holds(&format!("rep {r}: empty carts wait for the zone"), y.segments[1].delay_s > 0.0);
    }
    c.finish();
}

/// Two single-lane segments in series driven both ways deadlock; the
/// replication stops and the message names both trucks and both segments.
#[test]
fn a_narrow_passage_driven_both_ways_deadlocks_and_is_named() {
    let plant = load("deadlock/aisles-narrow-passage.yaml");
    let run = run_layout(&plant, 0);
    let why = run.summary.deadlock.as_deref().expect("the passage must deadlock");
    for part in
        ["west-trucks #1", "east-trucks #1", "segment 0 (west - mid)", "segment 1 (mid - east)", "aisles"]
    {
        assert!(why.contains(part), "the message should name {part:?}: {why}");
    }
    for r in &run.reps {
        let d = r.deadlock.as_ref().expect("every replication deadlocks");
        assert_eq!(d.movers, vec![(0, 0), (1, 0)]);
        assert_eq!(d.segments, vec![0, 1]);
        assert!(d.departments.is_empty());
        assert!(d.time_s < plant.run.horizon_s);
    }
    // Two lanes on the passage: no deadlock.
    let path = scenario_path("deadlock/aisles-narrow-passage.yaml");
    let text = std::fs::read_to_string(&path).unwrap().replace("capacity: 1", "capacity: 2");
    let wide = parse_scenario(&text, &path).unwrap_or_else(|e| panic!("{e}"));
    let run = run_layout(&wide, 0);
    assert!(run.summary.deadlock.is_none(), "{:?}", run.summary.deadlock);
}

/// The hand-made event trace in the comment of `validation/aisles-two-way-lane.yaml`:
/// two trucks meet on a two-way capacity-1 lane and take turns, never both on it.
#[test]
fn two_trucks_take_turns_on_a_two_way_single_lane_as_traced_by_hand() {
    let name = "validation/aisles-two-way-lane.yaml";
    let plant = load(name);
    let run = run_layout(&plant, 0);
    let r = &run.reps[0];
    let mut c = Checks::new(name);
    c.exact("eastbound flow time (s)", 80.0, r.flow_time[0].mean(), 1e-9);
    c.exact("westbound flow time (s)", 120.0, r.flow_time[1].mean(), 1e-9);
    c.exact("west truck held up (s)", 20.0, r.fleets[0].congestion_s, 1e-9);
    c.exact("east truck held up (s)", 50.0, r.fleets[1].congestion_s, 1e-9);
    let lane = r.segments[0];
    c.exact("lane traversals", 4.0, lane.traversals as f64, 0.0);
    c.exact("lane congestion delay (s)", 70.0, lane.delay_s, 1e-9);
    // One truck on the lane from t = 20 to 160 and never two: 140 s of the hour.
    c.exact("lane mean occupancy", 140.0 / 3600.0, lane.occupancy, 1e-12);
    c.exact("loaded seconds, both trucks", 80.0, r.fleets[0].loaded_s + r.fleets[1].loaded_s, 1e-9);
    c.exact("empty seconds, both trucks", 60.0, r.fleets[0].empty_s + r.fleets[1].empty_s, 1e-9);
    c.finish();
}
