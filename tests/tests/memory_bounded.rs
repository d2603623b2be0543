//! Memory bounded in replications: a layout's summary keeps a fixed number of values per metric, however many replications fold into it.

use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::estimate::CHUNK;
use layflow_models::metrics::{est, Id, LayoutAccumulator};
use layflow_models::sim::{Plan, RunSpec};
use layflow_models::study::replicate_fold;
use layflow_tests::load;

#[test]
fn a_summary_holds_the_same_values_after_any_number_of_replications() {
    // M/M/1 validation plant, one day per replication: cheap, and every
    // replication ships lots, so every metric it reports is observed.
    let plant = load("validation/mm1.yaml");
    let spec = RunSpec { layout: 0, horizon_s: 86_400.0, warmup_s: 3_600.0, demand_factor: 1.0, seed: 11 };
    let plan = Plan::new(&plant, 0);
    let picture = StaticPicture::new(&plant, 1.0);
    let mut acc = LayoutAccumulator::new(&plant);
    let mut throughput = Vec::new();
    let mut retained_at = Vec::new();
    let n = 3 * CHUNK as u64 + 5;
    replicate_fold(
        &plan,
        &spec,
        0..n,
        |_| {},
        |r, rep| {
            throughput.push(layflow_models::metrics::value(Id::Throughput, &plant, &rep, 0));
            acc.add(&rep);
            if (r + 1) % CHUNK as u64 == 5 {
                retained_at.push(acc.retained_values());
            }
        },
    );
    assert_eq!(acc.replications(), n);
    // What the summary holds after 5, CHUNK + 5, 2·CHUNK + 5 and 3·CHUNK + 5
    // replications is the same: 5 values per metric at most, never the replications.
    assert_eq!(retained_at.len(), 4);
    assert!(retained_at.iter().all(|&k| k == retained_at[0]), "{retained_at:?}");
    assert!(retained_at[0] <= 5 * acc.metric_count());
    // The folded estimate is the estimate over every value: the mean to the
    // last bit (the same running sum), the half-width to 1e-12 relative
    // (sums of 197 terms either way, each within n·ε ≈ 4e-14).
    let s = acc.finish(&spec, &picture);
    let all = est(throughput.iter().copied());
    assert_eq!((s.throughput_per_h.mean, s.throughput_per_h.n), (all.mean, all.n));
    let (a, b) = (s.throughput_per_h.half_width.unwrap(), all.half_width.unwrap());
    assert!((a - b).abs() <= 1e-12 * b, "{a} against {b}");
}
