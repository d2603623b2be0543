//! A plant's metrics: which registry rows apply to which subjects, each replication's values, lookup by name.

use serde::Serialize;

use crate::plant::Plant;
use crate::sim::RepStats;

use super::compute::value;
use super::registry::{canonical, Better, Def, Kind, Scope, When, DEFS};

/// Which of the optional figures a plant reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Features {
    /// Some department has finite staging.
    pub staging: bool,
    /// Some department has an overflow location.
    pub overflow: bool,
    /// Some receiving dock may turn lots away, or `--allow-overload` may (at the WIP cap).
    pub turn_away: bool,
    /// The aisle network is simulated segment by segment (a capacity, a speed limit or a zone).
    pub aisles: bool,
    /// Some lot has a due date.
    pub due: bool,
}

impl Features {
    /// What `plant` has.
    pub fn of(plant: &Plant) -> Features {
        Features {
            staging: plant.departments.iter().any(|d| d.staging.is_limited()),
            overflow: plant.departments.iter().any(|d| d.staging.overflow.is_some()),
            turn_away: plant.run.allow_overload || plant.departments.iter().any(|d| d.turn_away),
            aisles: plant.aisles.as_ref().is_some_and(|n| n.needs_simulation()),
            due: plant.has_due_dates(),
        }
    }
}

/// Whether `plant` (with features `f`) has metric `d` for subject `i` of its scope.
fn applies(plant: &Plant, f: &Features, d: &Def, i: usize) -> bool {
    match (d.when, d.scope) {
        (When::Always, _) => true,
        (When::Staging, _) => f.staging,
        (When::Overflow, _) => f.overflow,
        (When::TurnAway, _) => f.turn_away,
        (When::Aisles, _) => f.aisles,
        (When::Breakdowns, Scope::Department) => plant.departments[i].breakdowns.is_some(),
        (When::Breakdowns, Scope::Fleet) => {
            let fl = &plant.fleets()[i];
            fl.breakdowns.is_some() || fl.charging.is_some()
        }
        (When::Calendar, Scope::Department) => plant.departments[i].calendar.is_some(),
        (When::Calendar, Scope::Fleet) => plant.fleets()[i].operators.duty.is_some(),
        (When::Setups, Scope::Department) => plant.departments[i].setups.is_some(),
        (When::Batches, Scope::Department) => plant.departments[i].batch.is_some(),
        (When::DueDates, Scope::Plant) => f.due,
        (When::Crews, Scope::Plant) => !plant.crews.is_empty(),
        (When::Crews, Scope::Department) => plant.departments[i].people.is_some(),
        (When::Calendar, Scope::Crew) => plant.crews[i].duty.is_some(),
        (When::DueDates, Scope::Product) => product_has_due_dates(plant, i),
        (When::Assembly, Scope::Product) => match d.id {
            super::registry::Id::ProductPartWait => plant.products[i].into.is_some(),
            _ => !plant.products[i].kits.is_empty(),
        },
        _ => false,
    }
}

/// Whether product `p`'s lots have due dates: its own allowance, or a due
/// date on one of its trace orders.
pub fn product_has_due_dates(plant: &Plant, p: usize) -> bool {
    plant.products[p].due_within_s.is_some()
        || plant.orders.as_ref().is_some_and(|t| t.orders.iter().any(|o| o.product == p && o.due_s.is_some()))
}

/// One metric of one plant: a registry row and its subject.
#[derive(Debug, Clone, Serialize)]
pub struct Metric {
    /// Plant, product, department, fleet or segment.
    pub scope: Scope,
    /// The product, department or fleet id, or `segment-3`; empty for the plant.
    pub subject: String,
    /// The registry name, e.g. `flow_time_s`.
    pub name: &'static str,
    /// Duration or plain number.
    pub kind: Kind,
    /// Which direction is better.
    pub better: Better,
    /// The registry row.
    #[serde(skip)]
    pub def: &'static Def,
    /// The subject's index in its scope (0 for the plant).
    #[serde(skip)]
    pub index: usize,
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

    /// The table label with its subject: "flow time", "pump-housing flow time".
    pub fn human(&self) -> String {
        if self.subject.is_empty() {
            self.def.label.to_string()
        } else {
            format!("{} {}", self.subject, self.def.label)
        }
    }

    /// This metric's value in replication `r`.
    pub fn value(&self, plant: &Plant, r: &RepStats) -> f64 {
        value(self.def.id, plant, r, self.index)
    }
}

/// The subject name of aisle segment `s` in metric labels: `segment-3/traversals_per_h`.
pub fn segment_subject(s: usize) -> String {
    format!("segment-{s}")
}

/// The subjects of `scope` in `plant`: (index, name).
pub fn subjects(plant: &Plant, scope: Scope) -> Vec<(usize, String)> {
    match scope {
        Scope::Plant => vec![(0, String::new())],
        Scope::Product => plant.products.iter().enumerate().map(|(i, p)| (i, p.id.clone())).collect(),
        Scope::Department => plant.departments.iter().enumerate().map(|(i, d)| (i, d.id.clone())).collect(),
        Scope::Fleet => plant.fleets().iter().enumerate().map(|(i, f)| (i, f.id.clone())).collect(),
        Scope::Crew => plant.crews.iter().enumerate().map(|(i, c)| (i, c.id.clone())).collect(),
        Scope::Segment => {
            let n = if Features::of(plant).aisles {
                plant.aisles.as_ref().map_or(0, |a| a.segments.len())
            } else {
                0
            };
            (0..n).map(|s| (s, segment_subject(s))).collect()
        }
    }
}

/// Every metric of `plant` that applies, listed or not, in report order.
fn all(plant: &Plant, listed_only: bool) -> Vec<Metric> {
    let features = Features::of(plant);
    let mut out = Vec::new();
    for scope in [Scope::Plant, Scope::Product, Scope::Department, Scope::Fleet, Scope::Crew, Scope::Segment]
    {
        for (index, subject) in subjects(plant, scope) {
            for def in DEFS.iter().filter(|d| d.scope == scope && (d.listed || !listed_only)) {
                if applies(plant, &features, def, index) {
                    out.push(Metric {
                        scope,
                        subject: subject.clone(),
                        name: def.name,
                        kind: def.kind(),
                        better: def.better,
                        def,
                        index,
                    });
                }
            }
        }
    }
    out
}

/// Every listed metric of `plant` (those compare and experiments carry), in the order [`values`] returns them.
pub fn metrics(plant: &Plant) -> Vec<Metric> {
    all(plant, true)
}

/// Every metric of `plant`, listed or not (fleet sizing and targets may name any).
pub fn every_metric(plant: &Plant) -> Vec<Metric> {
    all(plant, false)
}

/// Every listed metric's value in one replication, in the order of [`metrics`].
pub fn values(plant: &Plant, r: &RepStats) -> Vec<f64> {
    metrics(plant).iter().map(|m| m.value(plant, r)).collect()
}

/// Index of a metric by its label (`flow_time_s`, `pump-housing/flow_time_s`),
/// read through [`canonical`] so old names and `utilisation` are found too.
/// The second value is the note to show when the name was rewritten.
pub fn find_metric(list: &[Metric], label: &str) -> Option<(usize, Option<String>)> {
    let (subject, name) = match label.rsplit_once('/') {
        Some((s, n)) => (s, n),
        None => ("", label),
    };
    let (name, note) = canonical(name.trim());
    let subject = subject.trim();
    list.iter().position(|m| m.subject == subject && m.name == name).map(|i| (i, note))
}

/// Mean of metric `m` over the replications that observed it; `None` if none did.
pub fn values_mean(rows: &[Vec<f64>], m: usize) -> Option<f64> {
    let (sum, n) =
        rows.iter().map(|v| v[m]).filter(|x| x.is_finite()).fold((0.0, 0usize), |(s, n), x| (s + x, n + 1));
    (n > 0).then(|| sum / n as f64)
}
