//! `layflow fleet`: size one handling fleet by simulating every size with common random numbers.

use std::fmt::Write as _;
use std::path::PathBuf;
use std::time::Instant;

use clap::{Args, ValueEnum};
use layflow_engine::{interval, t_quantile};
use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{Handling, Plant};
use layflow_models::report::{fleet_cost_per_h, replicate, Estimate, CONFIDENCE};
use layflow_models::sim::{Plan, RepStats, RunSpec};
use layflow_models::sizing::{fleet_estimate, EmptyRule, FleetEstimate};
use serde::Serialize;

use crate::check::{demand_factor, warn_overload};
use crate::progress::Progress;
use crate::run::{layouts, SimOptions};
use crate::table::{dur, dur_plain, num, pct, pm, share, Table};
use crate::target::{self, Target, Verdict, TARGET_METRICS};
use crate::warmup::{self, WarmupChoice};
use crate::{load, Failure};

/// Arguments of `layflow fleet`.
#[derive(Args, Debug)]
pub struct FleetArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// The fleet to size; may be left out when the scenario has one fleet.
    #[arg(long, value_name = "NAME")]
    pub fleet: Option<String>,
    /// Fleet sizes to simulate: a range such as 2..8 (both ends included) or a list such as 2,3,5.
    #[arg(long, value_name = "A..B|A,B,...")]
    pub sizes: String,
    /// Layout to run (default: the first in the scenario).
    #[arg(long, value_name = "NAME")]
    pub layout: Option<String>,
    /// A target every acceptable size must meet with 95% confidence, e.g. 'move_wait_p95 <= 5 min'
    /// or 'utilization <= 85%' (repeat for several). Metrics: move_wait, move_wait_p50/p90/p95/p99,
    /// utilization, empty_share, flow_time, throughput, wip, cost_per_h, cost_per_load.
    #[arg(long, value_name = "'METRIC OP VALUE'")]
    pub target: Vec<String>,
    /// Scale every product's demand by this factor (overrides demand_factor).
    #[arg(long, value_name = "FACTOR")]
    pub demand: Option<f64>,
    /// Share of a mover's available time spent moving, for the analytic estimate only
    /// (default: the fleet's operators.efficiency, else 1).
    #[arg(long, value_name = "E")]
    pub efficiency: Option<f64>,
    /// Draw wait and utilisation against fleet size, with the target lines, into this SVG file.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = FleetFormat::Table)]
    pub format: FleetFormat,
    #[command(flatten)]
    pub sim: SimOptions,
}

/// Output formats of `fleet`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum FleetFormat {
    /// Aligned tables for people.
    Table,
    /// JSON for programs.
    Json,
}

/// One fleet size's results.
#[derive(Debug, Clone, Serialize)]
pub struct SizeResult {
    /// Movers in the fleet.
    pub movers: u32,
    /// Share of mover time busy (loaded + empty + handling).
    pub utilization: Estimate,
    /// The analytic estimate's busy time ÷ available mover time at this size.
    pub utilization_analytic: f64,
    /// Busy time ÷ on-duty mover time (shifts less breaks); present when the
    /// operators have working hours.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub utilization_scheduled: Option<Estimate>,
    /// Share travelling loaded.
    pub loaded_share: Estimate,
    /// Share travelling empty.
    pub empty_share: Estimate,
    /// Share loading and unloading.
    pub handling_share: Estimate,
    /// Share idle.
    pub idle_share: Estimate,
    /// Share lost waiting to enter full aisle segments or busy intersections
    /// (counted in `utilization`); present when the aisles are simulated segment by segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub congestion_share: Option<Estimate>,
    /// Mean wait from move request to pick-up, this fleet's moves, s.
    pub move_wait_s: Estimate,
    /// Each replication's 95th-percentile wait, averaged, s.
    pub move_wait_p95_s: Estimate,
    /// Loads this fleet moved per hour.
    pub moves_per_h: Estimate,
    /// Lots shipped per hour.
    pub throughput_per_h: Estimate,
    /// Time-average lots in the plant.
    pub wip_mean: Estimate,
    /// Mean flow time, s.
    pub flow_time_s: Estimate,
    /// This fleet's cost per hour.
    pub cost_per_h: Estimate,
    /// This fleet's cost per load moved.
    pub cost_per_load: Estimate,
    /// One verdict per target, in the order given.
    pub targets: Vec<Verdict>,
    /// Every target met with 95% confidence.
    pub meets_every_target: bool,
}

/// The analytic estimate under both empty-travel rules.
#[derive(Debug, Clone, Serialize)]
struct Analytic {
    /// Share of clock time on duty (A in the formula).
    availability: f64,
    /// Share of on-duty time spent productively (E in the formula).
    efficiency: f64,
    minimum_empty_flow: Estimated,
    empty_equals_loaded: Estimated,
}

/// The analytic estimate's numbers, per hour of operation, as reported.
#[derive(Debug, Clone, Serialize)]
pub struct Estimated {
    trips_per_h: f64,
    loaded_m_per_h: f64,
    empty_m_per_h: f64,
    loaded_travel_s_per_h: f64,
    empty_travel_s_per_h: f64,
    handling_s_per_h: f64,
    busy_s_per_h: f64,
    vehicles: f64,
    vehicles_rounded_up: u64,
    #[serde(skip)]
    efficiency: f64,
}

impl Estimated {
    fn new(e: FleetEstimate, efficiency: f64) -> Estimated {
        Estimated {
            trips_per_h: e.trips_per_h,
            loaded_m_per_h: e.loaded_m_per_h,
            empty_m_per_h: e.empty_m_per_h,
            loaded_travel_s_per_h: e.loaded_travel_s_per_h,
            empty_travel_s_per_h: e.empty_travel_s_per_h,
            handling_s_per_h: e.handling_s_per_h,
            busy_s_per_h: e.busy_s_per_h,
            vehicles: e.vehicles,
            vehicles_rounded_up: e.vehicles_rounded_up,
            efficiency,
        }
    }
}

#[derive(Serialize)]
struct FleetOutput {
    plant: String,
    scenario: String,
    fleet: String,
    layout: String,
    horizon_s: f64,
    warmup_s: f64,
    #[serde(skip_serializing_if = "Option::is_none")]
    warmup_auto: Option<WarmupChoice>,
    replications: u32,
    seed: u64,
    demand_factor: f64,
    confidence: f64,
    analytic: Analytic,
    targets: Vec<Target>,
    sizes: Vec<SizeResult>,
    /// The smallest size that met every target with 95% confidence.
    smallest_meeting_targets: Option<u32>,
    events: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    wall_s: Option<f64>,
}

/// Parse `2..8` or `2,3,5` into increasing sizes of at least 1.
pub fn parse_sizes(text: &str) -> Result<Vec<u32>, Failure> {
    let bad = |why: &str| {
        Failure::input(format!("--sizes {text:?}: {why}; write a range such as 2..8 or a list such as 2,3,5"))
    };
    let num =
        |s: &str| s.trim().parse::<u32>().map_err(|_| bad(&format!("{:?} is not a whole number", s.trim())));
    let sizes: Vec<u32> = if let Some((a, b)) = text.split_once("..") {
        let (a, b) =
            (num(a)?, num(b.trim_start_matches('=')).map_err(|_| bad("the range end is not a number"))?);
        if b < a {
            return Err(bad("the range runs backwards"));
        }
        (a..=b).collect()
    } else {
        text.split(',').map(num).collect::<Result<_, _>>()?
    };
    if sizes.contains(&0) {
        return Err(bad("a fleet needs at least one mover"));
    }
    if sizes.windows(2).any(|w| w[1] <= w[0]) {
        return Err(bad("list the sizes in increasing order, each once"));
    }
    if sizes.len() > 200 {
        return Err(bad("more than 200 sizes"));
    }
    Ok(sizes)
}

fn which_fleet(plant: &Plant, name: &Option<String>) -> Result<usize, Failure> {
    let fleets = plant.fleets();
    if matches!(plant.handling, Handling::Instant) || fleets.is_empty() {
        return Err(Failure::input(
            "this scenario has `moves: instant`: there is no fleet to size; describe the movers under `fleets:`",
        ));
    }
    let ids: Vec<&str> = fleets.iter().map(|f| f.id.as_str()).collect();
    match name {
        None if fleets.len() == 1 => Ok(0),
        None => Err(Failure::input(format!(
            "--fleet is needed: the scenario has {} fleets ({})",
            ids.len(),
            ids.join(", ")
        ))),
        Some(n) => ids.iter().position(|i| i == n).ok_or_else(|| {
            Failure::input(format!("--fleet {n:?}: no such fleet; the scenario has: {}", ids.join(", ")))
        }),
    }
}

/// Run the sweep and report it.
pub fn fleet(args: &FleetArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    let f = which_fleet(&plant, &args.fleet)?;
    let sizes = parse_sizes(&args.sizes)?;
    let targets: Vec<Target> = args.target.iter().map(|t| target::parse(t)).collect::<Result<_, _>>()?;
    let layout = match &args.layout {
        None => 0,
        Some(n) => layouts(&plant, std::slice::from_ref(n))?[0],
    };
    let crate::run::RunBasics { horizon_s, replications, seed } = args.sim.basics(&plant)?;
    let factor = demand_factor(&plant, args.demand)?;
    let efficiency = args.efficiency.unwrap_or_else(|| fleet_efficiency(&plant, f));
    if !(efficiency > 0.0 && efficiency <= 1.0) {
        return Err(Failure::input(format!(
            "--efficiency {efficiency}: must be above 0 and at most 1, e.g. 0.85"
        )));
    }
    if let Some(p) = &args.plot {
        if p.extension().is_none_or(|e| e != "svg") {
            return Err(Failure::input(format!(
                "--plot {}: the picture is SVG; name a .svg file",
                p.display()
            )));
        }
    }
    let pool = crate::run::pool(args.sim.threads)?;
    let pic = StaticPicture::new(&plant, factor);
    warn_overload(&plant, &pic);
    let availability = fleet_availability(&plant, f);
    let estimate_with = |rule| {
        fleet_estimate(&plant, &pic, layout, f, rule, efficiency * availability)
            .map(|e| Estimated::new(e, efficiency))
            .map_err(Failure::run)
    };
    let analytic = Analytic {
        availability,
        efficiency,
        minimum_empty_flow: estimate_with(EmptyRule::MinimumEmptyFlow)?,
        empty_equals_loaded: estimate_with(EmptyRule::SameAsLoaded)?,
    };
    if args.format == FleetFormat::Table {
        // Before the simulation: the planner's number, at once.
        use std::io::Write as _;
        print!("{}\n{}", plant.name, render_analytic(&plant, f, &analytic));
        let _ = std::io::stdout().flush();
    }

    let sized = |n: u32| {
        let mut p = plant.clone();
        if let Handling::Fleets(fl) = &mut p.handling {
            fl[f].count = n;
        }
        p
    };
    let (warmup_s, warmup_auto) = {
        let top = sized(*sizes.first().expect("at least one size"));
        warmup::resolve(&args.sim.warmup, &top, &[layout], horizon_s, factor, seed, &pool, args.sim.quiet)?
    };
    if !(horizon_s > warmup_s) {
        return Err(Failure::input(format!(
            "the horizon ({}) must be longer than the warm-up ({})",
            dur_plain(horizon_s),
            dur_plain(warmup_s)
        )));
    }
    let started = Instant::now();
    let progress = Progress::new(sizes.len() as u64 * u64::from(replications), args.sim.quiet);
    let spec = RunSpec { layout, horizon_s, warmup_s, demand_factor: factor, seed };
    let mut results = Vec::with_capacity(sizes.len());
    let mut events = 0;
    for &n in &sizes {
        let p = sized(n);
        progress.stage(format!("{} × {n}", plant.fleets()[f].id));
        let plan = Plan::new(&p, layout);
        let reps = pool.install(|| replicate(&plan, &spec, replications, |r| progress.done(r)));
        if let Some(why) = layflow_models::report::deadlock_message(&p, &reps) {
            progress.finish();
            return Err(Failure::run(format!("with {n} movers in {}: {why}", plant.fleets()[f].id)));
        }
        events += reps.iter().map(|r| r.events).sum::<u64>();
        results.push(size_result(&p, f, n, &reps, &targets, &analytic.minimum_empty_flow));
    }
    progress.finish();
    let wall_s = started.elapsed().as_secs_f64();
    let smallest = results.iter().find(|r| r.meets_every_target).map(|r| r.movers);
    let out = FleetOutput {
        plant: plant.name.clone(),
        scenario: args.scenario.display().to_string(),
        fleet: plant.fleets()[f].id.clone(),
        layout: plant.layouts[layout].name.clone(),
        horizon_s,
        warmup_s,
        warmup_auto,
        replications,
        seed,
        demand_factor: factor,
        confidence: CONFIDENCE,
        analytic,
        targets,
        sizes: results,
        smallest_meeting_targets: smallest,
        events,
        wall_s: (!args.sim.no_wall_clock).then_some(wall_s),
    };
    if let Some(path) = &args.plot {
        let svg = crate::plot::fleet_svg(&out.fleet, &out.sizes, &out.targets)?;
        let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(std::path::Path::new("."));
        let name = path
            .file_name()
            .and_then(|n| n.to_str())
            .ok_or_else(|| Failure::input("--plot: bad file name"))?;
        crate::output::write_atomic(dir, name, svg.as_bytes())?;
    }
    match args.format {
        FleetFormat::Json => {
            println!("{}", serde_json::to_string_pretty(&out).expect("results serialise"));
        }
        FleetFormat::Table => print!("{}", render(&out, wall_s)),
    }
    if let (Some(p), false) = (&args.plot, args.sim.quiet) {
        eprintln!("wrote {}", p.display());
    }
    Ok(())
}

/// A metric's value in one replication, for targets: fleet `f`'s view.
fn target_value(name: &str, plant: &Plant, r: &RepStats, f: usize) -> f64 {
    let fl = &plant.fleets()[f];
    let s = &r.fleets[f];
    let cap = f64::from(fl.count) * r.window_s;
    let per_h = |x: f64| x / r.window_s * 3600.0;
    let wait_q = |q: f64| {
        let h = &r.move_wait_hist_fleet[f];
        if h.count() == 0 {
            f64::NAN
        } else {
            h.quantile(q)
        }
    };
    match name {
        "move_wait" => {
            if r.move_wait[f].count() == 0 {
                f64::NAN
            } else {
                r.move_wait[f].mean()
            }
        }
        "move_wait_p50" => wait_q(0.50),
        "move_wait_p90" => wait_q(0.90),
        "move_wait_p95" => wait_q(0.95),
        "move_wait_p99" => wait_q(0.99),
        "utilization" => (s.loaded_s + s.empty_s + s.handling_s + s.congestion_s) / cap,
        "empty_share" => s.empty_s / cap,
        "flow_time" => {
            if r.flow_time_all.count() == 0 {
                f64::NAN
            } else {
                r.flow_time_all.mean()
            }
        }
        "throughput" => per_h(r.shipped.iter().sum::<u64>() as f64),
        "wip" => r.wip_total,
        "cost_per_h" => fleet_cost_per_h(plant, r, f),
        "cost_per_load" => {
            if s.moves == 0 {
                f64::NAN
            } else {
                fleet_cost_per_h(plant, r, f) / per_h(s.moves as f64)
            }
        }
        _ => unreachable!("target metrics are validated when parsed"),
    }
}

/// Estimate and standard error of a per-replication metric over the
/// replications that observed it.
fn estimate(vals: &[f64]) -> (Estimate, Option<f64>) {
    let v: Vec<f64> = vals.iter().copied().filter(|x| x.is_finite()).collect();
    let iv = interval(&v, CONFIDENCE);
    let se = iv.half_width.map(|h| h / t_quantile(CONFIDENCE, iv.n - 1));
    (iv.into(), se)
}

fn size_result(
    plant: &Plant,
    f: usize,
    n: u32,
    reps: &[RepStats],
    targets: &[Target],
    analytic: &Estimated,
) -> SizeResult {
    let col = |name: &str| -> Vec<f64> { reps.iter().map(|r| target_value(name, plant, r, f)).collect() };
    let e = |name: &str| estimate(&col(name)).0;
    let share = |g: fn(&layflow_models::sim::FleetStats) -> f64| {
        let v: Vec<f64> = reps.iter().map(|r| g(&r.fleets[f]) / (f64::from(n) * r.window_s)).collect();
        estimate(&v).0
    };
    let verdicts: Vec<Verdict> = targets
        .iter()
        .map(|t| {
            let (est, se) = estimate(&col(t.name));
            target::judge(t, &est, se)
        })
        .collect();
    let moves: Vec<f64> = reps.iter().map(|r| r.fleets[f].moves as f64 / r.window_s * 3600.0).collect();
    SizeResult {
        movers: n,
        utilization: e("utilization"),
        utilization_analytic: analytic.busy_s_per_h / (3600.0 * f64::from(n) * analytic_efficiency(analytic)),
        utilization_scheduled: plant.fleets()[f].operators.duty.as_ref().map(|_| {
            let v: Vec<f64> = reps
                .iter()
                .map(|r| {
                    let s = &r.fleets[f];
                    (s.loaded_s + s.empty_s + s.handling_s + s.congestion_s)
                        / (f64::from(n) * r.window_s - s.off_s)
                })
                .collect();
            estimate(&v).0
        }),
        loaded_share: share(|s| s.loaded_s),
        empty_share: share(|s| s.empty_s),
        handling_share: share(|s| s.handling_s),
        congestion_share: layflow_models::report::Features::of(plant)
            .aisles
            .then(|| share(|s| s.congestion_s)),
        idle_share: {
            let v: Vec<f64> = reps
                .iter()
                .map(|r| {
                    let s = &r.fleets[f];
                    1.0 - (s.loaded_s + s.empty_s + s.handling_s + s.congestion_s)
                        / (f64::from(n) * r.window_s)
                })
                .collect();
            estimate(&v).0
        },
        move_wait_s: e("move_wait"),
        move_wait_p95_s: e("move_wait_p95"),
        moves_per_h: estimate(&moves).0,
        throughput_per_h: e("throughput"),
        wip_mean: e("wip"),
        flow_time_s: e("flow_time"),
        cost_per_h: e("cost_per_h"),
        cost_per_load: e("cost_per_load"),
        meets_every_target: verdicts.iter().all(|v| v.met),
        targets: verdicts,
    }
}

fn analytic_efficiency(a: &Estimated) -> f64 {
    a.efficiency
}

fn render_analytic(plant: &Plant, f: usize, a: &Analytic) -> String {
    let mut s = String::new();
    let m = &a.minimum_empty_flow;
    let c = &a.empty_equals_loaded;
    let _ = writeln!(
        s,
        "Analytic estimate for fleet {} (facilities-planning formula): movers = trips/h × (loaded travel + empty \
         travel + load/unload) ÷ (3600 s × availability {} × efficiency {})",
        plant.fleets()[f].id,
        num(a.availability),
        a.efficiency
    );
    for (label, e) in [("minimum empty flow (empties sent from where loads end to where loads start, by a transportation problem)", m), ("empty travel = loaded travel (conservative)", c)] {
        let _ = writeln!(
            s,
            "  {label}:\n    {} trips/h × ({} s + {} s + {} s per trip) = {} min of moving per hour → {} movers, so {}",
            num(e.trips_per_h),
            num(per_trip(e.loaded_travel_s_per_h, e.trips_per_h)),
            num(per_trip(e.empty_travel_s_per_h, e.trips_per_h)),
            num(per_trip(e.handling_s_per_h, e.trips_per_h)),
            num(e.busy_s_per_h / 60.0),
            num(e.vehicles),
            e.vehicles_rounded_up
        );
    }
    s
}

fn per_trip(total: f64, trips: f64) -> f64 {
    if trips > 0.0 {
        total / trips
    } else {
        0.0
    }
}

fn render(out: &FleetOutput, wall_s: f64) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "\nSizing fleet {} under layout {}: {} replications × {} ({} warm-up), seed {}, demand ×{}; common random \
         numbers: every size sees the same lots",
        out.fleet,
        out.layout,
        out.replications,
        dur_plain(out.horizon_s),
        dur_plain(out.warmup_s),
        out.seed,
        out.demand_factor
    );
    if let Some(w) = &out.warmup_auto {
        let _ = writeln!(s, "{}", w.describe());
    }
    let _ = writeln!(s, "{}; ± is the 95% confidence half-width\n", crate::table::speed(out.events, wall_s));
    let mut head = vec![
        "movers",
        "busy",
        "analytic",
        "loaded",
        "empty",
        "load/unload",
        "idle",
        "wait",
        "wait p95",
        "moves/h",
        "throughput",
        "WIP",
        "flow time",
        "cost/h",
        "cost/load",
    ];
    let scheduled = out.sizes.iter().any(|r| r.utilization_scheduled.is_some());
    if scheduled {
        head.insert(2, "busy (on duty)");
    }
    let congestion = out.sizes.iter().any(|r| r.congestion_share.is_some());
    if congestion {
        head.push("held up in aisles");
    }
    let tnames: Vec<String> = (0..out.targets.len()).map(|i| format!("target {}", i + 1)).collect();
    head.extend(tnames.iter().map(String::as_str));
    let mut t = Table::new(&head);
    for r in &out.sizes {
        let mut row = vec![
            r.movers.to_string(),
            pct(&r.utilization),
            share(r.utilization_analytic),
            share(r.loaded_share.mean),
            share(r.empty_share.mean),
            share(r.handling_share.mean),
            share(r.idle_share.mean),
            dur(&r.move_wait_s),
            dur(&r.move_wait_p95_s),
            pm(&r.moves_per_h, 1.0),
            pm(&r.throughput_per_h, 1.0),
            pm(&r.wip_mean, 1.0),
            dur(&r.flow_time_s),
            pm(&r.cost_per_h, 1.0),
            pm(&r.cost_per_load, 1.0),
        ];
        if let Some(u) = &r.utilization_scheduled {
            row.insert(2, pct(u));
        }
        if let Some(c) = &r.congestion_share {
            row.push(pct(c));
        }
        for v in &r.targets {
            row.push(
                if v.met {
                    "met"
                } else if v.unsure {
                    "unsure"
                } else {
                    "no"
                }
                .to_string(),
            );
        }
        t.row(row);
    }
    s.push_str(&t.render(2));
    let _ = writeln!(
        s,
        "  busy = loaded + empty + load/unload; analytic = the minimum-empty-flow estimate's busy share at that size; \
         wait p95 = each replication's 95th percentile, averaged"
    );
    if congestion {
        let _ = writeln!(
            s,
            "  held up in aisles = waiting to enter a full aisle segment or a busy intersection (counted in busy)"
        );
    }
    if scheduled {
        let _ =
            writeln!(s, "  busy (on duty) = busy time ÷ the operators' on-duty time (shifts less breaks)");
    }
    for (i, tg) in out.targets.iter().enumerate() {
        let what = TARGET_METRICS[tg.metric].2;
        let _ = writeln!(s, "  target {}: {} ({what})", i + 1, tg.describe());
    }
    if !out.targets.is_empty() {
        let _ = writeln!(
            s,
            "  met = the one-sided 95% confidence bound meets the target; unsure = the mean does, the bound does \
             not (add replications)"
        );
    }
    s.push('\n');
    let analytic = out.analytic.minimum_empty_flow.vehicles_rounded_up;
    let _ = match (out.targets.is_empty(), out.smallest_meeting_targets) {
        (true, _) => writeln!(
            s,
            "No --target given, so no size is named; the analytic estimate is {analytic}. Add e.g. \
             --target 'move_wait_p95 <= 2 min' --target 'utilization <= 85%'."
        ),
        (false, Some(n)) => {
            let nonmonotone = out.sizes.iter().any(|r| r.movers > n && !r.meets_every_target);
            writeln!(
                s,
                "Smallest size meeting every target with 95% confidence: {n} movers (analytic estimate: {analytic}).{}",
                if nonmonotone { " Note: a larger size misses a target; look at the table before deciding." } else { "" }
            )
        }
        (false, None) => writeln!(
            s,
            "No size from {} to {} meets every target with 95% confidence (analytic estimate: {analytic}). \
             Try larger sizes, more replications (for 'unsure'), or looser targets.",
            out.sizes.first().map_or(0, |r| r.movers),
            out.sizes.last().map_or(0, |r| r.movers)
        ),
    };
    s
}

/// The efficiency the simulation applies to fleet `f`'s movers, so that the
/// analytic estimate is on the same footing.
fn fleet_efficiency(plant: &Plant, f: usize) -> f64 {
    plant.fleets()[f].operators.efficiency
}

/// Share of clock time fleet `f`'s operators are on duty (shifts less breaks).
fn fleet_availability(plant: &Plant, f: usize) -> f64 {
    plant.fleets()[f].operators.duty.as_ref().map_or(1.0, |d| d.on_duty_s(0.0, d.period_s) / d.period_s)
}
