//! Crews: named pools of people that departments' operations and repairs need, as the compiled plant holds them.
//!
//! The loader (`scenario/crews.rs`) builds these; the simulation
//! (`sim/model/crews.rs`) and the static picture (`check`) read them.

use crate::dist::Dist;
use crate::plant::DutyCalendar;

/// A named pool of identical people.
#[derive(Debug, Clone, PartialEq)]
pub struct Crew {
    /// The scenario's name for it.
    pub id: String,
    /// People in the crew (at least 1).
    pub size: u32,
    /// Cost of one person per hour on the payroll (the scenario's currency),
    /// paid for the whole window, on duty or not, busy or idle.
    pub cost_per_h: f64,
    /// When the crew works (shifts less breaks); `None`: on duty all the time.
    pub duty: Option<DutyCalendar>,
    /// Department the crew waits at between tasks (for walking to repairs); `None`: no walking.
    pub home: Option<usize>,
    /// Walking speed, m/s, over the layout's distances from `home`; `None`: no walking.
    pub walk_speed: Option<f64>,
}

impl Crew {
    /// The long-run share of time the crew is on duty (1 without shifts).
    pub fn on_duty_share(&self) -> f64 {
        self.duty.as_ref().map_or(1.0, |d| d.on.iter().map(|&(a, b)| b - a).sum::<f64>() / d.period_s)
    }
}

/// What part of an operation holds a person.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PersonFor {
    /// Only the setup (a change of product); an operation without a setup needs nobody.
    Setup,
    /// The setup, if any, and the whole processing time.
    Operation,
    /// A loading time of its own at the start of the operation, before any setup and processing.
    Loading,
}

impl PersonFor {
    /// The word the scenario uses.
    pub fn word(self) -> &'static str {
        match self {
            PersonFor::Setup => "setup",
            PersonFor::Operation => "operation",
            PersonFor::Loading => "loading",
        }
    }
}

/// A department's need for a person from a crew.
#[derive(Debug, Clone, PartialEq)]
pub struct People {
    /// Index into [`crate::plant::Plant::crews`].
    pub crew: usize,
    /// Which part of the operation holds the person.
    pub task: PersonFor,
    /// The loading time (`task` is [`PersonFor::Loading`] exactly when this is set).
    pub loading: Option<Dist>,
}

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
                PersonFor::Operation => busy + setup,
                PersonFor::Setup => setup,
                PersonFor::Loading => {
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
/// on-duty share) (docs/formulas.md §25). At or above 1 the crew cannot keep up.
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
