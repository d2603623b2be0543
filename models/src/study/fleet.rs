//! Sizing one handling fleet: simulate every size under common random numbers and judge each against targets.
//!
//! Every number of a size comes from the metric registry, so a size's
//! utilisation is the number `run` prints for that fleet at that size.

use serde::ser::SerializeMap as _;
use serde::Serialize;

use crate::analysis::StaticPicture;
use crate::metrics::estimate::{est_with_se, Estimate};
use crate::metrics::list::{every_metric, Metric};
use crate::metrics::registry::Scope;
use crate::plant::{Handling, Plant};
use crate::sim::{Plan, RepStats, RunSpec};
use crate::sizing::{fleet_estimate, EmptyRule, FleetEstimate};
use crate::suggest::did_you_mean;

use super::deadlock::deadlock_message;
use super::progress::{Progress, StudyError};
use super::replicate::replicate;
use super::targets::{judge, Target, Verdict};

/// Plant metrics every size reports beside the fleet's own.
pub const PLANT_METRICS: &[&str] = &["throughput_per_h", "wip_mean", "flow_time_s"];

/// Parse `2..8` or `2,3,5` into increasing sizes of at least 1.
pub fn parse_sizes(text: &str) -> Result<Vec<u32>, StudyError> {
    let bad = |why: &str| {
        StudyError::Input(format!(
            "--sizes {text:?}: {why}; write a range such as 2..8 or a list such as 2,3,5"
        ))
    };
    let num =
        |s: &str| s.trim().parse::<u32>().map_err(|_| bad(&format!("{:?} is not a whole number", s.trim())));
    let sizes: Vec<u32> = if let Some((a, b)) = text.split_once("..") {
        let (a, b) =
            (num(a)?, num(b.trim_start_matches('=')).map_err(|_| bad("the range end is not a number"))?);
        if b < a {
            return Err(bad("the range runs backwards"));
        }
        (a..=b).collect()
    } else {
        text.split(',').map(num).collect::<Result<_, _>>()?
    };
    if sizes.contains(&0) {
        return Err(bad("a fleet needs at least one mover"));
    }
    if sizes.windows(2).any(|w| w[1] <= w[0]) {
        return Err(bad("list the sizes in increasing order, each once"));
    }
    if sizes.len() > 200 {
        return Err(bad("more than 200 sizes"));
    }
    Ok(sizes)
}

/// The fleet to size: `name`, or the only one.
pub fn which_fleet(plant: &Plant, name: Option<&str>) -> Result<usize, StudyError> {
    let fleets = plant.fleets();
    if matches!(plant.handling, Handling::Instant) || fleets.is_empty() {
        return Err(StudyError::Input(
            "this scenario has `moves: instant`: there is no fleet to size; describe the movers under `fleets:`"
                .into(),
        ));
    }
    let ids: Vec<&str> = fleets.iter().map(|f| f.id.as_str()).collect();
    match name {
        None if fleets.len() == 1 => Ok(0),
        None => Err(StudyError::Input(format!(
            "--fleet is needed: the scenario has {} fleets ({})",
            ids.len(),
            ids.join(", ")
        ))),
        Some(n) => ids.iter().position(|i| *i == n).ok_or_else(|| {
            StudyError::Input(format!(
                "--fleet {n:?}: no such fleet{}; the scenario has: {}",
                did_you_mean(n, ids.iter().copied()),
                ids.join(", ")
            ))
        }),
    }
}

/// `plant` with fleet `f` at `n` movers.
pub fn sized(plant: &Plant, f: usize, n: u32) -> Plant {
    let mut p = plant.clone();
    if let Handling::Fleets(fl) = &mut p.handling {
        fl[f].count = n;
    }
    p
}

/// The efficiency the simulation applies to fleet `f`'s movers, so that the
/// analytic estimate is on the same footing.
pub fn fleet_efficiency(plant: &Plant, f: usize) -> f64 {
    plant.fleets()[f].operators.efficiency
}

/// Share of clock time fleet `f`'s operators are on duty (shifts less breaks).
pub fn fleet_on_duty_share(plant: &Plant, f: usize) -> f64 {
    plant.fleets()[f].operators.duty.as_ref().map_or(1.0, |d| d.on_duty_s(0.0, d.period_s) / d.period_s)
}

/// The analytic estimate under both empty-travel rules.
#[derive(Debug, Clone, Serialize)]
pub struct Analytic {
    /// Share of clock time on duty (A in the formula).
    pub availability: f64,
    /// Share of on-duty time spent productively (E in the formula).
    pub efficiency: f64,
    /// Empties sent from where loads end to where loads start by a transportation problem.
    pub minimum_empty_flow: Estimated,
    /// Empty travel taken equal to loaded travel (conservative).
    pub empty_equals_loaded: Estimated,
}

/// The analytic estimate's numbers, per hour of operation, as reported.
#[derive(Debug, Clone, Serialize)]
pub struct Estimated {
    /// Loaded trips per hour.
    pub trips_per_h: f64,
    /// Metres travelled loaded per hour.
    pub loaded_m_per_h: f64,
    /// Metres travelled empty per hour.
    pub empty_m_per_h: f64,
    /// Seconds of loaded travel per hour.
    pub loaded_travel_s_per_h: f64,
    /// Seconds of empty travel per hour.
    pub empty_travel_s_per_h: f64,
    /// Seconds of loading and unloading per hour.
    pub handling_s_per_h: f64,
    /// Busy seconds per hour, all three.
    pub busy_s_per_h: f64,
    /// Movers needed (fractional).
    pub vehicles: f64,
    /// Movers needed, rounded up.
    pub vehicles_rounded_up: u64,
    /// The efficiency applied.
    #[serde(skip)]
    pub efficiency: f64,
}

impl Estimated {
    fn new(e: FleetEstimate, efficiency: f64) -> Estimated {
        Estimated {
            trips_per_h: e.trips_per_h,
            loaded_m_per_h: e.loaded_m_per_h,
            empty_m_per_h: e.empty_m_per_h,
            loaded_travel_s_per_h: e.loaded_travel_s_per_h,
            empty_travel_s_per_h: e.empty_travel_s_per_h,
            handling_s_per_h: e.handling_s_per_h,
            busy_s_per_h: e.busy_s_per_h,
            vehicles: e.vehicles,
            vehicles_rounded_up: e.vehicles_rounded_up,
            efficiency,
        }
    }
}

/// The analytic estimate for fleet `f` under layout `layout`, with `efficiency`.
pub fn analytic(
    plant: &Plant,
    pic: &StaticPicture,
    layout: usize,
    f: usize,
    efficiency: f64,
) -> Result<Analytic, StudyError> {
    let availability = fleet_on_duty_share(plant, f);
    let with = |rule| {
        fleet_estimate(plant, pic, layout, f, rule, efficiency * availability)
            .map(|e| Estimated::new(e, efficiency))
            .map_err(StudyError::Run)
    };
    Ok(Analytic {
        availability,
        efficiency,
        minimum_empty_flow: with(EmptyRule::MinimumEmptyFlow)?,
        empty_equals_loaded: with(EmptyRule::SameAsLoaded)?,
    })
}

/// Metric estimates by registry name, in registry order; serialised as one JSON object.
#[derive(Debug, Clone, Default)]
pub struct Named(pub Vec<(&'static str, Estimate)>);

impl Named {
    /// The estimate of metric `name`, if the size has it.
    pub fn get(&self, name: &str) -> Option<&Estimate> {
        self.0.iter().find(|(n, _)| *n == name).map(|(_, e)| e)
    }
}

impl Serialize for Named {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

/// One fleet size's results.
#[derive(Debug, Clone, Serialize)]
pub struct SizeResult {
    /// Movers in the fleet.
    pub movers: u32,
    /// The analytic (minimum-empty-flow) estimate's busy time ÷ available mover time at this size.
    pub utilization_analytic: f64,
    /// Every metric of the sized fleet, then the plant's throughput, WIP and
    /// flow time, under their registry names.
    #[serde(flatten)]
    pub metrics: Named,
    /// One verdict per target, in the order given.
    pub targets: Vec<Verdict>,
    /// Every target met with 95% confidence.
    pub meets_every_target: bool,
}

/// A sweep: one fleet, one layout, several sizes.
pub struct Sweep<'a> {
    /// The plant as the scenario gives it.
    pub plant: &'a Plant,
    /// The fleet sized.
    pub fleet: usize,
    /// Sizes, increasing.
    pub sizes: &'a [u32],
    /// Targets, parsed against [`every_metric`] of the plant.
    pub targets: &'a [Target],
    /// Run settings (layout, horizon, warm-up, demand factor, seed).
    pub spec: RunSpec,
    /// Replications per size.
    pub replications: u32,
    /// The analytic estimate, for its utilisation column.
    pub analytic: &'a Estimated,
}

/// Simulate every size on the current rayon pool. Also returns the events simulated.
pub fn sweep(s: &Sweep, progress: &dyn Progress) -> Result<(Vec<SizeResult>, u64), StudyError> {
    let mut results = Vec::with_capacity(s.sizes.len());
    let mut events = 0;
    let id = &s.plant.fleets()[s.fleet].id;
    for &n in s.sizes {
        let p = sized(s.plant, s.fleet, n);
        progress.stage(format!("{id} × {n}"));
        let plan = Plan::new(&p, s.spec.layout);
        let reps = replicate(&plan, &s.spec, s.replications, |r| progress.done(r));
        if let Some(why) = deadlock_message(&p, &reps) {
            return Err(StudyError::Run(format!("with {n} movers in {id}: {why}")));
        }
        events += reps.iter().map(|r| r.events).sum::<u64>();
        results.push(size_result(&p, s, n, &reps));
    }
    Ok((results, events))
}

fn size_result(plant: &Plant, s: &Sweep, n: u32, reps: &[RepStats]) -> SizeResult {
    let list = every_metric(plant);
    let estimate = |m: &Metric| est_with_se(reps.iter().map(|r| m.value(plant, r)));
    let shown = list.iter().filter(|m| {
        (m.scope == Scope::Fleet && m.index == s.fleet)
            || (m.scope == Scope::Plant && PLANT_METRICS.contains(&m.name))
    });
    let metrics = Named(shown.map(|m| (m.name, estimate(m).0)).collect());
    let verdicts: Vec<Verdict> = s
        .targets
        .iter()
        .map(|t| {
            let (e, se) = estimate(&list[t.metric]);
            judge(t, &e, se)
        })
        .collect();
    let a = s.analytic;
    SizeResult {
        movers: n,
        utilization_analytic: a.busy_s_per_h / (3600.0 * f64::from(n) * a.efficiency),
        metrics,
        meets_every_target: verdicts.iter().all(|v| v.met),
        targets: verdicts,
    }
}
