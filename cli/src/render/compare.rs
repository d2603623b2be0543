//! `compare`'s report as tables: the layouts side by side, paired differences, selection and demand sweep.

use std::fmt::Write as _;

use layflow_models::metrics::{find_metric, Kind, LayoutSummary, Metric};
use layflow_models::plant::Plant;
use layflow_models::study::compare::{CompareOutput, Difference};

use super::table::{dur_in, dur_plain, pm, unit_for, whole, Table};

/// A signed difference in the metric's unit (durations in `unit`, shared by
/// the row), with its half-width and a mark when the interval excludes zero.
fn diff_cell(d: &Difference, kind: Kind, unit: (&str, f64)) -> String {
    super::table::difference_cell(&d.estimate(), d.excludes_zero, kind, unit)
}

/// Plant metrics shown in the differences table (each with its registry label).
const SHOWN: &[&str] = &[
    "throughput_per_h",
    "flow_time_s",
    "wip_mean",
    "wip_in_transit_mean",
    "move_wait_s",
    "move_wait_assign_s",
    "move_wait_drive_s",
    "distance_loaded_m_per_h",
    "distance_empty_m_per_h",
    "handling_cost_per_h",
    // Only where the aisle network is travelled segment by segment.
    "congestion_delay_s_per_h",
];

/// The comparison as tables.
pub fn render(plant: &Plant, out: &CompareOutput, metric_list: &[Metric], wall_s: f64) -> String {
    let mut s = String::new();
    let fleets = !plant.fleets().is_empty();
    let _ = writeln!(s, "{}", out.plant);
    let n_layouts = out.levels.first().map_or(0, |l| l.layouts.len());
    let reps = match out.levels.first().and_then(|l| l.selection.as_ref()) {
        Some(_) => "replications as the selection needed".to_string(),
        None => format!("{} replications", out.replications),
    };
    let _ = writeln!(
        s,
        "{n_layouts} layouts × {reps} × {} ({} warm-up), seed {}; common random numbers: replication i of every \
         layout sees the same lots, times and routing choices",
        dur_plain(out.horizon_s),
        dur_plain(out.warmup_s),
        out.seed
    );
    if let Some(w) = &out.warmup_auto {
        let _ = writeln!(s, "{}", super::warnings::warmup_line(w));
    }
    let _ = writeln!(s, "{}; ± is the 95% confidence half-width", super::table::speed(out.events, wall_s));
    let ranked = &metric_list[find_metric(metric_list, &out.ranked_on).expect("ranked metric exists").0];
    for lv in &out.levels {
        let _ = writeln!(s, "\n== demand ×{} ==", lv.demand_factor);
        if !lv.overloaded.is_empty() {
            let _ = writeln!(
                s,
                "  OVERLOADED: {} predicted at or over capacity; queues grow without bound at this demand",
                lv.overloaded.join(", ")
            );
        }
        let currency = plant.currency.as_deref();
        let mut header = super::run::headline_header(fleets, currency);
        header.extend(["static load-distance (load-m/h)", "static rank", "simulated rank"].map(String::from));
        let header: Vec<&str> = header.iter().map(String::as_str).collect();
        let mut t = Table::new(&header);
        t.optional(&[
            &super::run::fleet_cost_head(currency),
            "WIP (lots)",
            "static load-distance (load-m/h)",
        ]);
        let units = super::run::headline_units(&lv.layouts);
        for (l, r) in lv.layouts.iter().zip(&lv.ranking) {
            let mut row = super::run::headline_cells(l, fleets, units);
            row.extend([
                whole(l.load_distance_static_m_per_h),
                r.static_rank.to_string(),
                r.simulated_rank.to_string(),
            ]);
            t.row(row);
        }
        s.push_str(&t.render(2));
        // A layout disagrees when some other layout is ordered the opposite
        // way by the two ranks; a tie on either side is no contradiction.
        let disagree: Vec<&str> = lv
            .ranking
            .iter()
            .filter(|a| {
                lv.ranking.iter().any(|b| {
                    (a.static_rank < b.static_rank && a.simulated_rank > b.simulated_rank)
                        || (a.static_rank > b.static_rank && a.simulated_rank < b.simulated_rank)
                })
            })
            .map(|r| r.layout.as_str())
            .collect();
        // Crews that walk to repairs feel the layout even with instant moves.
        let walks = plant.crews.iter().any(|c| c.walk_speed.is_some());
        let _ = if !fleets && !walks {
            writeln!(
                s,
                "  Moves are instant in this scenario (moves: instant), so the layout cannot change the \
                 simulated results; only the static picture differs."
            )
        } else if disagree.is_empty() {
            writeln!(
                s,
                "  Simulated rank (on mean {}) agrees with the static load-distance rank.",
                super::table::with_currency(ranked.human(), plant.currency.as_deref())
            )
        } else {
            writeln!(
                s,
                "  Simulated rank (on mean {}) DISAGREES with the static load-distance rank for {}: queues, \
                 movers and empty trips change the order. Check below whether the difference is real (*).",
                super::table::with_currency(ranked.human(), plant.currency.as_deref()),
                disagree.join(", ")
            )
        };

        let others: Vec<&LayoutSummary> = lv.layouts.iter().filter(|l| l.layout != out.baseline).collect();
        let heads: Vec<String> = std::iter::once("paired difference".to_string())
            .chain(others.iter().map(|l| format!("{} − {}", l.layout, out.baseline)))
            .collect();
        let mut t = Table::new(&heads);
        let mut rows: Vec<(String, usize)> = SHOWN
            .iter()
            .filter(|name| {
                fleets || !matches!(**name, "wip_in_transit_mean") && !name.starts_with("move_wait")
            })
            .filter(|name| fleets || !name.contains("distance") && !name.contains("cost"))
            .filter_map(|name| {
                find_metric(metric_list, name).map(|(m, _)| {
                    (super::table::with_currency(metric_list[m].human(), plant.currency.as_deref()), m)
                })
            })
            .collect();
        for p in &plant.products {
            let label = format!("{}/flow_time_s", p.id);
            let m = find_metric(metric_list, &label).expect("product metric").0;
            rows.push((metric_list[m].human(), m));
        }
        for (label, m) in rows {
            let metric = &metric_list[m];
            let mut row = vec![label];
            let ds: Vec<&Difference> = others
                .iter()
                .map(|o| {
                    lv.differences
                        .iter()
                        .find(|d| {
                            d.layout == o.layout && d.metric == metric.name && d.subject == metric.subject
                        })
                        .expect("a difference per metric")
                })
                .collect();
            // One unit per row: the one that suits the largest difference in it.
            let unit = unit_for(ds.iter().flat_map(|d| [d.mean, d.half_width.unwrap_or(0.0)]));
            for d in ds {
                row.push(diff_cell(d, metric.kind, unit));
            }
            t.row(row);
        }
        s.push('\n');
        s.push_str(&t.render(2));
        let _ = writeln!(
            s,
            "  * the 95% paired interval excludes zero: a real difference, not noise. Every metric is in \
             --format json/csv and --out."
        );
        s.push_str(&super::by_bucket::compare_table(lv, &out.baseline, ranked, plant.currency.as_deref()));
        if let Some(sel) = &lv.selection {
            s.push('\n');
            s.push_str(&super::select::render(sel, ranked));
        }
    }
    if out.levels.len() > 1 {
        s.push_str(&sweep(out));
    }
    s
}

/// Each layout at each demand level: where does a layout break down?
fn sweep(out: &CompareOutput) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "\n== demand sweep ==");
    let heads: Vec<String> = std::iter::once("layout".to_string())
        .chain(out.levels.iter().map(|l| {
            let mark = if l.overloaded.is_empty() { "" } else { " (overloaded)" };
            format!("×{}{mark}", l.demand_factor)
        }))
        .collect();
    for (title, pick) in [("flow time", 0usize), ("throughput (lots/h)", 1), ("WIP (lots)", 2)] {
        let mut h = heads.clone();
        h[0] = format!("{title}: layout");
        let mut t = Table::new(&h);
        let flow_u = unit_for(out.levels.iter().flat_map(|lv| lv.layouts.iter().map(|x| x.flow_time_s.mean)));
        for (li, l) in out.levels[0].layouts.iter().enumerate() {
            let mut row = vec![l.layout.clone()];
            for lv in &out.levels {
                let x = &lv.layouts[li];
                row.push(match pick {
                    0 => dur_in(&x.flow_time_s.estimate(), flow_u),
                    1 => pm(&x.throughput_per_h, 1.0),
                    _ => pm(&x.wip_mean, 1.0),
                });
            }
            t.row(row);
        }
        s.push_str(&t.render(2));
        s.push('\n');
    }
    let _ = writeln!(
        s,
        "  A layout breaks down where its flow time and WIP climb steeply from one level to the next; \
         at an overloaded level they grow with the horizon and the numbers only say \"too much\"."
    );
    s
}
