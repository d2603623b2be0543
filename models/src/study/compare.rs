//! Comparing layouts under common random numbers: each demand level's summaries, paired differences and ranks.
//!
//! Replication `r` of every layout sees the same lots, processing times and
//! routing choices (common random numbers, see `sim`), so results are compared
//! replication by replication: the paired difference `Y_l,r − Y_base,r` has a
//! much smaller variance than two independent means whenever the two layouts'
//! results move together (Law, *Simulation Modeling and Analysis*, chapter on
//! comparing alternative systems; from memory).

use layflow_engine::{paired_difference, Interval};
use serde::Serialize;

use crate::analysis::StaticPicture;
use crate::metrics::by_bucket::{bucket_metrics, bucket_values};
use crate::metrics::estimate::{Estimate, CONFIDENCE};
use crate::metrics::list::{values_mean, Metric};
use crate::metrics::registry::{Better, Scope};
use crate::metrics::summary::{LayoutAccumulator, LayoutSummary};
use crate::plant::Plant;
use crate::sim::{Plan, RepStats, RunSpec};
use crate::text::num;
use crate::timebuckets::Grid;

use super::progress::{Progress, StudyError};
use super::replicate::replicate_fold;
use super::select::{self, Selection};
use super::warmup::WarmupChoice;

/// Everything `compare` found, as written to JSON.
#[derive(Serialize)]
pub struct CompareOutput {
    /// The plant's name.
    pub plant: String,
    /// The scenario file, as given.
    pub scenario: String,
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Warm-up, s.
    pub warmup_s: f64,
    /// Present when `--warmup auto` chose the warm-up.
    pub warmup_auto: Option<WarmupChoice>,
    /// Replications per layout (without selection).
    pub replications: u32,
    /// Base seed.
    pub seed: u64,
    /// Confidence of every interval.
    pub confidence: f64,
    /// Replication r of every layout saw the same lots (always true).
    pub common_random_numbers: bool,
    /// The layout every other is compared against.
    pub baseline: String,
    /// The metric that ranks (and selects), by label.
    pub ranked_on: String,
    /// One entry per demand level.
    pub levels: Vec<Level>,
    /// Events simulated, every layout and level.
    pub events: u64,
    /// Wall-clock seconds (left out with --no-wall-clock).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub wall_s: Option<f64>,
}

/// The layouts at one demand level.
#[derive(Serialize)]
pub struct Level {
    /// The demand factor of this level.
    pub demand_factor: f64,
    /// Departments predicted at or over capacity at this level (queues grow without bound).
    pub overloaded: Vec<String>,
    /// Each layout's summary, in the order compared.
    pub layouts: Vec<LayoutSummary>,
    /// Paired differences of every metric, each layout against the baseline.
    pub differences: Vec<Difference>,
    /// Static and simulated rank of each layout.
    pub ranking: Vec<Rank>,
    /// What `--select` did, when asked.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub selection: Option<Selection>,
    /// `values[layout][replication][metric]`, for the tidy CSV.
    #[serde(skip)]
    pub values: Vec<Vec<Vec<f64>>>,
    /// With `--by`: paired differences of every bucketed metric in every
    /// bucket, each layout against the baseline (tidy rows).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub bucket_differences: Vec<BucketDifference>,
}

/// A paired difference `layout − baseline` of one metric in one time bucket
/// (the pairs: replications where both observed the metric in this bucket).
#[derive(Serialize)]
pub struct BucketDifference {
    /// The bucket's label.
    pub bucket: String,
    /// The difference in that bucket; its fields sit beside `bucket` in JSON.
    #[serde(flatten)]
    pub difference: Difference,
}

/// A paired difference `layout − baseline` of one metric.
#[derive(Serialize)]
pub struct Difference {
    /// The layout compared with the baseline.
    pub layout: String,
    /// The metric's scope.
    pub scope: Scope,
    /// The product, department, fleet or segment; empty for the plant.
    pub subject: String,
    /// The metric's registry name.
    pub metric: &'static str,
    /// Mean of layout − baseline over the pairs.
    pub mean: f64,
    /// Half-width of the 95% paired-t interval.
    pub half_width: Option<f64>,
    /// Pairs counted (replications where both observed the metric).
    pub n: usize,
    /// The interval excludes zero: a real difference, not noise.
    pub excludes_zero: bool,
}

impl Difference {
    /// The paired difference of `metric` between `layout` (its values per
    /// replication) and the baseline's values.
    fn paired(layout: &str, metric: &Metric, values: &[f64], baseline: &[f64]) -> Difference {
        let iv = paired(values, baseline);
        Difference {
            layout: layout.to_string(),
            scope: metric.scope,
            subject: metric.subject.clone(),
            metric: metric.name,
            mean: iv.mean,
            half_width: iv.half_width,
            n: iv.n,
            excludes_zero: iv.excludes_zero(),
        }
    }

    /// Its mean and interval.
    pub fn estimate(&self) -> Estimate {
        Estimate { mean: self.mean, half_width: self.half_width, n: self.n }
    }
}

/// Static and simulated rank of one layout.
#[derive(Serialize)]
pub struct Rank {
    /// The layout.
    pub layout: String,
    /// Its static load-distance, load-metres per hour.
    pub load_distance_static_m_per_h: f64,
    /// Rank by static load-distance (1 = lowest).
    pub static_rank: usize,
    /// Its mean of the ranking metric over replications.
    pub simulated_mean: f64,
    /// Rank by that mean (1 = best).
    pub simulated_rank: usize,
}

/// What to compare: the layouts, the baseline among them, the demand levels and the run settings.
pub struct Request<'a> {
    /// The plant.
    pub plant: &'a Plant,
    /// Layout indices compared, in report order.
    pub layouts: &'a [usize],
    /// Position of the baseline in `layouts`.
    pub baseline: usize,
    /// Demand factors, one level each.
    pub levels: &'a [f64],
    /// The plant's listed metrics.
    pub metrics: &'a [Metric],
    /// Index in `metrics` of the metric that ranks (and selects).
    pub ranked_on: usize,
    /// Kim–Nelson selection instead of a fixed number of replications.
    pub selection: Option<&'a select::Settings>,
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Warm-up, s.
    pub warmup_s: f64,
    /// Replications per layout (without selection).
    pub replications: u32,
    /// Base seed.
    pub seed: u64,
    /// Also compare by time bucket (`--by`).
    pub grid: Option<&'a Grid>,
}

/// Replications each level needs without selection (for a progress total).
pub fn planned_replications(req: &Request) -> u64 {
    if req.selection.is_some() {
        0
    } else {
        (req.layouts.len() as u64 * u64::from(req.replications)) * req.levels.len() as u64
    }
}

/// Simulate every level on the current rayon pool and compare.
pub fn run(req: &Request, progress: &dyn Progress) -> Result<Vec<Level>, StudyError> {
    let plant = req.plant;
    let which = req.layouts;
    let mut out = Vec::with_capacity(req.levels.len());
    for &factor in req.levels {
        let pic = StaticPicture::new(plant, factor);
        let (horizon_s, warmup_s, seed) = (req.horizon_s, req.warmup_s, req.seed);
        let spec = |l: usize| RunSpec { layout: l, horizon_s, warmup_s, demand_factor: factor, seed };
        let plans: Vec<Plan> = which
            .iter()
            .map(|&l| {
                let plan = Plan::new(plant, l);
                match req.grid {
                    Some(g) => plan.with_buckets(g.clone()),
                    None => plan,
                }
            })
            .collect();
        // Each layout keeps its summary's moments and each replication's
        // listed values (the paired differences and the CSV need them); the
        // replications themselves are dropped as they are folded.
        let mut kept: Vec<Kept> = which.iter().map(|_| Kept::new(plant, req.grid)).collect();
        let chosen = match req.selection {
            Some(sel) => {
                let mut fold = |li: usize, r: &RepStats| kept[li].add(plant, req.metrics, r);
                Some(select::run(
                    plant,
                    which,
                    &plans,
                    &spec,
                    req.ranked_on,
                    sel,
                    factor,
                    progress,
                    &mut fold,
                )?)
            }
            None => {
                for ((&l, plan), k) in which.iter().zip(&plans).zip(&mut kept) {
                    progress.stage(format!("layout {}, demand ×{}", plant.layouts[l].name, num(factor)));
                    let range = 0..u64::from(req.replications);
                    replicate_fold(
                        plan,
                        &spec(l),
                        range,
                        |r| progress.done(r),
                        |_, r| k.add(plant, req.metrics, &r),
                    );
                }
                None
            }
        };
        for (&l, k) in which.iter().zip(&kept) {
            if let Some(why) = k.acc.deadlock() {
                return Err(StudyError::Run(format!("layout {}: {why}", plant.layouts[l].name)));
            }
        }
        out.push(level(
            plant,
            which,
            req.baseline,
            &pic,
            factor,
            &spec,
            kept,
            chosen,
            req.metrics,
            req.ranked_on,
        ));
    }
    Ok(out)
}

#[allow(clippy::too_many_arguments)]
/// One level's summaries, paired differences against the baseline, and ranks.
pub fn level(
    plant: &Plant,
    which: &[usize],
    baseline: usize,
    pic: &StaticPicture,
    factor: f64,
    spec: &(dyn Fn(usize) -> RunSpec + Sync),
    kept: Vec<Kept>,
    selection: Option<Selection>,
    metric_list: &[Metric],
    ranked_on: usize,
) -> Level {
    let summaries: Vec<LayoutSummary> =
        which.iter().zip(&kept).map(|(&l, k)| k.acc.finish(&spec(l), pic)).collect();
    let bucket_differences = bucket_differences(plant, which, baseline, &kept, &summaries);
    let values: Vec<Vec<Vec<f64>>> = kept.into_iter().map(|k| k.values).collect();
    let column = |li: usize, m: usize| -> Vec<f64> { values[li].iter().map(|v| v[m]).collect() };
    let mut differences = Vec::new();
    for (li, &l) in which.iter().enumerate() {
        if li == baseline {
            continue;
        }
        for (m, metric) in metric_list.iter().enumerate() {
            let name = &plant.layouts[l].name;
            differences.push(Difference::paired(name, metric, &column(li, m), &column(baseline, m)));
        }
    }
    let static_ld: Vec<f64> = summaries.iter().map(|s| s.load_distance_static_m_per_h).collect();
    let sim_mean: Vec<f64> =
        (0..which.len()).map(|li| values_mean(&values[li], ranked_on).unwrap_or(f64::NAN)).collect();
    let static_rank = ranks(&static_ld, Better::Lower);
    let sim_rank = ranks(&sim_mean, metric_list[ranked_on].better);
    let ranking = which
        .iter()
        .enumerate()
        .map(|(li, &l)| Rank {
            layout: plant.layouts[l].name.clone(),
            load_distance_static_m_per_h: static_ld[li],
            static_rank: static_rank[li],
            simulated_mean: sim_mean[li],
            simulated_rank: sim_rank[li],
        })
        .collect();
    Level {
        demand_factor: factor,
        overloaded: pic.overloaded().map(|d| plant.departments[d].id.clone()).collect(),
        layouts: summaries,
        differences,
        ranking,
        selection,
        values,
        bucket_differences,
    }
}

/// Paired differences `layout − baseline` of every bucketed metric in every
/// bucket (`--by`), bucket by bucket; empty without buckets.
fn bucket_differences(
    plant: &Plant,
    which: &[usize],
    baseline: usize,
    kept: &[Kept],
    summaries: &[LayoutSummary],
) -> Vec<BucketDifference> {
    let Some(labels) = summaries[baseline].by_bucket.as_ref().map(|b| &b.buckets) else {
        return Vec::new();
    };
    let list = bucket_metrics(plant);
    let column =
        |li: usize, b: usize, m: usize| -> Vec<f64> { kept[li].by_values.iter().map(|v| v[b][m]).collect() };
    let mut out = Vec::new();
    for (li, &l) in which.iter().enumerate() {
        if li == baseline {
            continue;
        }
        for (b, info) in labels.iter().enumerate() {
            for (m, metric) in list.iter().enumerate() {
                let name = &plant.layouts[l].name;
                let difference = Difference::paired(name, metric, &column(li, b, m), &column(baseline, b, m));
                out.push(BucketDifference { bucket: info.bucket.clone(), difference });
            }
        }
    }
    out
}

/// What a comparison keeps of one layout's replications: its summary's
/// accumulator (constant memory) and each replication's listed metric values
/// (8 bytes per metric per replication), for the paired differences, the
/// ranking and `replications.csv`.
pub struct Kept<'a> {
    /// The layout's summary so far.
    pub acc: LayoutAccumulator<'a>,
    /// `values[replication][metric]`, in the order of the listed metrics.
    pub values: Vec<Vec<f64>>,
    /// With buckets: `by_values[replication][bucket][metric]`, in the order
    /// of `bucket_metrics` (8 bytes per bucket and metric per replication).
    pub by_values: Vec<Vec<Vec<f64>>>,
    /// The bucketed metrics (empty without buckets).
    by_list: Vec<Metric>,
}

impl<'a> Kept<'a> {
    /// Nothing kept yet; with `grid`, each replication's buckets too.
    pub fn new(plant: &'a Plant, grid: Option<&Grid>) -> Kept<'a> {
        Kept {
            acc: LayoutAccumulator::new(plant).with_buckets(grid),
            values: Vec::new(),
            by_values: Vec::new(),
            by_list: if grid.is_some() { bucket_metrics(plant) } else { Vec::new() },
        }
    }

    /// Fold in the layout's next replication.
    pub fn add(&mut self, plant: &Plant, metric_list: &[Metric], r: &RepStats) {
        self.values.push(metric_list.iter().map(|m| m.value(plant, r)).collect());
        if self.by_list.is_empty() {
            self.acc.add(r);
        } else {
            // Computed once: the summary's buckets and the paired differences both read them.
            let buckets = bucket_values(plant, &self.by_list, r);
            self.acc.add_with_buckets(r, Some(&buckets));
            self.by_values.push(buckets);
        }
    }
}

/// Paired-t interval of `layout − baseline` for one metric, over the
/// replications where both observed it (a replication with no observation
/// on either side is left out of the pair). `n` says how many pairs counted.
pub fn paired(layout: &[f64], baseline: &[f64]) -> Interval {
    let (a, b): (Vec<f64>, Vec<f64>) = layout
        .iter()
        .zip(baseline)
        .filter(|(x, y)| x.is_finite() && y.is_finite())
        .map(|(&x, &y)| (x, y))
        .unzip();
    paired_difference(&a, &b, CONFIDENCE)
}

/// Ranks 1, 2, … of `scores` (best first); equal scores share the better rank.
/// NaN scores (nothing observed) rank last.
pub fn ranks(scores: &[f64], better: Better) -> Vec<usize> {
    let key = |x: f64| match better {
        Better::Higher => -x,
        _ => x,
    };
    scores
        .iter()
        .map(|&s| {
            if !s.is_finite() {
                return scores.iter().filter(|x| x.is_finite()).count() + 1;
            }
            1 + scores.iter().filter(|&&o| o.is_finite() && key(o) < key(s)).count()
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pairs_with_a_missing_side_are_left_out() {
        // Differences of the complete pairs: 1, 3 → mean 2 (hand-computed).
        let iv = paired(&[5.0, f64::NAN, 7.0, 9.0], &[4.0, 3.0, 4.0, f64::NAN]);
        assert_eq!((iv.mean, iv.n), (2.0, 2));
    }

    #[test]
    fn ranks_follow_the_better_direction_and_share_ties() {
        assert_eq!(ranks(&[3.0, 1.0, 2.0, 1.0], Better::Lower), vec![4, 1, 3, 1]);
        assert_eq!(ranks(&[3.0, 1.0, 2.0], Better::Higher), vec![1, 3, 2]);
        assert_eq!(ranks(&[f64::NAN, 1.0], Better::Lower), vec![2, 1]);
    }
}
