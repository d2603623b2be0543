//! Batch machines: loads waiting by compatibility group, the start rule (`min`, `max_wait`), and a batch's start and end.
//!
//! The rule (docs/scenario-format.md, "Batch machines"): a group is ready
//! when at least `min` of its loads wait, or when its oldest load has waited
//! `max_wait`. A free machine takes the ready group whose oldest load came
//! first, and up to `max` of that group's loads in arrival order. Machines
//! are taken lowest number first. Members of a batch leave the machine
//! together when the batch ends, each on its own branch of the routing.
//!
//! Storage is fixed at the start of a replication: each machine has `max`
//! slots for its members, and each group's queue grows to the largest it
//! has been and then allocates no more.

use std::collections::VecDeque;

use layflow_engine::{stream, Calendar, Stream};
use rand::RngExt;

use super::{Event, PlantModel, NONE};
use crate::plant::Batching;

/// `BATCH, department, machine`: that machine's batch times.
const BATCH: u64 = 8;

/// One batch department's state in a replication.
#[derive(Debug)]
pub(super) struct BatchDept {
    /// Per compatibility group: (load, arrival time), oldest first.
    queues: Vec<VecDeque<(u32, f64)>>,
    /// Per machine: loads in its running batch (0: idle).
    count: Vec<u32>,
    /// `max` slots per machine: the members of its running batch.
    slots: Vec<u32>,
    rng: Vec<Stream>,
    /// Batches started, and loads in them, in the observation window.
    pub(super) batches: u64,
    pub(super) loads: u64,
}

/// Every department's batch state (`None` for a one-lot-at-a-time department).
#[derive(Debug, Default)]
pub(super) struct BatchState {
    pub(super) depts: Vec<Option<BatchDept>>,
}

impl BatchState {
    pub(super) fn new(plan: &super::Plan, seed: u64, replication: u64) -> BatchState {
        if !plan.batched {
            return BatchState::default();
        }
        let depts = plan
            .batch
            .iter()
            .enumerate()
            .map(|(d, b)| {
                b.as_ref().map(|b| {
                    let c = plan.machines[d] as usize;
                    BatchDept {
                        queues: (0..b.groups).map(|_| VecDeque::with_capacity(4 * b.max as usize)).collect(),
                        count: vec![0; c],
                        slots: vec![NONE; c * b.max as usize],
                        rng: (0..c as u64)
                            .map(|k| stream(seed, replication, &[BATCH, d as u64, k]))
                            .collect(),
                        batches: 0,
                        loads: 0,
                    }
                })
            })
            .collect();
        BatchState { depts }
    }
}

/// The group to start now: among groups with a load waiting that are
/// ready, the one whose oldest load came first (ties: the first group).
fn ready_group(q: &[VecDeque<(u32, f64)>], b: &Batching, now: f64) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (g, queue) in q.iter().enumerate() {
        let Some(&(_, since)) = queue.front() else { continue };
        let ready = queue.len() >= b.min as usize || b.max_wait_s.is_some_and(|w| now >= since + w);
        if ready && best.is_none_or(|(_, s)| since < s) {
            best = Some((g, since));
        }
    }
    best.map(|(g, _)| g)
}

impl PlantModel<'_> {
    /// Load `id` joins batch department `dept`'s queue of its group; a batch starts if the rule allows.
    pub(super) fn batch_arrive(&mut self, id: u32, dept: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        let b = plan.batch[dept].as_ref().expect("a batch department");
        let g = b.group_of[self.lots[id as usize].product as usize] as usize;
        let st = self.batches.depts[dept].as_mut().expect("a batch department");
        let q = &mut st.queues[g];
        q.push_back((id, now));
        if q.len() == 1 {
            if let Some(w) = b.max_wait_s {
                // The group's oldest load: it is ready at the latest then.
                cal.schedule(now + w, Event::BatchDue { dept: dept as u32 });
            }
        }
        self.departments[dept].queue_level.add(now, 1.0);
        self.batch_try_start(dept, cal);
    }

    /// Start batches on free machines of `dept` while a group is ready. A
    /// `BatchDue` event only calls this: one that finds its load already
    /// gone starts nothing the rule would not have started anyway.
    pub(super) fn batch_try_start(&mut self, dept: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        let b = plan.batch[dept].as_ref().expect("a batch department");
        let k = b.max as usize;
        loop {
            let st = self.batches.depts[dept].as_mut().expect("a batch department");
            let Some(m) = st.count.iter().position(|&n| n == 0) else { return };
            let Some(g) = ready_group(&st.queues, b, now) else { return };
            let q = &mut st.queues[g];
            let n = q.len().min(k);
            for (slot, (id, _)) in st.slots[m * k..m * k + n].iter_mut().zip(q.drain(..n)) {
                *slot = id;
            }
            st.count[m] = n as u32;
            if let (Some(w), Some(&(_, since))) = (b.max_wait_s, q.front()) {
                // The group's new oldest load; if it is due already, the loop or the next free machine takes it.
                if since + w > now {
                    cal.schedule(since + w, Event::BatchDue { dept: dept as u32 });
                }
            }
            let t = b.time.sample(&mut st.rng[m]) + b.per_load_s * (n - 1) as f64;
            if now >= self.window.0 {
                st.batches += 1;
                st.loads += n as u64;
            }
            let d = &mut self.departments[dept];
            d.queue_level.add(now, -(n as f64));
            d.busy += 1;
            d.busy_level.add(now, 1.0);
            cal.schedule(now + t, Event::BatchEnd { dept: dept as u32, machine: m as u32 });
            if self.trace.is_some() {
                self.trace_batch_lane(dept, m, now, true);
                for i in 0..n {
                    let id = self.batches.depts[dept].as_ref().expect("a batch department").slots[m * k + i];
                    self.trace_batch_member(id, now, now + t);
                }
            }
        }
    }

    /// The batch on `machine` of `dept` ends: each member goes on by its
    /// own branch, then the machine is free for the next batch. The machine
    /// stays taken while its members leave, so a member whose next step is
    /// back here (rework) joins the queue and cannot overwrite the slots.
    pub(super) fn batch_end(&mut self, dept: usize, machine: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        let k = plan.batch[dept].as_ref().expect("a batch department").max as usize;
        let m = machine as usize;
        let n = self.batches.depts[dept].as_ref().expect("a batch department").count[m] as usize;
        for i in 0..n {
            let id = self.batches.depts[dept].as_ref().expect("a batch department").slots[m * k + i];
            let lot = &mut self.lots[id as usize];
            let op = &plan.products[lot.product as usize].ops[lot.op as usize];
            let branch = if op.next.len() == 1 {
                0
            } else {
                let u: f64 = lot.rng.random();
                op.next.iter().position(|&(_, cum, _)| u < cum).unwrap_or(op.next.len() - 1)
            };
            let (next, _, fleets) = op.next[branch];
            if plan.alternatives {
                // The next step may be a choice among departments: the group's rule picks
                // (or, under first-free, the load waits in the group's shared queue).
                let from = lot.op;
                if let Some((op, set)) = self.choose(id, from, branch) {
                    self.route(id, op, set, cal);
                }
                continue;
            }
            self.route(id, next as u32, fleets, cal);
        }
        self.batches.depts[dept].as_mut().expect("a batch department").count[m] = 0;
        let d = &mut self.departments[dept];
        d.busy -= 1;
        d.busy_level.add(now, -1.0);
        if self.trace.is_some() {
            self.trace_batch_lane(dept, m, now, false);
        }
        self.batch_try_start(dept, cal);
    }
}
