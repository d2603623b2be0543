//! The model's side of results by time bucket: crossing bucket edges, and splitting ahead-of-time credits over buckets.
//!
//! Every hook returns at once when the plan has no buckets, so a run
//! without `--by` takes the same paths and gives the same bytes as before.

use super::PlantModel;
use crate::sim::buckets::{Act, Collector, Shape, FLEET_TOTALS};

impl PlantModel<'_> {
    /// The collector for a plan with buckets.
    pub(super) fn new_collector(&self) -> Option<Box<Collector>> {
        let grid = self.plan.buckets.as_ref()?;
        let shape = Shape {
            departments: self.plan.n_departments,
            products: self.plan.products.len(),
            fleets: self.plan.fleets.len(),
            segments: self.aisle.segment_count(),
            due: self.plan.due,
        };
        Some(Box::new(Collector::new(grid.len(), shape)))
    }

    /// Cumulative totals at `t` into the collector's `now`.
    fn snapshot(&mut self, t: f64) {
        let Some(c) = self.buckets.as_deref_mut() else {
            return;
        };
        let sh = c.shape;
        let mut v = std::mem::take(&mut c.now);
        v[Shape::WIP] = self.wip.area(t);
        v[Shape::TRANSIT] = self.transit.area(t);
        let nd = sh.departments;
        for d in 0..nd {
            let dep = &self.departments[d];
            let mut wip = dep.wip.area(t);
            if self.plan.overflow {
                wip += self.departments[nd + d].wip.area(t);
            }
            v[sh.dept(d, 0)] = wip;
            v[sh.dept(d, 1)] = dep.busy_level.area(t);
            v[sh.dept(d, 2)] = dep.queue_level.area(t);
            v[sh.dept(d, 3)] = dep.blocked_level.area(t);
            v[sh.dept(d, 4)] = dep.up_level.area(t);
            v[sh.dept(d, 5)] = dep.setup_level.area(t);
        }
        for p in 0..sh.products {
            v[sh.shipped(p)] = self.shipped[p] as f64;
            v[sh.turned_away(p)] = self.turned_away[p] as f64;
        }
        v[sh.capped()] = self.capped as f64;
        v[sh.overflow()] = self.overflow_moves as f64;
        for f in 0..sh.fleets {
            let a = &self.fleets[f].acc;
            v[sh.moves(f)] = a.moves as f64;
            let activity = [
                a.loaded_s,
                a.empty_s,
                a.handling_s,
                a.blocked_s,
                a.off_s,
                a.down_s,
                a.charging_s,
                a.congestion_s,
                a.distance_loaded_m,
                a.distance_empty_m,
            ];
            v[sh.fleet(f, 0)..sh.fleet(f, 0) + FLEET_TOTALS].copy_from_slice(&activity);
        }
        for d in 0..nd {
            v[sh.off_shift(d)] = self.departments[d].off_s;
        }
        for s in 0..sh.segments {
            let (n, area) = self.aisle.segment_totals(s, t);
            v[sh.traversals(s)] = n;
            v[sh.occupancy(s)] = area;
            v[sh.segment_delay(s)] = self.aisle.segment_delay(s);
        }
        let c = self.buckets.as_deref_mut().expect("checked above");
        c.now = v;
    }

    /// The window opens at `t` (statistics were just cleared): the first
    /// stretch starts, and the clock watches for the next edge.
    pub(super) fn open_buckets(&mut self, t: f64) {
        let Some(grid) = self.plan.buckets.as_ref() else {
            return;
        };
        let (b, end) = grid.locate(t);
        self.snapshot(t);
        let c = self.buckets.as_deref_mut().expect("a plan with buckets has a collector");
        std::mem::swap(&mut c.before, &mut c.now);
        c.open(t, b);
        self.next_edge = if end < self.window.1 { end } else { f64::INFINITY };
    }

    /// The clock has reached `now` at or past the next bucket edge: close
    /// every stretch that ended by then. Levels have not changed since the
    /// last event, so the totals at each edge are exact.
    #[cold]
    pub(super) fn cross_edges(&mut self, now: f64) {
        let grid = self.plan.buckets.as_ref().expect("edges only with buckets");
        while now >= self.next_edge {
            let edge = self.next_edge;
            self.snapshot(edge);
            let (b, end) = grid.locate(edge);
            self.buckets.as_deref_mut().expect("a plan with buckets has a collector").close(edge, b);
            self.next_edge = if end < self.window.1 { end } else { f64::INFINITY };
        }
    }

    /// The run ends at `t`: close the last stretch.
    pub(super) fn close_buckets(&mut self, t: f64) {
        if self.buckets.is_none() || t <= self.window.0 {
            return;
        }
        self.cross_edges(t.min(self.next_edge));
        let start = self.buckets.as_deref().map_or(t, |c| c.stretch_start);
        if t > start {
            self.snapshot(t);
            let c = self.buckets.as_deref_mut().expect("checked above");
            let cur = c.current;
            c.close(t, cur);
        }
    }

    /// A credit over [a, b] (made now, in the current stretch) has gone into
    /// the whole run's totals, so the next edge's snapshot gives all of it to
    /// the current bucket. Most credits lie within the current stretch and
    /// that is right: nothing to do. Otherwise move the parts that lie
    /// elsewhere: `f(collector, bucket, seconds)` takes −(the whole, clipped)
    /// from the current bucket and adds each bucket's overlap. A credit made
    /// in the warm-up is in the totals before the window opens, so it is only added.
    #[inline(always)]
    fn over_buckets(&mut self, a: f64, b: f64, f: impl FnMut(&mut Collector, usize, f64)) {
        let Some(c) = self.buckets.as_deref() else {
            return;
        };
        let (a, b) = (a.max(self.window.0), b.min(self.window.1));
        if b > a && !(a >= c.stretch_start && b <= self.next_edge) {
            self.move_credit(a, b, f);
        }
    }

    /// [`Self::over_buckets`] for a credit [a, b] (clipped) that leaves the current stretch.
    #[cold]
    #[inline(never)]
    fn move_credit(&mut self, a: f64, b: f64, mut f: impl FnMut(&mut Collector, usize, f64)) {
        let (Some(grid), Some(c)) = (self.plan.buckets.as_ref(), self.buckets.as_deref_mut()) else {
            return;
        };
        if c.stretch_start.is_finite() {
            f(c, c.current, -(b - a));
        }
        grid.split(a, b, |k, s| f(c, k, s));
    }

    /// Fleet `f`'s activity `act` over [a, b], for the buckets.
    #[inline]
    pub(super) fn by_fleet(&mut self, f: usize, act: Act, a: f64, b: f64) {
        if self.buckets.is_some() {
            self.over_buckets(a, b, |c, k, s| c.credit(k, f, act, s));
        }
    }

    /// As [`Self::by_fleet`] for `n` movers at once (a whole fleet going off duty).
    pub(super) fn by_fleet_times(&mut self, f: usize, act: Act, a: f64, b: f64, n: f64) {
        if self.buckets.is_some() {
            self.over_buckets(a, b, |c, k, s| c.credit(k, f, act, n * s));
        }
    }

    /// Fleet `f` travels `d` metres over [a, b], loaded or empty: the time
    /// and the distance pro rata, for the buckets (as the whole run clips
    /// them). A trip of no duration is made now, in the current stretch.
    #[inline]
    pub(super) fn by_travel(&mut self, f: usize, loaded: bool, a: f64, b: f64, d: f64) {
        if self.buckets.is_some() && b > a {
            let act = if loaded { Act::Loaded } else { Act::Empty };
            let per_s = d / (b - a);
            self.over_buckets(a, b, |c, k, s| {
                c.credit(k, f, act, s);
                c.distance(k, f, loaded, per_s * s);
            });
        }
    }

    /// Department `d` is off shift over [a, b], for the buckets.
    pub(super) fn by_off_shift(&mut self, d: usize, a: f64, b: f64) {
        if self.buckets.is_some() {
            self.over_buckets(a, b, |c, k, s| c.off_shift(k, d, s));
        }
    }

    /// A mover of fleet `f` waited to enter aisle segment `seg` over [a, b], for the buckets.
    pub(super) fn by_aisle_wait(&mut self, f: usize, seg: usize, a: f64, b: f64) {
        if self.buckets.is_some() {
            self.over_buckets(a, b, |c, k, s| {
                c.credit(k, f, Act::Congestion, s);
                c.segment_delay(k, seg, s);
            });
        }
    }

    /// Close every bucket edge before `t`, so that credits made at `t` (the
    /// end of the run) fall in the stretch that holds `t`.
    pub(super) fn advance_buckets(&mut self, t: f64) {
        if t >= self.next_edge {
            self.cross_edges(t);
        }
    }
}
