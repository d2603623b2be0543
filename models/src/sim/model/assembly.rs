//! Assembly in the run: lots that wait at an assembly step for their kit, component lots that wait to be consumed, and the first-come-first-served match between them.
//!
//! The rule (docs/scenario-format.md, "Assembly"): at each assembly step the
//! waiting lots of the assembling product form one line in arrival order, and
//! each component's lots one stock in arrival order. As soon as the oldest
//! waiting lot's kit is complete (every component at its quantity), the
//! oldest lots of each component are consumed and that lot goes on to its
//! operation (a free machine, or the department's queue). Every lot at one
//! step needs the same kit, so no younger lot can ever be served before an
//! older one: strict first come, first served.
//!
//! A consumed component lot leaves the plant there: the plant's and the
//! department's WIP drop by one, and its product's throughput and flow time
//! count it (docs/metrics.md, "Assembly"), which keeps Little's law whole.

use std::collections::VecDeque;

use layflow_engine::{Calendar, Tally};

use super::{Event, PlantModel, NONE};
use crate::plant::Plant;
use crate::sim::KitStats;

/// The plant's kits as the handlers read them, built once per plan.
#[derive(Debug, Clone, Default)]
pub(crate) struct KitPlan {
    /// Per kit: the assembling product and its (component, lots per kit).
    kits: Vec<(u32, Vec<(u32, u32)>)>,
    /// `op_kit[product][op]`: the kit that operation waits for, or NONE
    /// (empty for a product without assembly steps).
    op_kit: Vec<Vec<u32>>,
    /// Per product: the kit it is a component of, or NONE.
    feeds: Vec<u32>,
}

impl KitPlan {
    /// The kits of `plant` (nothing for a plant that assembles nothing).
    pub(crate) fn new(plant: &Plant) -> KitPlan {
        if !plant.assembles() {
            return KitPlan::default();
        }
        let mut plan = KitPlan {
            kits: Vec::new(),
            op_kit: plant.products.iter().map(|_| Vec::new()).collect(),
            feeds: vec![NONE; plant.products.len()],
        };
        for (p, prod) in plant.products.iter().enumerate() {
            for kit in &prod.kits {
                let k = plan.kits.len() as u32;
                if plan.op_kit[p].is_empty() {
                    plan.op_kit[p] = vec![NONE; prod.routing.len()];
                }
                plan.op_kit[p][kit.op] = k;
                for &(c, _) in &kit.parts {
                    plan.feeds[c] = k;
                }
                plan.kits.push((p as u32, kit.parts.iter().map(|&(c, q)| (c as u32, q)).collect()));
            }
        }
        plan
    }
}

/// One replication's kitting area: lots waiting for kits, component stocks, and what was counted.
pub(super) struct KitState {
    /// Per kit: lots of the assembling product waiting, oldest first, with their arrival time.
    waiting: Vec<VecDeque<(u32, f64)>>,
    /// Per product: its component lots at the assembly department, oldest first, with their arrival time.
    stock: Vec<VecDeque<(u32, f64)>>,
    /// Counted in the observation window; `None` unless the plant assembles.
    pub(super) stats: Option<Box<KitStats>>,
}

impl KitState {
    /// An empty kitting area for `plan`. The lines grow to their working
    /// size and are kept, so after that no event allocates.
    pub(super) fn new(plan: &crate::sim::Plan) -> KitState {
        if !plan.assembly {
            return KitState { waiting: Vec::new(), stock: Vec::new(), stats: None };
        }
        let n = plan.products.len();
        KitState {
            waiting: (0..plan.kits.kits.len()).map(|_| VecDeque::with_capacity(16)).collect(),
            stock: (0..n)
                .map(
                    |p| {
                        if plan.kits.feeds[p] == NONE {
                            VecDeque::new()
                        } else {
                            VecDeque::with_capacity(16)
                        }
                    },
                )
                .collect(),
            stats: Some(Box::new(KitStats::new(n))),
        }
    }

    /// Record who is still in the kitting area as the run ends (read by the
    /// stop messages of `study/deadlock.rs`), and hand the statistics over.
    pub(super) fn close(&mut self, plan: &crate::sim::Plan) -> Option<Box<KitStats>> {
        let mut stats = self.stats.take()?;
        for (k, line) in self.waiting.iter().enumerate() {
            stats.held[plan.kits.kits[k].0 as usize] += line.len() as u64;
        }
        for (p, stock) in self.stock.iter().enumerate() {
            stats.held[p] += stock.len() as u64;
        }
        Some(stats)
    }

    /// Clear what was counted at the end of the warm-up (lots keep waiting).
    pub(super) fn reset(&mut self) {
        if let Some(s) = self.stats.as_deref_mut() {
            s.kits.iter_mut().for_each(|k| *k = 0);
            s.kit_wait.iter_mut().for_each(Tally::reset);
            s.part_wait.iter_mut().for_each(Tally::reset);
        }
    }
}

impl PlantModel<'_> {
    /// Lot `id` has reached its department (its WIP counted there). If it
    /// is a component at its last step, or a lot at an assembly step, it
    /// joins the kitting area and a kit is made if one is complete; returns
    /// whether the lot was taken (else it goes to its operation as usual).
    pub(super) fn kit_arrive(&mut self, id: u32, cal: &mut Calendar<Event>) -> bool {
        let now = cal.now();
        let lot = &self.lots[id as usize];
        let (p, op) = (lot.product as usize, lot.op as usize);
        let kits = &self.plan.kits;
        let k = if kits.feeds[p] != NONE && self.plan.products[p].ops[op].next.is_empty() {
            self.kit.stock[p].push_back((id, now));
            kits.feeds[p]
        } else {
            match kits.op_kit[p].get(op) {
                Some(&k) if k != NONE => {
                    self.kit.waiting[k as usize].push_back((id, now));
                    k
                }
                _ => return false,
            }
        };
        self.try_kit(k as usize, cal);
        true
    }

    /// Make kit `k` for its oldest waiting lot while every part is there.
    fn try_kit(&mut self, k: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let plan = self.plan;
        let (parent_product, parts) = (&plan.kits.kits[k].0, &plan.kits.kits[k].1);
        while !self.kit.waiting[k].is_empty()
            && parts.iter().all(|&(c, q)| self.kit.stock[c as usize].len() >= q as usize)
        {
            let (parent, since) = self.kit.waiting[k].pop_front().expect("a lot is waiting");
            let in_window = now >= self.window.0;
            for &(c, q) in parts {
                let c = c as usize;
                for _ in 0..q {
                    let (part, arrived) = self.kit.stock[c].pop_front().expect("the part is in stock");
                    if in_window {
                        if let Some(s) = self.kit.stats.as_deref_mut() {
                            s.part_wait[c].add(now - arrived);
                        }
                    }
                    self.consume(part, now);
                }
            }
            if in_window {
                if let Some(s) = self.kit.stats.as_deref_mut() {
                    s.kits[*parent_product as usize] += 1;
                    s.kit_wait[*parent_product as usize].add(now - since);
                }
            }
            self.start_or_queue(parent, cal);
        }
    }

    /// Component lot `id` is consumed into a kit now: it leaves its
    /// department and the plant, counted as its product's lot out.
    fn consume(&mut self, id: u32, now: f64) {
        let lot = &self.lots[id as usize];
        let (p, dept, born) = (lot.product as usize, lot.department as usize, lot.born);
        self.departments[dept].wip.add(now, -1.0);
        if self.trace.is_some() {
            self.trace_ship(id, now);
        }
        self.ship(p, born, self.due_of(id), now);
        self.free_lots.push(id);
    }
}
