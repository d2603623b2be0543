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
        return Some(super::overload::overload_message(plant, o, rep, replication));
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
