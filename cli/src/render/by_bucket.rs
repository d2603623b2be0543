//! Results by time bucket as tables: the busiest buckets beside the whole window, the peak, and what they cannot tell.

use std::fmt::Write as _;

use layflow_models::metrics::by_bucket::{BucketSummary, Peak, WHOLE};
use layflow_models::metrics::{Estimate, Kind, LayoutSummary, Metric, DEFS};
use layflow_models::plant::{DepartmentRole, Plant};
use layflow_models::study::compare::{Difference, Level};

use super::table::{dur_in, pct, pm, unit_for, wide, wrap, Table};

/// Buckets a default table shows of a long grid; `--wide` shows every one.
pub const SHOWN: usize = 8;

/// Grids this long or shorter are shown whole (a week of days, a fortnight of shifts).
pub const SHOWN_WHOLE: usize = 14;

/// The buckets a table shows, in time order: every one when there are at
/// most [`SHOWN_WHOLE`] (or with `--wide`), else the [`SHOWN`] with the highest mean WIP.
pub fn shown(b: &BucketSummary) -> Vec<usize> {
    let n = b.buckets.len();
    if n <= SHOWN_WHOLE || wide() {
        return (0..n).collect();
    }
    let wip = |k: usize| b.get(Some(k), "", "wip_mean").map_or(f64::NEG_INFINITY, |e| e.mean);
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&x, &y| wip(y).total_cmp(&wip(x)).then(x.cmp(&y)));
    order.truncate(SHOWN);
    order.sort_unstable();
    order
}

/// The registry's table label of a plant or subject metric.
fn label(scope_name: &str) -> &'static str {
    DEFS.iter().find(|d| d.name == scope_name).map_or("", |d| d.label)
}

/// "by hour of day", "by shift of press", "by period of 8 h": how the grid reads in a heading.
pub fn heading(b: &BucketSummary) -> String {
    match b.by.split_once('=') {
        Some((what, arg)) => format!("by {} of {arg}", what.replace('-', " ")),
        None => format!("by {}", b.by.replace('-', " ")),
    }
}

/// One layout's results by bucket: the table, then the peak.
pub fn layout_table(plant: &Plant, l: &LayoutSummary, b: &BucketSummary) -> String {
    let mut s = String::new();
    let fleets = !plant.fleets().is_empty();
    // The busiest department and fleet over the whole window name two columns.
    let busiest_dept = l
        .departments
        .iter()
        .zip(&plant.departments)
        .filter(|(_, d)| d.role == DepartmentRole::Work)
        .max_by(|a, b| a.0.utilization.mean.total_cmp(&b.0.utilization.mean))
        .map(|(d, _)| d.department.clone());
    let busiest_fleet = l
        .fleets
        .iter()
        .max_by(|a, b| a.utilization.mean.total_cmp(&b.utilization.mean))
        .map(|f| f.fleet.clone());
    let rows = shown(b);
    let at = |k: Option<usize>, subject: &str, name: &str| b.get(k, subject, name);
    let flow_u =
        unit_for(rows.iter().map(|&k| at(Some(k), "", "flow_time_p95_s").map_or(f64::NAN, |e| e.mean)));
    let wait_u =
        unit_for(rows.iter().map(|&k| at(Some(k), "", "move_wait_p95_s").map_or(f64::NAN, |e| e.mean)));
    let mut header = vec![
        "bucket".to_string(),
        "h/rep".to_string(),
        label("wip_mean").to_string(),
        label("throughput_per_h").to_string(),
        "flow time".to_string(),
        "flow p95".to_string(),
    ];
    if fleets {
        header.extend(["wait for a mover".to_string(), "wait p95".to_string()]);
    }
    if let Some(d) = &busiest_dept {
        header.push(format!("{d} util."));
    }
    if let Some(f) = &busiest_fleet {
        header.push(format!("{f} busy"));
    }
    header.push(String::new());
    let mut t = Table::new(&header);
    // Hidden in this order while the table is wider than the terminal's 100 columns.
    let mut optional = vec!["flow time".to_string(), "wait for a mover".to_string()];
    optional.extend(busiest_fleet.iter().map(|f| format!("{f} busy")));
    optional.extend(busiest_dept.iter().map(|d| format!("{d} util.")));
    optional.push("h/rep".to_string());
    t.optional(&optional);
    let peak_wip = b.peak.wip_mean.as_ref().map(|p| p.bucket.as_str());
    let peak_wait = b.peak.move_wait_p95_s.as_ref().map(|p| p.bucket.as_str());
    let cell = |e: Option<Estimate>, f: &dyn Fn(&Estimate) -> String| match e {
        Some(e) if e.mean.is_finite() => f(&e),
        _ => "-".to_string(),
    };
    let line = |k: Option<usize>, name: &str, hours: String| {
        let mut row = vec![
            name.to_string(),
            hours,
            cell(at(k, "", "wip_mean"), &|e| pm(e, 1.0)),
            cell(at(k, "", "throughput_per_h"), &|e| pm(e, 1.0)),
            cell(at(k, "", "flow_time_s"), &|e| dur_in(e, flow_u)),
            cell(at(k, "", "flow_time_p95_s"), &|e| dur_in(e, flow_u)),
        ];
        if fleets {
            row.push(cell(at(k, "", "move_wait_s"), &|e| dur_in(e, wait_u)));
            row.push(cell(at(k, "", "move_wait_p95_s"), &|e| dur_in(e, wait_u)));
        }
        if let Some(d) = &busiest_dept {
            row.push(cell(at(k, d, "utilization"), &pct));
        }
        if let Some(f) = &busiest_fleet {
            row.push(cell(at(k, f, "utilization"), &pct));
        }
        let mut marks = Vec::new();
        if k.is_some() && peak_wip == Some(name) {
            marks.push("peak WIP");
        }
        if k.is_some() && peak_wait == Some(name) {
            marks.push("peak wait p95");
        }
        row.push(marks.join(", "));
        row
    };
    for &k in &rows {
        t.row(line(Some(k), &b.buckets[k].bucket, format!("{:.0}", b.buckets[k].exposure_h)));
    }
    let total_h: f64 = b.buckets.iter().map(|x| x.exposure_h).sum();
    t.row(line(None, WHOLE, format!("{total_h:.0}")));
    s.push('\n');
    s.push_str(&wrap(
        &format!(
            "{} ({}; h/rep: hours of each replication's window in the bucket; flow times are of lots \
             that ship in the bucket{})",
            heading(b),
            if b.cyclic { "every cycle folded onto one" } else { "in order through the run" },
            if fleets { ", waits of moves that start in it" } else { "" }
        ),
        2,
    ));
    s.push_str(&t.render(2));
    if rows.len() < b.buckets.len() {
        s.push_str(&wrap(
            &format!(
                "the {} busiest of {} buckets by WIP, in time order; --wide shows every bucket, \
                 --format json every metric in every bucket",
                rows.len(),
                b.buckets.len()
            ),
            2,
        ));
    }
    let empty: Vec<&str> =
        b.buckets.iter().filter(|x| !(x.exposure_h > 0.0)).map(|x| x.bucket.as_str()).collect();
    if !empty.is_empty() {
        s.push_str(&wrap(
            &format!(
                "no time of the observation window falls in {} (the warm-up or the horizon leaves {} out): \
                 nothing is known there",
                empty.join(", "),
                if empty.len() == 1 { "it" } else { "them" }
            ),
            2,
        ));
    }
    s.push_str(&peak_lines(&b.peak, 2));
    s
}

/// The peak in words, with what it cannot tell, wrapped at `indent`.
pub fn peak_lines(p: &Peak, indent: usize) -> String {
    let mut out = String::new();
    if let (Some(w), Some(off)) = (&p.wip_mean, p.off_peak_wip_mean) {
        let e = Estimate { mean: w.mean, half_width: w.half_width, n: 0 };
        let mut line = format!(
            "peak WIP {}: {} lots; off-peak level {} lots (the quietest quarter of the buckets)",
            w.bucket,
            pm(&e, 1.0),
            layflow_models::text::num(off)
        );
        match (p.recovery_h, &p.recovery_note) {
            (Some(h), _) => {
                let _ = write!(
                    line,
                    "; back within 10% of it {} after the peak bucket (to the width of a bucket)",
                    super::table::dur_plain(h * 3600.0)
                );
            }
            (None, Some(note)) => {
                let _ = write!(line, "; {note}");
            }
            (None, None) => {}
        }
        out.push_str(&wrap(&line, indent));
    }
    if let Some(w) = &p.move_wait_p95_s {
        let e = Estimate { mean: w.mean, half_width: w.half_width, n: 0 };
        out.push_str(&wrap(
            &format!("peak wait p95 {}: {}", w.bucket, dur_in(&e, unit_for([w.mean]))),
            indent,
        ));
    }
    out
}

/// `compare --by`: the ranked metric in the busiest buckets (by the
/// baseline's WIP), the baseline's value and each layout's paired difference,
/// then each layout's peak.
pub fn compare_table(lv: &Level, baseline: &str, ranked: &Metric, currency: Option<&str>) -> String {
    let mut s = String::new();
    let Some(base) = lv.layouts.iter().find(|l| l.layout == baseline) else {
        return s;
    };
    let Some(b) = &base.by_bucket else {
        return s;
    };
    let others: Vec<&LayoutSummary> = lv.layouts.iter().filter(|l| l.layout != baseline).collect();
    let rows = shown(b);
    let heads: Vec<String> = ["bucket".to_string(), format!("{baseline} (baseline)")]
        .into_iter()
        .chain(others.iter().map(|l| format!("{} − {baseline}", l.layout)))
        .collect();
    let mut t = Table::new(&heads);
    // The paired difference of the ranked metric: in a bucket, or over the whole window.
    let diff = |layout: &str, bucket: Option<&str>| -> Option<&Difference> {
        let same =
            |d: &Difference| d.layout == layout && d.metric == ranked.name && d.subject == ranked.subject;
        match bucket {
            Some(k) => lv
                .bucket_differences
                .iter()
                .filter(|d| d.bucket == k)
                .map(|d| &d.difference)
                .find(|d| same(d)),
            None => lv.differences.iter().find(|d| same(d)),
        }
    };
    let keys: Vec<Option<usize>> = rows.iter().map(|&k| Some(k)).chain([None]).collect();
    let unit = unit_for(keys.iter().filter_map(|&k| b.get(k, &ranked.subject, ranked.name)).map(|e| e.mean));
    for k in keys {
        let label = k.map_or(WHOLE.to_string(), |k| b.buckets[k].bucket.clone());
        let value = |e: Option<Estimate>| match e {
            Some(e) if e.mean.is_finite() => match ranked.kind {
                Kind::Duration => dur_in(&e, unit),
                Kind::Number => pm(&e, 1.0),
            },
            _ => "-".to_string(),
        };
        let mut row = vec![label.clone(), value(b.get(k, &ranked.subject, ranked.name))];
        for o in &others {
            row.push(match diff(&o.layout, k.map(|_| label.as_str())) {
                Some(d) => super::table::difference_cell(&d.estimate(), d.excludes_zero, ranked.kind, unit),
                None => "-".to_string(),
            });
        }
        t.row(row);
    }
    s.push('\n');
    s.push_str(&wrap(
        &format!(
            "{}: {} (the busiest buckets by the baseline's WIP; * the paired interval excludes zero)",
            heading(b),
            super::table::with_currency(ranked.human(), currency)
        ),
        2,
    ));
    s.push_str(&t.render(2));
    if rows.len() < b.buckets.len() {
        s.push_str(&wrap(
            &format!(
                "the {} busiest of {} buckets; --wide shows every bucket, --format json/csv every metric \
                 in every bucket with its paired difference",
                rows.len(),
                b.buckets.len()
            ),
            2,
        ));
    }
    for l in &lv.layouts {
        if let Some(lb) = &l.by_bucket {
            s.push_str(&wrap(&format!("{}:", l.layout), 2));
            s.push_str(&peak_lines(&lb.peak, 4));
        }
    }
    s
}
