//! Messages for replications that stopped early: deadlock (which movers or departments are stuck for good, and what would free them) and overload (`overload.rs`).
//!
//! Every command that simulates asks [`replication_deadlock`] or
//! [`deadlock_message`] after its replications and fails the run (exit 1)
//! with the message, so a stop of either kind reaches every command the same way.

use crate::plant::Plant;
use crate::sim::RepStats;

/// The message for movers stuck for good in the aisles (replication `i`, 0-based).
fn aisle_deadlock(plant: &Plant, d: &crate::sim::Deadlock, i: u64) -> String {
    let fleets = plant.fleets();
    let movers: Vec<String> = d.movers.iter().map(|&(f, k)| format!("{} #{}", fleets[f].id, k + 1)).collect();
    let (segments, zones) = match plant.aisles.as_ref() {
        Some(net) => (
            d.segments.iter().map(|&s| net.segment_name(s)).collect::<Vec<_>>(),
            d.zones.iter().map(|&n| format!("zone \"{}\"", net.nodes[n].id)).collect::<Vec<_>>(),
        ),
        None => (Vec::new(), Vec::new()),
    };
    let held = segments.into_iter().chain(zones).collect::<Vec<_>>().join(", ");
    format!(
        "the movers deadlocked in the aisles in replication {} at {}: {} hold or wait for {}, and each waits for \
         room that only another of them can free, so none can ever move again. Give one of those segments a \
         higher `capacity`, add a passing place (a node with a second route round), or make the aisle one-way",
        i + 1,
        crate::units::format_duration(d.time_s),
        movers.join(", "),
        held
    )
}

/// The message for the first replication that deadlocked or was stopped as overloaded, if any.
pub fn deadlock_message(plant: &Plant, reps: &[RepStats]) -> Option<String> {
    let (i, _) = reps.iter().enumerate().find(|(_, r)| r.deadlock.is_some() || r.overload.is_some())?;
    replication_deadlock(plant, &reps[i], i as u64)
}

/// The message of one replication (number `replication`, 0-based), if it
/// deadlocked or the overload rule stopped it.
pub fn replication_deadlock(plant: &Plant, rep: &RepStats, replication: u64) -> Option<String> {
    if let Some(o) = &rep.overload {
        let message = super::overload::overload_message(plant, o, rep, replication);
        return Some(match kit_stall(plant, rep) {
            Some(kits) => format!("{kits}; {message}"),
            None => message,
        });
    }
    let (i, d) = (replication, rep.deadlock.as_ref()?);
    if !d.movers.is_empty() {
        return Some(aisle_deadlock(plant, d, i));
    }
    let names: Vec<&str> = d.departments.iter().map(|&k| plant.departments[k].id.as_str()).collect();
    Some(format!(
        "the plant deadlocked in replication {} at {}: departments {} are full and every machine there holds a \
         finished lot that can only go to a full department of the same group (or wait for a mover that is \
         itself waiting there); no event can free them. Give one of them more inbound or outbound staging, an \
         overflow location, or more movers",
        i + 1,
        crate::units::format_duration(d.time_s),
        names.join(", ")
    ))
}

/// When lots waiting for kits (or component stock) make up most of what a
/// stopped replication held: which product waits, for which component, and
/// what the static picture says about its supply. `None` otherwise.
fn kit_stall(plant: &Plant, rep: &RepStats) -> Option<String> {
    let kits = rep.assembly.as_deref()?;
    let held: u64 = kits.held.iter().sum();
    let wip = rep.overload.as_ref().map_or(0.0, |o| o.wip);
    if held == 0 || (held as f64) < 0.5 * wip {
        return None;
    }
    let demand = rep.overload.as_ref().map_or(1.0, |o| o.demand_factor);
    let pic = crate::analysis::StaticPicture::new(plant, demand);
    let (p, &n) = kits.held.iter().enumerate().max_by_key(|&(_, n)| *n)?;
    let prod = &plant.products[p];
    let what = match prod.into {
        // The stock of a component piles up: more of it arrives than kits need.
        Some(parent) => format!(
            "{n} lots of component \"{}\" were in stock at the assembly, waiting for lots of \"{}\" to need them",
            prod.id, plant.products[parent].id
        ),
        None => format!("{n} lots of \"{}\" were waiting for their kits", prod.id),
    };
    let short: Vec<String> = crate::analysis::kit_balance(plant, &pic)
        .iter()
        .flat_map(|k| {
            k.parts.iter().filter_map(move |&(c, q, r)| {
                let allows = r / f64::from(q);
                (allows < k.needed_per_h * (1.0 - 1e-6)).then(|| {
                    format!(
                        "\"{}\" arrives for {} kits/h against {} needed",
                        plant.products[c].id,
                        crate::text::num(allows),
                        crate::text::num(k.needed_per_h)
                    )
                })
            })
        })
        .collect();
    let why = if short.is_empty() {
        "the supply of parts and the kits needed do not keep in step (see the Assembly table of `layflow check`)"
            .to_string()
    } else {
        format!("{} (see the Assembly table of `layflow check`)", short.join(", "))
    };
    Some(format!("the plant stalled on kits: at the stop {what}; {why}"))
}
