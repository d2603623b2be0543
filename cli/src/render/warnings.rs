//! What a report says before its tables: loud warnings when the plant cannot keep up, and how the warm-up was chosen.

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::Plant;

use layflow_models::study::warmup::WarmupChoice;
use layflow_models::units::format_duration;

use super::table::{share, verbose};
use crate::output::note;

/// Print a loud warning on stderr for every department predicted at or over capacity.
pub fn warn_overload(plant: &Plant, pic: &StaticPicture) {
    for d in pic.overloaded() {
        let dep = &plant.departments[d];
        note!(
            "WARNING: department \"{}\" is predicted at {} utilisation ({} machine{}{}): the plant cannot keep up \
             with this demand; queues there grow without bound and simulated results will not settle.",
            dep.id,
            share(pic.utilization_available[d]),
            dep.machines,
            if dep.machines == 1 { "" } else { "s" },
            if dep.breakdowns.is_some() {
                format!(", up {} of the time", share(pic.availability[d]))
            } else {
                String::new()
            } + &if dep.calendar.is_some() {
                format!(", scheduled {} of the time", share(pic.scheduled_share[d]))
            } else {
                String::new()
            }
        );
    }
    for (l, lp) in pic.layouts.iter().enumerate() {
        for (f, &u) in lp.fleet_utilization_lower_bound.iter().enumerate() {
            if u >= 1.0 {
                note!(
                    "WARNING: fleet \"{}\" needs at least {} of its time for loaded moves under layout \"{}\": \
                     it cannot keep up; add movers.",
                    plant.fleets()[f].id,
                    share(u),
                    plant.layouts[l].name
                );
            }
        }
    }
}

/// How the warm-up was chosen, in one line; with `--verbose`, the MSER-5 working too.
pub fn warmup_line(w: &WarmupChoice) -> String {
    let mut line = format!(
        "warm-up {} chosen from pilot runs: statistics start once the plant's WIP has settled (decided by layout {})",
        format_duration(w.warmup_s),
        w.decided_by
    );
    if verbose() {
        line.push_str(&format!(
            "\n  {} on the WIP, averaged over {} pilot replications per layout in intervals of {}, at demand ×{}{}",
            w.method,
            w.pilot_replications,
            format_duration(w.interval_s),
            w.demand_factor,
            if w.at_limit { "; it deleted the most it may (half the horizon)" } else { "" }
        ));
    }
    line
}
