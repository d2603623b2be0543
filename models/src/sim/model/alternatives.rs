//! Where a lot goes next when the routing leaves a choice: a random first operation, and alternative departments picked by first-free, shortest-queue or least-work (with first-free's shared queues).
//!
//! The choice is made when the lot is ready to move: at the end of its
//! previous operation, or at its release at the receiving dock. The branch
//! is drawn first, from the lot's own stream, as for any branch; when it
//! lands on a group of alternatives chosen by the plant's state, the rule
//! then picks among the group's operations, which sit side by side in the
//! branch list (so each comes with its own fleets).
//!
//! First-free: a lot that finds no machine free in its group waits in the
//! group's shared queue, in the outbound area of the department it is
//! leaving (its WIP counts there). When a machine of the group frees with
//! nothing in its own queue, it takes the oldest lot of the shared queue.
//! With movers the machine is held for the lot from the moment it is
//! chosen until it arrives (held machines count in `busy`, not in the
//! busy level that utilisation reads). With instant moves this is exactly
//! one queue in front of the pooled machines.

use std::collections::VecDeque;

use layflow_engine::Calendar;
use rand::RngExt;

use super::{Event, PlantModel, NONE};
use crate::plant::AltRule;

/// The source of a pooled lot's branch list: the product's first operations.
const ENTRY: u32 = u32::MAX;

/// The state first-free and shortest-queue keep between events.
#[derive(Debug, Default)]
pub(super) struct AltState {
    /// Per first-free shared queue: (lot, its branch list's operation or
    /// `ENTRY`, group), oldest first.
    pools: Vec<VecDeque<(u32, u32, u32)>>,
    /// Per department: lots on their way there, chosen by shortest-queue or
    /// least-work (movers only; instant moves arrive at once).
    incoming: Vec<u32>,
}

impl AltState {
    pub(super) fn new(plan: &super::Plan) -> AltState {
        if !plan.alternatives {
            return AltState::default();
        }
        AltState {
            pools: (0..plan.n_pools).map(|_| VecDeque::with_capacity(16)).collect(),
            incoming: vec![0; plan.n_departments],
        }
    }
}

/// The branch a uniform `u` picks from a list of cumulative probabilities.
#[inline]
fn pick(list: &[(usize, f64, super::FleetSet)], u: f64) -> usize {
    list.iter().position(|&(_, cum, _)| u < cum).unwrap_or(list.len() - 1)
}

impl PlantModel<'_> {
    /// A lot just released at its dock goes to its first operation.
    pub(super) fn enter_with_choice(&mut self, id: u32, p: usize, cal: &mut Calendar<Event>) {
        let prod = &self.plan.products[p];
        if prod.first.is_empty() {
            self.route(id, 0, prod.entry, cal);
            return;
        }
        let b = if prod.first.len() == 1 {
            0
        } else {
            let u: f64 = self.lots[id as usize].rng.random();
            pick(&prod.first, u)
        };
        if let Some((op, set)) = self.choose(id, ENTRY, b) {
            self.route(id, op, set, cal);
        }
    }

    /// `end_operation` when some choice may be dynamic: lot `id` has
    /// finished at `dept` (on `machine`, or NONE) and drawn branch `b`.
    pub(super) fn end_with_choice(
        &mut self,
        id: u32,
        dept: usize,
        machine: u32,
        b: usize,
        cal: &mut Calendar<Event>,
    ) {
        let from = self.lots[id as usize].op;
        let chosen = self.choose(id, from, b);
        if self.plan.staging || machine != NONE {
            match chosen {
                Some((op, set)) => self.leave_machine(id, dept, machine, op, set, cal),
                // The loader allows first-free only without finite staging,
                // so the machine can always let go of the lot.
                None => self.release_machine(dept, machine, false, cal),
            }
            return;
        }
        self.free_plain_machine(dept, cal);
        if let Some((op, set)) = chosen {
            self.route(id, op, set, cal);
        }
    }

    /// A machine of a department without breakdowns lets go of its lot:
    /// it takes the next of its own queue, else the oldest lot of its
    /// first-free group's shared queue, else it goes idle.
    fn free_plain_machine(&mut self, dept: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let d = &mut self.departments[dept];
        if let Some(waiting) = d.queue.pop() {
            d.queue_level.add(now, -1.0);
            self.start(waiting, cal);
            return;
        }
        d.busy -= 1;
        d.busy_level.add(now, -1.0);
        let pool = self.plan.pool_of[dept];
        if pool == NONE {
            return;
        }
        let Some((lot, from, group)) = self.alt.pools[pool as usize].pop_front() else {
            return;
        };
        let prod = &self.plan.products[self.lots[lot as usize].product as usize];
        let list = if from == ENTRY { &prod.first } else { &prod.ops[from as usize].next };
        let &(op, _, set) = list
            .iter()
            .find(|&&(t, _, _)| prod.ops[t].group == group && prod.ops[t].department == dept)
            .unwrap_or(&list[0]);
        self.hold(lot, dept);
        self.route(lot, op as u32, set, cal);
    }

    /// With movers, a first-free lot keeps the machine it was given until it
    /// arrives; a lot already at the department needs no hold.
    #[inline]
    fn hold(&mut self, lot: u32, dept: usize) {
        if !self.plan.instant && self.lots[lot as usize].department as usize != dept {
            self.departments[dept].busy += 1;
        }
    }

    /// The operation and fleets of branch `b` of the list of operation
    /// `from` (or `ENTRY`), with the group's rule applied; `None` when a
    /// first-free lot found no machine free and joined the shared queue.
    pub(super) fn choose(&mut self, id: u32, from: u32, b: usize) -> Option<(u32, super::FleetSet)> {
        let plan = self.plan;
        let lot = &self.lots[id as usize];
        let prod = &plan.products[lot.product as usize];
        let here = lot.department as usize;
        let list = if from == ENTRY { &prod.first } else { &prod.ops[from as usize].next };
        let (t, _, set) = list[b];
        let group = prod.ops[t].group;
        if group == NONE {
            return Some((t as u32, set));
        }
        let rule = plan.groups[group as usize];
        let mut best: Option<(usize, f64)> = None;
        for (k, &(o, _, _)) in list.iter().enumerate() {
            let op = &prod.ops[o];
            if op.group != group {
                continue;
            }
            let d = op.department;
            let dep = &self.departments[d];
            let machines = plan.machines[d];
            let score = match rule {
                AltRule::FirstFree => {
                    if dep.busy < machines && dep.queue.is_empty() {
                        best = Some((k, 0.0));
                        break;
                    }
                    continue;
                }
                _ => {
                    let ahead = dep.queue.len() as f64
                        + f64::from(dep.busy)
                        + f64::from(self.alt.incoming.get(d).copied().unwrap_or(0));
                    if rule == AltRule::LeastWork {
                        ahead * op.time.as_ref().map_or(0.0, |t| t.mean()) / f64::from(machines)
                    } else {
                        ahead
                    }
                }
            };
            // Ties go to the first listed.
            if best.is_none_or(|(_, s)| score < s) {
                best = Some((k, score));
            }
        }
        let Some((k, _)) = best else {
            // First-free with every machine of the group taken.
            let pool = plan.pool_of[prod.ops[t].department];
            self.alt.pools[pool as usize].push_back((id, from, group));
            return None;
        };
        let (o, _, set) = list[k];
        let d = prod.ops[o].department;
        if rule == AltRule::FirstFree {
            self.hold(id, d);
        } else if !plan.instant && d != here {
            self.alt.incoming[d] += 1;
        }
        Some((o as u32, set))
    }

    /// A lot reaches the department of a dynamically chosen operation.
    /// Returns true when it has been started on the machine held for it.
    pub(super) fn arrive_chosen(&mut self, id: u32, dept: usize, cal: &mut Calendar<Event>) -> bool {
        let plan = self.plan;
        let lot = &self.lots[id as usize];
        let group = plan.products[lot.product as usize].ops[lot.op as usize].group;
        if group == NONE || plan.instant {
            return false;
        }
        if plan.groups[group as usize] != AltRule::FirstFree {
            self.alt.incoming[dept] -= 1;
            return false;
        }
        self.departments[dept].busy_level.add(cal.now(), 1.0);
        self.start(id, cal);
        true
    }
}
