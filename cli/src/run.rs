//! `layflow run`: simulate layouts over replications and report with confidence intervals.

use std::fmt::Write as _;
use std::path::PathBuf;
use std::time::Instant;

use clap::Args;
use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{DepartmentRole, Plant};
use layflow_models::report::{replicate, summarize, LayoutSummary};
use layflow_models::sim::{Plan, RunSpec};
use layflow_models::units::parse_duration;
use serde::Serialize;

use crate::check::{demand_factor, warn_overload};
use crate::progress::Progress;
use crate::table::{coverage, dur, dur_pct, dur_plain, num, pct, pm, share, whole, Table};
use crate::warmup::{self, WarmupChoice};
use crate::{load, Failure, Format};

/// Run settings shared by the commands that simulate; each overrides the scenario's `run:` value.
#[derive(Args, Debug, Clone)]
pub struct SimOptions {
    /// Replications (overrides run.replications).
    #[arg(long, value_name = "N")]
    pub replications: Option<u32>,
    /// Base seed of every random stream (overrides run.seed).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Simulated time per replication, warm-up included, e.g. "30 d" (overrides run.horizon).
    #[arg(long, value_name = "DURATION")]
    pub horizon: Option<String>,
    /// Statistics are cleared at this time, e.g. "2 d", or "auto" to choose it with MSER-5
    /// from pilot runs (overrides run.warmup).
    #[arg(long, value_name = "DURATION|auto")]
    pub warmup: Option<String>,
    /// Worker threads for replications (default: every core). Results do not depend on it.
    #[arg(long, value_name = "K")]
    pub threads: Option<usize>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
    /// Leave the wall-clock time out of the JSON, so that the same seed gives byte-identical output.
    #[arg(long)]
    pub no_wall_clock: bool,
}

/// Arguments of `layflow run`.
#[derive(Args, Debug)]
pub struct RunArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Layout to simulate (repeat, or separate by commas); default: every layout.
    #[arg(long, value_name = "NAME", value_delimiter = ',')]
    pub layout: Vec<String>,
    /// Scale every product's demand by this factor (overrides demand_factor).
    #[arg(long, value_name = "FACTOR")]
    pub demand: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    #[command(flatten)]
    pub sim: SimOptions,
}

#[derive(Serialize)]
struct RunOutput<'a> {
    plant: &'a str,
    scenario: String,
    horizon_s: f64,
    warmup_s: f64,
    /// Present when `--warmup auto` chose the warm-up.
    #[serde(skip_serializing_if = "Option::is_none")]
    warmup_auto: Option<WarmupChoice>,
    replications: u32,
    seed: u64,
    demand_factor: f64,
    confidence: f64,
    layouts: Vec<LayoutSummary>,
    events: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    wall_s: Option<f64>,
}

/// A duration flag's value in seconds (never negative), or `default` when absent.
pub fn duration_arg(flag: &str, v: &Option<String>, default: f64) -> Result<f64, Failure> {
    match v {
        None => Ok(default),
        Some(text) => {
            parse_duration(text).map_err(|e| Failure::input(format!("{flag} {text:?}: {e}"))).and_then(|s| {
                if s >= 0.0 {
                    Ok(s)
                } else {
                    Err(Failure::input(format!("{flag} {text:?}: must not be negative")))
                }
            })
        }
    }
}

/// Resolve layout names (default: all), with a did-you-mean on a miss.
pub fn layouts(plant: &Plant, names: &[String]) -> Result<Vec<usize>, Failure> {
    if names.is_empty() {
        return Ok((0..plant.layouts.len()).collect());
    }
    names
        .iter()
        .map(|n| {
            plant.layout_index(n).ok_or_else(|| {
                let known: Vec<&str> = plant.layouts.iter().map(|l| l.name.as_str()).collect();
                Failure::input(format!(
                    "--layout {n:?}: no such layout; the scenario has: {}",
                    known.join(", ")
                ))
            })
        })
        .collect()
}

/// Worker threads: the flag's, else one per core.
pub fn threads(arg: Option<usize>) -> Result<usize, Failure> {
    match arg {
        Some(0) => Err(Failure::input("--threads must be at least 1")),
        Some(k) => Ok(k),
        None => Ok(std::thread::available_parallelism().map_or(1, usize::from)),
    }
}

/// A pool of `--threads` workers (default: every core) for the replications.
pub fn pool(arg: Option<usize>) -> Result<rayon::ThreadPool, Failure> {
    let threads = threads(arg)?;
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| Failure::run(format!("cannot start {threads} worker threads: {e}")))
}

/// What a simulating command runs, from its options or else the scenario's `run:` settings.
pub struct RunBasics {
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Replications (at least 1).
    pub replications: u32,
    /// Base seed.
    pub seed: u64,
}

impl SimOptions {
    /// `--horizon`, `--replications` and `--seed`, checked, over the scenario's values.
    pub fn basics(&self, plant: &Plant) -> Result<RunBasics, Failure> {
        let horizon_s = duration_arg("--horizon", &self.horizon, plant.run.horizon_s)?;
        let replications = self.replications.unwrap_or(plant.run.replications);
        if replications == 0 {
            return Err(Failure::input("--replications must be at least 1"));
        }
        Ok(RunBasics { horizon_s, replications, seed: self.seed.unwrap_or(plant.run.seed) })
    }
}

/// Simulate and report.
pub fn run(args: &RunArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    let RunBasics { horizon_s, replications, seed } = args.sim.basics(&plant)?;
    let factor = demand_factor(&plant, args.demand)?;
    let which = layouts(&plant, &args.layout)?;
    let pool = pool(args.sim.threads)?;
    let (warmup_s, warmup_auto) =
        warmup::resolve(&args.sim.warmup, &plant, &which, horizon_s, factor, seed, &pool, args.sim.quiet)?;
    if !(horizon_s > warmup_s) {
        return Err(Failure::input(format!(
            "the horizon ({}) must be longer than the warm-up ({})",
            dur_plain(horizon_s),
            dur_plain(warmup_s)
        )));
    }

    let pic = StaticPicture::new(&plant, factor);
    warn_overload(&plant, &pic);

    let total = which.len() as u64 * u64::from(replications);
    let progress = Progress::new(total, args.sim.quiet);
    let started = Instant::now();
    let mut summaries = Vec::with_capacity(which.len());
    for &l in &which {
        progress.stage(format!("layout {}", plant.layouts[l].name));
        let spec = RunSpec { layout: l, horizon_s, warmup_s, demand_factor: factor, seed };
        let plan = Plan::new(&plant, l);
        let reps = pool.install(|| replicate(&plan, &spec, replications, |r| progress.done(r)));
        if let Some(why) = layflow_models::report::deadlock_message(&plant, &reps) {
            progress.finish();
            return Err(Failure::run(format!("layout \"{}\": {why}", plant.layouts[l].name)));
        }
        summaries.push(summarize(&plant, &spec, &pic, &reps));
    }
    progress.finish();
    let wall_s = started.elapsed().as_secs_f64();
    let events = summaries.iter().map(|s| s.events).sum();

    let out = RunOutput {
        plant: &plant.name,
        scenario: args.scenario.display().to_string(),
        horizon_s,
        warmup_s,
        warmup_auto,
        replications,
        seed,
        demand_factor: factor,
        confidence: layflow_models::report::CONFIDENCE,
        layouts: summaries,
        events,
        wall_s: (!args.sim.no_wall_clock).then_some(wall_s),
    };
    match args.format {
        Format::Json => println!("{}", serde_json::to_string_pretty(&out).expect("summaries serialise")),
        Format::Table => print!("{}", render(&plant, &out, wall_s)),
    }
    Ok(())
}

fn render(plant: &Plant, out: &RunOutput, wall_s: f64) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{}", out.plant);
    let _ = writeln!(
        s,
        "{} replications × {} ({} warm-up), seed {}, demand factor {}; ± is the 95% confidence half-width",
        out.replications,
        dur_plain(out.horizon_s),
        dur_plain(out.warmup_s),
        out.seed,
        num(out.demand_factor)
    );
    if let Some(w) = &out.warmup_auto {
        let _ = writeln!(s, "{}", w.describe());
    }
    let _ = writeln!(s, "{}", crate::table::speed(out.events, wall_s));
    for l in &out.layouts {
        let _ = writeln!(s, "\n== layout {} ==", l.layout);
        let (mut ft, ftp) = dur_pct(&l.flow_time_s);
        ft.push_str(&coverage(l.flow_time_s.n, out.replications));
        let mut t = Table::new(&["whole plant", "mean ± half-width", ""]);
        t.row(vec!["throughput".into(), format!("{} lots/h", pm(&l.throughput_per_h, 1.0)), String::new()]);
        t.row(vec!["flow time".into(), ft, ftp]);
        let fleets = !plant.fleets().is_empty();
        t.row(vec![
            "work in process".into(),
            format!("{} lots", pm(&l.wip_mean, 1.0)),
            if fleets {
                format!("on movers {} lots", pm(&l.wip_in_transit_mean, 1.0))
            } else {
                String::new()
            },
        ]);
        if fleets {
            let (mw, mwp) = dur_pct(&l.move_wait_s);
            t.row(vec!["wait for a mover".into(), mw, mwp]);
            t.row(vec![
                "distance loaded".into(),
                format!("{} m/h", pm(&l.distance_loaded_m_per_h, 1.0)),
                format!("static load-distance {} load-m/h", whole(l.load_distance_static_m_per_h)),
            ]);
            t.row(vec![
                "distance empty".into(),
                format!("{} m/h", pm(&l.distance_empty_m_per_h, 1.0)),
                String::new(),
            ]);
            t.row(vec![
                "fleet cost".into(),
                format!("{} /h", pm(&l.handling_cost_per_h, 1.0)),
                format!("static load-distance cost {} /h", num(l.handling_cost_static_per_h)),
            ]);
        }
        if let Some(o) = &l.overflow_moves_per_h {
            let _ = writeln!(s, "  loads taken to overflow areas: {} /h", pm(o, 1.0));
        }
        if let Some(o) = &l.turned_away_per_h {
            let _ = writeln!(s, "  lots turned away at the dock: {} /h", pm(o, 1.0));
        }
        s.push_str(&t.render(2));

        let mut t = Table::new(&["product", "throughput (lots/h)", "flow time"]);
        for p in &l.products {
            t.row(vec![
                p.product.clone(),
                pm(&p.throughput_per_h, 1.0),
                dur(&p.flow_time_s) + &coverage(p.flow_time_s.n, out.replications),
            ]);
        }
        s.push('\n');
        s.push_str(&t.render(2));

        let staging = l.departments.iter().any(|d| d.blocked_share.is_some());
        let breakdowns = l.departments.iter().any(|d| d.availability.is_some());
        let calendars = l.departments.iter().any(|d| d.utilization_scheduled.is_some());
        let setups = l.departments.iter().any(|d| d.setup_share.is_some());
        let mut header =
            vec!["department", "machines", "utilisation", "predicted", "queue (lots)", "WIP (lots)"];
        if calendars {
            header.extend(["of scheduled", "scheduled"]);
        }
        if setups {
            header.extend(["setup", "setup predicted"]);
        }
        if staging {
            header.push("blocked");
        }
        if breakdowns {
            header.extend(["availability", "MTBF/(MTBF+MTTR)"]);
        }
        let mut t = Table::new(&header);
        for (d, dep) in l.departments.iter().enumerate() {
            if plant.departments[d].role == DepartmentRole::Shipping {
                continue; // lots leave on arrival: nothing to show
            }
            let machines = plant.departments[d].machines;
            let (u, up) = if machines == 0 {
                ("dock".to_string(), String::new())
            } else {
                (pct(&dep.utilization), share(dep.utilization_predicted))
            };
            let mut row = vec![
                dep.department.clone(),
                machines.to_string(),
                u,
                up,
                pm(&dep.queue_mean, 1.0),
                pm(&dep.wip_mean, 1.0),
            ];
            if calendars {
                row.push(dep.utilization_scheduled.as_ref().map_or(String::new(), pct));
                row.push(dep.scheduled_share.map_or(String::new(), share));
            }
            if setups {
                row.push(dep.setup_share.as_ref().map_or(String::new(), pct));
                row.push(dep.setup_share_predicted.map_or(String::new(), share));
            }
            if staging {
                row.push(dep.blocked_share.as_ref().filter(|_| machines > 0).map_or(String::new(), pct));
            }
            if breakdowns {
                row.push(dep.availability.as_ref().map_or(String::new(), pct));
                row.push(dep.availability_predicted.map_or(String::new(), share));
            }
            t.row(row);
        }
        s.push('\n');
        s.push_str(&t.render(2));
        if calendars {
            let _ = writeln!(
                s,
                "  (utilisation is against clock time; of scheduled = busy ÷ the calendar's working time; \
                 scheduled = its share of the clock)"
            );
        }

        if !l.fleets.is_empty() {
            let blocked = l.fleets.iter().any(|f| f.blocked_share.is_some());
            let service = l.fleets.iter().any(|f| f.availability.is_some());
            let mut header = vec![
                "fleet",
                "movers",
                "busy",
                "loaded",
                "empty",
                "load/unload",
                "idle",
                "moves/h",
                "wait",
                "cost/h",
            ];
            if blocked {
                header.push("waiting full");
            }
            if service {
                header.push("availability");
            }
            let on_duty = l.fleets.iter().any(|f| f.utilization_scheduled.is_some());
            if on_duty {
                header.push("busy on duty");
            }
            let congestion = l.fleets.iter().any(|f| f.congestion_share.is_some());
            if congestion {
                header.push("held up in aisles");
            }
            let mut t = Table::new(&header);
            for f in &l.fleets {
                let mut row = vec![
                    f.fleet.clone(),
                    f.movers.to_string(),
                    pct(&f.utilization),
                    share(f.loaded_travel_share.mean),
                    share(f.empty_travel_share.mean),
                    share(f.handling_share.mean),
                    share(f.idle_share.mean),
                    pm(&f.moves_per_h, 1.0),
                    dur(&f.move_wait_s),
                    pm(&f.handling_cost_per_h, 1.0),
                ];
                if blocked {
                    row.push(f.blocked_share.map_or(String::new(), |b| share(b.mean)));
                }
                if service {
                    row.push(f.availability.as_ref().map_or(String::new(), pct));
                }
                if on_duty {
                    row.push(f.utilization_scheduled.as_ref().map_or(String::new(), pct));
                }
                if congestion {
                    row.push(f.congestion_share.as_ref().map_or(String::new(), pct));
                }
                t.row(row);
            }
            s.push('\n');
            s.push_str(&t.render(2));
        }
        if let Some(segments) = &l.segments {
            let mut t = Table::new(&[
                "segment",
                "from",
                "to",
                "traffic (movers/h)",
                "mean occupancy",
                "congestion (mover-s/h)",
                "per traversal",
            ]);
            for g in segments {
                t.row(vec![
                    g.segment.to_string(),
                    g.from.clone(),
                    g.to.clone(),
                    pm(&g.traversals_per_h, 1.0),
                    pm(&g.occupancy_mean, 1.0),
                    pm(&g.congestion_delay_s_per_h, 1.0),
                    pm(&g.congestion_delay_per_traversal_s, 1.0) + " s",
                ]);
            }
            s.push('\n');
            s.push_str(&t.render(2));
            let _ = writeln!(
                s,
                "  (aisles travelled segment by segment; congestion = waiting to enter a full segment or a \
                 busy intersection)"
            );
        }
    }
    if out.layouts.len() > 1 {
        let _ = writeln!(s, "\n== layouts side by side ==");
        let fleets = !plant.fleets().is_empty();
        let mut header = headline_header(fleets);
        header.push("static load-distance");
        let mut t = Table::new(&header);
        for l in &out.layouts {
            let mut row = headline_cells(l, fleets);
            row.push(format!("{} load-m/h", whole(l.load_distance_static_m_per_h)));
            t.row(row);
        }
        s.push_str(&t.render(2));
    }
    s
}

/// The headline columns of a layout side by side with others (`run`, `compare`).
pub fn headline_header(fleets: bool) -> Vec<&'static str> {
    let mut header = vec!["layout", "throughput (lots/h)", "flow time", "WIP (lots)"];
    if fleets {
        header.extend(["wait for a mover", "fleet cost (/h)"]);
    }
    header
}

/// A layout's cells under [`headline_header`].
pub fn headline_cells(l: &LayoutSummary, fleets: bool) -> Vec<String> {
    let mut row = vec![
        l.layout.clone(),
        pm(&l.throughput_per_h, 1.0),
        dur(&l.flow_time_s.estimate()),
        pm(&l.wip_mean, 1.0),
    ];
    if fleets {
        row.push(dur(&l.move_wait_s.estimate()));
        row.push(pm(&l.handling_cost_per_h, 1.0));
    }
    row
}
