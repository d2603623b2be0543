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
