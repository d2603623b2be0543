//! Overload messages: which department or fleet cannot keep up, how far over capacity it is predicted, and what a WIP cap would mean.

use crate::analysis::StaticPicture;
use crate::plant::Plant;
use crate::sim::{Overload, RepStats};
use crate::text::num;
use crate::units::format_duration;

/// The busiest station by the static picture at the replication's demand
/// factor: (what it is, in words, and its predicted utilisation).
fn bottleneck(plant: &Plant, pic: &StaticPicture, layout: usize) -> Option<(String, f64)> {
    let mut best: Option<(String, f64)> = None;
    let mut consider = |name: String, u: f64| {
        if u.is_finite() && best.as_ref().is_none_or(|(_, b)| u > *b) {
            best = Some((name, u));
        }
    };
    for (d, &u) in pic.utilization_available.iter().enumerate() {
        let dep = &plant.departments[d];
        if dep.machines > 0 {
            let s = if dep.machines == 1 { "" } else { "s" };
            consider(format!("department \"{}\" ({} machine{s})", dep.id, dep.machines), u);
        }
    }
    if let Some(lp) = pic.layouts.get(layout) {
        for (f, &u) in lp.fleet_utilization_lower_bound.iter().enumerate() {
            let fleet = &plant.fleets()[f];
            let s = if fleet.count == 1 { "" } else { "s" };
            consider(format!("fleet \"{}\" ({} mover{s}, loaded moves alone)", fleet.id, fleet.count), u);
        }
    }
    best
}

/// A share as a percentage, e.g. `137.5%`.
fn percent(u: f64) -> String {
    format!("{:.1}%", 100.0 * u)
}

/// The message for a replication (number `replication`, 0-based) that the overload rule stopped.
pub fn overload_message(plant: &Plant, o: &Overload, rep: &RepStats, replication: u64) -> String {
    let pic = StaticPicture::new(plant, o.demand_factor);
    let cause = match bottleneck(plant, &pic, o.layout) {
        Some((name, u)) if u >= 1.0 => format!(
            "the bottleneck is {name}, predicted at {} utilisation at demand ×{}: it cannot keep up, so lots pile up \
             in front of it without end. Add capacity there or lower the demand",
            percent(u),
            num(o.demand_factor)
        ),
        Some((name, u)) => format!(
            "no department or fleet is predicted over capacity at demand ×{} (the busiest is {name}, at {}), so \
             what holds the work is something the static picture leaves out: blocking at full staging areas, the \
             movers' empty travel, breakdowns or shift gaps. Look at the blocked shares and move waits of a \
             shorter run",
            num(o.demand_factor),
            percent(u)
        ),
        None => "no department or fleet has a predicted utilisation".to_string(),
    };
    format!(
        "the plant is overloaded: replication {} held {} lots after {} ({} released), past the limit of {} lots \
         that a stable plant of this size does not reach (docs/overload.md), and its WIP keeps growing; {cause}. \
         To run it anyway with a hard cap of {} lots (arrivals beyond it are turned away and counted, and the \
         numbers then describe a plant that turns work away), add --allow-overload",
        replication + 1,
        num(o.wip),
        format_duration(o.time_s),
        o.released,
        num(rep.wip_limit),
        num(rep.wip_limit)
    )
}

/// With `--allow-overload`: what the WIP cap did over a layout's
/// replications, kept in constant memory (replications stream past it).
#[derive(Debug, Default, Clone)]
pub struct CapTally {
    replications: usize,
    capped: u64,
    hit: usize,
    limit: f64,
    turned: u64,
    shipped: u64,
}

impl CapTally {
    /// Count one replication.
    pub fn add(&mut self, r: &RepStats) {
        self.replications += 1;
        self.capped += r.capped;
        self.hit += usize::from(r.capped > 0);
        self.limit = self.limit.max(r.wip_limit);
        self.turned += r.turned_away.iter().sum::<u64>();
        self.shipped += r.shipped.iter().sum::<u64>();
    }

    /// The loud note for replications whose WIP cap turned lots away,
    /// `None` when the cap was never reached.
    pub fn note(&self) -> Option<String> {
        if self.capped == 0 {
            return None;
        }
        Some(format!(
            "OVERLOADED (--allow-overload): the WIP cap of {} lots turned away {} arriving lots in the \
             observation window ({} of {} replications reached it; {} lots shipped, {} turned away in \
             all). Every number below describes a plant that turns work away at the dock: throughput is what the cap \
             let in, and flow times and WIP are those of a plant held at the cap, not of the plant at this demand",
            num(self.limit),
            self.capped,
            self.hit,
            self.replications,
            self.shipped,
            self.turned
        ))
    }
}
