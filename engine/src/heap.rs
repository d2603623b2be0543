//! A four-ary min-heap of `u128` keys laid out so that every family of four siblings fills one cache line.
//!
//! Logical node `k` lives at physical position `k + 3`, so the four children
//! of node `k` (logical `4k+1 … 4k+4`) are exactly the 64-byte-aligned family
//! `k + 1`. A sift therefore touches one cache line per level, and the
//! grandchildren are four consecutive lines that can be prefetched while the
//! children are compared. Unused places hold `u128::MAX`, which is never a real
//! key (its time bits would be a NaN), so a partial last family needs no
//! bounds test.

const EMPTY: u128 = u128::MAX;

/// Heaps larger than this (16 bytes a key: 64 KiB) outgrow a first-level
/// cache; from here on a sift prefetches the next level. Below it a prefetch
/// is pure overhead.
const PREFETCH_FROM: usize = 1 << 12;
/// Heaps larger than this (1 MiB) outgrow a typical second-level cache; from
/// here on a sift also prefetches two levels down.
const DEEP_PREFETCH_FROM: usize = 1 << 16;

/// Four keys sharing one cache line.
#[derive(Debug, Clone, Copy)]
#[repr(C, align(64))]
struct Family([u128; 4]);

/// The heap (smallest key on top).
#[derive(Debug, Clone, Default)]
pub struct QuadHeap {
    families: Vec<Family>,
    len: usize,
}

impl QuadHeap {
    /// An empty heap with room for about `n` keys.
    pub fn with_capacity(n: usize) -> Self {
        QuadHeap { families: Vec::with_capacity(n / 4 + 2), len: 0 }
    }

    /// Keys held.
    #[inline]
    pub fn len(&self) -> usize {
        self.len
    }

    /// Whether no key is held.
    #[inline]
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// The smallest key.
    #[inline]
    pub fn peek(&self) -> Option<u128> {
        (self.len > 0).then(|| self.get(0))
    }

    /// Add a key.
    #[inline]
    pub fn push(&mut self, key: u128) {
        debug_assert!(key != EMPTY);
        let k = self.len;
        if (k + 3) >> 2 >= self.families.len() {
            self.families.push(Family([EMPTY; 4]));
        }
        self.len += 1;
        self.sift_up(k, key);
    }

    /// Remove and return the smallest key.
    #[inline]
    pub fn pop(&mut self) -> Option<u128> {
        if self.len == 0 {
            return None;
        }
        let top = self.get(0);
        self.len -= 1;
        let last = self.get(self.len);
        self.set(self.len, EMPTY);
        if self.len > 0 {
            self.replace_top(last);
        }
        Some(top)
    }

    /// Replace the smallest key by `key` (a hold: one sift instead of a pop and a push).
    ///
    /// Bottom-up (Floyd's method): the hole walks down along the smaller
    /// children to a leaf without comparing against `key`, then `key` moves up
    /// from there. A hold's new event usually belongs near the bottom, so this
    /// saves a hard-to-predict comparison per level.
    ///
    /// # Panics
    /// If the heap is empty (a programming error).
    #[inline]
    pub fn replace_top(&mut self, key: u128) {
        assert!(self.len > 0, "replace_top on an empty heap");
        let near = self.len > PREFETCH_FROM;
        let deep = self.len > DEEP_PREFETCH_FROM;
        let mut i = 0usize;
        while 4 * i + 1 < self.len {
            if near {
                self.prefetch_grandchildren(i);
            }
            if deep {
                self.prefetch_great_grandchildren(i);
            }
            let f = &self.families[i + 1].0;
            // Branch-free minimum of the four children (empty places are MAX).
            let (a, ka) = if f[1] < f[0] { (1, f[1]) } else { (0, f[0]) };
            let (b, kb) = if f[3] < f[2] { (3, f[3]) } else { (2, f[2]) };
            let (lane, smallest) = if kb < ka { (b, kb) } else { (a, ka) };
            self.set(i, smallest);
            i = 4 * i + 1 + lane;
        }
        self.sift_up(i, key);
    }

    /// The smallest child of the top: the key that becomes the top when the top
    /// is removed or replaced by a larger key. `None` for heaps small enough
    /// to live in the first-level cache, where nothing is worth prefetching.
    #[inline]
    pub fn runner_up(&self) -> Option<u128> {
        if self.len <= PREFETCH_FROM {
            return None;
        }
        let f = &self.families[1].0;
        Some(f[0].min(f[1]).min(f[2].min(f[3])))
    }

    /// Remove every key.
    pub fn clear(&mut self) {
        self.families.clear();
        self.len = 0;
    }

    #[inline]
    fn get(&self, k: usize) -> u128 {
        let p = k + 3;
        self.families[p >> 2].0[p & 3]
    }

    #[inline]
    fn set(&mut self, k: usize, key: u128) {
        let p = k + 3;
        self.families[p >> 2].0[p & 3] = key;
    }

    /// Place `key` at or above the hole at `i`, moving larger parents down.
    #[inline]
    fn sift_up(&mut self, mut i: usize, key: u128) {
        while i > 0 {
            let parent = (i - 1) / 4;
            let pk = self.get(parent);
            if pk <= key {
                break;
            }
            self.set(i, pk);
            i = parent;
        }
        self.set(i, key);
    }

    /// Ask the processor to start loading the families of node `i`'s
    /// grandchildren (four consecutive cache lines), so that the next level's
    /// loads overlap this level's comparisons. Once the heap outgrows the
    /// cache this roughly halves the time of a hold.
    #[inline(always)]
    fn prefetch_grandchildren(&self, i: usize) {
        let first = 4 * i + 2;
        if first < self.families.len() {
            let p = self.families.as_ptr().wrapping_add(first);
            for k in 0..4 {
                prefetch(p.wrapping_add(k));
            }
        }
    }
}

impl QuadHeap {
    /// The sixteen families of node `i`'s great-grandchildren: sixteen
    /// consecutive cache lines, fetched while the two levels above are compared.
    #[inline(always)]
    fn prefetch_great_grandchildren(&self, i: usize) {
        let first = 16 * i + 6;
        if first < self.families.len() {
            let p = self.families.as_ptr().wrapping_add(first);
            for k in 0..16 {
                prefetch(p.wrapping_add(k));
            }
        }
    }
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
    fn pops_in_order_across_partial_families() {
        for n in [1usize, 2, 3, 4, 5, 6, 17, 64, 65, 300] {
            let mut h = QuadHeap::with_capacity(0);
            let mut x: u64 = 0x1234_5678;
            let mut keys = Vec::new();
            for _ in 0..n {
                x = x.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                let k = u128::from(x >> 33);
                keys.push(k);
                h.push(k);
            }
            keys.sort_unstable();
            let got: Vec<u128> = std::iter::from_fn(|| h.pop()).collect();
            assert_eq!(got, keys, "n = {n}");
            assert!(h.is_empty());
        }
    }

    #[test]
    fn replace_top_keeps_heap_order() {
        let mut h = QuadHeap::with_capacity(0);
        for k in [50u128, 10, 40, 30, 20, 60, 70] {
            h.push(k);
        }
        h.replace_top(35); // removes 10
        let got: Vec<u128> = std::iter::from_fn(|| h.pop()).collect();
        assert_eq!(got, vec![20, 30, 35, 40, 50, 60, 70]);
    }
}
