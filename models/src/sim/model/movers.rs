//! Moves by fleets of movers: which mover takes a request, the trip (one load, or a tow train's several), what a freed mover does, and operators' shifts.
//!
//! A move of a single-load mover is two events: the pick-up, when the mover
//! reaches the lot, and the delivery, when it has set the lot down. A train
//! (capacity above one) adds an event at the end of each loading, where it
//! decides whether to fetch another waiting load, and one delivery event per
//! load. Activity time is credited when it is scheduled, clipped to the
//! observation window. Nothing here draws a random number.

use layflow_engine::Calendar;

use super::{Event, PlantModel, Request, NONE};
use crate::plant::{DispatchRule, IdleRule, QueueOrder};
use crate::sim::buckets::Act;
use crate::sim::{DutyCursor, FleetSet};

impl PlantModel<'_> {
    /// Send a lot from the department it is at to operation `op`; `set` is
    /// the fleets allowed to serve that move.
    pub(super) fn route(&mut self, id: u32, op: u32, set: FleetSet, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        if plan.split && self.aux[id as usize].loads > 1 {
            self.route_loads(id, op, set, cal);
            return;
        }
        let w = self.weight(id);
        let lot = &mut self.lots[id as usize];
        lot.op = op;
        let prod = &plan.products[lot.product as usize];
        let to = prod.ops[op as usize].department;
        let from = lot.department as usize;
        if to == from {
            if self.trace.is_some() {
                self.trace_arrive(id, now);
            }
            self.start_or_queue(id, cal);
            return;
        }
        if plan.instant {
            if plan.staging && !self.has_room(to) {
                self.wait_for_room(id, from, to, cal);
                return;
            }
            self.departments[from].wip.add(now, -w);
            self.arrive(id, cal);
            return;
        }
        lot.requested = now;
        if plan.staging {
            // Waiting for a mover: it takes a place in the outbound area.
            self.departments[from].out_count += 1;
        }
        // Ticket 0 means "taken", so it is never handed out.
        self.next_ticket = self.next_ticket.wrapping_add(1).max(1);
        let ticket = self.next_ticket;
        lot.ticket = ticket;
        let pickup = plan.dept_location[from];
        let fleets = plan.fleets_in(set);
        let several = plan.nearest_fleet && fleets.len() > 1;
        let chosen = if several {
            self.nearest_idle_of(fleets, pickup)
        } else {
            self.choose_idle(fleets[0] as usize, pickup)
        };
        match chosen {
            Some(mover) => self.dispatch(mover, id, cal),
            // Under nearest-idle fleet choice the request waits in every
            // allowed fleet's list; the ticket makes sure it is served once.
            None => {
                let waits_in = if several { fleets } else { &fleets[..1] };
                for &f in waits_in {
                    self.fleets[f as usize].requests.push_back(Request { lot: id, ticket });
                }
            }
        }
    }

    /// Takes an idle mover of fleet `f` for a request at location `pickup`, by the fleet's rule.
    #[inline]
    fn choose_idle(&mut self, f: usize, pickup: usize) -> Option<u32> {
        let fleet = &mut self.fleets[f];
        if fleet.idle.is_empty() {
            return None;
        }
        let movers = &self.movers;
        // One pass, each mover's key computed once: this runs on every move
        // request, and a plant of real size keeps dozens of movers idle.
        // Ties go to the lower-numbered mover, whatever the idle list's order.
        let plan = self.plan;
        let by_arrival = matches!(plan.fleets[f].dispatch, DispatchRule::FirstCome);
        let key = |m: u32| -> f64 {
            let mover = &movers[m as usize];
            if by_arrival {
                mover.idle_since
            } else {
                plan.dist(mover.location as usize, pickup)
            }
        };
        let mut best = 0;
        let mut best_m = fleet.idle[0];
        let mut best_k = key(best_m);
        for (i, &m) in fleet.idle.iter().enumerate().skip(1) {
            let k = key(m);
            if k.total_cmp(&best_k).then(m.cmp(&best_m)).is_lt() {
                (best, best_m, best_k) = (i, m, k);
            }
        }
        Some(fleet.idle.swap_remove(best))
    }

    /// Takes the idle mover nearest to `pickup` among `fleets` (equally near:
    /// the lower-numbered mover, so the earlier listed fleet).
    fn nearest_idle_of(&mut self, fleets: &[u32], pickup: usize) -> Option<u32> {
        let mut best: Option<(f64, u32, usize, usize)> = None;
        for &f in fleets {
            for (i, &m) in self.fleets[f as usize].idle.iter().enumerate() {
                let d = self.plan.dist(self.movers[m as usize].location as usize, pickup);
                if best.is_none_or(|(bd, bm, _, _)| d.total_cmp(&bd).then(m.cmp(&bm)).is_lt()) {
                    best = Some((d, m, f as usize, i));
                }
            }
        }
        best.map(|(_, _, f, i)| self.fleets[f].idle.swap_remove(i))
    }

    /// The oldest still-waiting request of fleet `f`, taken off its list.
    #[inline]
    fn take_oldest(&mut self, f: usize) -> Option<u32> {
        let lots = &self.lots;
        let queue = &mut self.fleets[f].requests;
        while let Some(r) = queue.pop_front() {
            if lots[r.lot as usize].ticket == r.ticket {
                return Some(r.lot);
            }
        }
        None
    }

    /// The still-waiting request of fleet `f` that comes first under `order`
    /// (the smallest key of [`PlantModel::queue_key`]; equal keys: the older,
    /// as the list is in request order and `min_by` keeps the first), taken
    /// off its list. A scan of the list, as `take_nearest`'s.
    fn take_first_by(&mut self, f: usize, order: QueueOrder) -> Option<u32> {
        let lots = &self.lots;
        let queue = &mut self.fleets[f].requests;
        queue.retain(|r| lots[r.lot as usize].ticket == r.ticket);
        let queue = &self.fleets[f].requests;
        let best = (0..queue.len()).min_by(|&a, &b| {
            self.queue_key(queue[a].lot, order).total_cmp(&self.queue_key(queue[b].lot, order))
        })?;
        self.fleets[f].requests.remove(best).map(|r| r.lot)
    }

    /// The still-waiting request of fleet `f` whose pick-up is nearest to
    /// location `here` (equally near: the older; the list is in request
    /// order and `min_by` keeps the first), taken off its list.
    fn take_nearest(&mut self, f: usize, here: usize) -> Option<u32> {
        let plan = self.plan;
        let lots = &self.lots;
        let queue = &mut self.fleets[f].requests;
        // Requests another fleet has taken are dropped here (lazy deletion).
        queue.retain(|r| lots[r.lot as usize].ticket == r.ticket);
        let at = |r: &Request| plan.dept_location[lots[r.lot as usize].department as usize];
        let best = (0..queue.len()).min_by(|&a, &b| {
            let (ra, rb) = (&queue[a], &queue[b]);
            plan.dist(here, at(ra)).total_cmp(&plan.dist(here, at(rb)))
        })?;
        queue.remove(best).map(|r| r.lot)
    }

    /// Send `mover` to the lot's pick-up point: empty, or loaded for a train
    /// fetching another load.
    #[inline]
    fn dispatch(&mut self, mover: u32, lot: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        self.lots[lot as usize].ticket = 0;
        if self.plan.fleets[self.movers[mover as usize].fleet as usize].service {
            self.work_start(mover, now);
        }
        let m = &mut self.movers[mover as usize];
        m.lot = lot;
        m.assigned = now;
        let f = m.fleet as usize;
        let pickup = self.plan.dept_location[self.lots[lot as usize].department as usize];
        let d = self.plan.dist(m.location as usize, pickup);
        let loaded = m.loads > 0;
        if self.plan.aisles.is_some() {
            let from = m.location as usize;
            if self.trace.is_some() {
                self.trace_dispatch(mover, now, d);
            }
            self.walk(mover, from, pickup, loaded, 0.0, 0.0, Event::Pickup { mover }, cal);
            return;
        }
        let t = self.plan.fleets[f].travel_s(d, loaded);
        if loaded {
            self.record_loaded(f, now, now + t, d);
        } else {
            self.record_empty(f, now, now + t, d);
        }
        // A delay that overflows to infinity (a validated but extreme speed of
        // 1e-300 m/s) is fine: the calendar puts it after every finite time.
        cal.schedule(now + t, Event::Pickup { mover });
        if self.trace.is_some() {
            self.trace_dispatch(mover, now, d);
        }
    }

    #[inline]
    pub(super) fn record_empty(&mut self, f: usize, a: f64, b: f64, d: f64) {
        self.by_travel(f, false, a, b, d);
        let w = self.in_window(a, b);
        let acc = &mut self.fleets[f].acc;
        acc.empty_s += w;
        if b > a {
            acc.distance_empty_m += d * w / (b - a);
        } else if a >= self.window.0 && a < self.window.1 {
            acc.distance_empty_m += d;
        }
    }

    #[inline]
    pub(super) fn record_loaded(&mut self, f: usize, a: f64, b: f64, d: f64) {
        self.by_travel(f, true, a, b, d);
        let w = self.in_window(a, b);
        let acc = &mut self.fleets[f].acc;
        acc.loaded_s += w;
        if b > a {
            acc.distance_loaded_m += d * w / (b - a);
        } else if a >= self.window.0 && a < self.window.1 {
            acc.distance_loaded_m += d;
        }
    }

    /// The move wait of a lot picked up now (whole, and in its two parts:
    /// waiting to be assigned a mover since the request, then that mover's
    /// drive since `assigned`), and its count as a move.
    #[inline]
    fn record_pickup(&mut self, f: usize, lot: u32, assigned: f64, now: f64) {
        let requested = self.lots[lot as usize].requested;
        let wait = now - requested;
        if now >= self.window.0 && now < self.window.1 {
            let (assign, drive) = (assigned - requested, now - assigned);
            let fs = &mut self.fleets[f];
            // Every wait histogram has the same tick: convert once.
            let ticks = fs.wait_hist.ticks(wait);
            fs.acc.moves += 1;
            fs.wait.add(wait);
            fs.wait_hist.record_ticks(ticks);
            fs.wait_assign.add(assign);
            fs.wait_drive.add(drive);
            fs.assign_hist.record(assign);
            fs.drive_hist.record(drive);
            self.wait_all.add(wait);
            self.wait_hist.record_ticks(ticks);
            self.wait_assign_all.add(assign);
            self.wait_drive_all.add(drive);
            if let Some(c) = self.buckets.as_deref_mut() {
                c.picked_up(f, wait, ticks, assign, drive);
            }
        }
    }

    /// The mover has reached the lot: load it and drive it to its
    /// destination (one load), or load it and decide what next (a train).
    pub(super) fn pickup(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = self.movers[mover as usize];
        let f = m.fleet as usize;
        let fl = &self.plan.fleets[f];
        let lot = &self.lots[m.lot as usize];
        let from = lot.department as usize;
        if fl.capacity > 1 {
            self.train_pickup(mover, cal);
            return;
        }
        let to = self.plan.products[lot.product as usize].ops[lot.op as usize].department;
        let d = self.plan.dist(self.plan.dept_location[from], self.plan.dept_location[to]);
        let t_load_end = now + fl.load_s;
        let t_travel_end = t_load_end + fl.travel_s(d, true);
        let t_end = t_travel_end + fl.unload_s;

        if self.plan.aisles.is_some() {
            // The trip's travel and unloading are credited as it goes (aisles.rs).
            self.fleets[f].acc.handling_s += self.in_window(now, t_load_end);
            self.by_fleet(f, Act::Handling, now, t_load_end);
            let (a, b) = (self.plan.dept_location[from], self.plan.dept_location[to]);
            let (load_s, unload_s) = (fl.load_s, fl.unload_s);
            if self.trace.is_some() {
                self.trace_pickup_walk(mover, now, from, to, d);
            }
            self.walk(mover, a, b, true, load_s, unload_s, Event::Deliver { mover }, cal);
        } else {
            let handling = self.in_window(now, t_load_end) + self.in_window(t_travel_end, t_end);
            let loaded = self.in_window(t_load_end, t_travel_end);
            let counted = now >= self.window.0 && now < self.window.1;
            let fs = &mut self.fleets[f];
            fs.acc.handling_s += handling;
            fs.acc.loaded_s += loaded;
            if t_travel_end > t_load_end {
                fs.acc.distance_loaded_m += d * loaded / (t_travel_end - t_load_end);
            } else if counted {
                fs.acc.distance_loaded_m += d;
            }
            self.by_fleet(f, Act::Handling, now, t_load_end);
            self.by_fleet(f, Act::Handling, t_travel_end, t_end);
            self.by_travel(f, true, t_load_end, t_travel_end, d);
            cal.schedule(t_end, Event::Deliver { mover });
            if self.trace.is_some() {
                self.trace_pickup(mover, now, t_load_end, t_travel_end, t_end, from, to, d);
            }
        }
        self.record_pickup(f, m.lot, m.assigned, now);
        let w = self.weight(m.lot);
        self.departments[from].wip.add(now, -w);
        self.transit.add(now, w);
        if self.plan.staging {
            self.departments[from].out_count -= 1;
            self.unblock(from, cal);
        }
    }

    /// A train has reached a lot: load it onto a free cart.
    fn train_pickup(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = self.movers[mover as usize];
        let f = m.fleet as usize;
        let from = self.lots[m.lot as usize].department as usize;
        let t_end = now + self.plan.fleets[f].load_s;
        self.fleets[f].acc.handling_s += self.in_window(now, t_end);
        self.by_fleet(f, Act::Handling, now, t_end);
        self.record_pickup(f, m.lot, m.assigned, now);
        let w = self.weight(m.lot);
        self.departments[from].wip.add(now, -w);
        self.transit.add(now, w);
        self.onboard[(m.slots + m.loads) as usize] = m.lot;
        let mm = &mut self.movers[mover as usize];
        mm.loads += 1;
        mm.lot = NONE;
        mm.location = self.plan.dept_location[from] as u32;
        cal.schedule(t_end, Event::Loaded { mover });
        if self.trace.is_some() {
            self.trace_train_pickup(mover, m.lot, now, from);
        }
        if self.plan.staging {
            self.departments[from].out_count -= 1;
            self.unblock(from, cal);
        }
    }

    /// A train has finished loading: fetch the nearest request waiting now
    /// while a cart is free (and the operators are on duty), else start
    /// delivering.
    pub(super) fn loaded(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let m = self.movers[mover as usize];
        let f = m.fleet as usize;
        if self.fleets[f].on_duty && m.loads < self.plan.fleets[f].capacity {
            if let Some(lot) = self.take_nearest(f, m.location as usize) {
                self.dispatch(mover, lot, cal);
                return;
            }
        }
        self.next_drop(mover, cal);
    }

    /// Where a lot is going: the location of its current operation's department.
    #[inline]
    fn destination(&self, lot: u32) -> usize {
        let l = &self.lots[lot as usize];
        self.plan.dept_location[self.plan.products[l.product as usize].ops[l.op as usize].department]
    }

    /// A train drives to the nearest drop-off among its loads (equally near:
    /// the load picked up first) and sets that load down.
    pub(super) fn next_drop(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = self.movers[mover as usize];
        let f = m.fleet as usize;
        let here = m.location as usize;
        let (base, n) = (m.slots as usize, m.loads as usize);
        let mut k = 0;
        for i in 1..n {
            let (di, dk) =
                (self.destination(self.onboard[base + i]), self.destination(self.onboard[base + k]));
            if self.plan.dist(here, di) < self.plan.dist(here, dk) {
                k = i;
            }
        }
        let lot = self.onboard[base + k];
        // Keep the rest in pick-up order, so that ties go to the earliest.
        self.onboard.copy_within(base + k + 1..base + n, base + k);
        let to = self.destination(lot);
        if self.plan.aisles.is_some() {
            let mm = &mut self.movers[mover as usize];
            mm.loads -= 1;
            mm.lot = lot;
            let unload_s = self.plan.fleets[f].unload_s;
            if self.trace.is_some() {
                self.trace_train_drive(mover, now, f64::NAN, self.plan.dist(here, to));
            }
            self.walk(mover, here, to, true, 0.0, unload_s, Event::Deliver { mover }, cal);
            return;
        }
        let d = self.plan.dist(here, to);
        let fl = &self.plan.fleets[f];
        let t_arrive = now + fl.travel_s(d, true);
        let t_end = t_arrive + fl.unload_s;
        self.record_loaded(f, now, t_arrive, d);
        self.fleets[f].acc.handling_s += self.in_window(t_arrive, t_end);
        self.by_fleet(f, Act::Handling, t_arrive, t_end);
        let mm = &mut self.movers[mover as usize];
        mm.loads -= 1;
        mm.lot = lot;
        cal.schedule(t_end, Event::Deliver { mover });
        if self.trace.is_some() {
            self.trace_train_drive(mover, now, t_arrive, d);
        }
    }

    /// The mover has set a load down at its destination.
    pub(super) fn deliver(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        if self.trace.is_some() {
            self.trace_deliver(mover, cal.now());
        }
        let lot = self.movers[mover as usize].lot;
        let to = self.destination(lot);
        self.movers[mover as usize].location = to as u32;
        if self.plan.staging {
            let l = &self.lots[lot as usize];
            let dept = self.plan.products[l.product as usize].ops[l.op as usize].department;
            // A lot back from the overflow area has its place kept.
            let returning = l.department as usize == self.plan.n_departments + dept;
            if !returning && !self.has_room(dept) {
                self.full_on_arrival(mover, dept, cal);
                return;
            }
        }
        self.set_down(mover, cal);
    }

    /// The mover's load enters its department; then the mover goes on.
    pub(super) fn set_down(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let lot = self.movers[mover as usize].lot;
        let m = &mut self.movers[mover as usize];
        m.lot = NONE;
        let more = m.loads > 0;
        let w = self.weight(lot);
        self.transit.add(now, -w);
        self.arrive(lot, cal);
        if more {
            self.next_drop(mover, cal);
        } else {
            self.mover_free(mover, cal);
        }
    }

    /// A mover has finished a delivery or reached where it was going: off
    /// duty, drive home first (`always-home`), serve a waiting request, take
    /// up the reserve, or follow the idle rule (`go-home` goes home only
    /// here, when no request is waiting).
    pub(super) fn mover_free(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let f = self.movers[mover as usize].fleet as usize;
        if self.plan.fleets[f].service && self.service_due(mover, cal) {
            return;
        }
        if !self.fleets[f].on_duty {
            self.fleets[f].off.push(mover);
            if self.trace.is_some() {
                self.trace_mover(mover, now, super::trace::State::OffDuty);
            }
            return;
        }
        let plan = self.plan;
        let fl = &plan.fleets[f];
        let here = self.movers[mover as usize].location as usize;
        if fl.idle == IdleRule::AlwaysHome && here != fl.home_location {
            // Home before any request, waiting or not; `Event::Home` brings it back here.
            self.reposition(mover, fl.home_location, cal, Event::Home { mover });
            return;
        }
        let taken = match fl.dispatch {
            DispatchRule::NearestRequest => self.take_nearest(f, here),
            _ if fl.request_order != QueueOrder::Fifo => self.take_first_by(f, fl.request_order),
            _ => self.take_oldest(f),
        };
        if let Some(lot) = taken {
            self.dispatch(mover, lot, cal);
            return;
        }
        if fl.reserve_movers > 0 {
            let at = fl.reserve_location;
            let fs = &self.fleets[f];
            let waiting =
                fs.idle.iter().filter(|&&i| self.movers[i as usize].location as usize == at).count();
            if waiting as u32 + fs.to_reserve < fl.reserve_movers {
                if here != at {
                    self.fleets[f].to_reserve += 1;
                    self.reposition(mover, at, cal, Event::Reserve { mover });
                    return;
                }
                self.go_idle(mover, now);
                return;
            }
        }
        match fl.idle {
            IdleRule::GoHome if here != fl.home_location => {
                self.reposition(mover, fl.home_location, cal, Event::Home { mover });
                return;
            }
            IdleRule::Park => {
                let mut spot = fl.parking[0];
                for &p in &fl.parking[1..] {
                    if plan.dist(here, p) < plan.dist(here, spot) {
                        spot = p;
                    }
                }
                if spot != here {
                    self.reposition(mover, spot, cal, Event::Home { mover });
                    return;
                }
            }
            _ => {}
        }
        self.go_idle(mover, now);
    }

    #[inline]
    fn go_idle(&mut self, mover: u32, now: f64) {
        let m = &mut self.movers[mover as usize];
        m.idle_since = now;
        self.fleets[m.fleet as usize].idle.push(mover);
        if self.trace.is_some() {
            self.trace_mover(mover, now, super::trace::State::Idle);
        }
    }

    /// Drive `mover` empty to location `to`; `arrival` fires when it gets
    /// there, and it takes no request before.
    #[inline]
    fn reposition(&mut self, mover: u32, to: usize, cal: &mut Calendar<Event>, arrival: Event) {
        let now = cal.now();
        if self.plan.fleets[self.movers[mover as usize].fleet as usize].service {
            self.work_start(mover, now);
        }
        let m = &mut self.movers[mover as usize];
        let f = m.fleet as usize;
        let from = m.location as usize;
        let d = self.plan.dist(from, to);
        m.location = to as u32;
        if self.plan.aisles.is_some() {
            self.walk(mover, from, to, false, 0.0, 0.0, arrival, cal);
            return;
        }
        let t = self.plan.fleets[f].travel_s(d, false);
        self.record_empty(f, now, now + t, d);
        cal.schedule(now + t, arrival);
        if self.trace.is_some() {
            self.trace_mover(mover, now, super::trace::State::Empty);
        }
    }

    /// A mover has reached the reserve.
    pub(super) fn reserve_reached(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let f = self.movers[mover as usize].fleet as usize;
        self.fleets[f].to_reserve -= 1;
        self.mover_free(mover, cal);
    }

    /// The time of fleet `f`'s next duty change, and advance past it.
    fn next_duty_change(&mut self, f: usize) -> f64 {
        let duty = self.plan.fleets[f].duty.as_ref().expect("only fleets with a duty calendar change duty");
        self.fleets[f].duty.advance(duty)
    }

    /// Puts fleet `f` in its duty state at time 0 and schedules its first change.
    pub(super) fn start_duty(&mut self, f: usize, cal: &mut Calendar<Event>) {
        let Some(duty) = self.plan.fleets[f].duty.as_ref() else {
            return;
        };
        self.fleets[f].duty = DutyCursor::start(duty);
        let first = self.next_duty_change(f);
        if !duty.on_at_start {
            self.go_off_duty(f, 0.0, first);
        }
        if first <= self.window.1 {
            cal.schedule(first, Event::Duty { fleet: f as u32 });
        }
    }

    /// Fleet `f`'s operators go off duty now or come back.
    pub(super) fn duty_change(&mut self, f: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let next = self.next_duty_change(f);
        if next <= self.window.1 {
            cal.schedule(next, Event::Duty { fleet: f as u32 });
        }
        if self.fleets[f].on_duty {
            self.go_off_duty(f, now, next);
            return;
        }
        self.fleets[f].on_duty = true;
        // Back from a break or between shifts: every mover is free again, in
        // mover order; the list is handed back emptied, keeping its capacity.
        let mut back = std::mem::take(&mut self.fleets[f].off);
        back.sort_unstable();
        for &m in &back {
            self.mover_free(m, cal);
        }
        back.clear();
        self.fleets[f].off = back;
    }

    /// Off duty from `now` until `until`: idle movers stop where they are; a
    /// busy one stops after its current delivery (in `mover_free`). The
    /// scheduled off time of every mover is recorded now, clipped to the window.
    fn go_off_duty(&mut self, f: usize, now: f64, until: f64) {
        if self.trace.is_some() {
            self.trace_off_duty(f, now);
        }
        let off_s = f64::from(self.plan.fleets[f].count) * self.in_window(now, until);
        self.by_fleet_times(f, Act::Off, now, until, f64::from(self.plan.fleets[f].count));
        let fs = &mut self.fleets[f];
        fs.on_duty = false;
        fs.acc.off_s += off_s;
        fs.off.extend_from_slice(&fs.idle);
        fs.idle.clear();
    }
}
