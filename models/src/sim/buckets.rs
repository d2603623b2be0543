//! One replication's statistics per time bucket (hour of day, shift, day…), kept beside its whole-window statistics.
//!
//! Each bucket's figures come out as a [`RepStats`] whose window is the
//! bucket's exposure (the seconds of the observation window that fell in it),
//! so `metrics::value` computes every bucketed metric with the very
//! definition it uses for the whole run. Three ways in, chosen so that the
//! event handlers pay one predictable branch when buckets are off:
//!
//! - levels (WIP, queues, busy machines) and counts (lots shipped, moves) are
//!   read as cumulative totals when the clock crosses a bucket edge, and the
//!   difference goes to the bucket just left: nothing per event;
//! - activity credited ahead of time (a trip's travel, a shift's time off,
//!   a wait in the aisles) is split over the buckets it overlaps;
//! - flow times and move waits are counted and summed into the current
//!   bucket as they are recorded (a bucket reports means, not variances), with
//!   histograms of two significant digits (quantiles within 1%, an eighth of
//!   the memory of the whole run's); every fleet's waits pooled and every
//!   product's flow times pooled are added up at the end.

use layflow_engine::{Tally, TickHistogram};

use super::stats::{FleetStats, RepStats, TICK_S};
use super::Plan;

/// Significant digits of a bucket's histograms.
const DIGITS: u8 = 2;

/// A fleet activity credited over an interval, as `FleetStats` names it.
#[derive(Debug, Clone, Copy)]
pub(crate) enum Act {
    Loaded,
    Empty,
    Handling,
    Blocked,
    Off,
    Down,
    Charging,
    Congestion,
}

impl Act {
    fn field(self, s: &mut FleetStats) -> &mut f64 {
        match self {
            Act::Loaded => &mut s.loaded_s,
            Act::Empty => &mut s.empty_s,
            Act::Handling => &mut s.handling_s,
            Act::Blocked => &mut s.blocked_s,
            Act::Off => &mut s.off_s,
            Act::Down => &mut s.down_s,
            Act::Charging => &mut s.charging_s,
            Act::Congestion => &mut s.congestion_s,
        }
    }
}

/// Where each cumulative total sits in a snapshot (see [`Collector`]).
#[derive(Debug, Clone, Copy)]
pub(crate) struct Shape {
    pub(crate) departments: usize,
    pub(crate) products: usize,
    pub(crate) fleets: usize,
    pub(crate) segments: usize,
    /// Some lot has a due date: buckets keep lateness too.
    pub(crate) due: bool,
}

/// Per fleet: loaded, empty, handling, blocked, off-duty, down, charging and
/// congestion seconds, loaded and empty metres.
pub(crate) const FLEET_TOTALS: usize = 10;

/// Per department: WIP, busy machines, queue, blocked machines, machines up, machines setting up (areas).
pub(crate) const DEPT_LEVELS: usize = 6;

impl Shape {
    pub(crate) const WIP: usize = 0;
    pub(crate) const TRANSIT: usize = 1;
    pub(crate) fn dept(&self, d: usize, level: usize) -> usize {
        2 + DEPT_LEVELS * d + level
    }
    fn products(&self) -> usize {
        2 + DEPT_LEVELS * self.departments
    }
    pub(crate) fn shipped(&self, p: usize) -> usize {
        self.products() + p
    }
    pub(crate) fn turned_away(&self, p: usize) -> usize {
        self.products() + self.products + p
    }
    pub(crate) fn capped(&self) -> usize {
        self.products() + 2 * self.products
    }
    pub(crate) fn overflow(&self) -> usize {
        self.capped() + 1
    }
    pub(crate) fn moves(&self, f: usize) -> usize {
        self.overflow() + 1 + f
    }
    /// Fleet `f`'s activity totals, in `FleetStats` order (see `snapshot`).
    pub(crate) fn fleet(&self, f: usize, field: usize) -> usize {
        self.moves(self.fleets) + FLEET_TOTALS * f + field
    }
    pub(crate) fn off_shift(&self, d: usize) -> usize {
        self.fleet(self.fleets, 0) + d
    }
    pub(crate) fn traversals(&self, s: usize) -> usize {
        self.off_shift(self.departments) + 3 * s
    }
    pub(crate) fn occupancy(&self, s: usize) -> usize {
        self.traversals(s) + 1
    }
    pub(crate) fn segment_delay(&self, s: usize) -> usize {
        self.traversals(s) + 2
    }
    pub(crate) fn len(&self) -> usize {
        self.traversals(self.segments)
    }
}

/// Pick-ups in a bucket with their waits summed, whole and in the two parts.
#[derive(Debug, Clone, Copy, Default)]
struct Waits {
    n: u64,
    wait: f64,
    assign: f64,
    drive: f64,
}

/// What one bucket saw in one replication.
#[derive(Debug, Clone)]
struct Bucket {
    exposure_s: f64,
    /// Differences of the cumulative totals over the bucket's stretches.
    sums: Vec<f64>,
    /// Corrections to the fleets' activity, off-shift time and aisle waits
    /// that `sums` credits to the stretch in which they were booked: the
    /// parts of credits booked ahead (or late) that lie in other buckets.
    fleets: Vec<FleetStats>,
    off_shift_s: Vec<f64>,
    segment_delay_s: Vec<f64>,
    /// Per product: lots shipped and their flow times summed (a mean is all
    /// a bucket reports, so no variance is kept: fewer divisions per event).
    flow: Vec<(u64, f64)>,
    flow_hist: TickHistogram,
    /// Per fleet: pick-ups, and their waits and the waits' parts summed.
    wait: Vec<Waits>,
    wait_hist_fleet: Vec<TickHistogram>,
    /// Lateness of the lots shipped in the bucket (plants with due dates only).
    due: Option<Box<super::DueSet>>,
}

impl Bucket {
    fn new(s: &Shape) -> Bucket {
        let h = || TickHistogram::with_digits(TICK_S, DIGITS);
        Bucket {
            exposure_s: 0.0,
            sums: vec![0.0; s.len()],
            fleets: vec![FleetStats::default(); s.fleets],
            off_shift_s: vec![0.0; s.departments],
            segment_delay_s: vec![0.0; s.segments],
            flow: vec![(0, 0.0); s.products],
            flow_hist: h(),
            wait: vec![Waits::default(); s.fleets],
            wait_hist_fleet: (0..s.fleets).map(|_| h()).collect(),
            due: s.due.then(|| Box::new(super::DueSet::new(s.products, DIGITS))),
        }
    }

    /// Forget what was tallied during the warm-up (split credits are clipped to the window already).
    fn clear_tallies(&mut self) {
        self.flow.iter_mut().for_each(|x| *x = (0, 0.0));
        self.flow_hist.reset();
        self.wait.iter_mut().for_each(|x| *x = Waits::default());
        self.wait_hist_fleet.iter_mut().for_each(TickHistogram::reset);
        if let Some(d) = self.due.as_deref_mut() {
            d.all.reset();
            d.product.iter_mut().for_each(super::DueStats::reset);
        }
    }
}

/// One replication's buckets while it runs.
#[derive(Debug, Clone)]
pub(crate) struct Collector {
    pub(crate) shape: Shape,
    /// The bucket the clock is in (valid once the window has opened).
    pub(crate) current: usize,
    /// Start of the current stretch (the last edge crossed).
    pub(crate) stretch_start: f64,
    /// Cumulative totals at `stretch_start`, and scratch for the next snapshot.
    pub(crate) before: Vec<f64>,
    pub(crate) now: Vec<f64>,
    buckets: Vec<Bucket>,
}

impl Collector {
    pub(crate) fn new(n: usize, shape: Shape) -> Collector {
        Collector {
            shape,
            current: 0,
            // Until the window opens no credit can take the current bucket's shortcut.
            stretch_start: f64::INFINITY,
            before: vec![0.0; shape.len()],
            now: vec![0.0; shape.len()],
            buckets: (0..n).map(|_| Bucket::new(&shape)).collect(),
        }
    }

    /// The window opens at `t` in bucket `b` (statistics were just cleared).
    pub(crate) fn open(&mut self, t: f64, b: usize) {
        self.buckets.iter_mut().for_each(Bucket::clear_tallies);
        self.current = b;
        self.stretch_start = t;
    }

    /// The stretch of the current bucket ending at `t` is over: `self.now`
    /// holds the totals at `t`. The clock moves on into bucket `next`.
    pub(crate) fn close(&mut self, t: f64, next: usize) {
        let b = &mut self.buckets[self.current];
        b.exposure_s += t - self.stretch_start;
        for ((s, now), before) in b.sums.iter_mut().zip(&self.now).zip(&self.before) {
            *s += now - before;
        }
        std::mem::swap(&mut self.before, &mut self.now);
        self.current = next;
        self.stretch_start = t;
    }

    /// Fleet `f`'s activity, `secs` of it in bucket `b`.
    #[inline]
    pub(crate) fn credit(&mut self, b: usize, f: usize, act: Act, secs: f64) {
        *act.field(&mut self.buckets[b].fleets[f]) += secs;
    }

    /// Metres travelled by fleet `f` in bucket `b`.
    #[inline]
    pub(crate) fn distance(&mut self, b: usize, f: usize, loaded: bool, m: f64) {
        let s = &mut self.buckets[b].fleets[f];
        if loaded {
            s.distance_loaded_m += m;
        } else {
            s.distance_empty_m += m;
        }
    }

    /// Seconds department `d` is off shift, in bucket `b`.
    pub(crate) fn off_shift(&mut self, b: usize, d: usize, secs: f64) {
        self.buckets[b].off_shift_s[d] += secs;
    }

    /// Seconds of waiting to enter aisle segment `s`, in bucket `b`.
    pub(crate) fn segment_delay(&mut self, b: usize, s: usize, secs: f64) {
        self.buckets[b].segment_delay_s[s] += secs;
    }

    /// A lot of product `p` shipped now, after `flow` seconds in the plant
    /// (`ticks` of [`TICK_S`]).
    #[inline]
    pub(crate) fn shipped(&mut self, p: usize, flow: f64, ticks: u64) {
        let b = &mut self.buckets[self.current];
        let s = &mut b.flow[p];
        s.0 += 1;
        s.1 += flow;
        b.flow_hist.record_ticks(ticks);
    }

    /// A lot of product `p` shipped now, `lateness` seconds after its due date.
    #[inline]
    pub(crate) fn late(&mut self, p: usize, lateness: f64) {
        if let Some(d) = self.buckets[self.current].due.as_deref_mut() {
            d.all.record(lateness);
            d.product[p].record(lateness);
        }
    }

    /// A load picked up now by fleet `f`, after waiting `wait` (`ticks` of
    /// [`TICK_S`]; `assign` + `drive`).
    #[inline]
    pub(crate) fn picked_up(&mut self, f: usize, wait: f64, ticks: u64, assign: f64, drive: f64) {
        let b = &mut self.buckets[self.current];
        let s = &mut b.wait[f];
        s.n += 1;
        s.wait += wait;
        s.assign += assign;
        s.drive += drive;
        b.wait_hist_fleet[f].record_ticks(ticks);
    }

    /// Each bucket's figures as a replication's, windows being exposures.
    /// `whole` is the replication's own (for what buckets do not split: the
    /// overload limit). The assignment and drive parts of the move wait have
    /// no per-bucket histograms: their quantiles are left out of bucketed
    /// results (`metrics::by_bucket`).
    pub(crate) fn finish(self, plan: &Plan, whole: &RepStats) -> Vec<RepStats> {
        let sh = self.shape;
        let nd = sh.departments;
        self.buckets
            .into_iter()
            .map(|b| {
                let w = b.exposure_s;
                let mean = |i: usize| if w > 0.0 { b.sums[i] / w } else { f64::NAN };
                let machines = |d: usize| f64::from(plan.machines[d]);
                let share = |d: usize, level: usize| {
                    if plan.machines[d] == 0 {
                        0.0
                    } else {
                        mean(sh.dept(d, level)) / machines(d)
                    }
                };
                // Every fleet's waits pooled: the fleets' histograms added (counts add exactly).
                let mut fleet_hists = b.wait_hist_fleet.iter();
                let mut wait_hist = match fleet_hists.next() {
                    Some(first) => first.clone(),
                    None => TickHistogram::with_digits(TICK_S, DIGITS),
                };
                for h in fleet_hists {
                    wait_hist.merge(h);
                }
                // Means from counts and sums; all products and all fleets pooled.
                let sum = |n: u64, x: f64| Tally::from_sum(n, x);
                let total = |f: fn(&Waits) -> f64| b.wait.iter().map(f).sum::<f64>();
                let pickups: u64 = b.wait.iter().map(|w| w.n).sum();
                let mut fleets = b.fleets.clone();
                for (f, s) in fleets.iter_mut().enumerate() {
                    s.moves = b.sums[sh.moves(f)] as u64;
                    let t = |k: usize| b.sums[sh.fleet(f, k)];
                    s.loaded_s += t(0);
                    s.empty_s += t(1);
                    s.handling_s += t(2);
                    s.blocked_s += t(3);
                    s.off_s += t(4);
                    s.down_s += t(5);
                    s.charging_s += t(6);
                    s.congestion_s += t(7);
                    s.distance_loaded_m += t(8);
                    s.distance_empty_m += t(9);
                }
                RepStats {
                    window_s: w,
                    events: 0,
                    shipped: (0..sh.products).map(|p| b.sums[sh.shipped(p)] as u64).collect(),
                    flow_time: b.flow.iter().map(|&(n, x)| sum(n, x)).collect(),
                    flow_time_all: sum(b.flow.iter().map(|f| f.0).sum(), b.flow.iter().map(|f| f.1).sum()),
                    flow_hist: b.flow_hist,
                    wip_total: mean(Shape::WIP),
                    wip_department: (0..nd).map(|d| mean(sh.dept(d, 0))).collect(),
                    wip_transit: mean(Shape::TRANSIT),
                    utilization: (0..nd).map(|d| share(d, 1)).collect(),
                    queue: (0..nd).map(|d| mean(sh.dept(d, 2))).collect(),
                    move_wait: b.wait.iter().map(|w| sum(w.n, w.wait)).collect(),
                    move_wait_all: sum(pickups, total(|w| w.wait)),
                    move_wait_hist: wait_hist,
                    move_wait_hist_fleet: b.wait_hist_fleet,
                    move_wait_assign: b.wait.iter().map(|w| sum(w.n, w.assign)).collect(),
                    move_wait_drive: b.wait.iter().map(|w| sum(w.n, w.drive)).collect(),
                    move_wait_assign_all: sum(pickups, total(|w| w.assign)),
                    move_wait_drive_all: sum(pickups, total(|w| w.drive)),
                    move_wait_assign_hist_fleet: Vec::new(),
                    move_wait_drive_hist_fleet: Vec::new(),
                    fleets,
                    blocked: (0..nd).map(|d| share(d, 3)).collect(),
                    off_shift_s: (0..nd).map(|d| b.sums[sh.off_shift(d)] + b.off_shift_s[d]).collect(),
                    setup: (0..nd).map(|d| share(d, 5)).collect(),
                    availability: (0..nd).map(|d| if plan.tracked[d] { share(d, 4) } else { 1.0 }).collect(),
                    overflow_moves: b.sums[sh.overflow()] as u64,
                    turned_away: (0..sh.products).map(|p| b.sums[sh.turned_away(p)] as u64).collect(),
                    overload: None,
                    wip_limit: whole.wip_limit,
                    capped: b.sums[sh.capped()] as u64,
                    wip_peak: f64::NAN,
                    deadlock: None,
                    // Batches are counted for the whole window only.
                    batch: Vec::new(),
                    crews: Vec::new(),
                    person_wait: Vec::new(),
                    segments: (0..sh.segments)
                        .map(|s| super::SegmentStats {
                            traversals: b.sums[sh.traversals(s)] as u64,
                            occupancy: mean(sh.occupancy(s)),
                            delay_s: b.sums[sh.segment_delay(s)] + b.segment_delay_s[s],
                        })
                        .collect(),
                    by: Vec::new(),
                    due: b.due,
                    assembly: None,
                }
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use crate::sim::{simulate, Plan, RunSpec};
    use crate::timebuckets::{By, Grid};

    fn load(name: &str) -> crate::plant::Plant {
        let path = format!("{}/../scenarios/{name}", env!("CARGO_MANIFEST_DIR"));
        crate::parse_scenario(&std::fs::read_to_string(&path).unwrap(), std::path::Path::new(&path)).unwrap()
    }

    /// The buckets partition the window: their exposures, counts, areas and
    /// activity add up to the whole window's (to rounding), whatever the grid.
    #[test]
    fn buckets_add_up_to_the_whole_window() {
        for (file, by) in [
            ("demo.yaml", By::HourOfDay),
            ("demo.yaml", By::Period(5.0 * 3600.0)),
            ("shifts-setups-lots.yaml", By::Shift(Some("press".into()))),
            ("shifts-setups-lots.yaml", By::Shift(Some("forklifts".into()))),
            ("staging-breakdowns.yaml", By::Day),
            ("aisles-demo.yaml", By::DayOfWeek),
        ] {
            let plant = load(file);
            let spec = RunSpec {
                layout: 0,
                horizon_s: 9.3 * 86400.0,
                warmup_s: 1.1 * 86400.0,
                demand_factor: 1.0,
                seed: 7,
            };
            let grid = Grid::new(&by, &plant, spec.warmup_s, spec.horizon_s).unwrap();
            let plain = simulate(&Plan::new(&plant, 0), &spec, 0);
            let r = simulate(&Plan::new(&plant, 0).with_buckets(grid.clone()), &spec, 0);
            assert!(plain.by.is_empty());
            assert_eq!(r.by.len(), grid.len());
            // Buckets do not change the run itself.
            assert_eq!(format!("{:?}", r.shipped), format!("{:?}", plain.shipped), "{file}");
            assert_eq!(r.wip_total.to_bits(), plain.wip_total.to_bits(), "{file}");
            assert_eq!(r.fleets, plain.fleets, "{file}");
            let close = |a: f64, b: f64, what: &str| {
                assert!(
                    (a - b).abs() <= 1e-9 * b.abs().max(1.0),
                    "{file} {}: {what}: buckets {a} vs whole {b}",
                    by.name()
                )
            };
            let sum = |f: &dyn Fn(&crate::sim::RepStats) -> f64| r.by.iter().map(f).sum::<f64>();
            close(sum(&|b| b.window_s), r.window_s, "exposure");
            close(
                sum(&|b| b.shipped.iter().sum::<u64>() as f64),
                r.shipped.iter().sum::<u64>() as f64,
                "shipped",
            );
            close(sum(&|b| b.flow_time_all.count() as f64), r.flow_time_all.count() as f64, "flow count");
            close(
                sum(&|b| b.flow_time_all.mean() * b.flow_time_all.count() as f64),
                r.flow_time_all.mean() * r.flow_time_all.count() as f64,
                "flow sum",
            );
            let area = |x: &dyn Fn(&crate::sim::RepStats) -> f64| {
                sum(&|b| if b.window_s > 0.0 { x(b) * b.window_s } else { 0.0 })
            };
            close(area(&|b| b.wip_total), r.wip_total * r.window_s, "wip area");
            close(area(&|b| b.wip_transit), r.wip_transit * r.window_s, "transit area");
            for d in 0..plant.departments.len() {
                close(area(&|b| b.utilization[d]), r.utilization[d] * r.window_s, "utilization");
                close(area(&|b| b.queue[d]), r.queue[d] * r.window_s, "queue");
                close(area(&|b| b.wip_department[d]), r.wip_department[d] * r.window_s, "department wip");
                close(area(&|b| b.availability[d]), r.availability[d] * r.window_s, "availability");
                close(area(&|b| b.setup[d]), r.setup[d] * r.window_s, "setup");
                close(area(&|b| b.blocked[d]), r.blocked[d] * r.window_s, "blocked");
                close(sum(&|b| b.off_shift_s[d]), r.off_shift_s[d], "off shift");
            }
            for f in 0..plant.fleets().len() {
                let w = &r.fleets[f];
                close(sum(&|b| b.fleets[f].busy_s()), w.busy_s(), "fleet busy");
                close(sum(&|b| b.fleets[f].loaded_s), w.loaded_s, "loaded");
                close(sum(&|b| b.fleets[f].empty_s), w.empty_s, "empty");
                close(sum(&|b| b.fleets[f].handling_s), w.handling_s, "handling");
                close(sum(&|b| b.fleets[f].off_s), w.off_s, "off duty");
                close(sum(&|b| b.fleets[f].down_s), w.down_s, "down");
                close(sum(&|b| b.fleets[f].distance_loaded_m), w.distance_loaded_m, "loaded m");
                close(sum(&|b| b.fleets[f].distance_empty_m), w.distance_empty_m, "empty m");
                close(sum(&|b| b.fleets[f].moves as f64), w.moves as f64, "moves");
                close(sum(&|b| b.move_wait[f].count() as f64), r.move_wait[f].count() as f64, "waits");
            }
            for s in 0..r.segments.len() {
                close(
                    sum(&|b| b.segments[s].traversals as f64),
                    r.segments[s].traversals as f64,
                    "traversals",
                );
                close(sum(&|b| b.segments[s].delay_s), r.segments[s].delay_s, "segment delay");
                close(area(&|b| b.segments[s].occupancy), r.segments[s].occupancy * r.window_s, "occupancy");
            }
        }
    }
}
