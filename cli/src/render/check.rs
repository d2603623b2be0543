//! `check`'s static picture drawn as tables and as JSON.

use std::fmt::Write as _;
use std::path::Path;

use layflow_models::analysis::StaticPicture;
use layflow_models::areas;
use layflow_models::measured::MeasuredChart;
use layflow_models::plant::{Demand, DepartmentRole, Footprint, Handling, LoadStart, Plant, QueueOrder};
use layflow_models::units::format_duration;
use serde_json::json;

use super::table::{count, num, share, whole, Table};

/// The static picture as tables.
/// With `measured`, the from-to chart and the load-distance come from it, and the output says so.
pub fn render(plant: &Plant, path: &Path, pic: &StaticPicture, measured: Option<&MeasuredChart>) -> String {
    let mut s = String::new();
    let docks = plant.departments.iter().filter(|d| d.role != DepartmentRole::Work).count();
    let _ = writeln!(s, "{}", plant.name);
    let _ = writeln!(
        s,
        "scenario {} is valid: {}, {} ({}), {}, {}, {}",
        path.display(),
        count(plant.locations.len(), "location"),
        count(plant.departments.len(), "department"),
        count(docks, "dock"),
        count(plant.products.len(), "product"),
        count(plant.layouts.len(), "layout"),
        match &plant.handling {
            Handling::Instant => "instant moves (no fleet)".to_string(),
            Handling::Fleets(f) => count(f.len(), "fleet"),
        }
    );
    let _ = writeln!(s, "demand factor {}", num(pic.demand_factor));
    let network = plant.aisles.as_ref().map_or_else(String::new, |n| {
        let travel = if n.needs_simulation() {
            "; movers travel it segment by segment (capacities, speed limits or zones)"
        } else {
            "; no capacity, speed limit or zone, so each trip is one leg"
        };
        format!(" ({}, {}{travel})", count(n.nodes.len(), "node"), count(n.segments.len(), "segment"))
    });
    let _ = writeln!(s, "distances: {}{network}", plant.distance_rule.describe());
    if let Some(m) = measured {
        let _ = writeln!(s, "{}", measured_note(plant, m));
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Demand: long-run mean lots per hour (demand factor applied)");
    let w = plant.products.iter().map(|p| p.id.chars().count()).max().unwrap_or(0);
    for (p, prod) in plant.products.iter().enumerate() {
        let _ = writeln!(
            s,
            "  {:<w$}  {:>7.2}  {}",
            prod.id,
            pic.product_rate_per_h[p],
            demand_pattern(plant, p, pic.demand_factor)
                + &prod.lot.map_or(String::new(), |l| {
                    format!(
                        "; lots of {} units, {} load{} of up to {}, next step starts on the {} load",
                        l.quantity,
                        l.loads(),
                        if l.loads() == 1 { "" } else { "s" },
                        l.transfer_batch,
                        if l.start == LoadStart::FirstLoad { "first" } else { "last" }
                    )
                })
        );
    }
    let _ = writeln!(s);
    alternatives(&mut s, plant);
    queue_orders(&mut s, plant);
    assembly(&mut s, plant, pic);

    from_to_chart(&mut s, plant, pic, measured.is_some());
    let _ = writeln!(
        s,
        "Departments: predicted utilisation = arrivals × mean processing time ÷ machines{}",
        if measured.is_some() { " (from the routings and demand, not the measured chart)" } else { "" }
    );
    let breakdowns = plant.departments.iter().any(|d| d.breakdowns.is_some());
    let calendars = plant.departments.iter().any(|d| d.calendar.is_some());
    let setups = plant.departments.iter().any(|d| d.setups.is_some());
    let staging = plant.departments.iter().any(|d| d.staging.is_limited());
    let mut header = vec!["department", "machines", "lots/h", "utilisation"];
    if setups {
        header.push("setups");
    }
    if calendars {
        header.push("scheduled");
    }
    if breakdowns {
        header.push("availability");
    }
    if breakdowns || calendars || setups {
        header.push("vs available");
    }
    if staging {
        header.push("staging in/out");
    }
    header.push("");
    let mut t = Table::new(&header);
    for (d, dep) in plant.departments.iter().enumerate() {
        if dep.role != DepartmentRole::Work {
            continue;
        }
        let u = pic.utilization_available[d];
        let mut row = vec![
            dep.id.clone(),
            dep.machines.to_string(),
            format!("{:.2}", pic.arrivals_per_h[d]),
            share(pic.utilization[d]),
        ];
        if setups {
            row.push(if dep.setups.is_some() { share(pic.setup_share[d]) } else { String::new() });
        }
        if calendars {
            row.push(share(pic.scheduled_share[d]));
        }
        if breakdowns {
            row.push(share(pic.availability[d]));
        }
        if breakdowns || calendars || setups {
            row.push(share(u));
        }
        if staging {
            let cap = |c: Option<u32>| c.map_or("∞".to_string(), |c| c.to_string());
            let mut st = format!("{}/{}", cap(dep.staging.inbound), cap(dep.staging.outbound));
            if let Some(o) = dep.staging.overflow {
                st.push_str(&format!(" + overflow {}", plant.locations[o].id));
            }
            row.push(st);
        }
        row.push(if u >= 1.0 {
            "OVERLOADED".into()
        } else if u >= 0.85 {
            "high".into()
        } else {
            String::new()
        });
        t.row(row);
    }
    s.push_str(&t.render(2));
    if breakdowns && !calendars && !setups {
        let _ = writeln!(
            s,
            "  (availability = MTBF ÷ (MTBF + MTTR); vs available = λ·E[S] ÷ (machines × availability))"
        );
    } else if breakdowns || calendars || setups {
        let _ = writeln!(
            s,
            "  (vs available = (λ·E[S] + setup time per hour) ÷ (machines × scheduled share × availability); \
             setups assume each lot follows a random lot of the department's mix; availability = MTBF ÷ (MTBF + MTTR))"
        );
    }
    if plant.departments.iter().any(|d| d.batch.is_some()) {
        let _ = writeln!(
            s,
            "  (batch machines: each load counted at its share of a full batch, E[T(max)] ÷ max: a lower bound, \
             reached only when loads queue; smaller batches (min, max_wait, few loads) use more — run to see)"
        );
    }
    let _ = writeln!(s);
    crews(&mut s, plant, pic);

    let currency = plant.currency.as_deref();
    let _ = writeln!(
        s,
        "Layouts: load-distance = Σ loads/h × distance; static cost = load-distance × {}{} per load-metre",
        num(plant.cost_per_load_metre),
        currency.map_or(String::new(), |c| format!(" {c}"))
    );
    let mut header: Vec<String> = vec![
        "layout".into(),
        "load-distance (load-m/h)".into(),
        super::table::with_currency("static cost (/h)".into(), currency),
    ];
    // The fleets' bounds split each product's moves among fleets: a measured
    // chart has no products, so they are left out rather than mixed with it.
    let fleets = if measured.is_some() { &[][..] } else { plant.fleets() };
    for f in fleets {
        header.push(format!("{} util ≥", f.id));
    }
    let fleet_service = fleets.iter().any(|f| f.breakdowns.is_some() || f.charging.is_some());
    let mut t = Table::new(&header);
    for (l, lp) in pic.layouts.iter().enumerate() {
        let mut row = vec![
            plant.layouts[l].name.clone(),
            whole(lp.load_distance_m_per_h),
            format!("{:.2}", lp.handling_cost_per_h),
        ];
        row.extend(lp.fleet_utilization_lower_bound.iter().zip(fleets).map(|(&u, f)| {
            if f.breakdowns.is_some() || f.charging.is_some() {
                format!("{} ({} of available)", share(u), share(u / f.availability()))
            } else {
                share(u)
            }
        }));
        t.row(row);
    }
    s.push_str(&t.render(2));
    if !fleets.is_empty() {
        let _ =
            writeln!(s, "  (fleet bound: loaded travel + loading + unloading only; empty travel adds to it)");
    }
    if measured.is_some() && !plant.fleets().is_empty() {
        let _ = writeln!(
            s,
            "  (load-distance from the measured chart; the fleets' bounds need the routings' moves by product, \
             so they are not shown: run `check` without --from-to for them)"
        );
    }
    if fleet_service {
        for f in fleets.iter().filter(|f| f.breakdowns.is_some() || f.charging.is_some()) {
            let _ = writeln!(
                s,
                "  fleet {}: in service about {} of the time (breakdowns, and charging as if always operating)",
                f.id,
                share(f.availability())
            );
        }
    }
    if areas::has_areas(plant) {
        area_tables(&mut s, plant);
    }
    s
}

/// Per layout, the area each department needs against the area its location
/// offers (only for a plant that gives areas, so other plants' output is unchanged).
fn area_tables(s: &mut String, plant: &Plant) {
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "Areas: floor each department needs (its `area`/`size`) against what its location offers, m²"
    );
    let cell = |f: &Option<Footprint>| f.as_ref().map_or("-".to_string(), areas::describe);
    for l in 0..plant.layouts.len() {
        let _ = writeln!(s, "  layout {}", plant.layouts[l].name);
        let mut t = Table::new(&["department", "location", "needs", "offers", ""]);
        for r in areas::rows(plant, l) {
            t.row(vec![
                plant.departments[r.department].id.clone(),
                plant.locations[r.location].id.clone(),
                cell(&r.needed),
                cell(&r.available),
                match r.fits() {
                    Some(false) => "DOES NOT FIT".into(),
                    Some(true) => String::new(),
                    None if r.needed.is_some() => "location gives no area".into(),
                    None => String::new(),
                },
            ]);
        }
        s.push_str(&t.render(4));
    }
    let _ =
        writeln!(s, "  (areas are checked and drawn only: the simulation and the search do not use them)");
}

/// Departments with flow in or out beyond which the from-to chart is listed
/// pair by pair instead of drawn as a table (a table of 25 columns is
/// already wider than most terminals; one of 1,000 would be a million cells).
const CHART_TABLE_MAX: usize = 25;

/// Pairs listed when the chart is too big for a table: the busiest ones.
const CHART_PAIRS_SHOWN: usize = 40;

/// The from-to chart: a table over the departments with flow, or for a big
/// plant its busiest pairs with a note of how many there are.
fn from_to_chart(s: &mut String, plant: &Plant, pic: &StaticPicture, measured: bool) {
    let what = if measured {
        "MEASURED loads per hour (from --from-to, demand factor applied)"
    } else {
        "expected loads per hour"
    };
    let nd = plant.departments.len();
    let mut with_flow = vec![false; nd];
    for (i, j, f) in pic.from_to.iter() {
        if f > 0.0 {
            with_flow[i] = true;
            with_flow[j] = true;
        }
    }
    let used: Vec<usize> = (0..nd).filter(|&d| with_flow[d]).collect();
    if used.len() > CHART_TABLE_MAX {
        let mut pairs: Vec<(usize, usize, f64)> = pic.from_to.iter().filter(|e| e.2 > 0.0).collect();
        pairs.sort_by(|a, b| b.2.total_cmp(&a.2).then((a.0, a.1).cmp(&(b.0, b.1))));
        let _ = writeln!(
            s,
            "From-to chart: {what}; {} departments and {} pairs have flow, \
             too many for a table: the {} busiest pairs (every pair with `--format json`)",
            used.len(),
            pairs.len(),
            CHART_PAIRS_SHOWN.min(pairs.len())
        );
        let mut t = Table::new(&["from", "to", "loads/h"]);
        for &(i, j, f) in pairs.iter().take(CHART_PAIRS_SHOWN) {
            t.row(vec![plant.departments[i].id.clone(), plant.departments[j].id.clone(), format!("{f:.2}")]);
        }
        s.push_str(&t.render(2));
        let _ = writeln!(s);
        return;
    }
    if measured {
        let _ = writeln!(s, "From-to chart: {what} (rows: from, columns: to)");
    } else {
        let _ = writeln!(s, "From-to chart: {what} (rows: from, columns: to; rework included)");
    }
    let mut header = vec!["from \\ to".to_string()];
    header.extend(used.iter().map(|&d| plant.departments[d].id.clone()));
    header.push("total".into());
    let mut t = Table::new(&header);
    for &i in &used {
        let mut row = vec![plant.departments[i].id.clone()];
        let mut total = 0.0;
        for &j in &used {
            let f = pic.from_to.get(i, j);
            total += f;
            row.push(if f > 0.0 { format!("{f:.2}") } else { ".".into() });
        }
        row.push(format!("{total:.2}"));
        t.row(row);
    }
    s.push_str(&t.render(2));
    let _ = writeln!(s);
}

/// The lines that say the chart is measured, what that changes and what it does not.
pub fn measured_note(plant: &Plant, m: &MeasuredChart) -> String {
    let mut s = format!(
        "from-to chart: MEASURED, read from {} (loads per {}, divided to loads per hour), not derived from the \
         routings; it sets the load-distance and the search only: `run` and `compare` still simulate the routings",
        m.file,
        format_duration(m.per_s)
    );
    if !m.left_out.is_empty() {
        let ids: Vec<&str> = m.left_out.iter().map(|&d| plant.departments[d].id.as_str()).collect();
        s.push_str(&format!(
            "
from-to chart: departments not in the file, given no flow: {}",
            ids.join(", ")
        ));
    }
    s
}

/// How a product's demand varies, in a few words.
fn demand_pattern(plant: &Plant, p: usize, factor: f64) -> String {
    match &plant.products[p].demand {
        Demand::Rate { profile: None, .. } => "constant rate".into(),
        Demand::Rate { per_s, profile: Some(pr) } => format!(
            "profile: {} × {}, peak {:.2} lots/h",
            pr.factors.len(),
            format_duration(pr.every_s),
            per_s * 3600.0 * pr.peak_factor() * factor
        ),
        Demand::Orders => {
            let t = plant.orders.as_ref().expect("a product fed by orders has a trace");
            let repeat =
                t.repeat_s.map_or("plays once".into(), |r| format!("repeats every {}", format_duration(r)));
            format!("orders: {} lots in {}, {repeat}", t.lots(p), t.file)
        }
    }
}

/// The static picture as JSON.
/// With `measured`, `from_to` and the load-distance come from it, `from_to_source` says so and the
/// fleets' figures (which need the routings' moves by product) are left out.
/// Each operation with alternative departments and the shares the static
/// picture gives them, saying which are estimates (a rule that decides by
/// the plant's state). Nothing for a plant without alternatives.
fn alternatives(s: &mut String, plant: &Plant) {
    if plant.products.iter().all(|p| p.alternatives.is_empty()) {
        return;
    }
    let _ = writeln!(
        s,
        "Alternative departments: the share of an operation's lots each takes in the static picture"
    );
    let mut t = Table::new(&["product", "step", "rule", "shares", ""]);
    let mut estimated = false;
    for prod in &plant.products {
        for g in &prod.alternatives {
            let shares: Vec<String> = g
                .ops
                .iter()
                .zip(&g.shares)
                .map(|(&o, &sh)| {
                    format!("{} {}", plant.departments[prod.routing[o].department].id, share(sh))
                })
                .collect();
            estimated |= g.rule.is_dynamic();
            t.row(vec![
                prod.id.clone(),
                g.step.clone(),
                g.rule.name().to_string(),
                shares.join(", "),
                if g.rule.is_dynamic() { "estimate".into() } else { "exact".into() },
            ]);
        }
    }
    s.push_str(&t.render(2));
    if estimated {
        let _ = writeln!(
            s,
            "  estimate: first-free, shortest-queue and least-work decide lot by lot from the plant's state; \
             the static picture assumes shares in proportion to each department's capacity (machines ÷ mean time). \
             Trust the simulated utilisations."
        );
    }
    let _ = writeln!(s);
}

/// Who is served first where the plant says so: departments and fleets
/// whose queue is not first in first out, and each product's priority and
/// due-date allowance. Nothing for a plant that orders nothing.
fn queue_orders(s: &mut String, plant: &Plant) {
    // Docks hold no queue for a machine: only work departments are listed.
    let work: Vec<_> = plant.departments.iter().filter(|d| d.role == DepartmentRole::Work).collect();
    let ordered: Vec<String> = work
        .iter()
        .filter(|d| d.queue_order != QueueOrder::Fifo)
        .map(|d| format!("{} {}", d.id, d.queue_order.word()))
        .collect();
    let all_same = work.first().map(|d| d.queue_order).filter(|o| work.iter().all(|d| d.queue_order == *o));
    let fleets: Vec<String> = plant
        .fleets()
        .iter()
        .filter(|f| f.request_order != QueueOrder::Fifo)
        .map(|f| format!("{} {}", f.id, f.request_order.word()))
        .collect();
    let ranked = plant.products.iter().any(|p| p.priority.is_some() || p.due_within_s.is_some());
    let trace_due = plant.orders.as_ref().is_some_and(|t| t.orders.iter().any(|o| o.due_s.is_some()));
    if ordered.is_empty() && fleets.is_empty() && !ranked && !trace_due {
        return;
    }
    let _ = writeln!(s, "Queue orders: which waiting lot is served first (docs/queue-order.md)");
    let departments = match all_same {
        Some(QueueOrder::Fifo) => "all first in first out (fifo)".to_string(),
        Some(o) => format!("all {}", o.word()),
        None => ordered.join(", ") + "; the rest first in first out",
    };
    let _ = writeln!(s, "  departments: {departments}");
    if !fleets.is_empty() {
        let _ = writeln!(s, "  move requests: {}", fleets.join(", "));
    }
    if ranked || trace_due {
        let mut t = Table::new(&["product", "priority", "due within"]);
        for p in &plant.products {
            t.row(vec![
                p.id.clone(),
                p.priority.map_or("-".into(), |r| r.to_string()),
                match (p.due_within_s, trace_due) {
                    (Some(w), _) => format_duration(w),
                    (None, true) => "order trace".into(),
                    (None, false) => "-".into(),
                },
            ]);
        }
        s.push_str(&t.render(2));
        let _ = writeln!(
            s,
            "  priority: 1 is served first, products without one last; the static picture above does not \
             depend on queue orders: they change waits and lateness, which only the simulation shows"
        );
    }
    let _ = writeln!(s);
}

/// Assembly steps: the kits each needs per hour against the kits its
/// components can make, the predicted kits per hour, and a warning where
/// they differ. Nothing for a plant that assembles nothing.
fn assembly(s: &mut String, plant: &Plant, pic: &StaticPicture) {
    let kits = layflow_models::analysis::kit_balance(plant, pic);
    if kits.is_empty() {
        return;
    }
    let _ =
        writeln!(s, "Assembly: kits matched first come, first served (docs/scenario-format.md, Assembly)");
    let mut t = Table::new(&[
        "product",
        "step",
        "at",
        "needs kits/h",
        "component",
        "per kit",
        "lots/h",
        "kits/h it allows",
    ]);
    for k in &kits {
        let prod = &plant.products[k.product];
        let op = &prod.routing[k.op];
        for (i, &(c, q, r)) in k.parts.iter().enumerate() {
            let first = i == 0;
            t.row(vec![
                if first { prod.id.clone() } else { String::new() },
                if first { op.name.clone() } else { String::new() },
                if first { plant.departments[op.department].id.clone() } else { String::new() },
                if first { format!("{:.2}", k.needed_per_h) } else { String::new() },
                plant.products[c].id.clone(),
                q.to_string(),
                format!("{r:.2}"),
                format!("{:.2}", r / f64::from(q)),
            ]);
        }
    }
    s.push_str(&t.render(2));
    for k in &kits {
        let prod = &plant.products[k.product];
        let _ = writeln!(
            s,
            "  {}: {:.2} kits/h predicted (the least of the kits needed and the kits each component allows)",
            prod.id, k.kits_per_h
        );
        for &(c, q, r) in &k.parts {
            let allows = r / f64::from(q);
            let tol = 1e-6 * k.needed_per_h.max(allows);
            if allows + tol < k.needed_per_h {
                let _ = writeln!(
                    s,
                    "  warning: \"{}\" arrives for {allows:.2} kits/h but \"{}\" needs {:.2}: lots waiting for kits pile up without end",
                    plant.products[c].id, prod.id, k.needed_per_h
                );
            } else if allows > k.needed_per_h + tol {
                let _ = writeln!(
                    s,
                    "  warning: \"{}\" arrives for {allows:.2} kits/h but \"{}\" needs only {:.2}: its stock at the assembly piles up without end",
                    plant.products[c].id, prod.id, k.needed_per_h
                );
            }
        }
    }
    let independent = kits.iter().any(|k| {
        std::iter::once(k.product)
            .chain(k.parts.iter().map(|p| p.0))
            .any(|p| matches!(plant.products[p].demand, layflow_models::plant::Demand::Rate { .. }))
    });
    if independent {
        let _ = writeln!(
        s,
        "  even at equal rates, parts released apart from the lots that need them (independent demand) make \
         the stock wander without bound; release them with the orders that need them (an order trace)"
    );
    }
    let _ = writeln!(s);
}

/// The assembly steps for the JSON form (`assembly`, only for a plant that assembles).
fn assembly_json(plant: &Plant, pic: &StaticPicture) -> Vec<serde_json::Value> {
    layflow_models::analysis::kit_balance(plant, pic)
        .iter()
        .map(|k| {
            let prod = &plant.products[k.product];
            json!({
                "product": prod.id,
                "step": prod.routing[k.op].name,
                "department": plant.departments[prod.routing[k.op].department].id,
                "kits_needed_per_h": k.needed_per_h,
                "kits_per_h_predicted": k.kits_per_h,
                "balanced": k.balanced(),
                "parts": k.parts.iter().map(|&(c, q, r)| json!({
                    "product": plant.products[c].id, "per_kit": q, "lots_per_h": r,
                })).collect::<Vec<_>>(),
            })
        })
        .collect()
}

/// The queue orders for the JSON form (`queue_orders`, only when the plant orders something).
fn queue_orders_json(plant: &Plant) -> Option<serde_json::Value> {
    let any = plant.departments.iter().any(|d| d.queue_order != QueueOrder::Fifo)
        || plant.fleets().iter().any(|f| f.request_order != QueueOrder::Fifo)
        || plant.products.iter().any(|p| p.priority.is_some() || p.due_within_s.is_some())
        || plant.has_due_dates();
    any.then(|| {
        json!({
            "departments": plant.departments.iter().map(|d| json!({
                "department": d.id, "queue_order": d.queue_order.word(),
            })).collect::<Vec<_>>(),
            "fleets": plant.fleets().iter().map(|f| json!({
                "fleet": f.id, "request_order": f.request_order.word(),
            })).collect::<Vec<_>>(),
            "products": plant.products.iter().map(|p| json!({
                "product": p.id, "priority": p.priority, "due_within_s": p.due_within_s,
            })).collect::<Vec<_>>(),
        })
    })
}

/// The groups of alternatives for the JSON form (`alternatives`, only when there are some).
fn alternatives_json(plant: &Plant) -> Vec<serde_json::Value> {
    plant
        .products
        .iter()
        .flat_map(|prod| {
            prod.alternatives.iter().map(move |g| {
                json!({
                    "product": prod.id,
                    "step": g.step,
                    "rule": g.rule.name(),
                    "shares_estimated": g.rule.is_dynamic(),
                    "shares": g.ops.iter().zip(&g.shares).map(|(&o, &sh)| json!({
                        "department": plant.departments[prod.routing[o].department].id,
                        "share": sh,
                    })).collect::<Vec<_>>(),
                })
            })
        })
        .collect()
}

pub fn to_json(plant: &Plant, pic: &StaticPicture, measured: Option<&MeasuredChart>) -> serde_json::Value {
    let ids: Vec<&str> = plant.departments.iter().map(|d| d.id.as_str()).collect();
    let pairs: Vec<serde_json::Value> = pic
        .from_to
        .iter()
        .filter(|e| e.2 > 0.0)
        .map(|(i, j, f)| json!({ "from": ids[i], "to": ids[j], "loads_per_h": f }))
        .collect();
    let mut j = json!({
        "plant": plant.name,
        "demand_factor": pic.demand_factor,
        "products": plant.products.iter().enumerate().map(|(p, prod)| json!({
            "product": prod.id,
            "demand": match &prod.demand {
                Demand::Rate { profile: None, .. } => "constant",
                Demand::Rate { profile: Some(_), .. } => "profile",
                Demand::Orders => "orders",
            },
            "mean_lots_per_h": pic.product_rate_per_h[p],
        })).collect::<Vec<_>>(),
        "from_to": pairs,
        "departments": plant.departments.iter().enumerate().map(|(d, dep)| with_batch(dep, json!({
            "department": dep.id,
            "machines": dep.machines,
            "arrivals_per_h": pic.arrivals_per_h[d],
            "utilization_predicted": pic.utilization[d],
            "availability_predicted": pic.availability[d],
            "utilization_against_availability": pic.utilization_available[d],
            "scheduled_share": pic.scheduled_share[d],
            "setup_share_predicted": pic.setup_share[d],
            "staging_inbound": dep.staging.inbound,
            "staging_outbound": dep.staging.outbound,
        }))).collect::<Vec<_>>(),
        "layouts": pic.layouts.iter().enumerate().map(|(l, lp)| json!({
            "layout": plant.layouts[l].name,
            "load_distance_m_per_h": lp.load_distance_m_per_h,
            "handling_cost_static_per_h": lp.handling_cost_per_h,
            "fleets": plant.fleets().iter().enumerate().map(|(f, fl)| json!({
                "fleet": fl.id,
                "trips_per_h": lp.fleet_trips_per_h[f],
                "utilization_lower_bound": lp.fleet_utilization_lower_bound[f],
            })).collect::<Vec<_>>(),
        })).collect::<Vec<_>>(),
    });
    if let Some(m) = measured {
        j["from_to_source"] = json!({
            "measured": true,
            "file": m.file,
            "loads_counted_per_s": m.per_s,
            "departments_left_out": m.left_out.iter().map(|&d| plant.departments[d].id.as_str()).collect::<Vec<_>>(),
            "note": "not derived from the routings; run and compare still simulate the routings",
        });
        for l in j["layouts"].as_array_mut().into_iter().flatten() {
            l.as_object_mut().map(|o| o.remove("fleets"));
        }
    }
    // Only for a plant that gives areas, so other plants' JSON is unchanged.
    if areas::has_areas(plant) {
        j["areas"] = areas_json(plant);
    }
    // The currency only when named, so plants without one keep their JSON byte for byte.
    if let Some(c) = &plant.currency {
        j["currency"] = json!(c);
    }
    // Likewise alternatives: only for a plant that has some.
    let alts = alternatives_json(plant);
    if !alts.is_empty() {
        j["alternatives"] = json!(alts);
    }
    // And queue orders: only for a plant that orders something.
    if let Some(q) = queue_orders_json(plant) {
        j["queue_orders"] = q;
    }
    // And assembly: only for a plant that assembles.
    if plant.assembles() {
        j["assembly"] = json!(assembly_json(plant, pic));
    }
    // And crews: only for a plant that has some.
    if let Some(c) = crews_json(plant, pic) {
        j["crews"] = c;
    }
    j
}

/// The crews' predicted load (only for a plant with crews, so other plants' text is unchanged).
fn crews(s: &mut String, plant: &Plant, pic: &StaticPicture) {
    if plant.crews.is_empty() {
        return;
    }
    let _ = writeln!(
        s,
        "Crews: predicted utilisation = people-hours of work per hour ÷ (people × on-duty share)"
    );
    let hours = layflow_models::crew_load::people_hours_per_h(plant, pic);
    let predicted = layflow_models::crew_load::predicted_utilization(plant, pic);
    let mut t =
        Table::new(&["crew", "people", "on duty", "work (people-h/h)", "utilisation", "needed by", ""]);
    for (c, crew) in plant.crews.iter().enumerate() {
        let users: Vec<String> = plant
            .departments
            .iter()
            .flat_map(|d| {
                let op = d
                    .people
                    .as_ref()
                    .filter(|p| p.crew == c)
                    .map(|p| format!("{} ({})", d.id, p.task.word()));
                let fix = (d.technicians == Some(c)).then(|| format!("{} (repairs)", d.id));
                op.into_iter().chain(fix)
            })
            .collect();
        let u = predicted[c];
        t.row(vec![
            crew.id.clone(),
            crew.size.to_string(),
            share(crew.on_duty_share()),
            format!("{:.3}", hours[c]),
            share(u),
            if users.is_empty() { "nobody".to_string() } else { users.join(", ") },
            if u >= 1.0 {
                "OVERLOADED".into()
            } else if u >= 0.85 {
                "high".into()
            } else {
                String::new()
            },
        ]);
    }
    s.push_str(&t.render(2));
    let _ = writeln!(
        s,
        "  (operation: processing + setups; setup: setups; loading: lots/h × loading time; repairs: failures/h × \
         repair time, failures as if no repair waited; walking not counted)"
    );
    let _ = writeln!(s);
}

/// The crews' predicted load in JSON, or `None` without crews.
fn crews_json(plant: &Plant, pic: &StaticPicture) -> Option<serde_json::Value> {
    if plant.crews.is_empty() {
        return None;
    }
    let hours = layflow_models::crew_load::people_hours_per_h(plant, pic);
    let predicted = layflow_models::crew_load::predicted_utilization(plant, pic);
    Some(json!(plant
        .crews
        .iter()
        .enumerate()
        .map(|(c, crew)| json!({
            "crew": crew.id,
            "size": crew.size,
            "on_duty_share": crew.on_duty_share(),
            "people_hours_per_h": hours[c],
            "utilization_predicted": predicted[c],
            "people_cost_per_h": f64::from(crew.size) * crew.cost_per_h,
        }))
        .collect::<Vec<_>>()))
}

/// Per layout, each department's area needed and its location's area available (m²), and the misfit warnings.
fn areas_json(plant: &Plant) -> serde_json::Value {
    let fp = |f: &Option<Footprint>| f.map(|f| json!({ "area_m2": f.area_m2, "size_m": f.size_m }));
    json!({
        "layouts": (0..plant.layouts.len()).map(|l| json!({
            "layout": plant.layouts[l].name,
            "departments": areas::rows(plant, l).iter().map(|r| json!({
                "department": plant.departments[r.department].id,
                "location": plant.locations[r.location].id,
                "needed": fp(&r.needed),
                "available": fp(&r.available),
                "fits": r.fits(),
            })).collect::<Vec<_>>(),
        })).collect::<Vec<_>>(),
        "warnings": areas::misfits(plant),
    })
}

/// A department's check JSON with its batch rules added, only for a batch
/// department (other plants' JSON stays as it was).
fn with_batch(dep: &layflow_models::plant::Department, mut v: serde_json::Value) -> serde_json::Value {
    if let (Some(b), Some(o)) = (&dep.batch, v.as_object_mut()) {
        o.insert(
            "batch".into(),
            json!({
                "max": b.max,
                "min": b.min,
                "max_wait_s": b.max_wait_s,
                "full_batch_time_s": b.mean_time_s(b.max),
                "utilization_predicted_is_lower_bound": true,
            }),
        );
    }
    v
}
