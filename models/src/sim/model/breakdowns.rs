//! Breakdowns: machines that fail and are repaired (clock or busy time, resume or restart), and movers out of service for repair or charging.
//!
//! A department with breakdowns tracks each machine, since each fails on its
//! own; departments without keep the plain busy count. Every machine and
//! every mover draws its failure and repair times from its own stream
//! (`MACHINE, department, machine` and `MOVER, fleet, mover`), so adding
//! breakdowns anywhere shifts no other draw (common random numbers).

use layflow_engine::Calendar;

use super::{Event, PlantModel, NONE};
use crate::plant::{FailureClock, Interrupted};
use crate::sim::buckets::Act;

impl PlantModel<'_> {
    /// Schedules the first failure of every machine and mover that can fail.
    pub(super) fn start_breakdowns(&mut self, cal: &mut Calendar<Event>) {
        for k in 0..self.machines.len() {
            let d = self.machines[k].dept as usize;
            let Some(b) = self.plan.breakdowns[d].as_ref() else {
                continue; // tracked for a calendar, setups or loads, not breakdowns
            };
            let m = &mut self.machines[k];
            let t = b.between.sample(&mut m.rng);
            match b.clock {
                FailureClock::ClockTime => {
                    cal.schedule(t, Event::MachineFail { machine: k as u32, token: NONE })
                }
                FailureClock::BusyTime => m.to_fail = t,
            }
        }
        if self.mover_rng.is_empty() {
            return;
        }
        for k in 0..self.movers.len() {
            let f = self.movers[k].fleet as usize;
            if let Some(b) = self.plan.fleets[f].breakdowns.as_ref() {
                let t = b.between.sample(&mut self.mover_rng[k]);
                match b.clock {
                    FailureClock::ClockTime => cal.schedule(t, Event::MoverFail { mover: k as u32 }),
                    FailureClock::BusyTime => self.movers[k].to_fail = t,
                }
            }
        }
    }

    /// A lot for a department whose machines are tracked: the lowest-numbered
    /// free, working machine takes it (in working hours), or it queues.
    pub(super) fn start_or_queue_on_machines(&mut self, id: u32, dept: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let first = self.departments[dept].first_machine as usize;
        let n = self.plan.machines[dept] as usize;
        let free = if self.departments[dept].on_shift {
            (first..first + n).find(|&k| self.machines[k].lot == NONE && self.machines[k].up)
        } else {
            None
        };
        let d = &mut self.departments[dept];
        match free {
            Some(k) => {
                d.busy += 1;
                d.busy_level.add(now, 1.0);
                self.start_on(k as u32, id, cal);
            }
            None => self.enqueue(id, dept, now),
        }
    }

    /// Starts lot `id`'s operation on `machine`: the same draw from the
    /// lot's stream as the plain path, so the lot's times do not change. A
    /// change of product first sets the machine up (from its own stream).
    pub(super) fn start_on(&mut self, machine: u32, id: u32, cal: &mut Calendar<Event>) {
        let lot = &mut self.lots[id as usize];
        let product = lot.product;
        let op = &self.plan.products[product as usize].ops[lot.op as usize];
        let t = op.time.as_ref().map_or(0.0, |d| d.sample(&mut lot.rng));
        let dept = self.machines[machine as usize].dept as usize;
        let m = &mut self.machines[machine as usize];
        m.lot = id;
        m.work_total = t;
        m.work_left = t;
        if let Some(st) = self.plan.setups[dept].as_ref() {
            if m.product != NONE {
                if let Some(dist) = st.for_change(m.product as usize, product as usize) {
                    m.in_setup = true;
                    m.setup_left = dist.sample(&mut m.setup_rng);
                }
            }
            m.product = product;
        }
        if self.plan.split {
            let w = self.aux[id as usize].weight;
            let m = &mut self.machines[machine as usize];
            m.work_total *= w;
            m.work_left *= w;
        }
        if self.plan.has_crews {
            self.crew_run(machine, cal);
            return;
        }
        self.run_machine(machine, cal);
    }

    /// The machine processes its lot's remaining work; with busy-time
    /// failures, the failure comes first if it falls within that work.
    /// The machine works on its current phase (setup, or the operation's
    /// remaining work); with busy-time failures, the failure comes first if
    /// it falls within that phase.
    pub(super) fn run_machine(&mut self, machine: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = &mut self.machines[machine as usize];
        let dept = m.dept as usize;
        let busy_time =
            self.plan.breakdowns[dept].as_ref().is_some_and(|b| b.clock == FailureClock::BusyTime);
        m.run_start = now;
        m.running = true;
        m.token = m.token.wrapping_add(1);
        let left = if m.in_setup { m.setup_left } else { m.work_left };
        if m.in_setup {
            self.departments[dept].setup_level.add(now, 1.0);
        }
        if busy_time && m.to_fail <= left {
            cal.schedule(now + m.to_fail, Event::MachineFail { machine, token: m.token });
        } else {
            cal.schedule(now + left, Event::MachineEnd { machine, token: m.token });
        }
    }

    /// Stops the machine's current phase now (a failure or a pause), keeping
    /// the time it has left; returns the time worked in the phase.
    pub(super) fn stop_phase(&mut self, machine: u32, now: f64) -> f64 {
        let m = &mut self.machines[machine as usize];
        let dept = m.dept as usize;
        let done = now - m.run_start;
        m.running = false;
        m.token = m.token.wrapping_add(1); // its end event no longer counts
        if m.in_setup {
            m.setup_left = (m.setup_left - done).max(0.0);
            self.departments[dept].setup_level.add(now, -1.0);
        } else {
            m.work_left = (m.work_left - done).max(0.0);
        }
        if self.plan.breakdowns[dept].as_ref().is_some_and(|b| b.clock == FailureClock::BusyTime) {
            m.to_fail -= done;
        }
        done
    }

    pub(super) fn machine_end(&mut self, machine: u32, token: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = &mut self.machines[machine as usize];
        if m.token != token {
            return; // a failure or a pause interrupted this phase
        }
        m.running = false;
        let dept = m.dept as usize;
        let busy_time =
            self.plan.breakdowns[dept].as_ref().is_some_and(|b| b.clock == FailureClock::BusyTime);
        if m.in_setup {
            if busy_time {
                m.to_fail -= m.setup_left;
            }
            m.in_setup = false;
            m.setup_left = 0.0;
            self.departments[dept].setup_level.add(now, -1.0);
            if self.plan.has_crews {
                self.crew_setup_done(machine, cal);
            }
            self.run_machine(machine, cal);
            return;
        }
        if busy_time {
            m.to_fail -= m.work_left;
        }
        m.work_left = 0.0;
        let lot = m.lot;
        if self.plan.has_crews {
            self.crew_op_done(machine, cal);
        }
        self.end_operation(lot, machine, cal);
    }

    pub(super) fn machine_fail(&mut self, machine: u32, token: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if token != NONE && self.machines[machine as usize].token != token {
            return; // a busy-time failure in a phase since paused
        }
        let m = &mut self.machines[machine as usize];
        let dept = m.dept as usize;
        let b = self.plan.breakdowns[dept].as_ref().expect("only machines with breakdowns fail");
        let processing = m.running;
        if processing {
            let restart = b.interrupted == Interrupted::Restart && !m.in_setup;
            self.stop_phase(machine, now);
            let m = &mut self.machines[machine as usize];
            if restart {
                m.work_left = m.work_total;
            }
        }
        let m = &mut self.machines[machine as usize];
        m.up = false;
        m.to_fail = 0.0;
        let repair = b.repair.sample(&mut m.rng);
        let d = &mut self.departments[dept];
        d.up_level.add(now, -1.0);
        if processing {
            d.busy_level.add(now, -1.0);
        }
        if self.plan.has_crews && self.crew_fail(machine, repair, cal) {
            return; // the repair waits for a technician
        }
        cal.schedule(now + repair, Event::MachineRepaired { machine });
    }

    pub(super) fn machine_repaired(&mut self, machine: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = &mut self.machines[machine as usize];
        let dept = m.dept as usize;
        let b = self.plan.breakdowns[dept].as_ref().expect("tracked machines have breakdowns");
        m.up = true;
        if self.plan.has_crews {
            self.crew_repaired(machine, cal);
        }
        let m = &mut self.machines[machine as usize];
        let t = b.between.sample(&mut m.rng);
        match b.clock {
            FailureClock::ClockTime => cal.schedule(now + t, Event::MachineFail { machine, token: NONE }),
            FailureClock::BusyTime => m.to_fail = t,
        }
        let (lot, blocked) = (m.lot, m.blocked);
        let d = &mut self.departments[dept];
        d.up_level.add(now, 1.0);
        // Off shift, a paused operation waits for the next working window.
        let may_work = d.on_shift || !self.plan.calendars[dept].as_ref().is_some_and(|c| c.pause);
        if lot != NONE {
            if !blocked && may_work {
                d.busy_level.add(now, 1.0);
                if self.plan.has_crews {
                    self.crew_run(machine, cal);
                } else {
                    self.run_machine(machine, cal);
                }
            }
            return;
        }
        if !d.on_shift {
            return;
        }
        if let Some(w) = d.queue.pop() {
            d.queue_level.add(now, -1.0);
            d.busy += 1;
            d.busy_level.add(now, 1.0);
            self.start_on(machine, w, cal);
            if self.plan.staging {
                self.on_inbound_space(dept, cal);
            }
        }
    }

    /// Marks the start of a spell of operating time of a mover whose fleet can fail or charge.
    #[inline]
    pub(super) fn work_start(&mut self, mover: u32, now: f64) {
        let m = &mut self.movers[mover as usize];
        if !m.operating {
            m.operating = true;
            m.mark = now;
        }
    }

    /// A mover has come free (fleets with breakdowns or charging): counts its
    /// operating time and, if a repair or a charge is due, takes it out of
    /// service. Returns whether it went.
    pub(super) fn service_due(&mut self, mover: u32, cal: &mut Calendar<Event>) -> bool {
        let now = cal.now();
        let f = self.movers[mover as usize].fleet as usize;
        let fl = &self.plan.fleets[f];
        let m = &mut self.movers[mover as usize];
        if m.operating {
            let spell = now - m.mark;
            m.operating = false;
            m.worked += spell;
            if fl.breakdowns.as_ref().is_some_and(|b| b.clock == FailureClock::BusyTime) {
                m.to_fail -= spell;
                if m.to_fail <= 0.0 {
                    m.fail_due = true;
                }
            }
        }
        let mut state = super::trace::State::Down;
        let out = if m.fail_due {
            m.fail_due = false;
            let b = fl.breakdowns.as_ref().expect("only fleets with breakdowns fail");
            let repair = b.repair.sample(&mut self.mover_rng[mover as usize]);
            let t = b.between.sample(&mut self.mover_rng[mover as usize]);
            match b.clock {
                // The next failure counts from the end of the repair.
                FailureClock::ClockTime => cal.schedule(now + repair + t, Event::MoverFail { mover }),
                FailureClock::BusyTime => m.to_fail = t,
            }
            repair
        } else if let Some(c) = fl.charging.filter(|c| m.worked >= c.every_s) {
            m.worked = 0.0;
            state = super::trace::State::Charging;
            let w = self.in_window(now, now + c.for_s);
            self.fleets[f].acc.charging_s += w;
            self.by_fleet(f, Act::Charging, now, now + c.for_s);
            c.for_s
        } else {
            return false;
        };
        let w = self.in_window(now, now + out);
        self.fleets[f].acc.down_s += w;
        self.by_fleet(f, Act::Down, now, now + out);
        cal.schedule(now + out, Event::MoverBack { mover });
        if self.trace.is_some() {
            self.trace_mover(mover, now, state);
        }
        true
    }

    /// A mover's failure comes due (clock time): an idle mover goes now, a busy
    /// one when it is next free.
    pub(super) fn mover_fail(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let f = self.movers[mover as usize].fleet as usize;
        self.movers[mover as usize].fail_due = true;
        if let Some(i) = self.fleets[f].idle.iter().position(|&m| m == mover) {
            self.fleets[f].idle.swap_remove(i);
            self.mover_free(mover, cal);
        }
    }

    /// Back from repair or charging.
    pub(super) fn mover_back(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        self.mover_free(mover, cal);
    }
}
