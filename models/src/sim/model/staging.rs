//! Finite staging: room in inbound areas, blocking after service, movers waiting or going to an overflow area, and deadlock detection.
//!
//! Inbound staging holds the lots waiting for a machine; outbound staging
//! the finished lots waiting to leave. A lot that finishes when the outbound
//! area is full stays on its machine, which stops (blocking after service).
//! With instant moves a finished lot leaves as soon as its next department
//! has room, and waits in the outbound area (or on the machine) until then.
//! With fleets a mover that finds the inbound area full waits there holding
//! its load, or takes the load to the department's overflow area; a lot at
//! the overflow area comes back by a move request when a place frees up.
//! Nothing here runs unless `Plan::staging` is set.

use layflow_engine::Calendar;

use super::{Blocked, Event, PlantModel, NONE};
use crate::plant::DepartmentRole;
use crate::sim::buckets::Act;
use crate::sim::stats::Deadlock;
use crate::sim::FleetSet;

impl PlantModel<'_> {
    /// Whether a lot arriving now at department `d` can be set down: a free
    /// machine, or a place in the inbound area. Shipping docks always have room.
    pub(super) fn has_room(&self, d: usize) -> bool {
        if self.plan.dept_role[d] != DepartmentRole::Work {
            return true;
        }
        let dep = &self.departments[d];
        self.has_free_machine(d)
            || (dep.queue.len() as u64 + u64::from(dep.reserved)) < u64::from(self.plan.inbound_cap[d])
    }

    /// A machine of department `d` is free (and up) for a new lot.
    pub(super) fn has_free_machine(&self, d: usize) -> bool {
        if self.plan.tracked[d] {
            let first = self.departments[d].first_machine as usize;
            self.departments[d].on_shift
                && self.machines[first..first + self.plan.machines[d] as usize]
                    .iter()
                    .any(|m| m.lot == NONE && m.up)
        } else {
            self.departments[d].busy < self.plan.machines[d]
        }
    }

    /// Lot `id` has finished at `dept` (on `machine`, or NONE) and goes to
    /// operation `op` next: pass it on, or block the machine.
    pub(super) fn leave_machine(
        &mut self,
        id: u32,
        dept: usize,
        machine: u32,
        op: u32,
        set: FleetSet,
        cal: &mut Calendar<Event>,
    ) {
        let plan = self.plan;
        let p = self.lots[id as usize].product as usize;
        let to = plan.products[p].ops[op as usize].department;
        if plan.staging && to != dept {
            let out_full = self.departments[dept].out_count >= plan.outbound_cap[dept];
            let must_wait = !plan.instant || !self.has_room(to);
            if out_full && must_wait {
                if self.trace.is_some() {
                    self.trace_block(id, dept, cal.now());
                }
                self.block(id, dept, machine, op, set, cal);
                return;
            }
        }
        if self.trace.is_some() {
            self.trace_leave(id, dept, cal.now());
        }
        // Route first, then free the machine: a lot that stays for rework
        // joins the back of the queue before the machine takes the front,
        // which is the order of the plain path (free, then queue).
        self.route(id, op, set, cal);
        self.release_machine(dept, machine, false, cal);
    }

    /// The machine holds its finished lot: the outbound area is full.
    fn block(
        &mut self,
        id: u32,
        dept: usize,
        machine: u32,
        op: u32,
        set: FleetSet,
        cal: &mut Calendar<Event>,
    ) {
        let now = cal.now();
        self.lots[id as usize].op = op;
        let d = &mut self.departments[dept];
        d.blocked.push_back(Blocked { lot: id, machine, op, set });
        d.busy_level.add(now, -1.0);
        d.blocked_level.add(now, 1.0);
        if machine != NONE {
            self.machines[machine as usize].blocked = true;
        }
        if self.plan.instant {
            // It may also leave straight from the machine when the next department has room.
            let p = self.lots[id as usize].product as usize;
            let to = self.plan.products[p].ops[op as usize].department;
            // Whether it is still held is read from the machine's list when
            // it is let in (see `admit_lot`), so the entry never needs finding again.
            self.departments[to].waiting.push_back((id, 0));
        }
        self.check_deadlock(cal);
    }

    /// The machine (`machine`, or one of the department's in the plain
    /// path) lets go of its lot: it takes the next lot in the queue, if up.
    pub(super) fn release_machine(
        &mut self,
        dept: usize,
        machine: u32,
        was_blocked: bool,
        cal: &mut Calendar<Event>,
    ) {
        let now = cal.now();
        let d = &mut self.departments[dept];
        if was_blocked {
            d.blocked_level.add(now, -1.0);
        }
        // `up`: it was counted busy until now; `can_take`: it may start the next lot.
        let (up, can_take) = if machine == NONE {
            (true, true)
        } else {
            let m = &mut self.machines[machine as usize];
            m.lot = NONE;
            m.blocked = false;
            (m.up, m.up && d.on_shift)
        };
        let next = if can_take { d.queue.pop() } else { None };
        match next {
            Some(w) => {
                d.queue_level.add(now, -1.0);
                if was_blocked {
                    d.busy_level.add(now, 1.0);
                }
                if machine == NONE {
                    self.start(w, cal);
                } else {
                    self.start_on(machine, w, cal);
                }
            }
            None => {
                d.busy -= 1;
                if !was_blocked && up {
                    d.busy_level.add(now, -1.0);
                }
            }
        }
        if self.plan.staging {
            self.on_inbound_space(dept, cal);
        }
    }

    /// Room may have opened at `dept`: let in who waits, oldest first.
    pub(super) fn on_inbound_space(&mut self, dept: usize, cal: &mut Calendar<Event>) {
        while !self.departments[dept].waiting.is_empty() && self.has_room(dept) {
            let (who, tag) = self.departments[dept].waiting.pop_front().expect("not empty");
            if self.plan.instant {
                self.admit_lot(who, dept, cal);
            } else if self.plan.has_overflow[dept] {
                // Keep a place for it and ask for a mover to bring it back.
                self.departments[dept].reserved += 1;
                let op = self.lots[who as usize].op;
                self.route(who, op, self.plan.single_fleet[tag as usize], cal);
            } else {
                let since = self.movers[who as usize].blocked_since;
                let f = self.movers[who as usize].fleet as usize;
                self.fleets[f].acc.blocked_s += self.in_window(since, cal.now());
                self.by_fleet(f, Act::Blocked, since, cal.now());
                self.movers[who as usize].blocked_since = f64::NAN;
                self.set_down(who, cal);
            }
        }
    }

    /// Instant moves: a waiting lot enters its next department `to`, leaving
    /// the outbound area (or the machine) it waited in upstream.
    fn admit_lot(&mut self, id: u32, to: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.trace.is_some() {
            self.trace_unblocked(id, now);
        }
        let origin = self.lots[id as usize].department as usize;
        self.departments[origin].wip.add(now, -1.0);
        self.arrive(id, cal);
        // Still held on its machine? Only the origin's blocked machines can
        // hold it (at most its machine count, and none at a dock), so this
        // search never grows with the number of lots waiting.
        let d = &mut self.departments[origin];
        let k = d.blocked.iter().position(|b| b.lot == id);
        self.scan_steps += k.map_or(d.blocked.len(), |k| k + 1) as u64;
        match k {
            Some(k) => {
                let b = d.blocked.remove(k).expect("found");
                self.release_machine(origin, b.machine, true, cal);
            }
            None => {
                d.out_count -= 1;
                out_to_add(&mut d.out_to, to, -1);
                self.unblock(origin, cal);
            }
        }
    }

    /// A place has freed in `dept`'s outbound area: the oldest blocked
    /// machine passes its lot there and goes on.
    pub(super) fn unblock(&mut self, dept: usize, cal: &mut Calendar<Event>) {
        while self.departments[dept].out_count < self.plan.outbound_cap.get(dept).copied().unwrap_or(u32::MAX)
        {
            let Some(b) = self.departments[dept].blocked.pop_front() else {
                return;
            };
            if self.trace.is_some() {
                self.trace_unblocked(b.lot, cal.now());
            }
            if self.plan.instant {
                // Now waiting in the outbound area instead of on the machine.
                self.departments[dept].out_count += 1;
                let p = self.lots[b.lot as usize].product as usize;
                let to = self.plan.products[p].ops[b.op as usize].department;
                out_to_add(&mut self.departments[dept].out_to, to, 1);
            } else {
                self.route(b.lot, b.op, b.set, cal);
            }
            self.release_machine(dept, b.machine, true, cal);
        }
    }

    /// Instant moves: lot `id` at `from` waits for room at `to`, in `from`'s outbound area.
    pub(super) fn wait_for_room(&mut self, id: u32, from: usize, to: usize, cal: &mut Calendar<Event>) {
        self.departments[from].out_count += 1;
        out_to_add(&mut self.departments[from].out_to, to, 1);
        self.departments[to].waiting.push_back((id, 0));
        self.check_deadlock(cal);
    }

    /// A mover has reached department `to` and found it full: it waits there
    /// holding its load, or takes the load to the overflow area.
    pub(super) fn full_on_arrival(&mut self, mover: u32, to: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.plan.has_overflow[to] {
            let m = self.movers[mover as usize];
            let f = m.fleet as usize;
            let spot = self.plan.dept_location[self.plan.n_departments + to];
            if now >= self.window.0 && now < self.window.1 {
                self.overflow_moves += 1;
            }
            if self.plan.aisles.is_some() {
                let (from, unload_s) = (m.location as usize, self.plan.fleets[f].unload_s);
                if self.trace.is_some() {
                    let d = self.plan.dist(from, spot);
                    self.trace_overflow_walk(mover, now, to, d);
                }
                self.movers[mover as usize].location = spot as u32;
                self.walk(mover, from, spot, true, 0.0, unload_s, Event::OverflowDrop { mover }, cal);
                return;
            }
            let d = self.plan.dist(m.location as usize, spot);
            let fl = &self.plan.fleets[f];
            let t_arrive = now + fl.travel_s(d, true);
            let t_end = t_arrive + fl.unload_s;
            self.record_loaded(f, now, t_arrive, d);
            self.fleets[f].acc.handling_s += self.in_window(t_arrive, t_end);
            self.by_fleet(f, Act::Handling, t_arrive, t_end);
            self.movers[mover as usize].location = spot as u32;
            cal.schedule(t_end, Event::OverflowDrop { mover });
            if self.trace.is_some() {
                self.trace_overflow(mover, now, t_arrive, t_end, to, d);
            }
            return;
        }
        self.movers[mover as usize].blocked_since = now;
        if self.trace.is_some() {
            self.trace_mover(mover, now, super::trace::State::Blocked);
        }
        self.departments[to].waiting.push_back((mover, NONE));
        self.check_deadlock(cal);
    }

    /// A mover has set a load down at an overflow area; the lot waits there
    /// for a place in its department.
    pub(super) fn overflow_drop(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.trace.is_some() {
            self.trace_deliver(mover, now);
        }
        let m = self.movers[mover as usize];
        let lot = m.lot;
        let l = &self.lots[lot as usize];
        let to = self.plan.products[l.product as usize].ops[l.op as usize].department;
        let pseudo = self.plan.n_departments + to;
        self.lots[lot as usize].department = pseudo as u32;
        self.transit.add(now, -1.0);
        self.departments[pseudo].wip.add(now, 1.0);
        self.departments[to].waiting.push_back((lot, m.fleet));
        let mm = &mut self.movers[mover as usize];
        mm.lot = NONE;
        let more = mm.loads > 0;
        self.on_inbound_space(to, cal);
        if more {
            self.next_drop(mover, cal);
        } else {
            self.mover_free(mover, cal);
        }
    }

    /// Stops the replication if loads are stuck for good: a set of
    /// departments whose machines all hold finished lots that can only go
    /// to full departments of the same set (instant moves), or whose
    /// outbound areas wait for movers that all wait, holding loads, at such
    /// departments (fleets). Runs only when a wait begins.
    pub(super) fn check_deadlock(&mut self, cal: &mut Calendar<Event>) {
        let nd = self.plan.n_departments;
        // A scratch list kept between calls: no allocation per wait.
        let mut stuck = std::mem::take(&mut self.stuck_scratch);
        stuck.clear();
        stuck.extend((0..nd).map(|d| {
            let c = self.plan.machines[d];
            c > 0 && self.departments[d].blocked.len() == c as usize
        }));
        self.scan_steps += nd as u64;
        if stuck.iter().any(|&s| s) && self.find_stuck(&mut stuck) {
            let departments: Vec<usize> = (0..nd).filter(|&d| stuck[d]).collect();
            self.deadlock = Some(Deadlock {
                time_s: cal.now(),
                departments,
                movers: Vec::new(),
                segments: Vec::new(),
                zones: Vec::new(),
            });
            cal.clear();
        }
        self.stuck_scratch = stuck;
    }

    /// Narrows `stuck` (departments whose machines all hold finished lots)
    /// to a set that can never move again; true if one is left.
    fn find_stuck(&mut self, stuck: &mut [bool]) -> bool {
        let nd = self.plan.n_departments;
        if self.plan.instant {
            // Peel off departments with a lot waiting to go somewhere that
            // can still take it. A department's waiting lots are those held
            // on its machines (`blocked`) and those in its outbound area
            // (`out_to`, counted by destination), so the work is bounded by
            // its machines and its routing fan-out, never by the number of
            // lots waiting elsewhere (lots held at a dock, say).
            let mut changed = true;
            while changed {
                changed = false;
                for origin in 0..nd {
                    if !stuck[origin] {
                        continue;
                    }
                    let d = &self.departments[origin];
                    let held = d.blocked.iter().map(|b| {
                        let p = self.lots[b.lot as usize].product as usize;
                        self.plan.products[p].ops[b.op as usize].department
                    });
                    let queued = d.out_to.iter().filter(|&&(_, n)| n > 0).map(|&(y, _)| y as usize);
                    self.scan_steps += (d.blocked.len() + d.out_to.len()) as u64;
                    if held.chain(queued).any(|y| !stuck[y]) {
                        stuck[origin] = false;
                        changed = true;
                    }
                }
            }
        } else {
            // Any mover not waiting at a stuck department may still come
            // (conservative: it is never called a deadlock when one might).
            let waiting_at_stuck = (0..nd)
                .filter(|&y| stuck[y] && !self.plan.has_overflow[y])
                .map(|y| self.departments[y].waiting.len())
                .sum::<usize>();
            self.scan_steps += nd as u64;
            if waiting_at_stuck < self.movers.len() {
                return false;
            }
            for (y, s) in stuck.iter_mut().enumerate() {
                *s = *s || !self.departments[y].waiting.is_empty();
            }
        }
        stuck.iter().any(|&s| s)
    }
}

/// Counts one more (`by` = 1) or one fewer (`by` = -1) lot in an outbound
/// area bound for department `to`. The list has one entry per destination
/// ever seen (a department's routing fan-out), kept at zero rather than
/// removed, so it stops allocating once every destination has appeared.
fn out_to_add(list: &mut Vec<(u32, u32)>, to: usize, by: i32) {
    let to = to as u32;
    match list.iter_mut().find(|e| e.0 == to) {
        Some(e) => e.1 = e.1.checked_add_signed(by).expect("an outbound count never goes below zero"),
        None => {
            debug_assert_eq!(by, 1, "a lot leaves an outbound area it was counted in");
            list.push((to, 1));
        }
    }
}
