//! The event calendar: a four-ary heap of times with payloads in a slab beside it, and ties put in sequence.
//!
//! Events are ordered by (time, insertion sequence), so simultaneous events
//! run in the order they were scheduled and a run repeats exactly. The heap
//! ([`TimeHeap`]) compares times only, 8 bytes each, which is what keeps it
//! fast. Each heap entry's tag carries the sequence number and the payload's
//! slab slot. When the next time is shared by several events, which is rare
//! in continuous time but common with zero delays and constant durations,
//! the calendar takes all of them out at once and hands them out in sequence
//! order. Any event scheduled at that same time later has a later sequence,
//! so it correctly comes after them.
//!
//! The classic "hold" (take the next event, schedule one) costs one sift: the
//! event returned by [`Calendar::take_next`] stays at the top of the heap until
//! the handler schedules its first follow-up, which then replaces it in place.
//!
//! A very large calendar splits in two at a threshold time. The heap holds
//! only the events before it, about 128 Ki of them, which keeps the heap near
//! the cache. Later events wait in an unsorted list, where scheduling one is
//! an append. When the heap runs dry, the next slice of the list moves in, at
//! a new threshold chosen from a sample. Every event in the heap is earlier
//! than every event in the list, and equal times always fall on the same side,
//! so the order stays exact.

use std::collections::VecDeque;

use crate::heap::{prefetch, TimeHeap};

/// Simulated time in seconds.
pub type Time = f64;

/// Bits of a tag that hold the slab slot; the rest hold the sequence number.
const SLOT_BITS: u32 = 24;
const SLOT_MASK: u64 = (1 << SLOT_BITS) - 1;
/// The most events that may be pending at once (slots are 24 bits).
pub const MAX_PENDING: usize = 1 << SLOT_BITS;

/// About how many events the heap takes in when it refills from the later
/// list; it is split again when it holds twice this many.
const NEAR: usize = 1 << 17;
/// Times sampled to choose a new threshold.
const SAMPLE: usize = 256;

/// A pending-event calendar owning its clock.
#[derive(Debug)]
pub struct Calendar<E: Copy> {
    heap: TimeHeap,
    slab: Vec<E>,
    free: Vec<u32>,
    now: Time,
    seq: u64,
    /// The top of the heap was handed out by `take_next` and is not removed yet.
    top_taken: bool,
    /// The slab slot of that event, free for its first follow-up to reuse.
    taken_slot: u32,
    /// Tags of events that share the current time, in sequence order, taken
    /// out of the heap together and handed out first.
    ties: VecDeque<u64>,
    /// Events at or after `threshold` (time bits), unsorted.
    later: Vec<(u64, u64)>,
    /// Time bits from which events go to `later`; `u64::MAX` while all fit the heap.
    threshold: u64,
    /// Events the heap takes in at a refill ([`NEAR`], smaller in tests).
    near: usize,
    /// The heap is split when it holds more than this: twice `near`, or more
    /// when one instant alone holds more events than that.
    limit: usize,
}

impl<E: Copy> Default for Calendar<E> {
    fn default() -> Self {
        Self::new()
    }
}

impl<E: Copy> Calendar<E> {
    /// An empty calendar at time 0.
    pub fn new() -> Self {
        Self::with_capacity(64)
    }

    /// An empty calendar with room for `n` pending events before it reallocates.
    pub fn with_capacity(n: usize) -> Self {
        Calendar {
            heap: TimeHeap::with_capacity(n),
            slab: Vec::with_capacity(n),
            free: Vec::with_capacity(n),
            now: 0.0,
            seq: 0,
            top_taken: false,
            taken_slot: 0,
            ties: VecDeque::new(),
            later: Vec::new(),
            threshold: u64::MAX,
            near: NEAR,
            limit: 2 * NEAR,
        }
    }

    /// The current simulated time.
    #[inline]
    pub fn now(&self) -> Time {
        self.now
    }

    /// Pending events.
    #[inline]
    pub fn len(&self) -> usize {
        self.heap.len() - usize::from(self.top_taken) + self.ties.len() + self.later.len()
    }

    /// Whether no event is pending.
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Schedule `event` at absolute time `at`.
    ///
    /// An infinite `at` is accepted and never comes before any finite time.
    ///
    /// # Panics
    /// If `at` is before now or NaN (a model bug, never an input error:
    /// models validate their inputs), or if more than [`MAX_PENDING`] events
    /// would be pending.
    #[inline]
    pub fn schedule(&mut self, at: Time, event: E) {
        // One comparison rejects both: NaN compares false.
        assert!(at >= self.now, "event scheduled at {at} s, before now ({} s)", self.now);
        let reuse = if self.top_taken { Some(self.taken_slot) } else { self.free.pop() };
        let slot = match reuse {
            Some(s) => {
                self.slab[s as usize] = event;
                s
            }
            None => {
                assert!(self.slab.len() < MAX_PENDING, "event calendar full");
                self.slab.push(event);
                (self.slab.len() - 1) as u32
            }
        };
        // 40 bits of sequence: 10¹² events in one run before ties could misorder.
        assert!(self.seq < 1 << (64 - SLOT_BITS), "event sequence exhausted");
        let tag = (self.seq << SLOT_BITS) | u64::from(slot);
        self.seq += 1;
        // +0.0 and -0.0 must not differ: at >= now >= 0, so `at + 0.0` is +0.0 or positive.
        let time = (at + 0.0).to_bits();
        if time >= self.threshold {
            if self.top_taken {
                // The taken event leaves the heap; its slot is reused above.
                self.top_taken = false;
                self.prefetch_runner_up();
                self.heap.pop();
            }
            self.later.push((time, tag));
        } else if self.top_taken {
            self.top_taken = false;
            // Replace-top: one sift instead of a pop and a push.
            self.prefetch_runner_up();
            self.heap.replace_top(time, tag);
        } else {
            self.heap.push(time, tag);
            if self.heap.len() > self.limit {
                self.split();
            }
        }
    }

    /// Schedule `event` after `delay` seconds from now.
    #[inline]
    pub fn schedule_in(&mut self, delay: Time, event: E) {
        self.schedule(self.now + delay, event);
    }

    /// Time of the next pending event, if any.
    #[inline]
    pub fn peek_time(&mut self) -> Option<Time> {
        self.settle();
        if !self.ties.is_empty() {
            return Some(self.now);
        }
        if self.heap.is_empty() {
            self.refill();
        }
        self.heap.peek().map(|(t, _)| f64::from_bits(t))
    }

    /// Take the next event and advance the clock to its time.
    #[inline]
    pub fn take_next(&mut self) -> Option<(Time, E)> {
        self.settle();
        if let Some(tag) = self.ties.pop_front() {
            return Some((self.now, self.release(tag)));
        }
        if self.heap.is_empty() {
            self.refill();
        }
        let (time, tag) = self.heap.peek()?;
        self.now = f64::from_bits(time);
        if self.heap.next_time() == Some(time) {
            self.gather_ties(time);
            let tag = self.ties.pop_front().expect("a tie has at least two events");
            return Some((self.now, self.release(tag)));
        }
        self.top_taken = true;
        let slot = (tag & SLOT_MASK) as u32;
        self.taken_slot = slot;
        // A slot's old payload stays behind once taken; the free list, not the
        // slab, says which slots are in use.
        Some((self.now, self.slab[slot as usize]))
    }

    /// Move the clock forward to `t` without taking an event (for a horizon).
    pub fn advance_to(&mut self, t: Time) {
        if t > self.now {
            self.now = t;
        }
    }

    /// Remove every pending event and reset the clock to 0.
    pub fn clear(&mut self) {
        self.heap.clear();
        self.slab.clear();
        self.free.clear();
        self.ties.clear();
        self.later.clear();
        self.threshold = u64::MAX;
        self.now = 0.0;
        self.seq = 0;
        self.top_taken = false;
    }

    /// The heap has grown past twice its size: move everything to the later
    /// list and take back the earliest slice.
    #[cold]
    fn split(&mut self) {
        self.heap.drain_into(&mut self.later);
        self.refill();
    }

    /// Move the earliest slice of the later list (about `near` events) into
    /// the empty heap, and raise the threshold to where the slice ends.
    #[cold]
    fn refill(&mut self) {
        let n = self.later.len();
        if n == 0 {
            return;
        }
        let threshold = if n <= self.near {
            u64::MAX
        } else {
            // The time below which about `near` events lie, from an evenly
            // spaced sample (deterministic: the list's order is).
            let count = SAMPLE.min(n);
            let step = n / count;
            let mut sample = [0u64; SAMPLE];
            for (k, s) in sample[..count].iter_mut().enumerate() {
                *s = self.later[k * step].0;
            }
            sample[..count].sort_unstable();
            sample[(self.near * count / n).min(count - 1)]
        };
        // Take at least the earliest time, so that every refill makes progress.
        let earliest = self.later.iter().map(|e| e.0).min().unwrap_or(u64::MAX);
        self.threshold = threshold.max(earliest.saturating_add(1));
        let mut kept = 0;
        for r in 0..n {
            let (time, tag) = self.later[r];
            if time < self.threshold {
                self.heap.push(time, tag);
            } else {
                self.later[kept] = (time, tag);
                kept += 1;
            }
        }
        self.later.truncate(kept);
        // Thousands of events at one instant can overfill the heap; splitting
        // again at once would only move them back and forth.
        self.limit = (2 * self.near).max(2 * self.heap.len());
    }

    /// Take every event at `time` out of the heap, in sequence order.
    #[cold]
    fn gather_ties(&mut self, time: u64) {
        while let Some((t, tag)) = self.heap.peek() {
            if t != time {
                break;
            }
            self.heap.pop();
            self.ties.push_back(tag);
        }
        // The sequence number is the tag's high part, so tags sort by it.
        self.ties.make_contiguous().sort_unstable();
    }

    /// The payload of a tied event, its slot freed.
    #[inline]
    fn release(&mut self, tag: u64) -> E {
        let slot = (tag & SLOT_MASK) as u32;
        self.free.push(slot);
        self.slab[slot as usize]
    }

    /// Drop the event handed out by the last `take_next` if nothing replaced it.
    #[inline]
    fn settle(&mut self) {
        if self.top_taken {
            self.top_taken = false;
            self.free.push(self.taken_slot);
            self.prefetch_runner_up();
            self.heap.pop();
        }
    }

    /// Start loading the payload of the event that is about to become the top,
    /// so that the next `take_next` does not wait for it: in a large calendar
    /// the payload's slot is a random place in memory. The sift that follows
    /// overlaps with the load.
    #[inline]
    fn prefetch_runner_up(&self) {
        if let Some(tag) = self.heap.runner_up_tag() {
            let slot = (tag & SLOT_MASK) as usize;
            prefetch(self.slab.as_ptr().wrapping_add(slot));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Marsaglia's xorshift64: a tiny deterministic stand-in for random times.
    fn xorshift(seed: u64) -> impl FnMut() -> u64 {
        let mut x = seed;
        move || {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            x
        }
    }

    /// A calendar whose heap refills `near` events at a time, so that small
    /// tests exercise the split into heap and later list.
    fn small_split<E: Copy>(near: usize) -> Calendar<E> {
        Calendar { near, limit: 2 * near, ..Calendar::with_capacity(0) }
    }

    #[test]
    fn ties_run_in_scheduling_order() {
        let mut c = Calendar::new();
        c.schedule(5.0, 'a');
        c.schedule(1.0, 'b');
        c.schedule(5.0, 'c');
        c.schedule(0.0, 'd');
        let order: Vec<char> = std::iter::from_fn(|| c.take_next().map(|(_, e)| e)).collect();
        assert_eq!(order, vec!['d', 'b', 'a', 'c']);
        assert_eq!(c.now(), 5.0);
        assert!(c.is_empty());
    }

    #[test]
    fn hold_replaces_top_and_keeps_order() {
        let mut c = Calendar::new();
        for i in 0..10 {
            c.schedule(f64::from(i), i);
        }
        // Hold: take the next, schedule one later; the sequence must stay sorted.
        let mut last = 0.0;
        for _ in 0..1000 {
            let (t, e) = c.take_next().unwrap();
            assert!(t >= last);
            last = t;
            c.schedule(t + 3.5 + f64::from(e % 3), e);
        }
        assert_eq!(c.len(), 10);
    }

    #[test]
    fn next_without_schedule_removes_event() {
        let mut c = Calendar::new();
        c.schedule(1.0, 1);
        c.schedule(2.0, 2);
        assert_eq!(c.take_next(), Some((1.0, 1)));
        assert_eq!(c.len(), 1);
        assert_eq!(c.peek_time(), Some(2.0));
        assert_eq!(c.take_next(), Some((2.0, 2)));
        assert_eq!(c.take_next(), None);
    }

    #[test]
    fn matches_a_sorted_reference() {
        // A small deterministic generator (LCG) stands in for random times.
        let mut x: u64 = 12345;
        let mut c = Calendar::new();
        let mut reference = Vec::new();
        for i in 0..5000u32 {
            x = x.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            let t = (x >> 40) as f64 / 1024.0;
            c.schedule(t, i);
            reference.push((t, i));
        }
        reference.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let got: Vec<(f64, u32)> = std::iter::from_fn(|| c.take_next()).collect();
        assert_eq!(got, reference);
    }

    #[test]
    fn interleaved_holds_match_an_ordered_map() {
        use std::collections::BTreeMap;
        // Reference: a BTreeMap keyed by (time bits, sequence) gives the exact order.
        let mut rnd = xorshift(987654321);
        let mut c = Calendar::new();
        let mut r = BTreeMap::new();
        let mut seq = 0u64;
        for step in 0..20_000u32 {
            let op = rnd() % 3;
            if op < 2 || r.is_empty() {
                // Coarse times so that ties are common.
                let t = c.now() + (rnd() % 8) as f64;
                c.schedule(t, step);
                r.insert((t.to_bits(), seq), step);
                seq += 1;
            } else {
                let (t, e) = c.take_next().unwrap();
                let (&(rt, _), &re) = r.iter().next().unwrap();
                assert_eq!((t.to_bits(), e), (rt, re));
                r.pop_first();
            }
            assert_eq!(c.len(), r.len());
        }
    }

    #[test]
    fn a_large_calendar_with_ties_keeps_exact_order() {
        use std::collections::BTreeMap;
        // Past the heap's prefetch thresholds (2^13 and 2^16 entries), with
        // times on a coarse grid so that many events tie.
        let mut rnd = xorshift(42);
        let mut c = Calendar::with_capacity(0);
        let mut r = BTreeMap::new();
        let mut seq = 0u64;
        for i in 0..100_000u32 {
            let t = (rnd() % 5000) as f64 * 0.5;
            c.schedule(t, i);
            r.insert((t.to_bits(), seq), i);
            seq += 1;
        }
        for step in 0..200_000u32 {
            let (t, e) = c.take_next().unwrap();
            let ((rt, _), re) = r.pop_first().unwrap();
            assert_eq!((t.to_bits(), e), (rt, re), "step {step}");
            // A hold, sometimes at the same instant, sometimes two events.
            let at = t + (rnd() % 4) as f64 * 0.5;
            c.schedule(at, e);
            r.insert((at.to_bits(), seq), e);
            seq += 1;
            if step % 7 == 0 {
                c.schedule(at, e + 1);
                r.insert((at.to_bits(), seq), e + 1);
                seq += 1;
            }
        }
        assert_eq!(c.len(), r.len());
    }

    #[test]
    fn a_split_calendar_keeps_exact_order() {
        use std::collections::BTreeMap;
        // A heap of at most 2 × 16 events, so nearly everything passes
        // through the later list, the refills and the splits; coarse times
        // make ties common, and some events are infinitely far away.
        for near in [1usize, 4, 16] {
            let mut rnd = xorshift(7 + near as u64);
            let mut c = small_split(near);
            let mut r = BTreeMap::new();
            let mut seq = 0u64;
            for step in 0..30_000u32 {
                let op = rnd() % 3;
                if op < 2 || r.is_empty() {
                    let t =
                        if rnd().is_multiple_of(50) { f64::INFINITY } else { c.now() + (rnd() % 6) as f64 };
                    c.schedule(t, step);
                    r.insert((t.to_bits(), seq), step);
                    seq += 1;
                } else {
                    let (t, e) = c.take_next().unwrap();
                    let ((rt, _), re) = r.pop_first().unwrap();
                    assert_eq!((t.to_bits(), e), (rt, re), "near {near}, step {step}");
                    if rnd().is_multiple_of(2) {
                        // A hold, often landing beyond the threshold.
                        let at = t + (rnd() % 6) as f64;
                        c.schedule(at, e);
                        r.insert((at.to_bits(), seq), e);
                        seq += 1;
                    }
                }
                assert_eq!(c.len(), r.len(), "near {near}, step {step}");
            }
            // Drain: the rest, infinities last, still in order.
            while let Some((t, e)) = c.take_next() {
                let ((rt, _), re) = r.pop_first().unwrap();
                assert_eq!((t.to_bits(), e), (rt, re), "near {near}, draining");
            }
            assert!(r.is_empty());
        }
    }

    #[test]
    fn many_events_at_one_instant_do_not_thrash_the_split() {
        // 50 events at one time in a calendar whose heap slice is 4: the
        // refill must take all of them (they cannot be split), and further
        // events at that instant must not split again and again.
        let mut c = small_split(4);
        for i in 0..50u32 {
            c.schedule(10.0, i);
        }
        for i in 50..60u32 {
            c.schedule(20.0 + f64::from(i), i);
        }
        // The limit grew with the instant's crowd instead of splitting on every push.
        assert!(c.limit >= 50, "limit {}", c.limit);
        let (t, e) = c.take_next().unwrap();
        assert_eq!((t, e), (10.0, 0));
        for i in 60..100u32 {
            c.schedule(10.0, i);
        }
        let mut order = vec![e];
        while let Some((t, e)) = c.take_next() {
            if t == 10.0 {
                order.push(e);
            }
        }
        let want: Vec<u32> = (0..50).chain(60..100).collect();
        assert_eq!(order, want);
    }
}
