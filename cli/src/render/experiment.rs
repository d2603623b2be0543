//! `experiment`, `merge` and `summarize` drawn for people: a line per finished design point, a row per point.

use layflow_models::experiment::results::{self, Percentile, PointSummary, Summary};
use layflow_models::experiment::{runs, Experiment, Header, Unit};
use layflow_models::metrics::Estimate;

use super::table::{dur, dur_in, num, pm, unit_for, with_currency, Table};

/// The per-point line shown when a design point's last unit finishes; `mine` are its units.
pub fn point_line(plan: &Experiment, header: &Header, mine: &[Unit], p: usize) -> String {
    let levels: Vec<String> =
        plan.factors.iter().zip(&header.points[p]).map(|(f, l)| format!("{}={l}", f.name)).collect();
    let mut s = format!(
        "point {}/{} done ({}): {} replications",
        p + 1,
        plan.point_count(),
        levels.join(", "),
        mine.len()
    );
    let refs: Vec<&Unit> = mine.iter().collect();
    if let Ok(pt) = results::summarize_point(header, p, &refs) {
        let pt = &pt;
        if let Some(e) = estimate(pt, "flow_time_s") {
            s.push_str(&format!(", flow time {}", dur(&e)));
        }
        if let Some(e) = estimate(pt, "throughput_per_h") {
            s.push_str(&format!(", throughput {}/h", pm(&e, 1.0)));
        }
    }
    s
}

/// A plant-level metric of a point as an estimate.
fn estimate(p: &PointSummary, metric: &str) -> Option<Estimate> {
    let m = p.metrics.iter().find(|m| m.scope == "plant" && m.metric == metric)?;
    Some(Estimate { mean: m.mean?, half_width: m.half_width, n: m.n })
}

/// The summary as a table: one row per design point: the headline metrics with 95% intervals.
pub fn render(s: &Summary, total_units: u64) -> String {
    let done: usize = s.points.iter().map(|p| p.replications).sum();
    let mut out = format!(
        "Experiment {}…: {} design points, {done} of {total_units} units; ± is the 95% confidence half-width\n",
        &s.plan_hash[..12],
        s.points.len()
    );
    let cost_head = with_currency("handling cost (/h)".into(), s.currency.as_deref());
    let mut head: Vec<String> = vec!["point".into()];
    head.extend(s.factors.iter().cloned());
    head.extend(
        ["reps", "throughput (lots/h)", "flow time", "flow time p95", "WIP (lots)", "wait for a mover"]
            .map(String::from),
    );
    head.push(cost_head.clone());
    if s.by.is_some() {
        head.push("peak WIP at".into());
    }
    let mut t = Table::new(&head);
    t.optional(&[cost_head.as_str(), "WIP (lots)", "flow time p95", "peak WIP at"]);
    // One unit per column, chosen from the column's values.
    let unit = |m: &str| unit_for(s.points.iter().filter_map(|p| estimate(p, m)).map(|e| e.mean));
    fn p95_of(p: &PointSummary) -> Option<&Percentile> {
        p.percentiles
            .iter()
            .find(|q| q.metric == "flow_time_s" && q.percentile == "p95" && q.observations > 0)
    }
    let (flow_u, wait_u) = (unit("flow_time_s"), unit("move_wait_s"));
    let p95_u = unit_for(s.points.iter().filter_map(p95_of).map(|q| q.value_s));
    for p in &s.points {
        let mut row = vec![p.point.to_string()];
        row.extend(p.levels.iter().cloned());
        row.push(p.replications.to_string());
        let number = |m: &str| estimate(p, m).map_or("-".into(), |e| pm(&e, 1.0));
        let duration = |m: &str, u| estimate(p, m).map_or("-".into(), |e| dur_in(&e, u));
        row.push(number("throughput_per_h"));
        row.push(duration("flow_time_s", flow_u));
        row.push(p95_of(p).map_or("-".into(), |q| format!("{} {}", num(q.value_s / p95_u.1), p95_u.0)));
        row.push(number("wip_mean"));
        row.push(duration("move_wait_s", wait_u));
        row.push(number("handling_cost_per_h"));
        if s.by.is_some() {
            let peak = p.by_bucket.as_ref().and_then(|b| b.peak.wip_mean.as_ref());
            row.push(peak.map_or("-".into(), |k| k.bucket.clone()));
        }
        t.row(row);
    }
    out.push_str(&t.render(2));
    if let Some(by) = &s.by {
        out.push_str(&super::table::wrap(
            &format!(
                "by {by}: every metric of every point in every bucket, with 95% intervals, in by_bucket.csv \
                 (and summary.json, with each point's peak WIP and peak wait p95 bucket, and the recovery from the peak); peak WIP at = the \
                 bucket with the highest mean WIP. A point's bucket means carry no verdict: a point that looks \
                 best over the whole window may still be worst in its busiest bucket."
            ),
            2,
        ));
    }
    out.push_str(
        "  Every metric, per point and per replication: summary.csv, summary.json and results.csv.\n",
    );
    out
}

/// Most run records `summarize` lists; the rest are counted (all are in runs.jsonl).
const RUNS_SHOWN: usize = 12;

/// The runs recorded in a folder, slowest first, so that a straggling shard
/// (a slow node, a requeue) stands out; with a line on how much slower the
/// slowest run was than the median.
pub fn runs_table(records: &[runs::RunRecord]) -> String {
    let mut order: Vec<&runs::RunRecord> = records.iter().collect();
    order.sort_by(|a, b| b.wall_s.total_cmp(&a.wall_s).then(a.shard_number().cmp(&b.shard_number())));
    let mut t = Table::new(&[
        "shard",
        "host",
        "job",
        "outcome",
        "started (UTC)",
        "wall time",
        "units run",
        "events/s",
    ]);
    for r in order.iter().take(RUNS_SHOWN) {
        t.row(vec![
            r.shard.clone(),
            r.host.clone(),
            match (&r.job, r.restarts) {
                (Some(j), Some(n)) if n > 0 => format!("{j} (restart {n})"),
                (Some(j), _) => j.clone(),
                (None, _) => "-".into(),
            },
            r.outcome.clone(),
            // To the second: 2026-12-04 02:10:07.
            r.started.trim_end_matches('Z').replace('T', " ").chars().take(19).collect(),
            wall(r.wall_s),
            if r.found_done > 0 {
                format!("{} (+{} found done) of {}", r.ran, r.found_done, r.units)
            } else {
                format!("{} of {}", r.ran, r.units)
            },
            if r.ran == 0 { "-".into() } else { format!("{:.2} M", r.events_per_s / 1e6) },
        ]);
    }
    let mut out = format!("Runs recorded in runs.jsonl, slowest first ({}):\n", records.len());
    out.push_str(&t.render(2));
    if records.len() > RUNS_SHOWN {
        out.push_str(&format!("  … and {} faster runs (all in runs.jsonl)\n", records.len() - RUNS_SHOWN));
    }
    let mut walls: Vec<f64> = records.iter().filter(|r| r.ran > 0).map(|r| r.wall_s).collect();
    if walls.len() >= 3 {
        walls.sort_by(f64::total_cmp);
        let median = walls[walls.len() / 2];
        let slowest = walls[walls.len() - 1];
        if median > 0.0 {
            out.push_str(&format!(
                "  The slowest run took {:.1}× the median run's wall time ({} vs {}); wall time also counts \
                 waiting for cores, so compare events/s to tell a slow node from a shard with more work.\n",
                slowest / median,
                wall(slowest),
                wall(median)
            ));
        }
    }
    out
}

/// A wall-clock time for people: seconds, minutes or hours.
fn wall(s: f64) -> String {
    if s < 120.0 {
        format!("{s:.1} s")
    } else if s < 7200.0 {
        format!("{:.1} min", s / 60.0)
    } else {
        format!("{:.2} h", s / 3600.0)
    }
}
