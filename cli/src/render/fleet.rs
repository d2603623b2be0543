//! `fleet`'s report: what it prints as JSON, the analytic estimate in words, and the sweep as a table.

use std::fmt::Write as _;

use layflow_models::metrics::registry::find;
use layflow_models::metrics::{Estimate, Scope, Unit};
use layflow_models::study::fleet::{Advice, AdviceKind, Analytic, FleetBuckets, SizeResult};
use layflow_models::study::targets::{Op, Target};
use layflow_models::study::warmup::WarmupChoice;
use serde::Serialize;

use super::table::{dur_in, dur_plain, money_head, num, pct, pm, share, unit_for, Table};

/// Everything `fleet` found, as written to JSON.
#[derive(Serialize)]
pub struct FleetOutput {
    /// The plant's name.
    pub plant: String,
    /// The currency every cost is in, when the scenario names one (`currency: EUR`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub currency: Option<String>,
    /// The scenario file, as given.
    pub scenario: String,
    /// The fleet sized.
    pub fleet: String,
    /// The layout it ran under.
    pub layout: String,
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Warm-up, s.
    pub warmup_s: f64,
    /// What MSER-5 chose, with `--warmup auto`.
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
    /// The analytic estimate under both empty-travel rules.
    pub analytic: Analytic,
    /// The targets, as parsed.
    pub targets: Vec<Target>,
    /// One entry per size, in increasing order.
    pub sizes: Vec<SizeResult>,
    /// The smallest size that met every target with 95% confidence.
    pub smallest_meeting_targets: Option<u32>,
    /// What to do next, and whether the analytic estimate and the simulation agree.
    pub advice: Advice,
    /// Events simulated.
    pub events: u64,
    /// Wall-clock seconds (left out with --no-wall-clock).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wall_s: Option<f64>,
    /// With `--by`: every metric of every size in every time bucket, and each size's peaks.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub by_bucket: Option<FleetBuckets>,
}

/// The analytic estimate in words, with its arithmetic.
pub fn render_analytic(fleet: &str, a: &Analytic) -> String {
    let mut s = String::new();
    let m = &a.minimum_empty_flow;
    let c = &a.empty_equals_loaded;
    let _ = writeln!(
        s,
        "Analytic estimate for fleet {} (facilities-planning formula): movers = trips/h × (loaded travel + empty \
         travel + load/unload) ÷ (3600 s × availability {} × efficiency {})",
        fleet,
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

/// The sweep as a table, and the advice.
pub fn render(out: &FleetOutput, wall_s: f64) -> String {
    let mut s = String::new();
    let (cost_h, cost_load) = (
        money_head("cost", "h", out.currency.as_deref()),
        money_head("cost", "load", out.currency.as_deref()),
    );
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
        let _ = writeln!(s, "{}", super::warnings::warmup_line(w));
    }
    let _ = writeln!(s, "{}; ± is the 95% confidence half-width\n", super::table::speed(out.events, wall_s));
    let has = |name: &str| out.sizes.iter().any(|r| r.metrics.get(name).is_some());
    let mut head = vec![
        "movers",
        "busy",
        "analytic",
        "loaded",
        "empty",
        "load/unload",
        "idle",
        "wait",
        "assign",
        "drive",
        "wait p95",
        "moves/h",
        "throughput",
        "WIP",
        "flow time",
        &cost_h,
        &cost_load,
    ];
    let scheduled = has("utilization_scheduled");
    if scheduled {
        head.insert(2, "busy (on duty)");
    }
    // Optional columns, each where the plant has the feature, under the registry's label.
    let optional: Vec<&str> =
        ["blocked_share", "availability", "congestion_share"].into_iter().filter(|n| has(n)).collect();
    for name in &optional {
        head.push(find(Scope::Fleet, name).map_or(*name, |d| d.label));
    }
    let tnames: Vec<String> = (0..out.targets.len()).map(|i| format!("target {}", i + 1)).collect();
    head.extend(tnames.iter().map(String::as_str));
    let mut t = Table::new(&head);
    // What to leave out, first to last, when the table would not fit.
    t.optional(&[
        "loaded",
        "empty",
        "load/unload",
        "moves/h",
        "idle",
        "WIP",
        "throughput",
        &cost_load,
        "flow time",
    ]);
    t.optional(&["busy (on duty)"]);
    t.optional(&optional.iter().map(|n| find(Scope::Fleet, n).map_or(*n, |d| d.label)).collect::<Vec<_>>());
    // The drive stays: it is the floor more movers cannot remove; assign = wait − drive.
    t.optional(&["assign"]);
    let none = Estimate { mean: f64::NAN, half_width: None, n: 0 };
    // One unit per column, chosen from the column's values.
    let unit = |name: &str| unit_for(out.sizes.iter().filter_map(|r| r.metrics.get(name)).map(|e| e.mean));
    let (wait_u, p95_u, flow_u) = (unit("move_wait_s"), unit("move_wait_p95_s"), unit("flow_time_s"));
    let (assign_u, drive_u) = (unit("move_wait_assign_s"), unit("move_wait_drive_s"));
    for r in &out.sizes {
        let m = |name: &str| r.metrics.get(name).copied().unwrap_or(none);
        let mut row = vec![
            r.movers.to_string(),
            pct(&m("utilization")),
            share(r.utilization_analytic),
            share(m("loaded_travel_share").mean),
            share(m("empty_travel_share").mean),
            share(m("handling_share").mean),
            share(m("idle_share").mean),
            dur_in(&m("move_wait_s"), wait_u),
            dur_in(&m("move_wait_assign_s"), assign_u),
            dur_in(&m("move_wait_drive_s"), drive_u),
            dur_in(&m("move_wait_p95_s"), p95_u),
            pm(&m("moves_per_h"), 1.0),
            pm(&m("throughput_per_h"), 1.0),
            pm(&m("wip_mean"), 1.0),
            dur_in(&m("flow_time_s"), flow_u),
            pm(&m("handling_cost_per_h"), 1.0),
            pm(&m("handling_cost_per_load"), 1.0),
        ];
        if scheduled {
            row.insert(2, pct(&m("utilization_scheduled")));
        }
        for name in &optional {
            row.push(pct(&m(name)));
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
        "  busy = loaded + empty + load/unload + waiting at a full area + held up in aisles (the same busy share \
         `run` prints); analytic = the minimum-empty-flow estimate's busy share at that size; wait = assign \
         (waiting for a mover to be assigned; more movers shorten it) + drive (the assigned mover's drive to the \
         pick-up; more movers shorten it only by leaving an idle one nearer); wait p95 = each replication's 95th percentile, averaged"
    );
    if optional.contains(&"congestion_share") {
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
        let _ = writeln!(s, "  target {}: {} ({})", i + 1, tg.describe(), tg.what);
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
             --target 'move_wait_p95_s <= 2 min' --target 'utilization <= 85%'."
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
            "No size from {} to {} meets every target with 95% confidence (analytic estimate: {analytic}).",
            out.sizes.first().map_or(0, |r| r.movers),
            out.sizes.last().map_or(0, |r| r.movers)
        ),
    };
    s.push_str(&render_advice(out));
    s.push_str(&render_agreement(out));
    if let Some(b) = &out.by_bucket {
        s.push_str(&render_by_bucket(out, b));
    }
    s
}

/// The sizes side by side per time bucket: the sized fleet's p95 wait and
/// busy share in the busiest buckets, each size's peaks, and what a bucket
/// table cannot tell about the recommended size.
fn render_by_bucket(out: &FleetOutput, fb: &FleetBuckets) -> String {
    let mut s = String::new();
    let sizes: Vec<u32> = out.sizes.iter().map(|r| r.movers).collect();
    let Some(last) = fb.summaries.len().checked_sub(1) else { return s };
    // The size the buckets are ranked and columns kept by: the recommended one, else the largest.
    let at = out.smallest_meeting_targets.and_then(|n| sizes.iter().position(|&m| m == n)).unwrap_or(last);
    let reference = &fb.summaries[at];
    let rows = super::by_bucket::shown(reference);
    let fleet = out.fleet.as_str();
    let get = |i: usize, k: Option<usize>, name: &str| fb.summaries[i].get(k, fleet, name);
    let wait_u = unit_for(
        (0..fb.summaries.len())
            .flat_map(|i| rows.iter().map(move |&k| (i, k)))
            .filter_map(|(i, k)| get(i, Some(k), "move_wait_p95_s"))
            .map(|e| e.mean),
    );
    let mut head = vec!["bucket".to_string()];
    for n in &sizes {
        head.push(format!("{n}: wait p95"));
        head.push(format!("{n}: busy"));
    }
    let mut t = Table::new(&head);
    // Sizes farthest from the reference size are hidden first to fit.
    let mut order: Vec<usize> = (0..sizes.len()).filter(|&i| i != at).collect();
    order.sort_by_key(|&i| (std::cmp::Reverse(i.abs_diff(at)), i));
    for i in order {
        t.optional(&[format!("{}: busy", sizes[i]), format!("{}: wait p95", sizes[i])]);
    }
    let cell = |e: Option<Estimate>, f: &dyn Fn(&Estimate) -> String| match e {
        Some(e) if e.mean.is_finite() => f(&e),
        _ => "-".to_string(),
    };
    let line = |k: Option<usize>, name: &str| {
        let mut row = vec![name.to_string()];
        for i in 0..sizes.len() {
            row.push(cell(get(i, k, "move_wait_p95_s"), &|e| dur_in(e, wait_u)));
            row.push(cell(get(i, k, "utilization"), &pct));
        }
        row
    };
    for &k in &rows {
        t.row(line(Some(k), &reference.buckets[k].bucket));
    }
    t.row(line(None, layflow_models::metrics::by_bucket::WHOLE));
    s.push('\n');
    s.push_str(&super::table::wrap(
        &format!(
            "Fleet {fleet} {} ({}): each size's wait p95 (the 95th percentile of the wait for a mover of moves \
             that start in the bucket, averaged over replications) and busy share",
            super::by_bucket::heading(reference),
            if reference.cyclic { "every cycle folded onto one" } else { "in order through the run" },
        ),
        2,
    ));
    s.push_str(&t.render(2));
    if rows.len() < reference.buckets.len() {
        s.push_str(&super::table::wrap(
            &format!(
                "the {} busiest of {} buckets by plant WIP at {}, in time order; --wide shows every \
                 bucket, --format json every metric of every size in every bucket",
                rows.len(),
                reference.buckets.len(),
                movers(u64::from(sizes[at]))
            ),
            2,
        ));
    }
    for p in &fb.peaks {
        let mut parts = Vec::new();
        if let Some(w) = &p.fleet_move_wait_p95_s {
            let e = Estimate { mean: w.mean, half_width: w.half_width, n: 0 };
            parts.push(format!(
                "{fleet} wait p95 highest at {}: {}",
                w.bucket,
                dur_in(&e, unit_for([w.mean]))
            ));
        }
        if let Some(w) = &p.plant.wip_mean {
            let e = Estimate { mean: w.mean, half_width: w.half_width, n: 0 };
            parts.push(format!("plant WIP highest at {}: {} lots", w.bucket, pm(&e, 1.0)));
        }
        if !parts.is_empty() {
            s.push_str(&super::table::wrap(
                &format!("peak at {}: {}", movers(u64::from(p.movers)), parts.join("; ")),
                2,
            ));
        }
    }
    s.push_str(&peak_verdicts(out, fb, at));
    s
}

/// What the bucket table cannot tell, in one line, and for the recommended
/// size each target whose worst bucket misses it on average, said outright.
fn peak_verdicts(out: &FleetOutput, fb: &FleetBuckets, at: usize) -> String {
    let mut s = String::new();
    s.push_str(&super::table::wrap(
        "Targets are judged over the whole window only: a bucket's mean carries no verdict, so a size that \
         meets a target on average may still miss it in its busiest bucket.",
        2,
    ));
    let Some(n) = out.smallest_meeting_targets else { return s };
    let b = &fb.summaries[at];
    for t in &out.targets {
        let (subject, name) = t.name.split_once('/').unwrap_or(("", t.name.as_str()));
        let lower_better = matches!(t.op, Op::AtMost | Op::Below);
        let worst =
            (0..b.buckets.len())
                .filter_map(|k| b.get(Some(k), subject, name).map(|e| (k, e)))
                .filter(|(_, e)| e.mean.is_finite())
                .max_by(|x, y| {
                    if lower_better {
                        x.1.mean.total_cmp(&y.1.mean)
                    } else {
                        y.1.mean.total_cmp(&x.1.mean)
                    }
                });
        let Some((k, e)) = worst else { continue };
        let misses = match t.op {
            Op::AtMost => e.mean > t.value,
            Op::Below => e.mean >= t.value,
            Op::AtLeast => e.mean < t.value,
            Op::Above => e.mean <= t.value,
        };
        // Mean and half-width to the same decimals, in one unit.
        let value = match t.unit {
            Unit::Seconds => super::table::dur_in(&e, super::table::unit_for([e.mean])),
            Unit::Share => super::table::pct(&e),
            _ => super::table::pm(&e, 1.0),
        };
        let text = if misses {
            format!(
                "size {n} meets the target '{}' over the whole window but its {} at {} is {value}",
                t.text, t.name, b.buckets[k].bucket
            )
        } else {
            format!(
                "size {n} meets the target '{}' in every bucket on average too (worst: {} at {} is {value})",
                t.text, t.name, b.buckets[k].bucket
            )
        };
        s.push_str(&super::table::wrap(&text, 2));
    }
    s
}

/// A target's value in its own unit: a duration, a percentage or a number.
fn in_unit(t: Option<&Target>, x: f64) -> String {
    match t.map(|t| t.unit) {
        // Seconds up to ten minutes, as the table's wait columns print them.
        Some(Unit::Seconds) if x.abs() < 600.0 => format!("{} s", num(x)),
        Some(Unit::Seconds) => dur_plain(x),
        Some(Unit::Share) => format!("{} points", num(x * 100.0)),
        _ => num(x),
    }
}

/// A signed change in the target's unit, e.g. "+0.000 s ± 0.000 s".
fn change(t: Option<&Target>, e: &Estimate) -> String {
    let sign = if e.mean >= 0.0 { "+" } else { "−" };
    let hw = e.half_width.map_or(String::new(), |h| format!(" ± {}", in_unit(t, h)));
    format!("{sign}{}{hw}", in_unit(t, e.mean.abs()))
}

/// The advice in words: what the sizes show for each failing target, and what to do.
fn render_advice(out: &FleetOutput) -> String {
    let mut s = String::new();
    let a = &out.advice;
    let n = out.sizes.len();
    let (small, large) = if n >= 2 { (out.sizes[n - 2].movers, out.sizes[n - 1].movers) } else { (0, 0) };
    let target_of = |text: &str| out.targets.iter().position(|t| t.text == text);
    for f in &a.failing {
        let i = target_of(&f.target);
        let t = i.map(|i| &out.targets[i]);
        let name =
            i.map_or(f.target.clone(), |i| format!("target {} ({})", i + 1, out.targets[i].describe()));
        let step = f.last_step_change.as_ref().map(|d| {
            format!(
                "from {small} to {large} movers it changed by {} (paired, common random numbers)",
                change(t, d)
            )
        });
        if f.below_floor {
            let fl = f.floor.as_ref().expect("below a floor");
            let _ = writeln!(
                s,
                "  {name} cannot be met by fleet size alone: at {large} movers the assigned mover's drive to the \
                 pick-up alone is {} ({}), and a wait is never shorter than its drive; more movers only shorten \
                 the wait to be assigned a mover.{}",
                in_unit(t, fl.estimate.mean),
                fl.metric,
                step.map_or(String::new(), |x| format!(" Last step: {x}."))
            );
        } else if f.improving {
            let _ = writeln!(s, "  {name}: still improving; {}.", step.unwrap_or_default());
        } else if f.unclear {
            let _ =
                writeln!(s, "  {name}: perhaps improving, within the noise; {}.", step.unwrap_or_default());
        } else if let Some(step) = step {
            let floor = f.floor.as_ref().map_or(String::new(), |fl| {
                format!(
                    "; the drive to the pick-up at {large} movers is {} ({})",
                    in_unit(t, fl.estimate.mean),
                    fl.metric
                )
            });
            let _ = writeln!(s, "  {name}: not improving with size: {step}{floor}.");
        }
    }
    let _ = match a.kind {
        AdviceKind::NoTargets | AdviceKind::Met => Ok(()),
        AdviceKind::MoreReplications => {
            writeln!(s, "Only 'unsure' verdicts stand in the way: add replications (--replications) to settle them.")
        }
        AdviceKind::AddSizes => writeln!(
            s,
            "Only one size was simulated, so nothing shows yet whether more movers help: add larger sizes to \
             --sizes."
        ),
        AdviceKind::TryLargerSizes => writeln!(
            s,
            "The failing metrics were still improving at the largest sizes: try larger sizes (above {large}), or \
             looser targets."
        ),
        AdviceKind::WithinNoise => writeln!(
            s,
            "The last step's change is within the noise of {} replications: add replications (--replications) \
             to tell whether larger sizes would help.",
            out.replications
        ),
        AdviceKind::NotImprovingWithSize => writeln!(
            s,
            "Larger sizes are unlikely to help: the failing metrics did not improve between the two largest sizes. \
             Loosen the targets or change what the fleet does{}",
            if a.levers.is_empty() { "." } else { ":" }
        ),
        AdviceKind::SizeCannotMeet => writeln!(
            s,
            "Do not buy more movers for this: the wait cannot go below the drive to the pick-up (floor {}). \
             What lowers the floor:",
            a.floor_s.map_or(String::new(), |x| format!("{} s", num(x)))
        ),
    };
    for l in &a.levers {
        let _ = writeln!(s, "  - {l}");
    }
    s
}

fn movers(n: u64) -> String {
    if n == 1 {
        "1 mover".into()
    } else {
        format!("{n} movers")
    }
}

/// One sentence: do the analytic estimate and the simulation say the same thing?
fn render_agreement(out: &FleetOutput) -> String {
    let c = &out.advice.analytic;
    let busy = format!(
        "at {} the formula puts the fleet {} busy and the simulation {}",
        movers(u64::from(c.at_movers)),
        share(c.utilization_analytic),
        share(c.utilization_simulated)
    );
    let sizes = match c.simulated_movers {
        Some(n) => format!(
            "the analytic estimate asks for {} and the simulation's smallest adequate size is {n}",
            movers(c.analytic_movers)
        ),
        None if out.targets.is_empty() => {
            format!("the analytic estimate asks for {}", movers(c.analytic_movers))
        }
        None => format!(
            "the analytic estimate asks for {} and no size simulated met the targets",
            movers(c.analytic_movers)
        ),
    };
    if c.agree {
        format!("Analytic and simulation agree: {sizes}; {busy}.\n")
    } else {
        format!("Analytic and simulation differ: {sizes}; {busy}. Why: {}.\n", c.reasons.join("; "))
    }
}
