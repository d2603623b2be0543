//! Sizing one handling fleet: simulate every size under common random numbers and judge each against targets.
//!
//! Every number of a size comes from the metric registry, so a size's
//! utilisation is the number `run` prints for that fleet at that size.

use std::collections::BTreeMap;

use crate::limits;
use serde::ser::SerializeMap as _;
use serde::Serialize;

use crate::analysis::StaticPicture;
use crate::metrics::by_bucket::{BucketAccumulator, BucketInfo, BucketRow, BucketSummary, Peak, PeakBucket};
use crate::metrics::estimate::{est_with_se, Estimate, Moments};
use crate::metrics::list::{every_metric, Metric};
use crate::metrics::registry::Scope;
use crate::plant::{Handling, Plant};
use crate::sim::{Plan, RepStats, RunSpec};
use crate::sizing::{fleet_estimate, EmptyRule, FleetEstimate};
use crate::suggest::did_you_mean;
use crate::timebuckets::Grid;

use super::compare::paired;
use super::deadlock::replication_deadlock;
use super::progress::{Progress, StudyError};
use super::replicate::replicate_fold;
use super::targets::{judge, Target, Verdict};

/// Plant metrics every size reports beside the fleet's own.
pub const PLANT_METRICS: &[&str] = &["throughput_per_h", "wip_mean", "flow_time_s"];

/// Most fleet sizes one sweep simulates.
const MAX_SIZES: u32 = 200;

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
        // Checked before the range is listed: `1..4000000000` must not
        // allocate four billion sizes to say there are too many.
        if b - a >= MAX_SIZES {
            return Err(bad(&format!("more than {MAX_SIZES} sizes")));
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
    if sizes.len() > MAX_SIZES as usize {
        return Err(bad(&format!("more than {MAX_SIZES} sizes")));
    }
    if let Some(&n) = sizes.iter().find(|&&n| n > limits::MAX_MOVERS) {
        return Err(bad(&limits::check_count(
            "movers",
            u64::from(n),
            u64::from(limits::MAX_MOVERS),
            limits::COUNT_WHY,
        )
        .expect_err("above the ceiling")));
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
    pub minimum_empty_flow: FleetEstimate,
    /// Empty travel taken equal to loaded travel (conservative).
    pub empty_equals_loaded: FleetEstimate,
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
        fleet_estimate(plant, pic, layout, f, rule, efficiency * availability).map_err(StudyError::Run)
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
    /// The analytic estimate, for its utilisation column and the advice.
    pub analytic: &'a Analytic,
    /// Time buckets (`--by`): every size also reports each metric per bucket.
    pub buckets: Option<&'a Grid>,
}

/// What a sweep found: every size, the advice, and the events simulated.
pub struct SweepResult {
    /// One entry per size, in increasing order.
    pub sizes: Vec<SizeResult>,
    /// What to do next, judged from the sizes.
    pub advice: Advice,
    /// Events simulated, every size.
    pub events: u64,
    /// With [`Sweep::buckets`], one summary per size in the order of
    /// [`SweepResult::sizes`]; empty without.
    pub by_bucket: Vec<BucketSummary>,
}

/// Simulate every size on the current rayon pool, then judge what to advise.
pub fn sweep(s: &Sweep, progress: &dyn Progress) -> Result<SweepResult, StudyError> {
    let mut results = Vec::with_capacity(s.sizes.len());
    let mut events = 0;
    let id = &s.plant.fleets()[s.fleet].id;
    // Each target's per-replication values at the two largest sizes so far,
    // for the paired difference (common random numbers) of the last step.
    let mut last: Vec<Vec<f64>> = Vec::new();
    let mut before_last: Vec<Vec<f64>> = Vec::new();
    let mut floors = Vec::new();
    let mut floors_before = Vec::new();
    let mut by_bucket = Vec::new();
    for &n in s.sizes {
        let p = sized(s.plant, s.fleet, n);
        progress.stage(format!("{id} × {n}"));
        let mut plan = Plan::new(&p, s.spec.layout);
        if let Some(g) = s.buckets {
            plan = plan.with_buckets(g.clone());
        }
        let list = every_metric(&p);
        let mut kept = SizeKept::new(s, &list);
        // Moments per bucket and metric: memory does not grow with replications.
        let mut buckets = s.buckets.map(|g| BucketAccumulator::new(&p, g));
        replicate_fold(
            &plan,
            &s.spec,
            0..u64::from(s.replications),
            |r| progress.done(r),
            |_, r| {
                if let Some(b) = &mut buckets {
                    b.add(&p, &r);
                }
                kept.add(&p, &list, s.targets, &r);
            },
        );
        if let Some(why) = &kept.deadlock {
            return Err(StudyError::Run(format!("with {n} movers in {id}: {why}")));
        }
        events += kept.events;
        results.push(size_result(s, n, &list, &kept));
        by_bucket.extend(buckets.map(|b| b.finish()));
        before_last = std::mem::take(&mut last);
        floors_before = std::mem::take(&mut floors);
        floors = s
            .targets
            .iter()
            .zip(kept.floor_values)
            .map(|(t, v)| floor_of(&list, &list[t.metric], v))
            .collect();
        last = kept.target_values;
    }
    let advice = advise(s, &results, &before_last, &last, &floors, &floors_before);
    Ok(SweepResult { sizes: results, advice, events, by_bucket })
}

/// The part of a wait metric that more movers cannot remove, as the metric
/// naming it: a wait for a mover is at least its drive part for every
/// pick-up, so each mean or percentile of the drive is a floor under the
/// same figure of the wait. `None` for metrics that are not waits.
pub fn floor_metric(name: &str) -> Option<&'static str> {
    Some(match name {
        "move_wait_s" | "move_wait_drive_s" => "move_wait_drive_s",
        "move_wait_p50_s" | "move_wait_drive_p50_s" => "move_wait_drive_p50_s",
        "move_wait_p90_s" | "move_wait_drive_p90_s" => "move_wait_drive_p90_s",
        "move_wait_p95_s" | "move_wait_drive_p95_s" => "move_wait_drive_p95_s",
        "move_wait_p99_s" | "move_wait_drive_p99_s" => "move_wait_drive_p99_s",
        _ => return None,
    })
}

/// The position in `list` of the floor metric of target metric `m`: its
/// drive part of the same subject, when `m` is a wait.
fn floor_index(list: &[Metric], m: &Metric) -> Option<usize> {
    let name = floor_metric(m.name)?;
    list.iter().position(|x| x.scope == m.scope && x.subject == m.subject && x.name == name)
}

/// The floor of target metric `m` at this size: (floor metric's label, its
/// estimate), from the floor metric's value in each replication (empty when
/// `m` has no floor).
fn floor_of(list: &[Metric], m: &Metric, values: Vec<f64>) -> Option<Floor> {
    let f = &list[floor_index(list, m)?];
    let (e, _) = est_with_se(values.iter().copied());
    e.mean.is_finite().then(|| Floor { metric: f.label(), estimate: e, values })
}

/// What a sweep keeps of one size's replications, in replication order: the
/// moments of the metrics it reports and judges (constant memory), and each
/// replication's value of the target metrics and their floors (8 bytes a
/// replication each) for the paired step between sizes.
struct SizeKept {
    /// Metrics with moments: the fleet's and [`PLANT_METRICS`], and every target's.
    moments: BTreeMap<usize, Moments>,
    /// Per target, its metric's value in each replication.
    target_values: Vec<Vec<f64>>,
    /// Per target, its floor metric's value in each replication (empty without a floor).
    floor_values: Vec<Vec<f64>>,
    /// The targets' floor metrics, by position in the list.
    floor_ix: Vec<Option<usize>>,
    events: u64,
    replications: u64,
    /// The message of the first replication that deadlocked.
    deadlock: Option<String>,
}

impl SizeKept {
    fn new(s: &Sweep, list: &[Metric]) -> SizeKept {
        let mut moments: BTreeMap<usize, Moments> =
            shown(s, list).map(|(k, _)| (k, Moments::new())).collect();
        for t in s.targets {
            moments.entry(t.metric).or_default();
        }
        SizeKept {
            moments,
            target_values: vec![Vec::new(); s.targets.len()],
            floor_values: vec![Vec::new(); s.targets.len()],
            floor_ix: s.targets.iter().map(|t| floor_index(list, &list[t.metric])).collect(),
            events: 0,
            replications: 0,
            deadlock: None,
        }
    }

    fn add(&mut self, plant: &Plant, list: &[Metric], targets: &[Target], r: &RepStats) {
        for (&k, m) in &mut self.moments {
            m.add(list[k].value(plant, r));
        }
        for (v, t) in self.target_values.iter_mut().zip(targets) {
            v.push(list[t.metric].value(plant, r));
        }
        for (v, f) in self.floor_values.iter_mut().zip(&self.floor_ix) {
            if let Some(f) = f {
                v.push(list[*f].value(plant, r));
            }
        }
        self.events += r.events;
        if self.deadlock.is_none() {
            self.deadlock = replication_deadlock(plant, r, self.replications);
        }
        self.replications += 1;
    }
}

/// A floor under a wait: the drive part at the largest size.
#[derive(Debug, Clone, Serialize)]
pub struct Floor {
    /// The drive metric, by its full label (`runners/move_wait_drive_p95_s`).
    pub metric: String,
    /// Its estimate at the largest size simulated.
    pub estimate: Estimate,
    /// Each replication's value at that size, for the paired step from the size before.
    #[serde(skip)]
    pub values: Vec<f64>,
}

/// What `fleet` advises, as a kind a program can read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum AdviceKind {
    /// No target was given: nothing to judge.
    NoTargets,
    /// Some size meets every target.
    Met,
    /// Only 'unsure' verdicts stand in the way: more replications may settle them.
    MoreReplications,
    /// One size only: nothing shows yet whether more movers help.
    AddSizes,
    /// A failing metric was still improving between the two largest sizes.
    TryLargerSizes,
    /// A failing metric's last step looks better but within the noise of the
    /// replications: more replications tell whether larger sizes help.
    WithinNoise,
    /// A failing metric did not improve between the two largest sizes:
    /// larger sizes are unlikely to help.
    NotImprovingWithSize,
    /// A wait target lies below the drive to the pick-up, which more movers
    /// cannot remove.
    SizeCannotMeet,
}

/// One target no size met, and why.
#[derive(Debug, Clone, Serialize)]
pub struct Failing {
    /// The target as written.
    pub target: String,
    /// The metric, by its full label.
    pub metric: String,
    /// Paired difference (larger − smaller size) of the metric between the
    /// two largest sizes, with its 95% half-width; absent with one size.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub last_step_change: Option<Estimate>,
    /// The last step improved the metric (the paired interval excludes 0 on the better side).
    pub improving: bool,
    /// The last step's mean change is on the better side but its interval
    /// includes 0: within the noise of these replications, so no verdict.
    pub unclear: bool,
    /// For a wait: the drive part at the largest size, which more movers do not remove.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub floor: Option<Floor>,
    /// The floor (its 95% interval, wholly) is on the wrong side of the target.
    pub below_floor: bool,
}

/// The verdict of a sweep, in data; `render::fleet` words it.
#[derive(Debug, Clone, Serialize)]
pub struct Advice {
    /// What to do.
    pub kind: AdviceKind,
    /// The floor, s, of the first wait target that size cannot meet.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub floor_s: Option<f64>,
    /// The targets no size met (at the largest size), each with its evidence.
    pub failing: Vec<Failing>,
    /// What moves a wait's floor, when a wait target cannot be met by size.
    pub levers: Vec<&'static str>,
    /// Whether the analytic estimate and the simulation agree, and why not.
    pub analytic: AnalyticCheck,
}

/// What moves the floor of a wait for a mover: where idle movers wait, and the distances.
pub const LEVERS: &[&str] = &[
    "idle rule: `when_idle: park` with parking places near the busiest pick-ups (instead of driving home)",
    "a reserve: `dispatch: reserve` keeps idle movers waiting at the busiest pick-up",
    "home or parking places: move `home:` / `parking:` closer to where loads are picked up",
    "layout: put the departments this fleet serves closer together",
    "faster movers (`speed:`) shorten every drive",
];

/// The analytic estimate against the simulation, in data.
#[derive(Debug, Clone, Serialize)]
pub struct AnalyticCheck {
    /// Movers the analytic (minimum-empty-flow) estimate asks for.
    pub analytic_movers: u64,
    /// The smallest size that met every target, if any (and targets were given).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub simulated_movers: Option<u32>,
    /// The size compared on utilisation: the smallest adequate one, else the smallest simulated.
    pub at_movers: u32,
    /// Analytic busy share at that size.
    pub utilization_analytic: f64,
    /// Simulated busy share at that size.
    pub utilization_simulated: f64,
    /// They agree: the same size (or no targets) and busy shares within 5 points.
    pub agree: bool,
    /// Why they differ, each a short phrase (empty when they agree).
    pub reasons: Vec<String>,
}

/// Busy shares within this many points count as agreeing: the formula is a
/// planning figure, and a few points cover its rounding of trips and distances.
const AGREE_POINTS: f64 = 0.05;

fn advise(
    s: &Sweep,
    results: &[SizeResult],
    before_last: &[Vec<f64>],
    last: &[Vec<f64>],
    floors: &[Option<Floor>],
    floors_before: &[Option<Floor>],
) -> Advice {
    let analytic = analytic_check(s, results);
    let kind_none = |kind| Advice {
        kind,
        floor_s: None,
        failing: Vec::new(),
        levers: Vec::new(),
        analytic: analytic.clone(),
    };
    if s.targets.is_empty() {
        return kind_none(AdviceKind::NoTargets);
    }
    if results.iter().any(|r| r.meets_every_target) {
        return kind_none(AdviceKind::Met);
    }
    let Some(top) = results.last() else {
        return kind_none(AdviceKind::NoTargets);
    };
    let mut failing = Vec::new();
    for (i, t) in s.targets.iter().enumerate() {
        let v = &top.targets[i];
        if v.met {
            continue;
        }
        let lower_better = matches!(t.op, super::targets::Op::AtMost | super::targets::Op::Below);
        let change = (!before_last.is_empty()).then(|| Estimate::from(paired(&last[i], &before_last[i])));
        // Improving: the paired interval lies wholly on the better side of 0.
        let improving = change.is_some_and(|d| {
            let h = d.half_width.unwrap_or(0.0);
            d.mean.is_finite() && if lower_better { d.mean + h < 0.0 } else { d.mean - h > 0.0 }
        });
        let unclear = !improving
            && change.is_some_and(|d| {
                d.mean.is_finite() && if lower_better { d.mean < 0.0 } else { d.mean > 0.0 }
            });
        let floor = floors[i].clone();
        // The drive is a floor only where more movers stopped shortening it:
        // with nearest-idle dispatch an extra mover can wait nearer. One size
        // alone shows nothing of the kind, so it never claims a floor.
        let floor_still_falling = match (floor.as_ref(), floors_before.get(i).and_then(Option::as_ref)) {
            (Some(f), Some(b)) => {
                let d = paired(&f.values, &b.values);
                d.mean.is_finite() && d.mean + d.half_width.unwrap_or(0.0) < 0.0
            }
            _ => true,
        };
        let below_floor = lower_better
            && !floor_still_falling
            && floor.as_ref().is_some_and(|f| {
                let lo = f.estimate.mean - f.estimate.half_width.unwrap_or(0.0);
                match t.op {
                    super::targets::Op::Below => lo >= t.value,
                    _ => lo > t.value,
                }
            });
        failing.push(Failing {
            target: t.text.clone(),
            metric: t.name.clone(),
            last_step_change: change,
            improving,
            unclear,
            floor,
            below_floor,
        });
    }
    let floor_s =
        failing.iter().find(|f| f.below_floor).and_then(|f| f.floor.as_ref()).map(|f| f.estimate.mean);
    let only_unsure = top.targets.iter().all(|v| v.met || v.unsure);
    let kind = if floor_s.is_some() {
        AdviceKind::SizeCannotMeet
    } else if only_unsure {
        AdviceKind::MoreReplications
    } else if before_last.is_empty() {
        AdviceKind::AddSizes
    } else if failing
        .iter()
        .filter(|f| !top.targets.iter().any(|v| v.target == f.target && v.unsure))
        .all(|f| f.improving)
    {
        AdviceKind::TryLargerSizes
    } else if failing
        .iter()
        .all(|f| f.improving || f.unclear || top.targets.iter().any(|v| v.target == f.target && v.unsure))
    {
        AdviceKind::WithinNoise
    } else {
        AdviceKind::NotImprovingWithSize
    };
    let waits = failing.iter().any(|f| f.floor.is_some());
    let levers = if waits && matches!(kind, AdviceKind::SizeCannotMeet | AdviceKind::NotImprovingWithSize) {
        LEVERS.to_vec()
    } else {
        Vec::new()
    };
    Advice { kind, floor_s, failing, levers, analytic }
}

/// The analytic estimate against the simulation: the smallest adequate size,
/// and the busy share at the size compared, with the likely reasons they differ.
fn analytic_check(s: &Sweep, results: &[SizeResult]) -> AnalyticCheck {
    let analytic_movers = s.analytic.minimum_empty_flow.vehicles_rounded_up;
    let simulated_movers = if s.targets.is_empty() {
        None
    } else {
        results.iter().find(|r| r.meets_every_target).map(|r| r.movers)
    };
    // Compare busy shares where the formula says the fleet is enough, if that
    // size was simulated; else at the smallest adequate size, else the smallest.
    let find = |n: u64| results.iter().find(|r| u64::from(r.movers) == n);
    let at = find(analytic_movers)
        .or_else(|| simulated_movers.and_then(|n| find(u64::from(n))))
        .or_else(|| results.first());
    let get = |r: &SizeResult, name: &str| r.metrics.get(name).map_or(f64::NAN, |e| e.mean);
    let (at_movers, ua, us) =
        at.map_or((0, f64::NAN, f64::NAN), |r| (r.movers, r.utilization_analytic, get(r, "utilization")));
    let size_differs = !s.targets.is_empty() && simulated_movers != Some(analytic_movers as u32);
    let busy_differs = !((ua - us).abs() <= AGREE_POINTS);
    let mut reasons = Vec::new();
    if size_differs {
        let wait_target = s.targets.iter().any(|t| t.name.contains("move_wait"));
        let fewer = simulated_movers.is_some_and(|n| u64::from(n) < analytic_movers);
        if fewer {
            reasons.push(
                "the smallest size simulated already met the targets (the sweep did not go below it), or the \
                 formula's trips and distances run above the simulated ones"
                    .to_string(),
            );
        } else if wait_target {
            reasons.push(
                "the formula sizes for busy time only and ignores waiting for a mover (queueing and the drive to \
                 the pick-up), which the wait targets judge"
                    .to_string(),
            );
        }
    }
    if busy_differs {
        if let Some(r) = at {
            let empty = get(r, "empty_travel_share");
            let loaded = get(r, "loaded_travel_share");
            let m = &s.analytic.minimum_empty_flow;
            let (ae, al) = (m.empty_travel_s_per_h, m.loaded_travel_s_per_h);
            // The simulation's empty-to-loaded ratio against the formula's (minimum empty flow).
            if al > 0.0 && loaded > 0.0 && ((empty / loaded) - ae / al).abs() > 0.2 * (ae / al).max(0.1) {
                reasons.push(format!(
                    "empty travel: the simulated movers drive empty {} for every second loaded, the minimum-empty-flow \
                     rule {} (idle rule and dispatch decide where empties go)",
                    crate::text::num(empty / loaded),
                    crate::text::num(ae / al)
                ));
            }
            if get(r, "blocked_share") > 0.01 {
                reasons.push("blocking: movers wait holding loads at full inbound areas".to_string());
            }
            if get(r, "availability") < 0.99 {
                reasons.push("breakdowns or charging take movers out of service".to_string());
            }
            if get(r, "congestion_share") > 0.01 {
                reasons.push("movers are held up in the aisles".to_string());
            }
            if reasons.is_empty() {
                reasons.push(
                    "the simulated trips and distances differ from the from-to chart's averages".to_string(),
                );
            }
        }
    }
    if size_differs && reasons.is_empty() {
        reasons.push(
            "the formula sizes the fleet to be fully busy, and the targets ask for more than that"
                .to_string(),
        );
    }
    AnalyticCheck {
        analytic_movers,
        simulated_movers,
        at_movers,
        utilization_analytic: ua,
        utilization_simulated: us,
        agree: reasons.is_empty(),
        reasons,
    }
}

/// The metrics a size reports, with their positions in `list`: the fleet's own and [`PLANT_METRICS`].
fn shown<'l>(s: &Sweep, list: &'l [Metric]) -> impl Iterator<Item = (usize, &'l Metric)> {
    let fleet = s.fleet;
    list.iter().enumerate().filter(move |(_, m)| {
        (m.scope == Scope::Fleet && m.index == fleet)
            || (m.scope == Scope::Plant && PLANT_METRICS.contains(&m.name))
    })
}

fn size_result(s: &Sweep, n: u32, list: &[Metric], kept: &SizeKept) -> SizeResult {
    let estimate = |k: usize| kept.moments[&k].estimate_with_se();
    let metrics = Named(shown(s, list).map(|(k, m)| (m.name, estimate(k).0)).collect());
    let verdicts: Vec<Verdict> = s
        .targets
        .iter()
        .map(|t| {
            let (e, se) = estimate(t.metric);
            judge(t, &e, se)
        })
        .collect();
    let a = s.analytic;
    SizeResult {
        movers: n,
        utilization_analytic: a.minimum_empty_flow.busy_s_per_h / (3600.0 * f64::from(n) * a.efficiency),
        metrics,
        meets_every_target: verdicts.iter().all(|v| v.met),
        targets: verdicts,
    }
}

/// One metric of the sized plant in one bucket at one fleet size (a tidy row).
#[derive(Debug, Clone, Serialize)]
pub struct SizeBucketRow {
    /// Movers in the fleet.
    pub movers: u32,
    /// Bucket, scope, subject, registry name, mean, half-width and count.
    #[serde(flatten)]
    pub row: BucketRow,
}

/// A size's peaks: where the sized fleet's wait and the plant's WIP are highest.
#[derive(Debug, Clone, Serialize)]
pub struct SizePeak {
    /// Movers in the fleet.
    pub movers: u32,
    /// The bucket with the highest mean 95th percentile of the sized fleet's move wait.
    pub fleet_move_wait_p95_s: Option<PeakBucket>,
    /// The plant's peak (WIP, plant-wide wait, recovery), as `run --by` reports it.
    pub plant: Peak,
}

/// A sweep's results by time bucket: every metric of every size in every bucket.
#[derive(Debug, Clone, Serialize)]
pub struct FleetBuckets {
    /// How the clock was sliced, as typed.
    pub by: String,
    /// Every repetition of the cycle folded onto one set of buckets.
    pub cyclic: bool,
    /// The buckets in time order, with their exposure (the same at every size).
    pub buckets: Vec<BucketInfo>,
    /// Every bucketed metric in every bucket at every size: size by size, bucket by bucket.
    pub rows: Vec<SizeBucketRow>,
    /// The same metrics over the whole window (bucket `whole window`), size by size.
    pub whole: Vec<SizeBucketRow>,
    /// Each size's peaks.
    pub peaks: Vec<SizePeak>,
    /// Each size's summary, in the order of the sizes (for tables).
    #[serde(skip)]
    pub summaries: Vec<BucketSummary>,
}

impl FleetBuckets {
    /// The sweep's bucket summaries of fleet `fleet` (by id) at `sizes`,
    /// `None` when the sweep had no buckets.
    pub fn new(fleet: &str, sizes: &[u32], summaries: Vec<BucketSummary>) -> Option<FleetBuckets> {
        let first = summaries.first()?;
        let tag = |n: u32, rows: &[BucketRow]| {
            rows.iter().map(move |r| SizeBucketRow { movers: n, row: r.clone() }).collect::<Vec<_>>()
        };
        let peaks = sizes
            .iter()
            .zip(&summaries)
            .map(|(&n, b)| SizePeak {
                movers: n,
                fleet_move_wait_p95_s: fleet_wait_peak(b, fleet),
                plant: b.peak.clone(),
            })
            .collect();
        Some(FleetBuckets {
            by: first.by.clone(),
            cyclic: first.cyclic,
            buckets: first.buckets.clone(),
            rows: sizes.iter().zip(&summaries).flat_map(|(&n, b)| tag(n, &b.rows)).collect(),
            whole: sizes.iter().zip(&summaries).flat_map(|(&n, b)| tag(n, &b.whole)).collect(),
            peaks,
            summaries,
        })
    }
}

/// The bucket where fleet `fleet`'s mean p95 move wait is highest (none when it never waits).
pub fn fleet_wait_peak(b: &BucketSummary, fleet: &str) -> Option<PeakBucket> {
    (0..b.buckets.len())
        .filter_map(|k| b.get(Some(k), fleet, "move_wait_p95_s").map(|e| (k, e)))
        .filter(|(_, e)| e.mean.is_finite())
        .max_by(|a, b| a.1.mean.total_cmp(&b.1.mean))
        .filter(|(_, e)| e.mean > 0.0)
        .map(|(k, e)| PeakBucket {
            bucket: b.buckets[k].bucket.clone(),
            mean: e.mean,
            half_width: e.half_width,
        })
}
