//! The static load on crews for `check` and `run`'s predicted column: people-hours of work per hour and predicted utilisation.

/// The static load on each crew: people-hours of work per hour, by crew.
/// Per department whose operations need a person: `for: operation` holds a
/// person for the processing and setup time, λ·E[S] + setup time per hour;
/// `for: setup` for the setup time per hour; `for: loading` for λ·E[loading].
/// Per department whose repairs need a technician: failures per hour ×
/// E[repair], failures counted as if no repair ever waited (clock time:
/// machines ÷ (MTBF + MTTR); busy time: λ·E[S] ÷ MTBF), so the figure is a
/// little high when repairs queue. Walking is left out (it depends on the layout).
pub fn people_hours_per_h(plant: &crate::plant::Plant, picture: &crate::analysis::StaticPicture) -> Vec<f64> {
    let mut load = vec![0.0; plant.crews.len()];
    for (d, dep) in plant.departments.iter().enumerate() {
        let c = f64::from(dep.machines);
        let busy = picture.utilization[d] * c;
        let setup = picture.setup_share[d] * c;
        if let Some(p) = &dep.people {
            load[p.crew] += match p.task {
                crate::plant::PersonFor::Operation => busy + setup,
                crate::plant::PersonFor::Setup => setup,
                crate::plant::PersonFor::Loading => {
                    picture.arrivals_per_h[d] * p.loading.as_ref().map_or(0.0, |l| l.mean()) / 3600.0
                }
            };
        }
        if let (Some(t), Some(b)) = (dep.technicians, dep.breakdowns.as_ref()) {
            let (up, down) = (b.between.mean(), b.repair.mean());
            let failures_per_s = match b.clock {
                crate::plant::FailureClock::ClockTime => c / (up + down),
                crate::plant::FailureClock::BusyTime => busy / up,
            };
            load[t] += failures_per_s * down;
        }
    }
    load
}

/// Predicted utilisation of each crew: its people-hours per hour ÷ (size ×
/// on-duty share) (docs/formulas.md §27). At or above 1 the crew cannot keep up.
pub fn predicted_utilization(
    plant: &crate::plant::Plant,
    picture: &crate::analysis::StaticPicture,
) -> Vec<f64> {
    people_hours_per_h(plant, picture)
        .iter()
        .zip(&plant.crews)
        .map(|(&h, c)| h / (f64::from(c.size) * c.on_duty_share()))
        .collect()
}
