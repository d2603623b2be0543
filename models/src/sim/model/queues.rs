//! A department's queue of lots waiting for a machine: first in first out, or ordered by a key (priority, due date, expected time).

use std::cmp::{Ordering, Reverse};
use std::collections::{BinaryHeap, VecDeque};

use super::PlantModel;
use crate::plant::QueueOrder;

/// Lots waiting for a machine at one department.
///
/// First in first out keeps the plain double-ended queue of before, so a
/// plant without queue orders takes exactly the path (and the cost) it took
/// before orders existed. An ordered queue is a binary heap on (key, arrival
/// number): the smallest key is served first and equal keys in arrival order,
/// so an ordered queue whose keys are all equal is first in first out too.
/// Both grow to the largest queue seen and then allocate no more.
#[derive(Debug)]
pub(super) struct LotQueue {
    fifo: VecDeque<u32>,
    keyed: BinaryHeap<Reverse<Entry>>,
    /// Lots pushed so far: the tie-break among equal keys.
    seq: u64,
    ordered: bool,
}

/// One waiting lot of an ordered queue.
#[derive(Debug, Clone, Copy)]
struct Entry {
    key: f64,
    seq: u64,
    lot: u32,
}

impl PartialEq for Entry {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}

impl Eq for Entry {}

impl PartialOrd for Entry {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Entry {
    fn cmp(&self, other: &Self) -> Ordering {
        self.key.total_cmp(&other.key).then(self.seq.cmp(&other.seq))
    }
}

impl LotQueue {
    /// An empty queue; `ordered`: served by key rather than by arrival.
    pub(super) fn new(ordered: bool) -> LotQueue {
        if ordered {
            LotQueue { fifo: VecDeque::new(), keyed: BinaryHeap::with_capacity(16), seq: 0, ordered }
        } else {
            LotQueue { fifo: VecDeque::with_capacity(16), keyed: BinaryHeap::new(), seq: 0, ordered }
        }
    }

    /// Served by key: the caller computes a key only then.
    #[inline]
    pub(super) fn ordered(&self) -> bool {
        self.ordered
    }

    /// Lot `lot` joins the queue; `key` is read only by an ordered queue.
    #[inline]
    pub(super) fn push(&mut self, lot: u32, key: f64) {
        if self.ordered {
            self.keyed.push(Reverse(Entry { key, seq: self.seq, lot }));
            self.seq += 1;
        } else {
            self.fifo.push_back(lot);
        }
    }

    /// The lot served next, taken off the queue.
    #[inline]
    pub(super) fn pop(&mut self) -> Option<u32> {
        if self.ordered {
            self.keyed.pop().map(|Reverse(e)| e.lot)
        } else {
            self.fifo.pop_front()
        }
    }

    /// Lots waiting.
    #[inline]
    pub(super) fn len(&self) -> usize {
        if self.ordered {
            self.keyed.len()
        } else {
            self.fifo.len()
        }
    }

    /// No lot waiting.
    #[inline]
    pub(super) fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

impl PlantModel<'_> {
    /// Lot `id` joins department `dept`'s queue now. The key is computed
    /// only for an ordered queue, so first in first out costs what it did.
    #[inline]
    pub(super) fn enqueue(&mut self, id: u32, dept: usize, now: f64) {
        let key = if self.departments[dept].queue.ordered() {
            self.queue_key(id, self.plan.queue_order[dept])
        } else {
            0.0
        };
        let d = &mut self.departments[dept];
        d.queue.push(id, key);
        d.queue_level.add(now, 1.0);
    }

    /// Lot `id`'s key under `order`, smallest served first: its product's
    /// priority, its due date, or its operation's expected processing time
    /// (a load's share of it). The expected time, not a drawn one: drawing at
    /// queue entry would take the draw from the lot's stream earlier than
    /// the start of the operation, and ordering alone must not change which
    /// numbers a lot draws. Lots without a priority or a due date get
    /// infinity: after every lot with one.
    pub(super) fn queue_key(&self, id: u32, order: QueueOrder) -> f64 {
        let lot = &self.lots[id as usize];
        let prod = &self.plan.products[lot.product as usize];
        match order {
            QueueOrder::Fifo => 0.0,
            QueueOrder::Priority => prod.priority,
            QueueOrder::EarliestDue => {
                let due = self.due_of(id);
                if due.is_nan() {
                    f64::INFINITY
                } else {
                    due
                }
            }
            QueueOrder::ShortestTime => prod.ops[lot.op as usize].mean_s * self.weight(id),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fifo_serves_in_arrival_order_and_ignores_keys() {
        let mut q = LotQueue::new(false);
        for (lot, key) in [(4, 9.0), (2, 1.0), (7, 5.0)] {
            q.push(lot, key);
        }
        assert_eq!(q.len(), 3);
        assert_eq!([q.pop(), q.pop(), q.pop(), q.pop()], [Some(4), Some(2), Some(7), None]);
    }

    #[test]
    fn ordered_serves_the_smallest_key_first_and_equal_keys_in_arrival_order() {
        let mut q = LotQueue::new(true);
        for (lot, key) in [(1, 2.0), (2, 1.0), (3, 2.0), (4, f64::INFINITY), (5, 1.0)] {
            q.push(lot, key);
        }
        let order: Vec<u32> = std::iter::from_fn(|| q.pop()).collect();
        assert_eq!(order, [2, 5, 1, 3, 4]);
    }
}
