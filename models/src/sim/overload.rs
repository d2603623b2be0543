//! The overload rule: the most lots a stable plant is taken ever to hold, past which a replication stops (or, with `--allow-overload`, turns arrivals away).
//!
//! An overloaded plant keeps every lot it cannot finish, so its memory grows
//! with the horizon until the machine gives out. A stable plant's WIP stays
//! near its expected level. The limit (docs/formulas.md §22) is
//!
//! `max(WIP_FLOOR, WIP_MULTIPLE × L̂ + 2 × cycle lots)`,
//!
//! where L̂ is the expected WIP of the stations predicted stable (each
//! department and fleet as a GI/G/c station with the static picture's
//! utilisation) and the cycle lots are what the plant releases over its
//! longest repeating pattern (a demand profile, a calendar, one play of the
//! order trace, ten mean repairs). The rule reads one counter per released
//! lot, so it costs nothing per event.

use crate::analysis::StaticPicture;
use crate::plant::{Demand, DepartmentRole, Plant};

/// How many times the expected WIP a stable plant is taken never to reach
/// (docs/formulas.md §22): in heavy traffic the number at a station is near
/// exponential with mean L, so it passes 50 L with probability about e⁻⁵⁰.
pub const WIP_MULTIPLE: f64 = 50.0;

/// Lots in the plant below which the rule never fires, whatever the expected
/// WIP: it keeps lightly loaded plants, whose L̂ is tiny, clear of bursts,
/// and holds about a megabyte of lots.
pub const WIP_FLOOR: f64 = 10_000.0;

/// Repairs and charges count as a repeating pattern of this many mean durations.
const REPAIR_SPAN: f64 = 10.0;

/// A plan's overload rule: what the limit is built from, at demand factor 1.
#[derive(Debug, Clone)]
pub(crate) struct OverloadRule {
    stations: Vec<Station>,
    /// Lots released over the longest repeating pattern, by rate-driven products.
    cycle_lots: f64,
    /// Lots one play of the order trace releases (0 without one).
    trace_lots: f64,
    /// `--allow-overload`: turn arrivals away at the limit instead of stopping.
    pub(crate) allow: bool,
}

/// A department or fleet as a GI/G/c station.
#[derive(Debug, Clone, Copy)]
struct Station {
    servers: f64,
    /// Utilisation at demand factor 1 (it scales with the factor).
    load: f64,
    /// (c_a² + c_s²)/2 with Poisson arrivals (c_a² = 1), at least 1.
    variability: f64,
}

impl OverloadRule {
    /// The rule for `layout` of `plant`, read from the static picture at demand factor 1.
    pub(crate) fn new(plant: &Plant, layout: usize) -> OverloadRule {
        let pic = StaticPicture::new(plant, 1.0);
        let mut stations = Vec::new();
        for (d, dep) in plant.departments.iter().enumerate() {
            if dep.role != DepartmentRole::Work || dep.machines == 0 {
                continue;
            }
            stations.push(Station {
                servers: f64::from(dep.machines),
                load: pic.utilization_available[d],
                variability: service_variability(plant, &pic, d),
            });
        }
        let bounds = pic.layouts.get(layout).map_or(&[][..], |l| &l.fleet_utilization_lower_bound[..]);
        for (f, fleet) in plant.fleets().iter().enumerate() {
            if let Some(&u) = bounds.get(f) {
                stations.push(Station { servers: f64::from(fleet.count), load: u, variability: 1.0 });
            }
        }
        // The longest repeating pattern, s: a WIP that builds up over one of
        // them (a peak, a weekend, a long repair) is not a divergence.
        let mut cycle_s: f64 = 0.0;
        for prod in &plant.products {
            if let Demand::Rate { profile: Some(pr), .. } = &prod.demand {
                cycle_s = cycle_s.max(pr.every_s * pr.factors.len() as f64);
            }
        }
        for dep in &plant.departments {
            if let Some(c) = &dep.calendar {
                cycle_s = cycle_s.max(c.duty.period_s);
            }
            if let Some(b) = &dep.breakdowns {
                cycle_s = cycle_s.max(REPAIR_SPAN * b.repair.mean());
            }
        }
        for fleet in plant.fleets() {
            if let Some(duty) = &fleet.operators.duty {
                cycle_s = cycle_s.max(duty.period_s);
            }
            if let Some(b) = &fleet.breakdowns {
                cycle_s = cycle_s.max(REPAIR_SPAN * b.repair.mean());
            }
            if let Some(c) = &fleet.charging {
                cycle_s = cycle_s.max(REPAIR_SPAN * c.for_s);
            }
        }
        let rate_per_s: f64 = plant
            .products
            .iter()
            .zip(&pic.product_rate_per_h)
            .filter(|(p, _)| !matches!(p.demand, Demand::Orders))
            .map(|(_, r)| r / 3600.0)
            .sum();
        let trace_lots =
            plant.orders.as_ref().map_or(0.0, |t| t.orders.iter().map(|o| f64::from(o.quantity)).sum());
        OverloadRule {
            stations,
            cycle_lots: rate_per_s * cycle_s,
            trace_lots,
            allow: plant.run.allow_overload,
        }
    }

    /// Expected lots in the plant at `demand_factor`, over the stations predicted stable (L̂).
    pub(crate) fn expected_wip(&self, demand_factor: f64) -> f64 {
        self.stations
            .iter()
            .map(|s| station_wip(s.servers, s.load * demand_factor, s.variability))
            .filter(|l| l.is_finite())
            .sum()
    }

    /// The most lots in the plant at `demand_factor` before the rule fires.
    pub(crate) fn limit(&self, demand_factor: f64) -> f64 {
        let cycle = 2.0 * demand_factor * (self.cycle_lots + self.trace_lots);
        let l = WIP_MULTIPLE * self.expected_wip(demand_factor) + cycle;
        // A non-finite input (which validation refuses) leaves only the floor, never no limit.
        if l.is_finite() {
            l.max(WIP_FLOOR).ceil()
        } else {
            WIP_FLOOR
        }
    }
}

/// Expected lots at a GI/G/c station with `c` servers at utilisation `u`
/// (infinite at `u ≥ 1`): `c·u` in service plus Sakasegawa's approximation
/// of the M/M/c queue, `u^√(2(c+1)) / (1 − u)`, times the variability
/// factor (c_a² + c_s²)/2 (Hopp and Spearman, Factory Physics, the queue
/// length form of the VUT equation; from memory; docs/formulas.md §22).
fn station_wip(c: f64, u: f64, variability: f64) -> f64 {
    if !(u < 1.0) {
        return f64::INFINITY;
    }
    c * u + variability * u.powf((2.0 * (c + 1.0)).sqrt()) / (1.0 - u)
}

/// (1 + c_s²)/2 of department `d`'s processing time, the mix of every
/// operation there weighted by its lots per hour; at least 1, so a plant
/// is never taken to be less variable than with Poisson arrivals.
fn service_variability(plant: &Plant, pic: &StaticPicture, d: usize) -> f64 {
    let (mut w_sum, mut m1, mut m2) = (0.0, 0.0, 0.0);
    for (p, prod) in plant.products.iter().enumerate() {
        for (k, op) in prod.routing.iter().enumerate() {
            if op.department != d {
                continue;
            }
            let w = pic.product_rate_per_h[p] * pic.visits[p].get(k).copied().unwrap_or(0.0);
            let (mean, var) = op.time.as_ref().map_or((0.0, 0.0), |t| (t.mean(), t.variance()));
            w_sum += w;
            m1 += w * mean;
            m2 += w * (var + mean * mean);
        }
    }
    if !(w_sum > 0.0 && m1 > 0.0) {
        return 1.0;
    }
    let (m1, m2) = (m1 / w_sum, m2 / w_sum);
    let scv = m2 / (m1 * m1) - 1.0;
    if scv.is_finite() {
        ((1.0 + scv) / 2.0).max(1.0)
    } else {
        1.0
    }
}

/// The most lots layout `layout` of `plant` may hold at `demand_factor`
/// before a replication stops as overloaded (or turns arrivals away, with
/// `--allow-overload`).
pub fn wip_limit(plant: &Plant, layout: usize, demand_factor: f64) -> f64 {
    OverloadRule::new(plant, layout).limit(demand_factor)
}

/// The expected WIP L̂ the limit is built on (stations predicted stable only).
pub fn expected_wip(plant: &Plant, layout: usize, demand_factor: f64) -> f64 {
    OverloadRule::new(plant, layout).expected_wip(demand_factor)
}

#[cfg(test)]
mod tests {
    use super::station_wip;

    /// M/M/1 (c = 1, variability 1): Sakasegawa's form is exact, L = ρ/(1 − ρ)
    /// (any queueing text; from memory).
    #[test]
    fn one_server_is_the_mm1_mean() {
        for rho in [0.5, 0.8, 0.95] {
            let l = station_wip(1.0, rho, 1.0);
            assert!((l - rho / (1.0 - rho)).abs() < 1e-12, "{rho}: {l}");
        }
        assert!(station_wip(2.0, 1.0, 1.0).is_infinite());
    }
}
