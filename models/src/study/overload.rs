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

/// With `--allow-overload`: the loud note for replications whose WIP cap
/// turned lots away, `None` when the cap was never reached.
pub fn cap_note(reps: &[RepStats]) -> Option<String> {
    let capped: u64 = reps.iter().map(|r| r.capped).sum();
    if capped == 0 {
        return None;
    }
    let hit = reps.iter().filter(|r| r.capped > 0).count();
    let limit = reps.iter().map(|r| r.wip_limit).fold(0.0, f64::max);
    let turned: u64 = reps.iter().flat_map(|r| r.turned_away.iter()).sum();
    let shipped: u64 = reps.iter().flat_map(|r| r.shipped.iter()).sum();
    Some(format!(
        "OVERLOADED (--allow-overload): the WIP cap of {} lots turned away {capped} arriving lots in the \
         observation window ({hit} of {} replications reached it; {shipped} lots shipped, {turned} turned away in \
         all). Every number below describes a plant that turns work away at the dock: throughput is what the cap \
         let in, and flow times and WIP are those of a plant held at the cap, not of the plant at this demand",
        num(limit),
        reps.len()
    ))
}
