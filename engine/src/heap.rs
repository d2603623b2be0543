//! A four-ary min-heap ordered by time, laid out so that each family of four siblings fills one cache line.
//!
//! Each entry is a time (the bit pattern of a non-negative `f64`, which
//! orders like the time) and a tag that the heap carries but never compares.
//! Equal times come out in no particular order; the calendar puts ties in
//! sequence itself. Comparing 8-byte times instead of 16-byte keys is what
//! makes the heap fast: a family's four times and four tags are one 64-byte
//! line, so a sift reads one line per level.
//!
//! Logical node `k` lives at physical position `k + 3`, so the four children
//! of node `k` (logical `4k+1 … 4k+4`) are exactly the aligned family `k + 1`.
//! Unused places hold the time pattern `u64::MAX`, a NaN and never a real
//! time, so a partial last family needs no bounds test.

const EMPTY: u64 = u64::MAX;
/// Children per node.
const ARITY: usize = 4;
/// Physical position of logical node 0: makes node `k`'s children family `k + 1`.
const OFFSET: usize = ARITY - 1;

/// Heaps with more entries than this (16 bytes each: 128 KiB) outgrow the
/// first-level cache; from here on a sift prefetches the next level. Below
/// it a prefetch is pure overhead.
const PREFETCH_FROM: usize = 1 << 13;
/// Heaps larger than this (1 MiB) outgrow a typical second-level cache; from
/// here on a sift also prefetches two levels down.
const DEEP_PREFETCH_FROM: usize = 1 << 16;

/// Siblings: their times, then their tags, in one 64-byte cache line.
#[derive(Debug, Clone, Copy)]
#[repr(C, align(64))]
struct Family {
    times: [u64; ARITY],
    tags: [u64; ARITY],
}

const EMPTY_FAMILY: Family = Family { times: [EMPTY; ARITY], tags: [0; ARITY] };

/// The heap (earliest time on top).
#[derive(Debug, Clone, Default)]
pub struct TimeHeap {
    families: Vec<Family>,
    len: usize,
}

impl TimeHeap {
    /// An empty heap with room for about `n` entries.
    pub fn with_capacity(n: usize) -> Self {
        TimeHeap { families: Vec::with_capacity(n / ARITY + 2), len: 0 }
    }

    /// Entries held.
    #[inline]
    pub fn len(&self) -> usize {
        self.len
    }

    /// Whether no entry is held.
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The entry with the earliest time, as (time bits, tag).
    #[inline]
    pub fn peek(&self) -> Option<(u64, u64)> {
        (self.len > 0).then(|| self.get(0))
    }

    /// The earliest time among the top's children: equal to the top's time
    /// exactly when another entry ties with the top.
    #[inline]
    pub fn next_time(&self) -> Option<u64> {
        if self.len < 2 {
            return None;
        }
        Some(self.families[1].times.iter().copied().fold(EMPTY, u64::min))
    }

    /// The tag of the entry that becomes the top when the top is removed or
    /// replaced by a later time. `None` for heaps small enough to live in the
    /// first-level cache, where nothing is worth prefetching.
    #[inline]
    pub fn runner_up_tag(&self) -> Option<u64> {
        if self.len <= PREFETCH_FROM {
            return None;
        }
        let f = &self.families[1];
        Some(f.tags[earliest(&f.times).0])
    }

    /// Add an entry.
    #[inline]
    pub fn push(&mut self, time: u64, tag: u64) {
        debug_assert!(time != EMPTY);
        let k = self.len;
        if (k + OFFSET) / ARITY >= self.families.len() {
            self.families.push(EMPTY_FAMILY);
        }
        self.len += 1;
        self.sift_up(k, time, tag);
    }

    /// Remove and return the entry with the earliest time.
    #[inline]
    pub fn pop(&mut self) -> Option<(u64, u64)> {
        if self.len == 0 {
            return None;
        }
        let top = self.get(0);
        self.len -= 1;
        let (t, g) = self.get(self.len);
        self.set(self.len, EMPTY, 0);
        if self.len > 0 {
            self.replace_top(t, g);
        }
        Some(top)
    }

    /// Replace the top by (time, tag): a hold, one sift instead of a pop and a push.
    ///
    /// Bottom-up (Floyd's method): the hole walks down along the earliest
    /// children to a leaf without comparing against `time`, then the new
    /// entry moves up from there. A hold's new event usually belongs near the
    /// bottom, so this saves a hard-to-predict comparison per level.
    ///
    /// # Panics
    /// If the heap is empty (a programming error).
    #[inline]
    pub fn replace_top(&mut self, time: u64, tag: u64) {
        assert!(self.len > 0, "replace_top on an empty heap");
        let near = self.len > PREFETCH_FROM;
        let deep = self.len > DEEP_PREFETCH_FROM;
        let mut i = 0usize;
        while ARITY * i + 1 < self.len {
            if near {
                self.prefetch_grandchildren(i);
            }
            if deep {
                self.prefetch_great_grandchildren(i);
            }
            let f = &self.families[i + 1];
            let (lane, t) = earliest(&f.times);
            let g = f.tags[lane];
            self.set(i, t, g);
            i = ARITY * i + 1 + lane;
        }
        self.sift_up(i, time, tag);
    }

    /// Move every entry out, in no particular order, leaving the heap empty.
    pub fn drain_into(&mut self, out: &mut Vec<(u64, u64)>) {
        for k in 0..self.len {
            out.push(self.get(k));
        }
        self.clear();
    }

    /// Remove every entry.
    pub fn clear(&mut self) {
        self.families.clear();
        self.len = 0;
    }

    #[inline]
    fn get(&self, k: usize) -> (u64, u64) {
        let p = k + OFFSET;
        let f = &self.families[p / ARITY];
        (f.times[p % ARITY], f.tags[p % ARITY])
    }

    #[inline]
    fn set(&mut self, k: usize, time: u64, tag: u64) {
        let p = k + OFFSET;
        let f = &mut self.families[p / ARITY];
        f.times[p % ARITY] = time;
        f.tags[p % ARITY] = tag;
    }

    /// Place the entry at or above the hole at `i`, moving later parents down.
    #[inline]
    fn sift_up(&mut self, mut i: usize, time: u64, tag: u64) {
        while i > 0 {
            let parent = (i - 1) / ARITY;
            let (pt, pg) = self.get(parent);
            if pt <= time {
                break;
            }
            self.set(i, pt, pg);
            i = parent;
        }
        self.set(i, time, tag);
    }

    /// Ask the processor to start loading the families of node `i`'s
    /// grandchildren (four consecutive cache lines: times and tags), so that
    /// the next level's loads overlap this level's comparisons.
    #[inline(always)]
    fn prefetch_grandchildren(&self, i: usize) {
        let first = ARITY * i + 2;
        if first < self.families.len() {
            let p = self.families.as_ptr().wrapping_add(first);
            for k in 0..ARITY {
                prefetch(p.wrapping_add(k));
            }
        }
    }
}

impl TimeHeap {
    /// The families of node `i`'s great-grandchildren (sixteen consecutive
    /// cache lines), fetched while the two levels above are compared.
    #[inline(always)]
    fn prefetch_great_grandchildren(&self, i: usize) {
        let first = ARITY * ARITY * i + ARITY + 2;
        if first < self.families.len() {
            let p = self.families.as_ptr().wrapping_add(first);
            for k in 0..ARITY * ARITY {
                prefetch(p.wrapping_add(k));
            }
        }
    }
}

/// The lane of the earliest of a family's times, without branches.
#[inline(always)]
fn earliest(times: &[u64; ARITY]) -> (usize, u64) {
    let mut lane = 0;
    let mut best = times[0];
    for (l, &t) in times.iter().enumerate().skip(1) {
        let earlier = t < best;
        lane = if earlier { l } else { lane };
        best = if earlier { t } else { best };
    }
    // The mask tells the compiler the lane is in range (no bounds check).
    (lane & (ARITY - 1), best)
}

/// Hint the processor to bring the cache line at `p` closer; no effect elsewhere
/// than on x86-64.
#[inline(always)]
#[allow(unsafe_code)]
pub(crate) fn prefetch<T>(p: *const T) {
    #[cfg(target_arch = "x86_64")]
    // SAFETY: a prefetch is only a hint: it never faults and brings nothing
    // into the program, whatever the address.
    unsafe {
        core::arch::x86_64::_mm_prefetch::<{ core::arch::x86_64::_MM_HINT_T0 }>(p.cast::<i8>());
    }
    #[cfg(not(target_arch = "x86_64"))]
    let _ = p;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pops_in_time_order_across_partial_families() {
        for n in [1usize, 2, 3, 7, 8, 9, 17, 64, 65, 73, 300, 5000] {
            let mut h = TimeHeap::with_capacity(0);
            let mut x: u64 = 0x1234_5678;
            let mut times = Vec::new();
            for i in 0..n {
                x = x.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let t = x >> 33;
                times.push(t);
                h.push(t, i as u64);
            }
            times.sort_unstable();
            let got: Vec<u64> = std::iter::from_fn(|| h.pop().map(|(t, _)| t)).collect();
            assert_eq!(got, times, "n = {n}");
            assert!(h.is_empty());
        }
    }

    #[test]
    fn tags_travel_with_their_times() {
        let mut h = TimeHeap::with_capacity(0);
        for t in [50u64, 10, 40, 30, 20, 60, 70, 5, 90, 80] {
            h.push(t, t * 100);
        }
        h.replace_top(35, 3500); // removes 5
        assert_eq!(h.next_time(), Some(20));
        let got: Vec<(u64, u64)> = std::iter::from_fn(|| h.pop()).collect();
        let want: Vec<(u64, u64)> =
            [10u64, 20, 30, 35, 40, 50, 60, 70, 80, 90].iter().map(|&t| (t, t * 100)).collect();
        assert_eq!(got, want);
    }

    #[test]
    fn next_time_reveals_a_tie_with_the_top() {
        let mut h = TimeHeap::with_capacity(0);
        for (t, g) in [(7u64, 1u64), (9, 2), (7, 3), (8, 4)] {
            h.push(t, g);
        }
        assert_eq!(h.peek().map(|p| p.0), Some(7));
        assert_eq!(h.next_time(), Some(7));
        h.pop();
        assert_eq!(h.next_time(), Some(8));
    }
}
