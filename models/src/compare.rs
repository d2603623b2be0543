//! Comparing layouts: every metric of every replication as one tidy list, and paired differences.
//!
//! Replication `r` of every layout sees the same lots, processing times and
//! routing choices (common random numbers, see `sim`), so results are compared
//! replication by replication: the paired difference `Y_l,r − Y_base,r` has a
//! much smaller variance than two independent means whenever the two layouts'
//! results move together (Law, *Simulation Modeling and Analysis*, chapter on
//! comparing alternative systems; from memory).

use layflow_engine::{paired_difference, Interval};
use serde::Serialize;

use crate::plant::Plant;
use crate::report::{
    department_scheduled_utilization, fleet_availability, fleet_cost_per_h, fleet_scheduled_utilization,
    observed, Features, CONFIDENCE,
};
use crate::sim::RepStats;

/// Which part of the plant a metric describes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Scope {
    /// The whole plant.
    Plant,
    /// One product.
    Product,
    /// One department.
    Department,
    /// One fleet.
    Fleet,
    /// One aisle segment (subject `segment-3`; with segment-by-segment travel only).
    Segment,
}

impl Scope {
    /// The lowercase word used in CSV and JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            Scope::Plant => "plant",
            Scope::Product => "product",
            Scope::Department => "department",
            Scope::Fleet => "fleet",
            Scope::Segment => "segment",
        }
    }
}

/// Which direction of a metric is better, for ranking and selection.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Better {
    /// Smaller is better (flow time, WIP, waits, cost, distance).
    Lower,
    /// Larger is better (throughput).
    Higher,
    /// Neither: a description of the plant, not a goal (utilisation, shares).
    Neither,
}

/// What a metric's number is, for formatting and for reading an indifference zone.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Kind {
    /// Seconds.
    Duration,
    /// Anything else: lots, lots per hour, metres per hour, money per hour, a share.
    Number,
}

/// One metric: what it measures and where.
#[derive(Debug, Clone, Serialize)]
pub struct Metric {
    /// Plant, product, department or fleet.
    pub scope: Scope,
    /// The product, department or fleet id; empty for the plant.
    pub subject: String,
    /// The JSON key of `run`'s summary, e.g. `flow_time_s`.
    pub name: &'static str,
    /// Duration or plain number.
    pub kind: Kind,
    /// Which direction is better.
    pub better: Better,
}

impl Metric {
    /// `flow_time_s` for the plant, `pump-housing/flow_time_s` for a product's.
    pub fn label(&self) -> String {
        if self.subject.is_empty() {
            self.name.to_string()
        } else {
            format!("{}/{}", self.subject, self.name)
        }
    }
}

/// The plant-level metrics, in report order: (name, kind, better).
pub const PLANT_METRICS: &[(&str, Kind, Better)] = &[
    ("throughput_per_h", Kind::Number, Better::Higher),
    ("flow_time_s", Kind::Duration, Better::Lower),
    ("wip_mean", Kind::Number, Better::Lower),
    ("wip_in_transit_mean", Kind::Number, Better::Lower),
    ("move_wait_s", Kind::Duration, Better::Lower),
    ("distance_loaded_m_per_h", Kind::Number, Better::Lower),
    ("distance_empty_m_per_h", Kind::Number, Better::Lower),
    ("handling_cost_per_h", Kind::Number, Better::Lower),
];

const PRODUCT_METRICS: &[(&str, Kind, Better)] =
    &[("throughput_per_h", Kind::Number, Better::Higher), ("flow_time_s", Kind::Duration, Better::Lower)];

const DEPARTMENT_METRICS: &[(&str, Kind, Better)] = &[
    ("wip_mean", Kind::Number, Better::Lower),
    ("utilization", Kind::Number, Better::Neither),
    ("queue_mean", Kind::Number, Better::Lower),
];

const FLEET_METRICS: &[(&str, Kind, Better)] = &[
    ("utilization", Kind::Number, Better::Neither),
    ("loaded_travel_share", Kind::Number, Better::Neither),
    ("empty_travel_share", Kind::Number, Better::Lower),
    ("handling_share", Kind::Number, Better::Neither),
    ("idle_share", Kind::Number, Better::Neither),
    ("moves_per_h", Kind::Number, Better::Neither),
    ("move_wait_s", Kind::Duration, Better::Lower),
    ("distance_loaded_m_per_h", Kind::Number, Better::Lower),
    ("distance_empty_m_per_h", Kind::Number, Better::Lower),
    ("handling_cost_per_h", Kind::Number, Better::Lower),
];

/// Metrics a plant has only when it uses the matching feature (finite
/// staging, overflow areas, turning lots away, breakdowns), so that plants
/// without them keep exactly their old list.
const OVERFLOW_METRIC: (&str, Kind, Better) = ("overflow_moves_per_h", Kind::Number, Better::Lower);
const TURNED_AWAY_METRIC: (&str, Kind, Better) = ("turned_away_per_h", Kind::Number, Better::Lower);
const BLOCKED_METRIC: (&str, Kind, Better) = ("blocked_share", Kind::Number, Better::Lower);
const AVAILABILITY_METRIC: (&str, Kind, Better) = ("availability", Kind::Number, Better::Higher);
/// With a calendar (departments) or operators' working hours (fleets).
const SCHEDULED_METRIC: (&str, Kind, Better) = ("utilization_scheduled", Kind::Number, Better::Neither);
/// With setups.
const SETUP_METRIC: (&str, Kind, Better) = ("setup_share", Kind::Number, Better::Lower);
/// With segment-by-segment travel over the aisles: the plant's total
/// congestion delay, each fleet's share lost to it, and per segment.
const CONGESTION_METRIC: (&str, Kind, Better) = ("congestion_delay_s_per_h", Kind::Number, Better::Lower);
const FLEET_CONGESTION_METRIC: (&str, Kind, Better) = ("congestion_share", Kind::Number, Better::Lower);
const SEGMENT_METRICS: &[(&str, Kind, Better)] = &[
    ("traversals_per_h", Kind::Number, Better::Neither),
    ("occupancy_mean", Kind::Number, Better::Neither),
    ("congestion_delay_s_per_h", Kind::Number, Better::Lower),
    ("congestion_delay_per_traversal_s", Kind::Duration, Better::Lower),
];

/// The subject name of aisle segment `s` in metric labels: `segment-3/traversals_per_h`.
pub fn segment_subject(s: usize) -> String {
    format!("segment-{s}")
}

/// Every metric of `plant`, in the order [`values`] returns them.
pub fn metrics(plant: &Plant) -> Vec<Metric> {
    let features = Features::of(plant);
    let mut out = Vec::new();
    let mut add = |scope, subject: &str, table: &[(&'static str, Kind, Better)]| {
        for &(name, kind, better) in table {
            out.push(Metric { scope, subject: subject.to_string(), name, kind, better });
        }
    };
    add(Scope::Plant, "", PLANT_METRICS);
    if features.overflow {
        add(Scope::Plant, "", &[OVERFLOW_METRIC]);
    }
    if features.turn_away {
        add(Scope::Plant, "", &[TURNED_AWAY_METRIC]);
    }
    if features.aisles {
        add(Scope::Plant, "", &[CONGESTION_METRIC]);
    }
    for p in &plant.products {
        add(Scope::Product, &p.id, PRODUCT_METRICS);
    }
    for d in &plant.departments {
        add(Scope::Department, &d.id, DEPARTMENT_METRICS);
        if features.staging {
            add(Scope::Department, &d.id, &[BLOCKED_METRIC]);
        }
        if d.breakdowns.is_some() {
            add(Scope::Department, &d.id, &[AVAILABILITY_METRIC]);
        }
        if d.calendar.is_some() {
            add(Scope::Department, &d.id, &[SCHEDULED_METRIC]);
        }
        if d.setups.is_some() {
            add(Scope::Department, &d.id, &[SETUP_METRIC]);
        }
    }
    for f in plant.fleets() {
        add(Scope::Fleet, &f.id, FLEET_METRICS);
        if features.staging {
            add(Scope::Fleet, &f.id, &[BLOCKED_METRIC]);
        }
        if f.breakdowns.is_some() || f.charging.is_some() {
            add(Scope::Fleet, &f.id, &[AVAILABILITY_METRIC]);
        }
        if f.operators.duty.is_some() {
            add(Scope::Fleet, &f.id, &[SCHEDULED_METRIC]);
        }
        if features.aisles {
            add(Scope::Fleet, &f.id, &[FLEET_CONGESTION_METRIC]);
        }
    }
    if features.aisles {
        let n = plant.aisles.as_ref().map_or(0, |a| a.segments.len());
        for s in 0..n {
            add(Scope::Segment, &segment_subject(s), SEGMENT_METRICS);
        }
    }
    out
}

/// Index of a metric by its label (`flow_time_s`, `pump-housing/flow_time_s`).
pub fn find_metric(list: &[Metric], label: &str) -> Option<usize> {
    list.iter().position(|m| m.label() == label)
}

/// Every metric's value in one replication, in the order of [`metrics`]; NaN
/// where the replication observed nothing (no lot shipped, no move made).
/// The values are those `report::summarize` averages.
pub fn values(plant: &Plant, r: &RepStats) -> Vec<f64> {
    let per_h = |x: f64| x / r.window_s * 3600.0;
    let fleets = plant.fleets();
    let mut v = Vec::new();
    v.extend([
        per_h(r.shipped.iter().sum::<u64>() as f64),
        observed(&r.flow_time_all),
        r.wip_total,
        r.wip_transit,
        observed(&r.move_wait_all),
        per_h(r.fleets.iter().map(|f| f.distance_loaded_m).sum()),
        per_h(r.fleets.iter().map(|f| f.distance_empty_m).sum()),
        (0..fleets.len()).map(|f| fleet_cost_per_h(plant, r, f)).sum(),
    ]);
    let features = Features::of(plant);
    if features.overflow {
        v.push(per_h(r.overflow_moves as f64));
    }
    if features.turn_away {
        v.push(per_h(r.turned_away.iter().sum::<u64>() as f64));
    }
    if features.aisles {
        v.push(per_h(r.segments.iter().map(|g| g.delay_s).sum()));
    }
    for p in 0..plant.products.len() {
        v.extend([per_h(r.shipped[p] as f64), observed(&r.flow_time[p])]);
    }
    for d in 0..plant.departments.len() {
        v.extend([r.wip_department[d], r.utilization[d], r.queue[d]]);
        if features.staging {
            v.push(r.blocked[d]);
        }
        if plant.departments[d].breakdowns.is_some() {
            v.push(r.availability[d]);
        }
        if plant.departments[d].calendar.is_some() {
            v.push(department_scheduled_utilization(r, d));
        }
        if plant.departments[d].setups.is_some() {
            v.push(r.setup[d]);
        }
    }
    for (f, fl) in fleets.iter().enumerate() {
        let s = &r.fleets[f];
        let cap = f64::from(fl.count) * r.window_s;
        let busy = s.busy_s();
        v.extend([
            busy / cap,
            s.loaded_s / cap,
            s.empty_s / cap,
            s.handling_s / cap,
            1.0 - (busy + s.down_s) / cap,
            per_h(s.moves as f64),
            observed(&r.move_wait[f]),
            per_h(s.distance_loaded_m),
            per_h(s.distance_empty_m),
            fleet_cost_per_h(plant, r, f),
        ]);
        if features.staging {
            v.push(s.blocked_s / cap);
        }
        if fl.breakdowns.is_some() || fl.charging.is_some() {
            v.push(fleet_availability(plant, r, f));
        }
        if fl.operators.duty.is_some() {
            v.push(fleet_scheduled_utilization(plant, r, f));
        }
        if features.aisles {
            v.push(s.congestion_s / cap);
        }
    }
    if features.aisles {
        let n = plant.aisles.as_ref().map_or(0, |a| a.segments.len());
        for s in 0..n {
            // A replication that stopped before anything was recorded has no segment figures.
            let g = r.segments.get(s).copied().unwrap_or_default();
            v.extend([
                per_h(g.traversals as f64),
                g.occupancy,
                per_h(g.delay_s),
                if g.traversals > 0 { g.delay_s / g.traversals as f64 } else { f64::NAN },
            ]);
        }
    }
    debug_assert_eq!(v.len(), metrics(plant).len());
    v
}

/// Mean of metric `m` over the replications that observed it; `None` if none did.
pub fn values_mean(rows: &[Vec<f64>], m: usize) -> Option<f64> {
    let (sum, n) =
        rows.iter().map(|v| v[m]).filter(|x| x.is_finite()).fold((0.0, 0usize), |(s, n), x| (s + x, n + 1));
    (n > 0).then(|| sum / n as f64)
}

/// Paired-t interval of `layout − baseline` for one metric, over the
/// replications where both observed it (a replication with no observation
/// on either side is left out of the pair). `n` says how many pairs counted.
pub fn paired(layout: &[f64], baseline: &[f64]) -> Interval {
    let (a, b): (Vec<f64>, Vec<f64>) = layout
        .iter()
        .zip(baseline)
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .map(|(&x, &y)| (x, y))
        .unzip();
    paired_difference(&a, &b, CONFIDENCE)
}

/// Ranks 1, 2, … of `scores` (best first); equal scores share the better rank.
/// NaN scores (nothing observed) rank last.
pub fn ranks(scores: &[f64], better: Better) -> Vec<usize> {
    let key = |x: f64| match better {
        Better::Higher => -x,
        _ => x,
    };
    scores
        .iter()
        .map(|&s| {
            if !s.is_finite() {
                return scores.iter().filter(|x| x.is_finite()).count() + 1;
            }
            1 + scores.iter().filter(|&&o| o.is_finite() && key(o) < key(s)).count()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pairs_with_a_missing_side_are_left_out() {
        // Differences of the complete pairs: 1, 3 → mean 2 (hand-computed).
        let iv = paired(&[5.0, f64::NAN, 7.0, 9.0], &[4.0, 3.0, 4.0, f64::NAN]);
        assert_eq!((iv.mean, iv.n), (2.0, 2));
    }

    #[test]
    fn ranks_follow_the_better_direction_and_share_ties() {
        assert_eq!(ranks(&[3.0, 1.0, 2.0, 1.0], Better::Lower), vec![4, 1, 3, 1]);
        assert_eq!(ranks(&[3.0, 1.0, 2.0], Better::Higher), vec![1, 3, 2]);
        assert_eq!(ranks(&[f64::NAN, 1.0], Better::Lower), vec![2, 1]);
    }
}
