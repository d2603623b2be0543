//! Movers against theory: one mover as an M/D/1 server of move requests, travel times from distance and speed in km/h, and the demo plant's load-distance and Little's law.
//!
//! Statistical rows use the rule of `tests/tests/queueing.rs`: |mean − theory|
//! ≤ K = 3 half-widths (≈ 6 standard errors with 40 replications; a correct
//! model fails a row with probability about 4e-7) plus a bias allowance, and
//! fail as well when that tolerance is too wide to catch a 5% error. Rows on
//! the deterministic plant are exact up to stated, derived edge bounds.

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::Plant;
use layflow_tests::{
    check_little, department, hw, little_edge_bound, load, pollaczek_khinchine, run_layout, run_layout_reps,
    Checks, HOUR,
};

/// Half-widths allowed.
const K: f64 = 3.0;
/// Bias allowance relative to theory: the warm-up (50 h) is 18 relaxation
/// times 1/(μ(1−√ρ)²) = 2.8 h of the mover (Morse, from memory; 17 times the
/// 2.96 h of the `always-home` plant, ρ = 0.733, τ = 220 s, and more for its
/// `go-home` twin, busy 66%) and the edge and ratio-estimator terms are
/// O(W/T) ≈ 2e-5; 1e-3 bounds both.
const BIAS_REL: f64 = 1e-3;
/// Largest tolerance allowed for waits and WIP, relative to theory.
const POWER: f64 = 0.04;
/// Largest tolerance allowed for time shares, rates and distances per hour.
const POWER_TIGHT: f64 = 0.01;

/// One mover, one move per lot: an M/D/1 server of move requests (docs/formulas.md §15).
///
/// `stays`: the mover waits at shipping after a delivery (`when_idle: stay`),
/// so each request's move wait includes its 40 s empty trip to receiving;
/// otherwise it goes home to receiving first (`go-home`) and the empty trip
/// comes after the delivery, before it is free again.
fn mover_md1(file: &str, stays: bool) {
    let plant = load(file);
    let mut c = Checks::new(file);
    let fl = &plant.fleets()[0];
    // Units: 5.4 km/h = 1.5 m/s and 8.1 km/h = 2.25 m/s (1 km/h = 1000/3600 m/s).
    c.relative("loaded speed 5.4 km/h in m/s", 1.5, fl.speed_loaded, 1e-12);
    c.relative("empty speed 8.1 km/h in m/s", 2.25, fl.speed_empty, 1e-12);

    // docs/formulas.md §15: τ = empty travel + load + d/v_L + unload, the empty trip
    // being the one home (go-home) or the one to the next pick-up (stay).
    let d = plant.distance(0, 1);
    c.relative("rectilinear (0,0)-(60,30) = 90 m", 90.0, d, 1e-12);
    let (t_load, t_loaded, t_unload, t_empty) =
        (fl.load_s, d / fl.speed_loaded, fl.unload_s, d / fl.speed_empty);
    let tau = t_load + t_loaded + t_unload + t_empty;
    c.relative("τ = 45 + 60 + 35 + 40 = 180 s", 180.0, tau, 1e-12);
    let lambda = 15.0 / HOUR; // requests per second: one move per lot
    let th = pollaczek_khinchine(lambda, tau, 0.0);
    // M/D/1 (docs/formulas.md §2 with c_s² = 0): Wq = λτ²/(2(1−ρ)) = 270 s, ρ = 0.75.
    c.relative("theory: Wq = λτ²/(2(1−ρ)) = 270 s", 270.0, th.wq, 1e-12);
    c.relative("theory: ρ = λτ = 0.75", 0.75, th.rho, 1e-12);
    // Move wait = request → mover at the pick-up.
    let wait = th.wq + if stays { t_empty } else { 0.0 };

    // The static picture knows the trips and the loaded-travel + handling time exactly.
    let pic = StaticPicture::new(&plant, 1.0);
    let lp = &pic.layouts[0];
    c.relative("static trips/h = 15", 15.0, lp.fleet_trips_per_h[0], 1e-12);
    c.relative("static load-distance = 15 × 90 = 1350 m/h", 1350.0, lp.load_distance_m_per_h, 1e-12);
    c.relative(
        "static lower bound = 15 × 140 s / 3600 s",
        15.0 * 140.0 / HOUR,
        lp.fleet_utilization_lower_bound[0],
        1e-12,
    );

    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let f = &s.fleets[0];
    let b = |x: f64| BIAS_REL * x;
    c.estimate("mean move wait (s)", wait, &f.move_wait_s, K, b(wait), POWER);
    c.estimate("mean move wait, every fleet (s)", wait, &plain(&s.move_wait_s), K, b(wait), POWER);
    c.estimate("fleet utilisation = ρ", th.rho, &f.utilization, K, b(th.rho), POWER_TIGHT);
    // Time shares = phase duration × λ (docs/formulas.md §15).
    let shares = [
        ("handling share = (45 + 35) s × λ = 1/3", (t_load + t_unload) * lambda, &f.handling_share),
        ("loaded travel share = 60 s × λ = 1/4", t_loaded * lambda, &f.loaded_travel_share),
        ("empty travel share = 40 s × λ = 1/6", t_empty * lambda, &f.empty_travel_share),
    ];
    for (what, want, est) in shares {
        c.estimate(what, want, est, K, b(want), POWER_TIGHT);
    }
    // Idle share: the same absolute noise as the utilisation on a base 3 times
    // smaller, so 2% (still catches a 5% error).
    c.estimate("idle share = 1 − ρ", 1.0 - th.rho, &f.idle_share, K, b(0.25), 0.02);
    c.estimate("moves per hour = λ", 15.0, &f.moves_per_h, K, b(15.0), POWER_TIGHT);
    let per_h = [
        ("loaded metres per hour = static load-distance", 1350.0, &f.distance_loaded_m_per_h),
        ("empty metres per hour = 15 × 90", 1350.0, &f.distance_empty_m_per_h),
        // 40/h for the truck + 0.5/km × (1350 + 1350) m/h.
        ("handling cost per hour = 40 + 0.5 × 2.7", 41.35, &f.handling_cost_per_h),
        ("handling cost per hour, every fleet", 41.35, &s.handling_cost_per_h),
    ];
    for (what, want, est) in per_h {
        c.estimate(what, want, est, K, b(want), POWER_TIGHT);
    }
    // Flow time = move wait + load + d/v_L + unload: the lot ships when it is set down.
    let flow = wait + t_load + t_loaded + t_unload;
    c.relative("theory: flow time = wait + 140 s", wait + 140.0, flow, 1e-12);
    c.estimate("mean flow time (s)", flow, &plain(&s.flow_time_s), K, b(flow), POWER);
    // Little (docs/formulas.md §4) on the parts: WIP = λ·flow, transit = λ·140 s,
    // waiting at receiving = λ·wait.
    c.estimate("WIP = λ × flow time", lambda * flow, &s.wip_mean, K, b(lambda * flow), POWER);
    let transit = lambda * 140.0;
    c.estimate("WIP in transit = λ × 140 s", transit, &s.wip_in_transit_mean, K, b(transit), POWER);
    let recv = &s.departments[department(&plant, "goods-in")];
    c.estimate(
        "WIP waiting at receiving = λ × wait",
        lambda * wait,
        &recv.wip_mean,
        K,
        b(lambda * wait),
        POWER,
    );
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}

/// A duration estimate without its percentiles.
fn plain(d: &layflow_models::metrics::DurationEstimate) -> layflow_models::metrics::Estimate {
    layflow_models::metrics::Estimate { mean: d.mean, half_width: d.half_width, n: d.n }
}

#[test]
fn single_mover_going_home_is_an_md1_server() {
    mover_md1("validation/mover-md1.yaml", false);
}

#[test]
fn single_mover_staying_at_the_drop_off_is_an_md1_server() {
    mover_md1("validation/mover-md1-stay.yaml", true);
}

/// The plant of `validation/mover-always-home.yaml` and its twin
/// `mover-go-home-away.yaml`: one mover, one move per lot (receiving →
/// shipping, 12 lots/h), home at a truck bay away from both docks.
struct HomeAway {
    /// Requests per second.
    lambda: f64,
    /// Empty trips, s: bay → receiving, shipping → receiving, shipping → bay.
    bay_recv: f64,
    ship_recv: f64,
    ship_bay: f64,
    /// Load + loaded trip + unload, s.
    carry: f64,
    /// Load + unload, s.
    handling: f64,
    /// Loaded trip, s.
    loaded: f64,
}

fn home_away(c: &mut Checks, plant: &Plant) -> HomeAway {
    let fl = &plant.fleets()[0];
    let loc = |id: &str| plant.locations.iter().position(|l| l.id == id).expect("location");
    let (recv, ship, bay) = (loc("inbound-door"), loc("outbound-door"), loc("truck-bay"));
    let e = |a: usize, b: usize| plant.distance(a, b) / fl.speed_empty;
    let h = HomeAway {
        lambda: 12.0 / HOUR,
        bay_recv: e(bay, recv),
        ship_recv: e(ship, recv),
        ship_bay: e(ship, bay),
        carry: fl.load_s + plant.distance(recv, ship) / fl.speed_loaded + fl.unload_s,
        handling: fl.load_s + fl.unload_s,
        loaded: plant.distance(recv, ship) / fl.speed_loaded,
    };
    // Rectilinear distances at 2.25 m/s empty, 1.5 m/s loaded (the YAML header).
    c.relative("bay → receiving: 45 m empty = 20 s", 20.0, h.bay_recv, 1e-12);
    c.relative("shipping → receiving: 90 m empty = 40 s", 40.0, h.ship_recv, 1e-12);
    c.relative("shipping → bay: 135 m empty = 60 s", 60.0, h.ship_bay, 1e-12);
    c.relative("load + 90 m loaded + unload = 45 + 60 + 35 s", 140.0, h.carry, 1e-12);
    h
}

/// `when_idle: always-home`, home away from both docks: every request starts
/// from home and ends with the drive back, so the mover is an M/D/1 server
/// with τ = bay → receiving + carry + shipping → bay = 220 s
/// (docs/formulas.md §21 and §15; Pollaczek–Khinchine, §2, Cooper 1981).
#[test]
fn always_home_with_home_off_the_docks_is_an_md1_server_holding_the_return_trip() {
    let file = "validation/mover-always-home.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let h = home_away(&mut c, &plant);
    let tau = h.bay_recv + h.carry + h.ship_bay;
    let th = pollaczek_khinchine(h.lambda, tau, 0.0);
    c.relative("theory: ρ = 12/h × 220 s = 0.733333", 11.0 / 15.0, th.rho, 1e-12);
    c.relative("theory: Wq = λτ²/(2(1−ρ)) = 302.5 s", 302.5, th.wq, 1e-12);
    // The reported move wait runs to the mover's arrival at the pick-up:
    // the wait to set off from home plus the drive from home.
    let wait = th.wq + h.bay_recv;
    let flow = wait + h.carry;

    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let f = &s.fleets[0];
    let b = |x: f64| BIAS_REL * x;
    c.estimate("mean move wait = Wq + 20 s = 322.5 s", wait, &f.move_wait_s, K, b(wait), POWER);
    c.estimate("mean flow time = wait + 140 s = 462.5 s", flow, &plain(&s.flow_time_s), K, b(flow), POWER);
    c.estimate("fleet utilisation = ρ", th.rho, &f.utilization, K, b(th.rho), POWER_TIGHT);
    let shares = [
        ("empty travel share = (20 + 60) s × λ", (h.bay_recv + h.ship_bay) * h.lambda, &f.empty_travel_share),
        ("loaded travel share = 60 s × λ", h.loaded * h.lambda, &f.loaded_travel_share),
        ("handling share = 80 s × λ", h.handling * h.lambda, &f.handling_share),
    ];
    for (what, want, est) in shares {
        c.estimate(what, want, est, K, b(want), POWER_TIGHT);
    }
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}

/// Welch's mean wait in queue for an M/G/1 queue whose request opening a busy
/// period needs S₀ and every other S (docs/formulas.md §20: Welch 1964, from memory):
/// Wq = λE[S²]/(2(1−ρ)) + λ(E[S₀²] − E[S²])/(2(1 − ρ + λE[S₀])), ρ = λE[S].
/// Also returns P₀ = (1−ρ)/(1 − ρ + λE[S₀]), the share of requests that open a
/// busy period (they wait 0).
fn welch(lambda: f64, s1: f64, s2: f64, s0_1: f64, s0_2: f64) -> (f64, f64) {
    let rho = lambda * s1;
    let wq = lambda * s2 / (2.0 * (1.0 - rho)) + lambda * (s0_2 - s2) / (2.0 * (1.0 - rho + lambda * s0_1));
    (wq, (1.0 - rho) / (1.0 - rho + lambda * s0_1))
}

/// `when_idle: go-home`, home away from both docks: a request waiting at a
/// delivery is taken straight from shipping (S = 40 + 140 = 180 s); with none
/// waiting the mover drives home (T = 60 s) and takes no request on the way.
/// Counting the system empty from that delivery, the next request arrives
/// A ~ Exp(λ) later and needs S₀ = max(T − A, 0) + 20 + 140 s: Welch's
/// M/G/1 with an exceptional first service (docs/formulas.md §20, §21).
#[test]
fn go_home_with_home_off_the_docks_is_welchs_exceptional_first_service() {
    let file = "validation/mover-go-home-away.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let h = home_away(&mut c, &plant);
    let (lambda, t) = (h.lambda, h.ship_bay);
    let s = h.ship_recv + h.carry;
    let s_home = h.bay_recv + h.carry;
    // X = max(T − A, 0), the rest of the drive home, for A ~ Exp(λ):
    // E[X] = T − (1 − e^{−λT})/λ, E[X²] = T² − 2T/λ + 2(1 − e^{−λT})/λ².
    let q = 1.0 - (-lambda * t).exp();
    let ex = t - q / lambda;
    let ex2 = t * t - 2.0 * t / lambda + 2.0 * q / (lambda * lambda);
    c.relative("E[X] = 5.619226 s (YAML header)", 5.619226, ex, 1e-6);
    c.relative("E[X²] = 228.4644 s² (YAML header)", 228.4644, ex2, 1e-6);
    let (s0_1, s0_2) = (ex + s_home, ex2 + 2.0 * s_home * ex + s_home * s_home);
    // The worked numbers of docs/formulas.md §20: λ = 36/h, S = 60 s, S₀ = 90 s.
    c.relative(
        "Welch, §20's worked numbers: Wq = 62.3077 s",
        62.3077,
        welch(0.01, 60.0, 3600.0, 90.0, 8100.0).0,
        1e-6,
    );
    let (wq, p0) = welch(lambda, s, s * s, s0_1, s0_2);
    c.relative("theory: Welch Wq = 135 − 8.356201 = 126.6438 s", 126.6438, wq, 1e-6);
    c.relative("theory: P₀ = 0.4201398", 0.4201398, p0, 1e-6);
    // Reported wait: to the mover at the pick-up. From shipping: Wq + 40 s;
    // a request opening a busy period: the rest of the drive home + 20 s.
    let wait = wq + (1.0 - p0) * h.ship_recv + p0 * (ex + h.bay_recv);
    let flow = wait + h.carry;
    c.relative("theory: move wait = 160.6019 s", 160.6019, wait, 1e-6);
    // Busy: 180 s per request from shipping; the whole drive home (60 s) + 160 s
    // per request opening a busy period.
    let util = lambda * ((1.0 - p0) * s + p0 * (t + s_home));
    let empty = lambda * ((1.0 - p0) * h.ship_recv + p0 * (t + h.bay_recv));
    c.relative("theory: utilisation = 0.6560186", 0.6560186, util, 1e-6);

    let run = run_layout(&plant, 0);
    let sm = &run.summary;
    let f = &sm.fleets[0];
    let b = |x: f64| BIAS_REL * x;
    c.estimate("mean move wait (Welch)", wait, &f.move_wait_s, K, b(wait), POWER);
    c.estimate("mean flow time = wait + 140 s", flow, &plain(&sm.flow_time_s), K, b(flow), POWER);
    c.estimate("fleet utilisation", util, &f.utilization, K, b(util), POWER_TIGHT);
    c.estimate("empty travel share", empty, &f.empty_travel_share, K, b(empty), POWER_TIGHT);
    c.estimate(
        "loaded travel share = 60 s × λ",
        h.loaded * lambda,
        &f.loaded_travel_share,
        K,
        b(0.2),
        POWER_TIGHT,
    );
    // The check has power: the nearest wrong models are outside the interval.
    // A mover waiting at shipping would give Wq(P-K) + 40 = 175 s; one that took
    // no work at the drop-off (always-home) 322.5 s; plain P-K with S = 180 s
    // and the drive from shipping every time, likewise 175 s.
    let stay = lambda * s * s / (2.0 * (1.0 - lambda * s)) + h.ship_recv;
    c.holds(
        "the stay model's 175 s is more than 3 half-widths away",
        (f.move_wait_s.mean - stay).abs() > K * hw(&f.move_wait_s),
    );
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}

/// With home at the pick-up dock the two rules are one: the mover is home
/// whenever it would take a request from the drop-off after driving there
/// first, so `always-home` gives `go-home`'s replications number for number.
#[test]
fn with_home_at_the_pick_up_always_home_and_go_home_coincide() {
    let file = "validation/mover-md1.yaml";
    let path = layflow_tests::scenario_path(file);
    let text = std::fs::read_to_string(&path).expect("read");
    assert!(text.contains("when_idle: go-home"));
    let always = text.replace("when_idle: go-home", "when_idle: always-home");
    let a = layflow_models::parse_scenario(&always, &path).expect("always-home parses");
    let g = load(file);
    let mut c = Checks::new(file);
    c.holds("always-home parsed", a.fleets()[0].idle == layflow_models::plant::IdleRule::AlwaysHome);
    let (ra, rg) = (run_layout_reps(&a, 0, 4), run_layout_reps(&g, 0, 4));
    let (fa, fg) = (&ra.summary.fleets[0], &rg.summary.fleets[0]);
    c.exact("move wait, same to the bit", fg.move_wait_s.mean, fa.move_wait_s.mean, 0.0);
    c.exact("utilisation, same to the bit", fg.utilization.mean, fa.utilization.mean, 0.0);
    c.exact("empty share, same to the bit", fg.empty_travel_share.mean, fa.empty_travel_share.mean, 0.0);
    c.finish();
}

/// Mover-seconds and metres of one replication are consistent with speed:
/// time travelling = metres / speed, exactly but for floating point, because
/// the model clips a trip's time and distance to the window in proportion.
fn speed_consistency(c: &mut Checks, plant: &Plant, run: &layflow_tests::Run) {
    let fl = &plant.fleets()[0];
    for (r, rep) in run.reps.iter().enumerate() {
        let st = &rep.fleets[0];
        c.relative(
            &format!("rep {r}: loaded time × v_L = loaded metres"),
            st.distance_loaded_m,
            st.loaded_s * fl.speed_loaded,
            1e-9,
        );
        c.relative(
            &format!("rep {r}: empty time × v_E = empty metres"),
            st.distance_empty_m,
            st.empty_s * fl.speed_empty,
            1e-9,
        );
    }
}

#[test]
fn travel_times_follow_distance_and_speed_in_km_per_h() {
    let file = "validation/mover-travel-kmh.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let fl = &plant.fleets()[0];
    let (v_l, v_e) = (fl.speed_loaded, fl.speed_empty);
    // 6 km/h = 6000 m / 3600 s = 5/3 m/s; 9 km/h = 2.5 m/s.
    c.relative("6 km/h in m/s", 5.0 / 3.0, v_l, 1e-12);
    c.relative("9 km/h in m/s", 2.5, v_e, 1e-12);
    let count = f64::from(fl.count);
    // By hand (see the scenario): every lot takes 72 + 300 + 106 = 478 s.
    let flow_by_hand = (20.0 + 42.0 + 10.0) + 300.0 + (28.0 + 20.0 + 48.0 + 10.0);
    // The same from the formula Tc = T_L + L_d/v_L + T_U (+ L_e/v_E for the
    // empty trip to the bay), docs/formulas.md §7.
    let flow_formula =
        (fl.load_s + 70.0 / v_l + fl.unload_s) + 300.0 + (70.0 / v_e + fl.load_s + 80.0 / v_l + fl.unload_s);
    c.relative("theory: flow time by hand = by the formula", flow_by_hand, flow_formula, 1e-12);

    // Static: 6 lots/h × (70 + 80) m = 900 m/h over 12 trips/h, so 75 m per load.
    let pic = StaticPicture::new(&plant, 1.0);
    let lp = &pic.layouts[0];
    c.relative("static load-distance 900 m/h", 900.0, lp.load_distance_m_per_h, 1e-12);
    c.relative("static trips 12/h", 12.0, lp.fleet_trips_per_h[0], 1e-12);
    let per_load = lp.load_distance_m_per_h / lp.fleet_trips_per_h[0];

    let run = run_layout(&plant, 0);
    assert_eq!(run.spec.warmup_s, 0.0, "the edge bounds below assume the window starts empty at 0");
    // Edge bound: the window starts empty at 0, so only the horizon cuts lots
    // short. A lot between its first and its second pick-up is on a walker or
    // a machine (nobody waits: the flow-time rows prove it), so at most
    // K_LOTS = 10 + 12 such lots exist, and at most 10 trips are cut short.
    const K_LOTS: f64 = 22.0;
    let (receiving, anneal) = (department(&plant, "receiving"), department(&plant, "anneal"));
    let movers = count;
    for (r, rep) in run.reps.iter().enumerate() {
        // Every lot's flow time is the same, 478 s, up to floating point.
        let ft = &rep.flow_time_all;
        c.relative(&format!("rep {r}: mean flow time = 478 s"), flow_by_hand, ft.mean(), 1e-9);
        c.holds(
            &format!(
                "rep {r}: flow-time sd {:.2e} s < 1e-6 s (all {} lots alike)",
                ft.variance().sqrt(),
                ft.count()
            ),
            ft.variance().sqrt() < 1e-6,
        );
        let st = &rep.fleets[0];
        let moves = st.moves as f64;
        // Loaded metres per load: 70 m and 80 m alternate; the imbalance of at
        // most K_LOTS lots (5 m each from the 75 m mean) and at most 10 cut trips
        // (≤ 80 m each) bound the difference.
        let bound = (5.0 * K_LOTS + movers * 80.0) / moves;
        c.exact(
            &format!("rep {r}: loaded metres per load = static 75 m"),
            per_load,
            st.distance_loaded_m / moves,
            bound,
        );
        // Empty metres per load: 230 m per lot over 2 moves = 115 m.
        let bound = (230.0 * K_LOTS + movers * 90.0) / moves;
        c.exact(
            &format!("rep {r}: empty metres per load = 115 m"),
            115.0,
            st.distance_empty_m / moves,
            bound,
        );
        // Handling: 30 s per move.
        let bound = 30.0 * (K_LOTS + movers) / moves;
        c.exact(&format!("rep {r}: handling s per load = 30 s"), 30.0, st.handling_s / moves, bound);
        // Waits are 0 (first move: a walker waits at home) or 70/2.5 = 28 s
        // (second move: from home to the bay): mean 14 s up to the imbalance.
        let w = &rep.move_wait[0];
        c.exact(&format!("rep {r}: mean move wait = (0 + 28)/2 s"), 14.0, w.mean(), 14.0 * K_LOTS / moves);
        // WIP bookkeeping with movers, lot by lot: every shipped lot spent
        // 300 + 28 s at the anneal department (processing, then waiting for
        // the walker it called), 72 + 78 = 150 s on walkers, 0 s at receiving
        // (a walker is at home, so pick-up is immediate). Lots still in the
        // plant at the horizon (at most K_LOTS: each is on a walker or a
        // machine) add a partial stay, so each time-average × window ÷ shipped
        // lies in [x, x + K_LOTS·x/shipped].
        let shipped = rep.shipped.iter().sum::<u64>() as f64;
        let per_lot = |level: f64| level * rep.window_s / shipped;
        for (what, x, level) in [
            ("lot-seconds at anneal per lot = 328 s", 328.0, rep.wip_department[anneal]),
            ("lot-seconds on walkers per lot = 150 s", 150.0, rep.wip_transit),
            ("lot-seconds in the plant per lot = 478 s", flow_by_hand, rep.wip_total),
        ] {
            let half = 0.5 * K_LOTS * x / shipped;
            c.exact(&format!("rep {r}: {what}"), x + half, per_lot(level), half);
        }
        c.exact(&format!("rep {r}: WIP at receiving = 0"), 0.0, rep.wip_department[receiving], 1e-12);
    }
    speed_consistency(&mut c, &plant, &run);
    let s = &run.summary;
    let f = &s.fleets[0];
    // Loaded share = loaded metres per hour / speed / (3600 s × movers): floating point only.
    c.relative(
        "loaded share = (loaded m/h ÷ v_L) ÷ (3600 s × 10)",
        f.distance_loaded_m_per_h.mean / v_l / HOUR / count,
        f.loaded_travel_share.mean,
        1e-9,
    );
    // ... and = moves/h × 75 m ÷ v_L ÷ (3600 s × 10) up to the edge bound.
    let moves_h = f.moves_per_h.mean;
    let min_moves = run.reps.iter().map(|r| r.fleets[0].moves).min().unwrap_or(1) as f64;
    let share = moves_h * per_load / v_l / HOUR / count;
    c.exact(
        "loaded share = moves/h × 75 m ÷ v_L ÷ (3600 s × 10)",
        share,
        f.loaded_travel_share.mean,
        share * (5.0 * K_LOTS + movers * 80.0) / (75.0 * min_moves),
    );
    c.holds(
        &format!(
            "walkers' utilisation {:.4} > static lower bound {:.4} (empty travel comes on top)",
            f.utilization.mean, f.utilization_lower_bound
        ),
        f.utilization.mean > f.utilization_lower_bound,
    );
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}

#[test]
fn demo_plant_keeps_littles_law_and_its_static_load_distance() {
    let file = "demo.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    // The scenario's own 20 replications of 18 d give half-widths of 1–2% on
    // utilisations; 80 (same seed, same horizon) halve them, so that 3 hw stays
    // under 4% on every row, at about 0.3 s per layout.
    const DEMO_REPS: u32 = 80;
    for l in 0..plant.layouts.len() {
        let name = &plant.layouts[l].name;
        let run = run_layout_reps(&plant, l, DEMO_REPS);
        let s = &run.summary;
        // Little: the demo's 2-d warm-up is ~ 15 times its longest mean flow
        // time (~ 4 h) and its busiest department (inspection) runs at ρ ≈ 0.8,
        // so the lots present at the warm-up are close to steady state and the
        // two edges cancel in expectation; we allow 1e-3 for any residue of the
        // start from empty (the worst-case bound 2W/T would be 1.4e-2).
        check_little(&mut c, name, &run, 1e-3);
        // Simulated loaded metres per hour and the static load-distance agree in
        // expectation: each move of a lot from i to j is d(i, j) loaded metres,
        // and the static chart counts exactly those moves at their mean rates.
        // With 80 replications, hw is t(0.975, 79) = 1.99 standard errors; 3 hw.
        // Bias: the moves of lots in progress at the window's edges, O(flow time
        // / window) ≈ 3 h / 432 h, which cancels in steady state; we allow 1e-3.
        let ld = s.load_distance_static_m_per_h;
        c.estimate(
            &format!("{name}: loaded m/h = static load-distance"),
            ld,
            &s.distance_loaded_m_per_h,
            K,
            1e-3 * ld,
            0.04,
        );
        for (fi, f) in s.fleets.iter().enumerate() {
            // Loaded travel + handling is exactly what the static bound counts
            // (docs/formulas.md §7, the from-to form without its empty-travel term):
            // in expectation, trips/h × (load + unload) + Σ f·d / v_L per mover.
            // The half-width of the sum is taken as the sum of half-widths
            // (conservative: it ignores that the two shares are correlated).
            let busy = layflow_models::metrics::Estimate {
                mean: f.loaded_travel_share.mean + f.handling_share.mean,
                half_width: Some(hw(&f.loaded_travel_share) + hw(&f.handling_share)),
                n: f.loaded_travel_share.n,
            };
            c.estimate(
                &format!("{name}/{}: loaded + handling share = static bound", f.fleet),
                f.utilization_lower_bound,
                &busy,
                K,
                1e-3 * f.utilization_lower_bound,
                0.04,
            );
            // Every routed move is one trip, so moves/h = the fleet's share of the
            // from-to chart (docs/formulas.md §9 flows, summed over the chart).
            let trips = run.picture.layouts[l].fleet_trips_per_h[fi];
            c.estimate(
                &format!("{name}/{}: moves/h = static trips/h", f.fleet),
                trips,
                &f.moves_per_h,
                K,
                1e-3 * trips,
                0.04,
            );
        }
        for d in &s.departments {
            if d.utilization_predicted > 0.0 {
                // Work conservation: a stable department's utilisation is
                // λE[S]/c whatever the distributions (docs/formulas.md §1's ρ = a/c;
                // the G/G/c form is from memory). This also checks that each
                // distribution family samples with the mean the static side uses.
                c.estimate(
                    &format!("{name}/{}: utilisation = λE[S]/c", d.department),
                    d.utilization_predicted,
                    &d.utilization,
                    K,
                    1e-3 * d.utilization_predicted,
                    0.04,
                );
            }
        }
    }
    c.finish();
}
