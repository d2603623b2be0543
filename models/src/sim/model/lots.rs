//! Lots that move in several unit loads: releasing a lot as its loads, gathering them for a last-load start, and shipping the lot with its last load.
//!
//! A split lot is a record in the lot slab (it holds the lot's own stream,
//! its birth and, for a last-load start, its place in queues and on
//! machines) and one slab entry per load, which is what movers carry. With
//! `starts_on: first-load` every load is worked on its own as soon as it
//! arrives and a machine is free, for its share of a processing time drawn
//! from the load's own stream (`LOAD, product, lot, load`), and draws its
//! own branches. With `last-load` the record is queued and worked once all
//! loads are there, drawing from the lot's stream exactly as an unsplit lot
//! would, and routing the record sends every load on to the same next step.

use layflow_engine::{stream, Calendar};

use super::{Event, Lot, PlantModel, NONE};
use crate::sim::FleetSet;

/// `LOAD, product, lot number, load`: a first-load-start load's own times and branches.
const LOAD: u64 = 6;

/// How a slab entry is split into loads.
#[derive(Debug, Clone, Copy)]
pub(super) struct LotAux {
    /// For a load, its lot's record; NONE for a whole lot or a record.
    pub(super) parent: u32,
    /// Share of its lot: units ÷ quantity (1 for whole lots and records).
    pub(super) weight: f64,
    /// A record: loads per lot (1 for a whole lot or a load).
    pub(super) loads: u32,
    /// A record: its first load; a load: the next load of its lot.
    pub(super) next: u32,
    /// A record: loads arrived at its current step (last-load start), or shipped.
    pub(super) arrived: u32,
    /// A load of a lot whose next step starts on the last load: it waits to be gathered.
    pub(super) gathers: bool,
}

impl LotAux {
    /// An entry that is a whole lot.
    pub(super) const WHOLE: LotAux =
        LotAux { parent: NONE, weight: 1.0, loads: 1, next: NONE, arrived: 0, gathers: false };
}

impl PlantModel<'_> {
    /// Releases a lot of product `p` as its unit loads at the receiving dock.
    /// The lot number is taken here, as for a whole lot, and keys its stream.
    pub(super) fn release_split(&mut self, p: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let prod = &self.plan.products[p];
        let (quantity, batch, first_load) = prod.split.expect("a split product");
        let (dock, entry) = (prod.enters_at, prod.entry);
        let n = self.lots_made[p];
        self.lots_made[p] += 1;
        let lot = |rng| Lot {
            product: p as u32,
            op: 0,
            department: dock as u32,
            born: now,
            requested: now,
            ticket: 0,
            rng,
        };
        let rec = self.alloc_lot(lot(stream(self.seed, self.replication, &[super::LOT, p as u64, n])));
        let loads = quantity.div_ceil(batch);
        self.aux[rec as usize].loads = loads;
        self.wip.add(now, 1.0);
        let mut prev = rec;
        let mut left = quantity;
        for i in 0..loads {
            let units = batch.min(left);
            left -= units;
            // A last-load load never draws; a first-load load draws its own times and branches.
            let rng = stream(self.seed, self.replication, &[LOAD, p as u64, n, u64::from(i)]);
            let id = self.alloc_lot(lot(rng));
            let w = f64::from(units) / f64::from(quantity);
            self.aux[id as usize] = LotAux { parent: rec, weight: w, gathers: !first_load, ..LotAux::WHOLE };
            self.aux[prev as usize].next = id;
            prev = id;
            self.departments[dock].wip.add(now, w);
        }
        if self.plan.alternatives {
            self.enter_with_choice(rec, p, cal);
        } else {
            self.route(rec, 0, entry, cal);
        }
    }

    /// Routing a lot record sends each of its loads to step `op`.
    pub(super) fn route_loads(&mut self, rec: u32, op: u32, set: FleetSet, cal: &mut Calendar<Event>) {
        self.lots[rec as usize].op = op;
        self.aux[rec as usize].arrived = 0;
        let mut load = self.aux[rec as usize].next;
        while load != NONE {
            let next = self.aux[load as usize].next;
            self.route(load, op, set, cal);
            load = next;
        }
    }

    /// A load of a last-load-start lot is at its step's department: once
    /// all are there the lot joins the queue as one.
    pub(super) fn gather(&mut self, load: u32, cal: &mut Calendar<Event>) {
        let rec = self.aux[load as usize].parent;
        let a = &mut self.aux[rec as usize];
        a.arrived += 1;
        if a.arrived == a.loads {
            let (dept, op) = (self.lots[load as usize].department, self.lots[load as usize].op);
            let r = &mut self.lots[rec as usize];
            r.department = dept;
            r.op = op;
            self.start_or_queue(rec, cal);
        }
    }

    /// A load has reached shipping; the lot ships with its last load, and
    /// its flow time runs from its release to then.
    pub(super) fn load_shipped(&mut self, load: u32, now: f64) {
        let rec = self.aux[load as usize].parent;
        let a = &mut self.aux[rec as usize];
        a.arrived += 1;
        if a.arrived < a.loads {
            return;
        }
        let r = &self.lots[rec as usize];
        let (p, born) = (r.product as usize, r.born);
        self.ship(p, born, self.due_of(rec), now);
        let mut id = rec;
        while id != NONE {
            let next = self.aux[id as usize].next;
            self.free_lots.push(id);
            id = next;
        }
    }
}
