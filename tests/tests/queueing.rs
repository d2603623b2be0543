//! Pilot.
use layflow_tests::*;
#[test]
fn pilot() {
    let plant = load("validation/mm1.yaml");
    let t = std::time::Instant::now();
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    println!("{:?} events {} took {:?}", s.wip_mean, s.events, t.elapsed());
    println!("{:?} {:?}", s.flow_time_s, s.departments[1].queue_mean);
}
