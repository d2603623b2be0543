//! Crews in the run: people handed to machines' operations and repairs first come, first served across departments, their shifts, and what they measure.
//!
//! Only plants with crews come here (`Plan::crews` non-empty); the handlers
//! call in through one-line hooks, so a plant without crews takes exactly its
//! old paths. A person is held only while working (loading, setting up,
//! processing, walking to and from a repair, repairing), never while waiting
//! for anything else, so people alone cannot hold each other up in a cycle.
//!
//! Each crew serves one queue of requests in the order they were made,
//! whichever department made them. A department's machine claims its lot
//! first and then asks for a person; while it waits it is not busy.

use std::collections::VecDeque;

use layflow_engine::{stream, Calendar, Stream, Tally, TimeWeighted};

use super::{Event, PlantModel, NONE};
use crate::plant::PersonFor;
use crate::sim::stats::CrewRep;
use crate::sim::DutyCursor;

/// `CREW, department, machine`: that machine's loading times.
const CREW: u64 = 7;

/// One request for a person, waiting in its crew's queue.
#[derive(Debug, Clone, Copy)]
struct Ask {
    machine: u32,
    /// A repair (a technician), else a machine's operation.
    repair: bool,
    /// The machine's `ask` count when it asked: a request withdrawn since no longer matches.
    ask: u32,
    since: f64,
}

/// One crew's state in a replication.
pub(super) struct CrewState {
    free: u32,
    on_duty: bool,
    duty: DutyCursor,
    waiting: VecDeque<Ask>,
    /// People busy (working, walking to or from a repair).
    busy: TimeWeighted,
    /// Every request's wait for a person, granted in the window.
    wait: Tally,
    /// Person-seconds off duty in the window.
    off_s: f64,
}

/// Per machine of a tracked department, its dealings with crews.
#[derive(Debug, Clone, Copy, Default)]
struct MachineCrew {
    /// Holds a person for its operation (loading, setup or processing).
    holds: bool,
    /// Has a live request for a person in its crew's queue.
    asking: bool,
    /// Bumped whenever a request is withdrawn.
    ask: u32,
    /// The current lot has been loaded (`for: loading`).
    loaded: bool,
    /// Loading under way (its end event carries `token`).
    loading: bool,
    token: u32,
    /// The repair time drawn at the failure, for when a technician comes.
    repair_s: f64,
}

/// Everything crews keep during a replication (empty without crews).
pub(super) struct CrewModel {
    crews: Vec<CrewState>,
    machine: Vec<MachineCrew>,
    /// Per department, the waits of its operations for a person.
    dept_wait: Vec<Tally>,
    /// Per machine, its loading-time stream (empty unless some department loads).
    rng: Vec<Stream>,
}

impl CrewModel {
    /// The crews' state at time 0, for the machines `machines` lists by department.
    pub(super) fn new(
        plan: &crate::sim::Plan,
        machine_dept: &[u32],
        seed: u64,
        replication: u64,
    ) -> CrewModel {
        if plan.crews.is_empty() {
            return CrewModel {
                crews: Vec::new(),
                machine: Vec::new(),
                dept_wait: Vec::new(),
                rng: Vec::new(),
            };
        }
        let loads = plan.people.iter().any(|p| p.as_ref().is_some_and(|p| p.task == PersonFor::Loading));
        let mut first = vec![NONE; plan.n_departments];
        let rng = if loads {
            machine_dept
                .iter()
                .enumerate()
                .map(|(k, &d)| {
                    if first[d as usize] == NONE {
                        first[d as usize] = k as u32;
                    }
                    let i = k as u32 - first[d as usize];
                    stream(seed, replication, &[CREW, u64::from(d), u64::from(i)])
                })
                .collect()
        } else {
            Vec::new()
        };
        CrewModel {
            crews: plan
                .crews
                .iter()
                .map(|c| CrewState {
                    free: c.size,
                    on_duty: true,
                    duty: DutyCursor::default(),
                    waiting: VecDeque::with_capacity(machine_dept.len() + 1),
                    busy: TimeWeighted::new(0.0),
                    wait: Tally::new(),
                    off_s: 0.0,
                })
                .collect(),
            machine: vec![MachineCrew::default(); machine_dept.len()],
            dept_wait: vec![Tally::new(); plan.n_departments],
            rng,
        }
    }

    /// Statistics restart at the end of the warm-up.
    pub(super) fn reset(&mut self, t: f64) {
        for c in &mut self.crews {
            c.busy.reset(t);
            c.wait.reset();
        }
        self.dept_wait.iter_mut().for_each(Tally::reset);
    }

    /// Per crew, what it measured; and per department, its operations' waits.
    pub(super) fn finish(&self, t: f64) -> (Vec<CrewRep>, Vec<Tally>) {
        let crews = self
            .crews
            .iter()
            .map(|c| CrewRep { busy_mean: c.busy.mean(t), off_s: c.off_s, wait: c.wait })
            .collect();
        (crews, self.dept_wait.clone())
    }
}

impl PlantModel<'_> {
    /// Puts every crew with shifts in its state at time 0 and schedules its first change.
    pub(super) fn start_crews(&mut self, cal: &mut Calendar<Event>) {
        for c in 0..self.plan.crews.len() {
            let Some(duty) = self.plan.crews[c].duty.as_ref() else {
                continue;
            };
            let mut cursor = DutyCursor::start(duty);
            let first = cursor.advance(duty);
            let off = f64::from(self.plan.crews[c].size) * self.in_window(0.0, first);
            let state = &mut self.crew.crews[c];
            state.duty = cursor;
            if !duty.on_at_start {
                state.on_duty = false;
                state.off_s += off;
            }
            if first <= self.window.1 {
                cal.schedule(first, Event::CrewDuty { crew: c as u32 });
            }
        }
    }

    /// Crew `c` goes off duty now or comes back: off, nobody starts a new
    /// task (those under way are finished, as a fleet's operators finish
    /// their delivery); back, the free people take the oldest requests.
    pub(super) fn crew_duty(&mut self, c: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let duty = self.plan.crews[c].duty.as_ref().expect("only crews with shifts change duty");
        let next = self.crew.crews[c].duty.advance(duty);
        if next <= self.window.1 {
            cal.schedule(next, Event::CrewDuty { crew: c as u32 });
        }
        if self.crew.crews[c].on_duty {
            let off = f64::from(self.plan.crews[c].size) * self.in_window(now, next);
            let s = &mut self.crew.crews[c];
            s.on_duty = false;
            s.off_s += off;
            return;
        }
        self.crew.crews[c].on_duty = true;
        while self.crew.crews[c].free > 0 {
            let Some(ask) = self.next_ask(c) else {
                break;
            };
            self.crew.crews[c].free -= 1;
            self.crew.crews[c].busy.add(now, 1.0);
            self.grant(c, ask, cal);
        }
    }

    /// The oldest live request of crew `c`, taken off its queue.
    fn next_ask(&mut self, c: usize) -> Option<Ask> {
        while let Some(a) = self.crew.crews[c].waiting.pop_front() {
            let m = &self.crew.machine[a.machine as usize];
            if a.ask == m.ask && (a.repair || m.asking) {
                return Some(a);
            }
        }
        None
    }

    /// Asks crew `c` for a person; returns whether one was free (then taken now).
    fn ask(&mut self, c: usize, machine: u32, repair: bool, now: f64) -> bool {
        let s = &mut self.crew.crews[c];
        if s.on_duty && s.free > 0 {
            s.free -= 1;
            s.busy.add(now, 1.0);
            s.wait.add(0.0);
            if !repair {
                let d = self.machines[machine as usize].dept as usize;
                self.crew.dept_wait[d].add(0.0);
            }
            return true;
        }
        let ask = self.crew.machine[machine as usize].ask;
        s.waiting.push_back(Ask { machine, repair, ask, since: now });
        if !repair {
            self.crew.machine[machine as usize].asking = true;
        }
        false
    }

    /// A person of crew `c` is done: they take the oldest waiting request, or go free.
    fn release(&mut self, c: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.crew.crews[c].on_duty {
            if let Some(ask) = self.next_ask(c) {
                self.grant(c, ask, cal);
                return;
            }
        }
        let s = &mut self.crew.crews[c];
        s.free += 1;
        s.busy.add(now, -1.0);
    }

    /// Request `ask` gets its person now (already counted busy).
    fn grant(&mut self, c: usize, ask: Ask, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let w = now - ask.since;
        self.crew.crews[c].wait.add(w);
        let k = ask.machine;
        if ask.repair {
            self.start_repair(c, k, cal);
            return;
        }
        let d = self.machines[k as usize].dept as usize;
        self.crew.dept_wait[d].add(w);
        self.crew.machine[k as usize].asking = false;
        self.departments[d].busy_level.add(now, 1.0);
        self.crew.machine[k as usize].holds = true;
        self.person_phase(k, cal);
    }

    /// Whether machine `k`'s current phase needs a person it does not hold.
    fn needs_person(&self, k: u32) -> Option<usize> {
        let m = &self.machines[k as usize];
        let p = self.plan.people[m.dept as usize].as_ref()?;
        let mc = &self.crew.machine[k as usize];
        if mc.holds {
            return None;
        }
        let need = match p.task {
            PersonFor::Operation => true,
            PersonFor::Setup => m.in_setup,
            PersonFor::Loading => !mc.loaded,
        };
        need.then_some(p.crew)
    }

    /// Machine `k` is ready to work on its lot (counted busy by the caller):
    /// it works now, or first waits for a person (and is not busy meanwhile).
    pub(super) fn crew_run(&mut self, k: u32, cal: &mut Calendar<Event>) {
        let mc = &self.crew.machine[k as usize];
        if mc.asking || mc.loading {
            // A paused machine's window opens while it still waits for its
            // person (not busy) or is being loaded (busy all along).
            let d = self.machines[k as usize].dept as usize;
            self.departments[d].busy_level.add(cal.now(), -1.0);
            return;
        }
        let Some(c) = self.needs_person(k) else {
            self.person_phase(k, cal);
            return;
        };
        let now = cal.now();
        if self.ask(c, k, false, now) {
            self.crew.machine[k as usize].holds = true;
            self.person_phase(k, cal);
        } else {
            let d = self.machines[k as usize].dept as usize;
            self.departments[d].busy_level.add(now, -1.0);
        }
    }

    /// Machine `k` works: loading first when it is due, else its setup or processing.
    fn person_phase(&mut self, k: u32, cal: &mut Calendar<Event>) {
        let d = self.machines[k as usize].dept as usize;
        if let Some(p) = self.plan.people[d].as_ref() {
            if p.task == PersonFor::Loading && !self.crew.machine[k as usize].loaded {
                let t = p
                    .loading
                    .as_ref()
                    .expect("for: loading has a loading time")
                    .sample(&mut self.crew.rng[k as usize]);
                let mc = &mut self.crew.machine[k as usize];
                mc.loading = true;
                mc.token = mc.token.wrapping_add(1);
                cal.schedule(cal.now() + t, Event::CrewDone { machine: k, token: mc.token });
                return;
            }
        }
        self.run_machine(k, cal);
    }

    /// Machine `k`'s loading ends: its person goes, and the machine sets up or processes.
    pub(super) fn loading_done(&mut self, k: u32, token: u32, cal: &mut Calendar<Event>) {
        let mc = &mut self.crew.machine[k as usize];
        if !mc.loading || mc.token != token {
            return; // a failure interrupted the loading
        }
        mc.loading = false;
        mc.loaded = true;
        self.drop_person(k, cal);
        self.run_machine(k, cal);
    }

    /// Machine `k` lets its person go, if it holds one.
    fn drop_person(&mut self, k: u32, cal: &mut Calendar<Event>) {
        if !self.crew.machine[k as usize].holds {
            return;
        }
        self.crew.machine[k as usize].holds = false;
        let d = self.machines[k as usize].dept as usize;
        let c = self.plan.people[d].as_ref().expect("a machine holding a person has people").crew;
        self.release(c, cal);
    }

    /// Machine `k`'s setup has ended: a person held for the setup alone goes.
    pub(super) fn crew_setup_done(&mut self, k: u32, cal: &mut Calendar<Event>) {
        let d = self.machines[k as usize].dept as usize;
        if self.plan.people[d].as_ref().is_some_and(|p| p.task == PersonFor::Setup) {
            self.drop_person(k, cal);
        }
    }

    /// Machine `k` has finished processing its lot: its person goes, and the next lot starts afresh.
    pub(super) fn crew_op_done(&mut self, k: u32, cal: &mut Calendar<Event>) {
        self.crew.machine[k as usize].loaded = false;
        self.drop_person(k, cal);
    }

    /// Machine `k` has failed (its phase already stopped; `repair` drawn):
    /// its person goes (to come back after the repair), a loading under way
    /// starts again after it, and the repair waits for a technician when the
    /// department names a crew for repairs. Returns whether the repair waits
    /// on a crew (else the caller schedules it).
    pub(super) fn crew_fail(&mut self, k: u32, repair: f64, cal: &mut Calendar<Event>) -> bool {
        let now = cal.now();
        let d = self.machines[k as usize].dept as usize;
        let mc = &mut self.crew.machine[k as usize];
        if mc.loading {
            mc.loading = false;
            mc.token = mc.token.wrapping_add(1);
            self.departments[d].busy_level.add(now, -1.0);
        }
        let mc = &mut self.crew.machine[k as usize];
        if mc.asking {
            mc.asking = false;
            mc.ask = mc.ask.wrapping_add(1); // its request is void; it asks again after the repair
        }
        self.drop_person(k, cal);
        let Some(c) = self.plan.technicians[d] else {
            return false;
        };
        self.crew.machine[k as usize].repair_s = repair;
        if self.ask(c, k, true, now) {
            self.start_repair(c, k, cal);
        }
        true
    }

    /// A technician of crew `c` sets off for machine `k`: walking there (when
    /// the crew walks), repairing, and walking back before taking another task.
    fn start_repair(&mut self, c: usize, k: u32, cal: &mut Calendar<Event>) {
        let walk = self.walk_s(c, self.machines[k as usize].dept as usize);
        let repair = self.crew.machine[k as usize].repair_s;
        cal.schedule(cal.now() + walk + repair, Event::MachineRepaired { machine: k });
    }

    /// Seconds for a person of crew `c` to walk from its home to department `d` (0 without walking).
    fn walk_s(&self, c: usize, d: usize) -> f64 {
        let crew = &self.plan.crews[c];
        match (crew.home, crew.walk_speed) {
            (Some(h), Some(v)) => {
                let (a, b) = (self.plan.dept_location[h], self.plan.dept_location[d]);
                self.plan.distance[a * self.plan.n_locations + b] / v
            }
            _ => 0.0,
        }
    }

    /// Machine `k` is repaired: its technician walks back home (if the crew walks) or takes the next task.
    pub(super) fn crew_repaired(&mut self, k: u32, cal: &mut Calendar<Event>) {
        let d = self.machines[k as usize].dept as usize;
        let Some(c) = self.plan.technicians[d] else {
            return;
        };
        let walk = self.walk_s(c, d);
        if walk > 0.0 {
            cal.schedule(cal.now() + walk, Event::CrewBack { crew: c as u32 });
        } else {
            self.release(c, cal);
        }
    }

    /// A technician is back home from a repair.
    pub(super) fn crew_back(&mut self, c: usize, cal: &mut Calendar<Event>) {
        self.release(c, cal);
    }
}
