//! Pilot.
use layflow_tests::*;
#[test]
fn pilot() {
    for f in [
        "mm1",
        "mmc-erlang-c",
        "md1",
        "mg1-erlang2",
        "mg1-uniform",
        "jackson-rework",
        "mover-md1",
        "mover-travel-kmh",
        "hand-checked-static",
        "../demo",
    ] {
        let plant = load(&format!("validation/{f}.yaml"));
        let t = std::time::Instant::now();
        for l in 0..plant.layouts.len().min(2) {
            let run = run_layout(&plant, l);
            let s = &run.summary;
            println!("{f} l{l}: took {:?} events {}", t.elapsed(), s.events);
            println!(
                "  wip {:?}\n  flow {:.4} ± {:.4}\n  X {:?} little {:e}",
                s.wip_mean,
                s.flow_time_s.mean / 3600.0,
                s.flow_time_s.half_width.unwrap() / 3600.0,
                s.throughput_per_h,
                s.little_relative_gap
            );
            for d in &s.departments {
                println!(
                    "  {} wip {:.4}±{:.4} q {:.4}±{:.4} u {:.4}±{:.5} pred {:.4}",
                    d.department,
                    d.wip_mean.mean,
                    d.wip_mean.half_width.unwrap(),
                    d.queue_mean.mean,
                    d.queue_mean.half_width.unwrap(),
                    d.utilization.mean,
                    d.utilization.half_width.unwrap(),
                    d.utilization_predicted
                );
            }
            for p in &s.products {
                println!(
                    "  {} flow {:.4}±{:.4}",
                    p.product,
                    p.flow_time_s.mean / 3600.0,
                    p.flow_time_s.half_width.unwrap() / 3600.0
                );
            }
            for fl in &s.fleets {
                println!("  {:?}", fl);
            }
            println!("  dist {:?} static {}", s.distance_loaded_m_per_h, s.load_distance_static_m_per_h);
            println!("  move wait {:?} transit {:?}", s.move_wait_s, s.wip_in_transit_mean);
        }
    }
}
