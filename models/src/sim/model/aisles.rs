//! Segment-by-segment travel over the aisle network: movers occupy segments, wait in turn at full ones and busy intersections, and an aisle deadlock stops the replication.
//!
//! Runs only when `Plan::aisles` is set (some segment has a capacity or a
//! speed limit, or some node has zone control); otherwise a trip is one leg
//! of the shortest-path distance, exactly as before the network was simulated.
//!
//! The rules, as docs/aisles.md states them:
//! - A trip follows the stored shortest path. One event per segment: the
//!   mover enters a segment and drives it at min(its speed, the segment's
//!   limit) × its operators' efficiency. With an acceleration, the whole
//!   trip's speed-up and slow-down allowance (the trapezoidal profile over
//!   the trip's length, less the time at full speed) is added to the first
//!   segment; stops at full segments add none.
//! - A mover on a segment holds its place there until it has entered the
//!   next one, so one that waits at the far end still counts. Capacity counts
//!   movers in both directions together. With capacity 1 only one mover is
//!   ever on the segment, so movers never pass through each other.
//! - A mover that cannot enter waits at the entry node, first come first
//!   served per segment (and per intersection); the wait is congestion delay,
//!   credited to the segment it wanted to enter and to its fleet.
//! - Zone control on a node: the intersection is booked from the moment a
//!   mover turns into a segment that leads to the node until it turns out of
//!   it (or ends its trip there), so at most one mover is on its way into,
//!   or standing in, the intersection. A mover starting from a zone node
//!   needs the zone free to leave.
//! - Deadlock: when a wait begins, the movers that can never move again are
//!   found (each waits for a segment or zone whose every holder is itself
//!   such a mover, a knot in the wait-for graph). If there are any, the
//!   replication stops and names them, with their segments and zones.

use std::collections::VecDeque;

use layflow_engine::{Calendar, TimeWeighted};

use super::{Event, PlantModel, NONE};
use crate::sim::buckets::Act;
use crate::sim::stats::Deadlock;
use crate::sim::{Plan, SegmentStats};

/// Movers each aisle queue has room for from the start (see `AisleState::new`).
const QUEUE_ROOM: usize = 64;

/// A mover's trip in progress over the network.
#[derive(Debug, Clone, Copy)]
pub(super) struct Walk {
    /// Locations the trip runs between.
    from: u32,
    to: u32,
    /// Segments of the path entered so far.
    step: u32,
    /// The node it is at, or heading to on `seg`.
    node: u32,
    /// The segment it is on (driving, or waiting at its far end); NONE at the start.
    seg: u32,
    loaded: bool,
    /// Handling after arrival (unloading), s.
    post_s: f64,
    /// What happens when the trip and `post_s` are over.
    then: Event,
    /// Resource it waits for (segment s, or segments + node for a zone); NONE while moving.
    waiting_on: u32,
    wait_since: f64,
    /// The segment it wants to enter while waiting.
    wait_seg: u32,
    /// Acceleration allowance added to the first segment, s.
    extra_s: f64,
}

const IDLE_WALK: Walk = Walk {
    from: 0,
    to: 0,
    step: 0,
    node: 0,
    seg: NONE,
    loaded: false,
    post_s: 0.0,
    then: Event::Sample,
    waiting_on: NONE,
    wait_since: f64::NAN,
    wait_seg: NONE,
    extra_s: 0.0,
};

/// The network's running state; every vector is empty without segment-by-segment travel.
pub(super) struct AisleState {
    walks: Vec<Walk>,
    /// Movers on each segment.
    occupancy: Vec<u32>,
    level: Vec<TimeWeighted>,
    traversals: Vec<u64>,
    delay_s: Vec<f64>,
    /// Waiting movers, oldest first: one queue per segment, then one per node (zones).
    queues: Vec<VecDeque<u32>>,
    /// Per node: the mover holding its zone, or NONE.
    holder: Vec<u32>,
    /// Scratch for the deadlock check, one flag per mover.
    stuck: Vec<bool>,
}

impl AisleState {
    pub(super) fn new(plan: &Plan, movers: usize) -> AisleState {
        let Some(net) = plan.aisles.as_ref() else {
            return AisleState {
                walks: Vec::new(),
                occupancy: Vec::new(),
                level: Vec::new(),
                traversals: Vec::new(),
                delay_s: Vec::new(),
                queues: Vec::new(),
                holder: Vec::new(),
                stuck: Vec::new(),
            };
        };
        let (ns, nn) = (net.segments.len(), net.nodes.len());
        AisleState {
            walks: vec![IDLE_WALK; movers],
            occupancy: vec![0; ns],
            level: vec![TimeWeighted::new(0.0); ns],
            traversals: vec![0; ns],
            delay_s: vec![0.0; ns],
            // Room for every mover of a usual plant, so that no wait
            // allocates; capped so that memory does not grow as movers ×
            // (segments + nodes): a queue longer than the cap grows once,
            // and keeps its room for the rest of the replication.
            queues: (0..ns + nn).map(|_| VecDeque::with_capacity(movers.min(QUEUE_ROOM))).collect(),
            holder: vec![NONE; nn],
            stuck: vec![false; movers],
        }
    }

    pub(super) fn reset(&mut self, t: f64) {
        // Traversals and delays are counted or clipped to the window as they happen.
        self.level.iter_mut().for_each(|l| l.reset(t));
    }
}

impl PlantModel<'_> {
    /// Start a trip of `mover` from location `from` to `to`: `pre_s` of
    /// handling first (the caller credits it), then the path segment by
    /// segment, then `post_s` of handling (credited here), then `then`.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn walk(
        &mut self,
        mover: u32,
        from: usize,
        to: usize,
        loaded: bool,
        pre_s: f64,
        post_s: f64,
        then: Event,
        cal: &mut Calendar<Event>,
    ) {
        let now = cal.now();
        let plan = self.plan;
        let net = plan.aisles.as_ref().expect("walks run only over a simulated network");
        let f = self.movers[mover as usize].fleet as usize;
        let fl = &plan.fleets[f];
        let d = plan.dist(from, to);
        let extra_s = if fl.accel.is_some() && d > 0.0 {
            let pace = if loaded { fl.pace_loaded } else { fl.pace_empty };
            (fl.travel_s(d, loaded) - d / pace).max(0.0)
        } else {
            0.0
        };
        self.aisle.walks[mover as usize] = Walk {
            from: from as u32,
            to: to as u32,
            step: 0,
            node: net.location_node[from] as u32,
            seg: NONE,
            loaded,
            post_s,
            then,
            waiting_on: NONE,
            wait_since: f64::NAN,
            wait_seg: NONE,
            extra_s,
        };
        if self.trace.is_some() {
            self.trace_walk(mover, now, pre_s, post_s, net.path(from, to).is_empty());
        }
        if net.path(from, to).is_empty() {
            let t_end = now + pre_s + post_s;
            self.fleets[f].acc.handling_s += self.in_window(now + pre_s, t_end);
            self.by_fleet(f, Act::Handling, now + pre_s, t_end);
            cal.schedule(t_end, then);
        } else if pre_s > 0.0 {
            cal.schedule(now + pre_s, Event::Step { mover });
        } else {
            self.advance(mover, cal);
        }
    }

    /// A mover has reached the end of its segment (or finished handling before its trip).
    pub(super) fn step(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let w = self.aisle.walks[mover as usize];
        let net = self.plan.aisles.as_ref().expect("steps run only over a simulated network");
        if w.seg != NONE && w.step as usize == net.path(w.from as usize, w.to as usize).len() {
            let now = cal.now();
            let f = self.movers[mover as usize].fleet as usize;
            self.fleets[f].acc.handling_s += self.in_window(now, now + w.post_s);
            self.by_fleet(f, Act::Handling, now, now + w.post_s);
            cal.schedule(now + w.post_s, w.then);
            if self.trace.is_some() && w.post_s > 0.0 {
                self.trace_mover(mover, now, super::trace::State::Handling);
            }
            self.aisle.walks[mover as usize].seg = NONE;
            self.release_segment(w.seg as usize, cal);
            let node = w.node as usize;
            if self.aisle.holder[node] == mover {
                self.aisle.holder[node] = NONE;
                self.wake(net.segments.len() + node, cal);
            }
            return;
        }
        self.advance(mover, cal);
    }

    /// Whether zone `node` is held by a mover other than `mover`.
    #[inline]
    fn zone_taken(&self, node: usize, mover: u32) -> bool {
        let h = self.aisle.holder[node];
        h != NONE && h != mover
    }

    /// Enter the next segment of the mover's path, or wait for it in turn.
    fn advance(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        let net = plan.aisles.as_ref().expect("walks run only over a simulated network");
        let w = self.aisle.walks[mover as usize];
        let s = net.path(w.from as usize, w.to as usize)[w.step as usize] as usize;
        let seg = &net.segments[s];
        let a = w.node as usize;
        let b = if seg.from == a { seg.to } else { seg.from };
        let ns = net.segments.len();
        let blocker = if self.aisle.occupancy[s] >= seg.capacity.unwrap_or(u32::MAX) {
            s
        } else if net.nodes[b].zone && self.zone_taken(b, mover) {
            ns + b
        } else if net.nodes[a].zone && self.zone_taken(a, mover) {
            ns + a
        } else {
            usize::MAX
        };
        if blocker != usize::MAX {
            let wk = &mut self.aisle.walks[mover as usize];
            let starts = wk.waiting_on == NONE;
            if starts {
                wk.wait_since = now;
                wk.wait_seg = s as u32;
            }
            wk.waiting_on = blocker as u32;
            self.aisle.queues[blocker].push_back(mover);
            if self.trace.is_some() && starts {
                self.trace_mover(mover, now, super::trace::State::Congestion);
            }
            self.check_aisle_deadlock(blocker, cal);
            return;
        }
        let f = self.movers[mover as usize].fleet as usize;
        if w.waiting_on != NONE {
            let d = self.in_window(w.wait_since, now);
            self.aisle.delay_s[s] += d;
            self.fleets[f].acc.congestion_s += d;
            self.by_aisle_wait(f, s, w.wait_since, now);
        }
        let st = &mut self.aisle;
        st.occupancy[s] += 1;
        st.level[s].add(now, 1.0);
        if now >= self.window.0 && now < self.window.1 {
            st.traversals[s] += 1;
        }
        let leaves_zone = net.nodes[a].zone && st.holder[a] == mover;
        if leaves_zone {
            st.holder[a] = NONE;
        }
        if net.nodes[b].zone {
            st.holder[b] = mover;
        }
        let wk = &mut st.walks[mover as usize];
        wk.seg = s as u32;
        wk.node = b as u32;
        wk.step += 1;
        wk.waiting_on = NONE;
        let fl = &plan.fleets[f];
        let v = if w.loaded { fl.speed_loaded } else { fl.speed_empty };
        let v = seg.speed_limit_mps.map_or(v, |l| l.min(v));
        let mut t = seg.length_m / (v * fl.efficiency);
        if w.step == 0 {
            t += w.extra_s;
        }
        if w.loaded {
            self.record_loaded(f, now, now + t, seg.length_m);
        } else {
            self.record_empty(f, now, now + t, seg.length_m);
        }
        cal.schedule(now + t, Event::Step { mover });
        if self.trace.is_some() {
            let since = if w.waiting_on != NONE { w.wait_since } else { f64::NAN };
            self.trace_enter(mover, now, w.loaded, since);
        }
        // Only now, with this mover's move done, may the movers behind it go.
        if w.seg != NONE {
            self.release_segment(w.seg as usize, cal);
        }
        if leaves_zone {
            self.wake(ns + a, cal);
        }
    }

    fn release_segment(&mut self, s: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        self.aisle.occupancy[s] -= 1;
        self.aisle.level[s].add(now, -1.0);
        self.wake(s, cal);
    }

    /// Whether resource `r` (a segment, or segments + node for a zone) has room now.
    fn resource_free(&self, r: usize) -> bool {
        let net = self.plan.aisles.as_ref().expect("simulated network");
        let ns = net.segments.len();
        if r < ns {
            self.aisle.occupancy[r] < net.segments[r].capacity.unwrap_or(u32::MAX)
        } else {
            self.aisle.holder[r - ns] == NONE
        }
    }

    /// Let the movers waiting for resource `r` go, oldest first, while it has room.
    fn wake(&mut self, r: usize, cal: &mut Calendar<Event>) {
        while let Some(&m) = self.aisle.queues[r].front() {
            if self.deadlock.is_some() || !self.resource_free(r) {
                return;
            }
            self.aisle.queues[r].pop_front();
            self.advance(m, cal);
        }
    }

    /// Whether some holder of resource `r` is not itself waiting (or it has no holder).
    fn may_free(&self, r: usize, stuck: &[bool]) -> bool {
        let ns = self.aisle.occupancy.len();
        if r < ns {
            self.aisle.walks.iter().zip(stuck).any(|(w, &st)| w.seg as usize == r && !st)
        } else {
            let h = self.aisle.holder[r - ns];
            h == NONE || !stuck[h as usize]
        }
    }

    /// A wait for resource `r` has begun: stop the replication if some
    /// movers can never move again (module docs).
    fn check_aisle_deadlock(&mut self, r: usize, cal: &mut Calendar<Event>) {
        let mut stuck = std::mem::take(&mut self.aisle.stuck);
        for (s, w) in stuck.iter_mut().zip(&self.aisle.walks) {
            *s = w.waiting_on != NONE;
        }
        // The common case: some holder of what the new waiter wants is moving.
        if self.may_free(r, &stuck) {
            self.aisle.stuck = stuck;
            return;
        }
        // Greatest fixed point: drop every waiter whose resource may still free.
        let mut changed = true;
        while changed {
            changed = false;
            for m in 0..stuck.len() {
                if stuck[m] && self.may_free(self.aisle.walks[m].waiting_on as usize, &stuck) {
                    stuck[m] = false;
                    changed = true;
                }
            }
        }
        if stuck.iter().any(|&s| s) {
            let ns = self.aisle.occupancy.len();
            let mut movers = Vec::new();
            let mut segments = Vec::new();
            let mut zones = Vec::new();
            for (m, _) in stuck.iter().enumerate().filter(|(_, &s)| s) {
                let f = self.movers[m].fleet;
                let first = self.movers.iter().position(|x| x.fleet == f).unwrap_or(m);
                movers.push((f as usize, (m - first) as u32));
                let w = &self.aisle.walks[m];
                for x in [w.waiting_on as usize, w.seg as usize] {
                    if x == NONE as usize {
                        continue;
                    }
                    if x < ns {
                        segments.push(x);
                    } else {
                        zones.push(x - ns);
                    }
                }
                if w.node != NONE && self.aisle.holder[w.node as usize] == m as u32 {
                    zones.push(w.node as usize);
                }
            }
            segments.sort_unstable();
            segments.dedup();
            zones.sort_unstable();
            zones.dedup();
            self.deadlock =
                Some(Deadlock { time_s: cal.now(), departments: Vec::new(), movers, segments, zones });
            cal.clear();
        }
        self.aisle.stuck = stuck;
    }

    /// Per-segment statistics at the end, crediting the waits still under way.
    pub(super) fn segment_stats(&mut self, t: f64) -> Vec<SegmentStats> {
        for m in 0..self.aisle.walks.len() {
            let w = self.aisle.walks[m];
            if w.waiting_on != NONE {
                let d = self.in_window(w.wait_since, t);
                self.aisle.delay_s[w.wait_seg as usize] += d;
                self.fleets[self.movers[m].fleet as usize].acc.congestion_s += d;
                self.by_aisle_wait(self.movers[m].fleet as usize, w.wait_seg as usize, w.wait_since, t);
            }
        }
        let st = &self.aisle;
        (0..st.occupancy.len())
            .map(|s| SegmentStats {
                traversals: st.traversals[s],
                occupancy: st.level[s].mean(t),
                delay_s: st.delay_s[s],
            })
            .collect()
    }
}

impl AisleState {
    /// Segments tracked (0 without segment-by-segment travel).
    pub(super) fn segment_count(&self) -> usize {
        self.level.len()
    }

    /// Mover-seconds of waiting to enter segment `s` credited so far.
    pub(super) fn segment_delay(&self, s: usize) -> f64 {
        self.delay_s[s]
    }

    /// Segment `s`'s traversals and occupancy area (mover-seconds) so far, at `t`.
    pub(super) fn segment_totals(&self, s: usize, t: f64) -> (f64, f64) {
        (self.traversals[s] as f64, self.level[s].area(t))
    }
}
