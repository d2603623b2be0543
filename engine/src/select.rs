//! Selecting the best of k simulated systems: the Kim–Nelson fully sequential procedure.
//!
//! S.-H. Kim and B. L. Nelson, "A fully sequential procedure for
//! indifference-zone selection in simulation", *ACM TOMACS* 11(3):251–273,
//! 2001 (the c = 1 case). After n₀ replications of every system it screens
//! after each further replication, dropping any system whose running mean
//! is clearly behind another's. The allowance W shrinks linearly with the
//! stage, so the procedure ends once a single system is left.
//!
//! The variances that set W are those of *differences* between systems, so
//! common random numbers, which shrink those variances, let it stop sooner.
//! If outputs are normal and independent across replications, and the best
//! system beats every other by at least δ, it selects the best with
//! probability at least the stated confidence.

use std::fmt;

/// Whether a larger or a smaller output is better.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Goal {
    /// Smaller is better (e.g. cycle time, handling cost).
    Minimize,
    /// Larger is better (e.g. throughput).
    Maximize,
}

/// Why a selection could not be set up or fed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SelectError {
    /// Fewer than two systems to choose between.
    TooFewSystems {
        /// The number given.
        k: usize,
    },
    /// Fewer than two first-stage replications: no variance can be estimated.
    TooFewFirstStage {
        /// The number given.
        n0: usize,
    },
    /// The indifference zone δ must be finite and positive.
    BadIndifferenceZone {
        /// The value given.
        delta: f64,
    },
    /// The confidence must lie in (1/k, 1): picking at random already
    /// achieves 1/k, and the constant η is undefined at or below it.
    BadConfidence {
        /// The value given.
        confidence: f64,
        /// The number of systems.
        k: usize,
    },
    /// A stage must give one value per system.
    WrongLength {
        /// The number of systems.
        expected: usize,
        /// The number of values given.
        got: usize,
    },
    /// A surviving system's value was NaN or infinite.
    NonFinite {
        /// The system's index.
        system: usize,
    },
    /// Only one system is left; no further stage is needed.
    Finished,
}

impl fmt::Display for SelectError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::TooFewSystems { k } => write!(f, "selection needs at least 2 systems, got {k}"),
            Self::TooFewFirstStage { n0 } => {
                write!(f, "selection needs at least 2 first-stage replications, got {n0}")
            }
            Self::BadIndifferenceZone { delta } => {
                write!(f, "indifference zone must be finite and positive, got {delta}")
            }
            Self::BadConfidence { confidence, k } => {
                write!(f, "confidence must lie strictly between 1/{k} and 1, got {confidence}")
            }
            Self::WrongLength { expected, got } => {
                write!(f, "a stage needs one value per system ({expected}), got {got}")
            }
            Self::NonFinite { system } => write!(f, "system {system} gave a non-finite value"),
            Self::Finished => write!(f, "selection has already finished"),
        }
    }
}

impl std::error::Error for SelectError {}

fn check_design(k: usize, n0: usize, confidence: f64) -> Result<(), SelectError> {
    if k < 2 {
        return Err(SelectError::TooFewSystems { k });
    }
    if n0 < 2 {
        return Err(SelectError::TooFewFirstStage { n0 });
    }
    if !(confidence > 1.0 / k as f64 && confidence < 1.0) {
        return Err(SelectError::BadConfidence { confidence, k });
    }
    Ok(())
}

/// η = ½[(2α/(k−1))^(−2/(n₀−1)) − 1] with α = 1 − `confidence`.
///
/// # Errors
/// If k < 2, n₀ < 2 or the confidence is outside (1/k, 1).
pub fn kn_eta(k: usize, n0: usize, confidence: f64) -> Result<f64, SelectError> {
    check_design(k, n0, confidence)?;
    let alpha = 1.0 - confidence;
    let base = 2.0 * alpha / (k - 1) as f64;
    Ok(0.5 * (base.powf(-2.0 / (n0 - 1) as f64) - 1.0))
}

/// h² = 2η(n₀ − 1), the constant that scales the continuation region.
///
/// # Errors
/// As [`kn_eta`].
pub fn kn_h2(k: usize, n0: usize, confidence: f64) -> Result<f64, SelectError> {
    Ok(2.0 * kn_eta(k, n0, confidence)? * (n0 - 1) as f64)
}

/// The state of one Kim–Nelson selection, fed one replication of every system per stage.
///
/// Exact ties never end: two survivors with equal running means past the
/// point where W reaches 0 are both kept (the elimination test is strict),
/// so the caller caps the number of replications and reports the
/// survivors when the cap is reached.
#[derive(Debug, Clone)]
pub struct KimNelson {
    k: usize,
    n0: usize,
    delta: f64,
    goal: Goal,
    h2: f64,
    stage: usize,
    /// First-stage values, stage-major (`first[s * k + i]`), kept until S² is known.
    first: Vec<f64>,
    sums: Vec<f64>,
    /// S²_il, symmetric, `s2[i * k + l]`; zero until stage n₀.
    s2: Vec<f64>,
    survivors: Vec<usize>,
    eliminated_at: Vec<Option<usize>>,
    /// Systems dropped at the latest stage; reused so stages do not allocate.
    newly: Vec<usize>,
}

impl KimNelson {
    /// A selection among `k` systems with `n0` first-stage replications, to
    /// pick the best with probability `confidence` whenever it beats the
    /// rest by at least `delta`.
    ///
    /// # Errors
    /// If k < 2, n₀ < 2, δ is not finite and positive, or the confidence is
    /// outside (1/k, 1).
    pub fn new(k: usize, n0: usize, confidence: f64, delta: f64, goal: Goal) -> Result<Self, SelectError> {
        let h2 = kn_h2(k, n0, confidence)?;
        if !(delta > 0.0 && delta.is_finite()) {
            return Err(SelectError::BadIndifferenceZone { delta });
        }
        Ok(Self {
            k,
            n0,
            delta,
            goal,
            h2,
            stage: 0,
            first: vec![0.0; n0 * k],
            sums: vec![0.0; k],
            s2: vec![0.0; k * k],
            survivors: (0..k).collect(),
            eliminated_at: vec![None; k],
            newly: Vec::with_capacity(k),
        })
    }

    /// Feeds stage r (the r-th replication): `values[i]` is system i's output.
    ///
    /// Values of systems already eliminated are ignored and may be anything,
    /// NaN included, so a caller can skip simulating them. Returns the
    /// systems eliminated at this stage (none before stage n₀). On error
    /// nothing is recorded.
    ///
    /// # Errors
    /// [`SelectError::WrongLength`] unless there is one value per system,
    /// [`SelectError::NonFinite`] for a surviving system's NaN or infinity,
    /// [`SelectError::Finished`] once one system is left.
    pub fn observe(&mut self, values: &[f64]) -> Result<&[usize], SelectError> {
        if self.is_done() {
            return Err(SelectError::Finished);
        }
        if values.len() != self.k {
            return Err(SelectError::WrongLength { expected: self.k, got: values.len() });
        }
        if let Some(&system) = self.survivors.iter().find(|&&i| !values[i].is_finite()) {
            return Err(SelectError::NonFinite { system });
        }
        self.newly.clear();
        let k = self.k;
        if self.stage < self.n0 {
            self.first[self.stage * k..(self.stage + 1) * k].copy_from_slice(values);
        }
        for &i in &self.survivors {
            self.sums[i] += values[i];
        }
        self.stage += 1;
        if self.stage < self.n0 {
            return Ok(&self.newly);
        }
        if self.stage == self.n0 {
            self.first_stage_variances();
        }

        // The test X̄_i < X̄_l − W_il, multiplied through by r, compares sums:
        // Σ(X_i − X_l) < −max{0, h²S²_il/(2δ) − δr/2}. Every survivor has r
        // values. Each i is judged against all survivors of the previous
        // stage, including those dropped at this one, as the procedure says.
        let r = self.stage as f64;
        let sign = match self.goal {
            Goal::Maximize => 1.0,
            Goal::Minimize => -1.0,
        };
        for &i in &self.survivors {
            let beaten = self.survivors.iter().any(|&l| {
                let allowance =
                    (self.h2 * self.s2[i * k + l] / (2.0 * self.delta) - self.delta * r / 2.0).max(0.0);
                l != i && sign * (self.sums[i] - self.sums[l]) < -allowance
            });
            if beaten {
                self.eliminated_at[i] = Some(self.stage);
                self.newly.push(i);
            }
        }
        let eliminated_at = &self.eliminated_at;
        self.survivors.retain(|&i| eliminated_at[i].is_none());
        Ok(&self.newly)
    }

    /// S²_il over the first n₀ stages, by two passes (the differences may be
    /// small beside the outputs, which is exactly the common-random-numbers case).
    fn first_stage_variances(&mut self) {
        let (k, n0) = (self.k, self.n0);
        let diff = |s: usize, i: usize, l: usize| self.first[s * k + i] - self.first[s * k + l];
        for i in 0..k {
            for l in i + 1..k {
                let mean = (0..n0).map(|s| diff(s, i, l)).sum::<f64>() / n0 as f64;
                let ss = (0..n0).map(|s| (diff(s, i, l) - mean).powi(2)).sum::<f64>();
                let var = ss / (n0 - 1) as f64;
                self.s2[i * k + l] = var;
                self.s2[l * k + i] = var;
            }
        }
    }

    /// The systems still in contention, in increasing index order.
    pub fn survivors(&self) -> &[usize] {
        &self.survivors
    }

    /// Whether a single system is left.
    pub fn is_done(&self) -> bool {
        self.survivors.len() == 1
    }

    /// The selected system, once a single one is left.
    pub fn winner(&self) -> Option<usize> {
        match self.survivors[..] {
            [w] => Some(w),
            _ => None,
        }
    }

    /// The number of stages (replications of each survivor) fed so far.
    pub fn stage(&self) -> usize {
        self.stage
    }

    /// The stage at which system `i` was eliminated; `None` while it survives
    /// or if there is no such system.
    pub fn eliminated_at(&self, i: usize) -> Option<usize> {
        self.eliminated_at.get(i).copied().flatten()
    }

    /// Replications counted for system `i`: up to its elimination, or all
    /// stages so far for a survivor (0 for no such system).
    pub fn observations(&self, i: usize) -> usize {
        if i >= self.k {
            return 0;
        }
        self.eliminated_at(i).unwrap_or(self.stage)
    }

    /// Running mean of system `i` over [`observations`](Self::observations)
    /// replications; `None` before the first stage or if there is no such system.
    pub fn mean(&self, i: usize) -> Option<f64> {
        let n = self.observations(i);
        (n > 0).then(|| self.sums[i] / n as f64)
    }

    /// The number of systems.
    pub fn k(&self) -> usize {
        self.k
    }

    /// The constant h² in use.
    pub fn h2(&self) -> f64 {
        self.h2
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::streams::{stream, Stream};
    use rand::RngExt;
    use rand_distr::StandardNormal;

    /// Feeds stages from `draw(stage, &mut values)` until one system is left,
    /// with a cap far above any stage these tests can reach (the procedure
    /// ends by stage ⌈h²·max S²/δ²⌉).
    fn run(kn: &mut KimNelson, mut draw: impl FnMut(&mut [f64])) {
        let mut values = vec![0.0; kn.k()];
        while !kn.is_done() {
            assert!(kn.stage() < 1_000_000, "selection did not end");
            draw(&mut values);
            kn.observe(&values).unwrap();
        }
    }

    fn normal(rng: &mut Stream) -> f64 {
        rng.sample(StandardNormal)
    }

    #[test]
    fn eta_and_h2_by_hand() {
        // Formulas of Kim & Nelson (2001) as quoted in docs/formulas.md §13.
        // k = 2, n₀ = 10, confidence 0.95: α = 0.05, 2α/(k−1) = 0.1,
        // 0.1^(−2/9) = 10^(2/9) = e^(0.222222·2.302585) = e^(0.511686) = 1.668101,
        // η = ½(1.668101 − 1) = 0.334050, h² = 2·0.334050·9 = 6.012905.
        // python3: 1.6681005372000584, η 0.3340502686000292, h² 6.012904834800525.
        // k = 5, n₀ = 20, 0.95: 2α/(k−1) = 0.025, 0.025^(−2/19) = 40^(2/19)
        // = e^(0.105263·3.688879) = e^(0.388303) = 1.474477, η = 0.237238,
        // h² = 2·0.237238·19 = 9.015056.
        // python3: 1.4744766310703874, η 0.2372383155351937, h² 9.01505599033736.
        // k = 4, n₀ = 10, 0.95: 2α/3 = 1/30, 30^(2/9) = e^(0.222222·3.401197)
        // = e^(0.755822) = 2.129360, η = 0.564680, h² = 18·0.564680 = 10.164243.
        // python3: 2.129360373237664, η 0.564680186618832, h² 10.164243359138975.
        // Tolerance 1e-9: the powf/exp rounding is ~1e-15 relative.
        for (k, n0, eta, h2) in [
            (2, 10, 0.3340502686000292, 6.012904834800525),
            (5, 20, 0.2372383155351937, 9.01505599033736),
            (4, 10, 0.564680186618832, 10.164243359138975),
        ] {
            assert!((kn_eta(k, n0, 0.95).unwrap() - eta).abs() < 1e-9, "eta k {k} n0 {n0}");
            assert!((kn_h2(k, n0, 0.95).unwrap() - h2).abs() < 1e-9, "h2 k {k} n0 {n0}");
        }
    }

    #[test]
    fn bad_designs_are_rejected() {
        // Conditions stated with the procedure (docs/formulas.md §13): k ≥ 2, n₀ ≥ 2,
        // δ > 0; confidence above 1/k, which random choice already achieves.
        let g = Goal::Maximize;
        assert_eq!(KimNelson::new(1, 10, 0.95, 1.0, g).unwrap_err(), SelectError::TooFewSystems { k: 1 });
        assert_eq!(KimNelson::new(3, 1, 0.95, 1.0, g).unwrap_err(), SelectError::TooFewFirstStage { n0: 1 });
        for delta in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(
                KimNelson::new(3, 10, 0.95, delta, g),
                Err(SelectError::BadIndifferenceZone { .. })
            ));
        }
        for c in [0.25, 0.2, 1.0, f64::NAN] {
            assert!(matches!(KimNelson::new(4, 10, c, 1.0, g), Err(SelectError::BadConfidence { .. })));
        }
        assert!(KimNelson::new(4, 10, 0.26, 1.0, g).is_ok());
    }

    #[test]
    fn bad_stages_are_rejected_and_leave_no_trace() {
        let mut kn = KimNelson::new(3, 2, 0.9, 1.0, Goal::Maximize).unwrap();
        assert_eq!(kn.observe(&[1.0, 2.0]).unwrap_err(), SelectError::WrongLength { expected: 3, got: 2 });
        assert_eq!(kn.observe(&[1.0, f64::NAN, 2.0]).unwrap_err(), SelectError::NonFinite { system: 1 });
        assert_eq!(kn.stage(), 0);
        assert_eq!(kn.mean(0), None);
    }

    #[test]
    fn zero_variance_picks_the_best_mean_at_stage_n0() {
        // Constant outputs: every S² is 0, so W = 0 and any shortfall, however
        // small, eliminates at the first screening (definition of W, §13).
        let mut kn = KimNelson::new(3, 5, 0.95, 1.0, Goal::Maximize).unwrap();
        for _ in 0..4 {
            assert!(kn.observe(&[1.0, 3.0, 2.999]).unwrap().is_empty());
        }
        assert_eq!(kn.observe(&[1.0, 3.0, 2.999]).unwrap(), &[0, 2]);
        assert_eq!(kn.winner(), Some(1));
        assert_eq!(kn.eliminated_at(0), Some(5));
        assert_eq!(kn.observe(&[1.0, 3.0, 2.999]).unwrap_err(), SelectError::Finished);
    }

    #[test]
    fn exact_ties_never_end_and_eliminated_values_are_ignored() {
        // The elimination test is strict (§13), so equal means survive together.
        let mut kn = KimNelson::new(3, 5, 0.95, 1.0, Goal::Minimize).unwrap();
        for _ in 0..5 {
            kn.observe(&[4.0, 4.0, 9.0]).unwrap();
        }
        assert_eq!(kn.survivors(), &[0, 1]);
        for _ in 0..1000 {
            kn.observe(&[4.0, 4.0, f64::NAN]).unwrap();
        }
        assert_eq!(kn.survivors(), &[0, 1]);
        assert_eq!(kn.winner(), None);
        assert_eq!(kn.observations(2), 5);
        assert_eq!(kn.mean(2), Some(9.0));
        assert_eq!(kn.mean(0), Some(4.0));
        assert_eq!(kn.mean(7), None);
    }

    #[test]
    fn well_separated_systems_are_sorted_out_at_once() {
        // Means 2, 0, 10, 3, 1 with unit noise, δ = 0.5, n₀ = 10, 0.95.
        // At stage 10, h² = 11.43 (k = 5: 0.025^(−2/9) = 2.2699, η = 0.635)
        // and S² ≈ 2, so the allowance on the sum is ≈ 11.43·2/1 − 2.5 ≈ 20,
        // far below the sum gap of ≈ 100 between the best and the worst.
        let mu = [2.0, 0.0, 10.0, 3.0, 1.0];
        for (goal, best, worst) in [(Goal::Maximize, 2, 1), (Goal::Minimize, 1, 2)] {
            let mut rng = stream(11, 0, &[1]);
            let mut kn = KimNelson::new(5, 10, 0.95, 0.5, goal).unwrap();
            run(&mut kn, |v| {
                for (x, m) in v.iter_mut().zip(mu) {
                    *x = m + normal(&mut rng);
                }
            });
            assert_eq!(kn.winner(), Some(best), "{goal:?}");
            assert_eq!(kn.eliminated_at(worst), Some(10), "{goal:?}");
        }
    }

    /// Mean of the final stage over `reps` selections among means 0, δ, 2δ
    /// whose noise is `common`·Z_r (shared) plus `own`·e_ir (per system).
    fn mean_stages(reps: u64, common: f64, own: f64, seed: u64) -> f64 {
        let delta = 0.25;
        let mut total = 0;
        for rep in 0..reps {
            let mut rng = stream(seed, rep, &[2]);
            let mut kn = KimNelson::new(3, 10, 0.95, delta, Goal::Maximize).unwrap();
            run(&mut kn, |v| {
                let z = normal(&mut rng);
                for (i, x) in v.iter_mut().enumerate() {
                    *x = i as f64 * delta + common * z + own * normal(&mut rng);
                }
            });
            total += kn.stage();
        }
        total as f64 / reps as f64
    }

    #[test]
    fn common_noise_stops_sooner() {
        // Same marginal variance 4.0625 either way; Var(X_i − X_l) is 0.125
        // with the shared term and 8.125 without (Var(D) = σ₁² + σ₂² − 2Cov,
        // docs/formulas.md §13). The stopping stage scales with h²S²/δ² (17 against
        // ~1100 at most here), so a factor of 4 is a very safe margin.
        let crn = mean_stages(20, 2.0, 0.25, 5);
        let indep = mean_stages(20, 0.0, 4.0625f64.sqrt(), 5);
        assert!(crn * 4.0 < indep, "CRN {crn} stages vs independent {indep}");
    }

    #[test]
    fn probability_of_correct_selection_holds_in_the_slippage_configuration() {
        // Kim & Nelson (2001) guarantee P(correct) ≥ 0.95 when the best mean
        // leads the others by exactly δ (the least favourable configuration).
        // k = 4, σ = 1, δ = 0.5, n₀ = 10; 400 independent macro-replications.
        // Binomial margin: 3 standard errors of a proportion at P = 0.95,
        // 3·√(0.95·0.05/400) = 3·0.010897 = 0.0327, so require ≥ 0.9173. The
        // procedure is conservative, so it should clear this comfortably.
        let (k, delta, reps) = (4, 0.5, 400u64);
        let mut correct = 0;
        for rep in 0..reps {
            let best = (rep % k as u64) as usize;
            let mut rng = stream(2001, rep, &[3]);
            let mut kn = KimNelson::new(k, 10, 0.95, delta, Goal::Maximize).unwrap();
            run(&mut kn, |v| {
                for (i, x) in v.iter_mut().enumerate() {
                    *x = if i == best { delta } else { 0.0 } + normal(&mut rng);
                }
            });
            correct += usize::from(kn.winner() == Some(best));
        }
        let pcs = correct as f64 / reps as f64;
        assert!(pcs >= 0.95 - 0.0327, "P(correct selection) {pcs}");
    }
}
