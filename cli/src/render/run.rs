//! `run`'s report: what it prints as JSON, and the tables per layout and side by side.

use std::fmt::Write as _;

use layflow_models::metrics::LayoutSummary;
use layflow_models::plant::{DepartmentRole, Plant};
use layflow_models::study::warmup::WarmupChoice;
use serde::Serialize;

use super::table::{
    coverage, dur_in, dur_pct, dur_plain, money_head, money_unit, num, pct, pm, share, unit_for, whole, Table,
};

/// Everything `run` found, as written to JSON.
#[derive(Serialize)]
pub struct RunOutput<'a> {
    /// The plant's name.
    pub plant: &'a str,
    /// The currency every cost is in, when the scenario names one (`currency: EUR`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub currency: Option<&'a str>,
    /// The scenario file, as given.
    pub scenario: String,
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Warm-up, s.
    pub warmup_s: f64,
    /// Present when `--warmup auto` chose the warm-up.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub warmup_auto: Option<WarmupChoice>,
    /// Replications per layout or size.
    pub replications: u32,
    /// Base seed.
    pub seed: u64,
    /// Demand factor.
    pub demand_factor: f64,
    /// Confidence of every interval.
    pub confidence: f64,
    /// Each layout's summary.
    pub layouts: Vec<LayoutSummary>,
    /// Events simulated.
    pub events: u64,
    /// Wall-clock seconds (left out with --no-wall-clock).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wall_s: Option<f64>,
}

/// The report as tables.
pub fn render(plant: &Plant, out: &RunOutput, wall_s: f64) -> String {
    let mut s = String::new();
    let currency = plant.currency.as_deref();
    let cost_h = money_head("cost", "h", currency);
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
        let _ = writeln!(s, "{}", super::warnings::warmup_line(w));
    }
    let _ = writeln!(s, "{}", super::table::speed(out.events, wall_s));
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
            // The wait in its two parts, in the wait's own unit: only the first shrinks with more movers.
            let wait_u = unit_for([l.move_wait_s.mean]);
            t.row(vec![
                "  waiting to be assigned".into(),
                dur_in(&l.move_wait_assign_s, wait_u),
                "more movers shorten it".into(),
            ]);
            t.row(vec![
                "  drive to pick-up".into(),
                dur_in(&l.move_wait_drive_s, wait_u),
                "set by where idle movers wait".into(),
            ]);
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
                format!("{} {}", pm(&l.handling_cost_per_h, 1.0), money_unit("h", currency)),
                format!(
                    "static load-distance cost {} {}",
                    num(l.handling_cost_static_per_h),
                    money_unit("h", currency)
                ),
            ]);
        }
        // Crews: the registry's plant-wide people_cost_per_h and person_wait_s (not part of fleet cost).
        if let (Some(c), Some(w)) = (&l.people_cost_per_h, &l.person_wait_s) {
            t.row(vec![
                "wait for a person".into(),
                dur_in(w, unit_for([w.mean])),
                "every crew, operations and repairs".into(),
            ]);
            t.row(vec![
                "people cost".into(),
                format!("{} {}", pm(c, 1.0), money_unit("h", currency)),
                "every crew; not in fleet cost".into(),
            ]);
        }
        if let Some(d) = &l.due {
            let u = unit_for([d.tardiness_s.mean, d.lateness_s.mean, d.lateness_p95_s.mean]);
            t.row(vec!["late".into(), pct(&d.late_share), "lots shipped after their due date".into()]);
            t.row(vec!["tardiness".into(), dur_in(&d.tardiness_s, u), "on-time lots count 0".into()]);
            t.row(vec!["lateness".into(), dur_in(&d.lateness_s, u), "negative: early".into()]);
            t.row(vec!["lateness p95".into(), dur_in(&d.lateness_p95_s, u), String::new()]);
        }
        if let Some(o) = &l.overflow_moves_per_h {
            let _ = writeln!(s, "  loads taken to overflow areas: {} /h", pm(o, 1.0));
        }
        if let Some(o) = &l.turned_away_per_h {
            let _ = writeln!(s, "  lots turned away at the dock: {} /h", pm(o, 1.0));
        }
        s.push_str(&t.render(2));
        if plant.assembles() {
            let _ = writeln!(
                s,
                "  (throughput and flow time count every lot that left: shipped, or consumed into a kit; \
                 finished kits are the assembling product's throughput and kits/h below)"
            );
        }

        let due = l.products.iter().any(|p| p.due.is_some());
        let mut header = vec!["product", "throughput (lots/h)", "flow time"];
        if due {
            header.extend(["late", "tardiness", "lateness", "lateness p95"]);
        }
        // Assembly: the registry's labels of kits_per_h, kit_wait_s and part_wait_s.
        let kits = l.products.iter().any(|p| p.kits.is_some() || p.part_wait_s.is_some());
        if kits {
            header.extend(["kits/h", "kit wait", "part wait"]);
        }
        let mut t = Table::new(&header);
        let kit_u = unit_for(
            l.products
                .iter()
                .flat_map(|p| {
                    [p.kits.as_ref().map(|k| k.kit_wait_s.mean), p.part_wait_s.as_ref().map(|e| e.mean)]
                })
                .flatten(),
        );
        let flow_u = unit_for(l.products.iter().map(|p| p.flow_time_s.mean));
        let due_u = unit_for(l.products.iter().filter_map(|p| p.due.as_ref()).map(|d| d.lateness_p95_s.mean));
        for p in &l.products {
            let mut row = vec![
                p.product.clone(),
                pm(&p.throughput_per_h, 1.0),
                dur_in(&p.flow_time_s, flow_u) + &coverage(p.flow_time_s.n, out.replications),
            ];
            if due {
                match &p.due {
                    Some(d) => row.extend([
                        pct(&d.late_share),
                        dur_in(&d.tardiness_s, due_u),
                        dur_in(&d.lateness_s, due_u),
                        dur_in(&d.lateness_p95_s, due_u),
                    ]),
                    None => row.extend(["-".to_string(), "-".into(), "-".into(), "-".into()]),
                }
            }
            if kits {
                match &p.kits {
                    Some(k) => row.extend([pm(&k.kits_per_h, 1.0), dur_in(&k.kit_wait_s, kit_u)]),
                    None => row.extend(["-".to_string(), "-".into()]),
                }
                row.push(p.part_wait_s.as_ref().map_or_else(|| "-".to_string(), |e| dur_in(e, kit_u)));
            }
            t.row(row);
        }
        s.push('\n');
        s.push_str(&t.render(2));

        let staging = l.departments.iter().any(|d| d.blocked_share.is_some());
        let breakdowns = l.departments.iter().any(|d| d.availability.is_some());
        let calendars = l.departments.iter().any(|d| d.utilization_scheduled.is_some());
        let setups = l.departments.iter().any(|d| d.setup_share.is_some());
        let batches = l.departments.iter().any(|d| d.batch_size_mean.is_some());
        let people = l.departments.iter().any(|d| d.person_wait_s.is_some());
        let mut header =
            vec!["department", "machines", "utilisation", "predicted", "queue (lots)", "WIP (lots)"];
        if people {
            header.push("wait for a person");
        }
        if calendars {
            header.extend(["of scheduled", "scheduled"]);
        }
        if setups {
            header.extend(["setup", "setup predicted"]);
        }
        if batches {
            header.extend(["batch size", "batch fill"]);
        }
        if staging {
            header.push("blocked");
        }
        if breakdowns {
            header.extend(["availability", "MTBF/(MTBF+MTTR)"]);
        }
        let mut t = Table::new(&header);
        t.optional(&["MTBF/(MTBF+MTTR)", "setup predicted", "scheduled", "predicted", "WIP (lots)"]);
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
            if people {
                let u = unit_for(dep.person_wait_s.iter().map(|w| w.mean));
                row.push(dep.person_wait_s.as_ref().map_or(String::new(), |w| dur_in(w, u)));
            }
            if calendars {
                row.push(dep.utilization_scheduled.as_ref().map_or(String::new(), pct));
                row.push(dep.scheduled_share.map_or(String::new(), share));
            }
            if setups {
                row.push(dep.setup_share.as_ref().map_or(String::new(), pct));
                row.push(dep.setup_share_predicted.map_or(String::new(), share));
            }
            if batches {
                row.push(dep.batch_size_mean.as_ref().map_or(String::new(), |e| pm(e, 1.0)));
                row.push(dep.batch_fill_share.as_ref().map_or(String::new(), pct));
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

        if let Some(crews) = &l.crews {
            s.push('\n');
            s.push_str(&crews_table(crews, plant.currency.as_deref()));
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
                "assign",
                "drive",
                &cost_h,
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
            t.optional(&["loaded", "empty", "load/unload", "moves/h", "idle", &cost_h]);
            let wait_u = unit_for(l.fleets.iter().map(|f| f.move_wait_s.mean));
            let assign_u = unit_for(l.fleets.iter().map(|f| f.move_wait_assign_s.mean));
            let drive_u = unit_for(l.fleets.iter().map(|f| f.move_wait_drive_s.mean));
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
                    dur_in(&f.move_wait_s, wait_u),
                    dur_in(&f.move_wait_assign_s, assign_u),
                    dur_in(&f.move_wait_drive_s, drive_u),
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
            let _ = writeln!(
                s,
                "  (wait = assign + drive: waiting for a mover to be assigned, then its drive to the pick-up)"
            );
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
            t.optional(&["mean occupancy"]);
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
        if let Some(b) = &l.by_bucket {
            s.push_str(&super::by_bucket::layout_table(plant, l, b));
        }
    }
    if out.layouts.len() > 1 {
        let _ = writeln!(s, "\n== layouts side by side ==");
        let fleets = !plant.fleets().is_empty();
        let mut header = headline_header(fleets, currency);
        header.push("static load-distance".into());
        let header: Vec<&str> = header.iter().map(String::as_str).collect();
        let mut t = Table::new(&header);
        t.optional(&[&fleet_cost_head(currency), "WIP (lots)"]);
        let units = headline_units(&out.layouts);
        for l in &out.layouts {
            let mut row = headline_cells(l, fleets, units);
            row.push(format!("{} load-m/h", whole(l.load_distance_static_m_per_h)));
            t.row(row);
        }
        s.push_str(&t.render(2));
    }
    s
}

/// The headline columns of a layout side by side with others (`run`, `compare`).
pub fn headline_header(fleets: bool, currency: Option<&str>) -> Vec<String> {
    let mut header: Vec<String> =
        ["layout", "throughput (lots/h)", "flow time", "WIP (lots)"].map(String::from).into();
    if fleets {
        header.extend(["wait for a mover".to_string(), fleet_cost_head(currency)]);
    }
    header
}

/// The headline's cost column: `fleet cost (/h)`, or `fleet cost (EUR/h)` with a named currency.
pub fn fleet_cost_head(currency: Option<&str>) -> String {
    format!("fleet cost ({})", money_unit("h", currency))
}

/// The units of the headline's flow-time and wait columns, one each for every layout shown.
pub fn headline_units(layouts: &[LayoutSummary]) -> [(&'static str, f64); 2] {
    [
        unit_for(layouts.iter().map(|l| l.flow_time_s.mean)),
        unit_for(layouts.iter().map(|l| l.move_wait_s.mean)),
    ]
}

/// A layout's cells under [`headline_header`], durations in `units` (from [`headline_units`]).
pub fn headline_cells(l: &LayoutSummary, fleets: bool, units: [(&'static str, f64); 2]) -> Vec<String> {
    let mut row = vec![
        l.layout.clone(),
        pm(&l.throughput_per_h, 1.0),
        dur_in(&l.flow_time_s.estimate(), units[0]),
        pm(&l.wip_mean, 1.0),
    ];
    if fleets {
        row.push(dur_in(&l.move_wait_s.estimate(), units[1]));
        row.push(pm(&l.handling_cost_per_h, 1.0));
    }
    row
}

/// The crews' table: busy share against the prediction, busy on duty, wait for a person, cost.
fn crews_table(crews: &[layflow_models::metrics::CrewSummary], currency: Option<&str>) -> String {
    let cost_h = format!("people cost ({})", money_unit("h", currency));
    let on_duty = crews.iter().any(|c| c.utilization_scheduled.is_some());
    let mut header = vec!["crew", "people", "busy", "predicted", "wait", cost_h.as_str()];
    if on_duty {
        header.push("busy on duty");
    }
    let mut t = Table::new(&header);
    t.optional(&["predicted"]);
    let u = unit_for(crews.iter().map(|c| c.person_wait_s.mean));
    for c in crews {
        let mut row = vec![
            c.crew.clone(),
            c.size.to_string(),
            pct(&c.utilization),
            share(c.utilization_predicted),
            dur_in(&c.person_wait_s, u),
            pm(&c.people_cost_per_h, 1.0),
        ];
        if on_duty {
            row.push(c.utilization_scheduled.as_ref().map_or(String::new(), pct));
        }
        t.row(row);
    }
    t.render(2)
}
