//! Loud warnings on stderr before a run: departments or fleets the static picture says cannot keep up.

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::Plant;

use super::table::share;

/// Print a loud warning on stderr for every department predicted at or over capacity.
pub fn warn_overload(plant: &Plant, pic: &StaticPicture) {
    for d in pic.overloaded() {
        let dep = &plant.departments[d];
        eprintln!(
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
                eprintln!(
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
