//! What every search method shares: settings and limits, the clock, the best-so-far with its trace and progress calls, and the top-K set.

use std::time::Instant;

use layflow_engine::{stream, Stream};

use super::qap::{Evaluation, Problem};

/// When a search stops. At least one of `iterations` and `time_s` is
/// needed by methods that do not stop by themselves; each method says what
/// one iteration is.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Limits {
    /// Stop after this many iterations (deterministic for a fixed seed).
    pub iterations: Option<u64>,
    /// Stop after this many seconds of wall-clock time (not deterministic).
    pub time_s: Option<f64>,
    /// Stop as soon as the best objective is at or below this (a known optimum).
    pub target: Option<f64>,
    /// With a time limit only: stop once this share of `time_s` has passed
    /// since the last improvement (a stalled search rarely improves again,
    /// and the next method gets the machine sooner). Iteration limits never
    /// stop on a stall, so a run limited by iterations alone stays
    /// deterministic for its seed.
    pub stall_share: Option<f64>,
}

impl Limits {
    /// Stop after `n` iterations.
    pub fn iterations(n: u64) -> Limits {
        Limits { iterations: Some(n), ..Limits::default() }
    }

    /// Stop after `s` seconds.
    pub fn seconds(s: f64) -> Limits {
        Limits { time_s: Some(s), ..Limits::default() }
    }

    /// The same limits, also stopping after `share` of the time limit without improvement.
    pub fn with_stall(self, share: f64) -> Limits {
        Limits { stall_share: Some(share), ..self }
    }

    /// The same limits, also stopping at `target`.
    pub fn with_target(self, target: f64) -> Limits {
        Limits { target: Some(target), ..self }
    }

    fn check(&self) -> Result<(), String> {
        if let Some(t) = self.time_s {
            if !(t >= 0.0) || !t.is_finite() {
                return Err(format!("the time limit must be a finite number of seconds ≥ 0, got {t}"));
            }
        }
        if let Some(s) = self.stall_share {
            if !(s > 0.0 && s <= 1.0) {
                return Err(format!("the stall share must be above 0 and at most 1, got {s}"));
            }
        }
        if self.target.is_some_and(f64::is_nan) {
            return Err("the target cost is NaN".into());
        }
        Ok(())
    }

    pub(crate) fn bounded(&self) -> bool {
        self.iterations.is_some() || self.time_s.is_some()
    }
}

/// Settings every method takes.
#[derive(Debug, Clone, Default)]
pub struct Settings {
    /// Where to begin (`start[i]`: location of department i), or `None` for
    /// a random layout that respects the forbidden pairs, drawn from `seed`.
    pub start: Option<Vec<usize>>,
    /// Seed of every random choice the method makes (start, moves, tenures).
    pub seed: u64,
    /// When to stop.
    pub limits: Limits,
    /// How many distinct best layouts to collect in [`Outcome::top`] (0: none).
    pub keep: usize,
}

/// One point of the best-so-far trace.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TracePoint {
    /// Seconds since the search began.
    pub elapsed_s: f64,
    /// Iteration at which this best was reached.
    pub iteration: u64,
    /// The best objective so far.
    pub objective: f64,
}

/// A layout with its evaluation.
#[derive(Debug, Clone, PartialEq)]
pub struct Ranked {
    /// `layout[i]`: location of department i.
    pub layout: Vec<usize>,
    /// Its cost, from the data as given.
    pub evaluation: Evaluation,
}

/// What a search found.
#[derive(Debug, Clone)]
pub struct Outcome {
    /// The best layout: `layout[i]` is the location of department i.
    pub layout: Vec<usize>,
    /// Its cost (recomputed from the data as given: what a caller reports).
    pub evaluation: Evaluation,
    /// Iterations done.
    pub iterations: u64,
    /// Seconds the search took.
    pub elapsed_s: f64,
    /// The best objective each time it improved, starting with the start layout.
    pub trace: Vec<TracePoint>,
    /// Up to [`Settings::keep`] distinct layouts, best first (ties in
    /// objective ordered by layout); the best layout is among them.
    pub top: Vec<Ranked>,
    /// It stopped early because [`Limits::stall_share`] of its time passed without improvement.
    pub stalled: bool,
}

/// Keys of the random streams (one per use, so a change in one method's draws never shifts another's).
pub(crate) mod keys {
    /// The random start layout.
    pub const START: u64 = 1;
    /// Steepest descent's restarts.
    pub const EXCHANGE: u64 = 2;
    /// Simulated annealing's moves and acceptances.
    pub const ANNEAL: u64 = 3;
    /// Robust tabu search's tenures.
    pub const TABU: u64 = 4;
}

/// The K best distinct layouts seen, by objective: a bounded set.
///
/// Distinct means a different location for at least one real department.
/// Offers are cheap to refuse: compare with [`TopK::threshold`] first.
#[derive(Debug, Clone)]
pub struct TopK {
    k: usize,
    n: usize,
    /// (objective, layout of the n departments), unsorted.
    entries: Vec<(f64, Vec<usize>)>,
}

impl TopK {
    /// An empty set keeping at most `k` layouts of `n` departments.
    pub fn new(k: usize, n: usize) -> TopK {
        TopK { k, n, entries: Vec::with_capacity(k) }
    }

    /// An offer with an objective at or above this cannot get in.
    #[inline]
    pub fn threshold(&self) -> f64 {
        if self.k == 0 {
            f64::NEG_INFINITY
        } else if self.entries.len() < self.k {
            f64::INFINITY
        } else {
            self.entries.iter().fold(f64::NEG_INFINITY, |w, e| w.max(e.0))
        }
    }

    /// Offer a permutation (its first n entries are the layout) with its objective.
    /// Returns whether it went in. O(k·n); allocates only while the set fills.
    pub fn offer(&mut self, objective: f64, perm: &[usize]) -> bool {
        if self.k == 0 || objective >= self.threshold() {
            return false;
        }
        let layout = &perm[..self.n];
        if self.entries.iter().any(|e| e.1 == layout) {
            return false;
        }
        if self.entries.len() < self.k {
            self.entries.push((objective, layout.to_vec()));
        } else {
            // Replace the worst, reusing its buffer.
            let worst = (0..self.entries.len())
                .max_by(|&i, &j| self.entries[i].0.total_cmp(&self.entries[j].0))
                .unwrap_or(0);
            let e = &mut self.entries[worst];
            e.0 = objective;
            e.1.copy_from_slice(layout);
        }
        true
    }

    /// The layouts kept, best first (ties by layout, so the order is deterministic).
    pub fn sorted(&self) -> Vec<(f64, Vec<usize>)> {
        let mut v = self.entries.clone();
        v.sort_by(|x, y| x.0.total_cmp(&y.0).then_with(|| x.1.cmp(&y.1)));
        v
    }
}

/// The bookkeeping of one search run.
pub(crate) struct Tracker<'a> {
    pub(crate) problem: &'a Problem,
    clock: Instant,
    limits: Limits,
    pub(crate) best: f64,
    pub(crate) best_perm: Vec<usize>,
    /// The top-K threshold, cached so the hot loop compares one number.
    pub(crate) top_threshold: f64,
    top: TopK,
    trace: Vec<TracePoint>,
    progress: &'a mut dyn FnMut(f64, f64),
    pub(crate) iteration: u64,
    out_of_time: bool,
    /// Seconds since the start at the last improvement.
    last_improved_s: f64,
    stalled: bool,
}

impl<'a> Tracker<'a> {
    /// Check the settings and pick the start permutation.
    pub(crate) fn start(
        problem: &'a Problem,
        settings: &Settings,
        needs_bound: bool,
        progress: &'a mut dyn FnMut(f64, f64),
    ) -> Result<(Tracker<'a>, Vec<usize>), String> {
        settings.limits.check()?;
        if needs_bound && !settings.limits.bounded() {
            return Err("this search needs an iteration limit or a time limit".into());
        }
        let perm = match &settings.start {
            Some(layout) => problem.permutation(layout).map_err(|e| format!("the start layout: {e}"))?,
            None => problem.random_permutation(&mut Tracker::rng(settings.seed, keys::START)),
        };
        let mut t = Tracker {
            problem,
            clock: Instant::now(),
            limits: settings.limits,
            best: f64::INFINITY,
            best_perm: perm.clone(),
            top_threshold: f64::NEG_INFINITY,
            top: TopK::new(settings.keep, problem.n),
            trace: Vec::new(),
            progress,
            iteration: 0,
            out_of_time: false,
            last_improved_s: 0.0,
            stalled: false,
        };
        t.top_threshold = t.top.threshold();
        let obj = problem.objective_of(&perm);
        t.improve(&perm, obj);
        Ok((t, perm))
    }

    /// The random stream for `key` of a run seeded `seed`.
    pub(crate) fn rng(seed: u64, key: u64) -> Stream {
        stream(seed, 0, &[key])
    }

    pub(crate) fn elapsed_s(&self) -> f64 {
        self.clock.elapsed().as_secs_f64()
    }

    /// The current layout has objective `cur` (maintained incrementally). If it
    /// beats the best, recompute it exactly (a long chain of additions may
    /// drift on inexact data), record it and tell the caller. Returns the
    /// exact objective when recomputed, `cur` otherwise.
    #[inline]
    pub(crate) fn consider(&mut self, perm: &[usize], cur: f64) -> f64 {
        if cur < self.best {
            let exact = self.problem.objective_of(perm);
            if exact < self.best {
                self.improve(perm, exact);
            }
            exact
        } else {
            cur
        }
    }

    fn improve(&mut self, perm: &[usize], obj: f64) {
        self.best = obj;
        self.best_perm.copy_from_slice(perm);
        let t = self.elapsed_s();
        self.last_improved_s = t;
        self.trace.push(TracePoint { elapsed_s: t, iteration: self.iteration, objective: obj });
        (self.progress)(t, obj);
        // A new best is below every layout kept so far, so it always gets in.
        self.offer(perm, obj);
    }

    /// Offer the current layout to the top-K set (call when `cur < top_threshold`).
    pub(crate) fn offer(&mut self, perm: &[usize], cur: f64) {
        if cur < self.top_threshold {
            let exact = if self.problem.exact { cur } else { self.problem.objective_of(perm) };
            if self.top.offer(exact, perm) {
                self.top_threshold = self.top.threshold();
            }
        }
    }

    /// Whether to stop before the next iteration. The clock is read only when
    /// `self.iteration & clock_mask == 0`, so cheap iterations do not pay for it.
    #[inline]
    pub(crate) fn done(&mut self, clock_mask: u64) -> bool {
        if let Some(n) = self.limits.iterations {
            if self.iteration >= n {
                return true;
            }
        }
        if let Some(t) = self.limits.target {
            if self.best <= t {
                return true;
            }
        }
        if let Some(t) = self.limits.time_s {
            if self.iteration & clock_mask == 0 {
                let now = self.elapsed_s();
                if now >= t {
                    self.out_of_time = true;
                } else if self.limits.stall_share.is_some_and(|s| now - self.last_improved_s >= s * t) {
                    self.out_of_time = true;
                    self.stalled = true;
                }
            }
        }
        self.out_of_time
    }

    /// How far through its budget the run is, in [0, 1] (the larger of the
    /// iteration and time fractions); used by annealing's cooling schedule.
    pub(crate) fn progress_fraction(&self) -> f64 {
        let mut f: f64 = 0.0;
        if let Some(n) = self.limits.iterations {
            f = f.max(self.iteration as f64 / n.max(1) as f64);
        }
        if let Some(t) = self.limits.time_s {
            f = f.max(if t > 0.0 { self.elapsed_s() / t } else { 1.0 });
        }
        f.min(1.0)
    }

    /// The outcome, with every reported cost recomputed from the data as given.
    pub(crate) fn finish(self) -> Outcome {
        let q = self.problem;
        let layout = self.best_perm[..q.n].to_vec();
        let evaluation = q.evaluate_unchecked(&layout);
        let top: Vec<Ranked> = self
            .top
            .sorted()
            .into_iter()
            .map(|(_, l)| Ranked { evaluation: q.evaluate_unchecked(&l), layout: l })
            .collect();
        Outcome {
            layout,
            evaluation,
            iterations: self.iteration,
            elapsed_s: self.elapsed_s(),
            trace: self.trace,
            top,
            stalled: self.stalled,
        }
    }
}
