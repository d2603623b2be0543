//! Synthetic plants of real size for benchmarks and trials: departments on a grid, products with 4–12 operations and branches, several fleets, loads balanced below capacity.
//!
//! The plant is invented and seeded: the same [`Spec`] always gives the same
//! scenario text. Demand and machine counts are set from the routings so
//! that every department runs at a stated utilisation, which keeps a long
//! run in a steady state instead of an overload (a generated plant that
//! cannot keep up measures nothing).

use std::fmt::Write as _;

/// What to generate.
#[derive(Debug, Clone)]
pub struct Spec {
    /// Work departments (docks come on top).
    pub departments: usize,
    /// Products (part numbers).
    pub products: usize,
    /// Fewest operations per product.
    pub min_operations: usize,
    /// Most operations per product.
    pub max_operations: usize,
    /// Fleets (at most 4: forklifts, tow carts, walkers, a second forklift fleet).
    pub fleets: usize,
    /// Lots released per hour, all products together.
    pub lots_per_hour: f64,
    /// The utilisation every department is sized for (machines = ⌈load ÷ this⌉).
    pub utilization: f64,
    /// Seed of the generator (not of the simulation).
    pub seed: u64,
}

impl Default for Spec {
    /// The plant of real size: 80 departments, 1,000 products with
    /// 4–12 operations, 4 fleets.
    fn default() -> Spec {
        Spec {
            departments: 80,
            products: 1_000,
            min_operations: 4,
            max_operations: 12,
            fleets: 4,
            lots_per_hour: 60.0,
            utilization: 0.75,
            seed: 1,
        }
    }
}

/// A small, fixed pseudo-random sequence (SplitMix64): the generator must
/// give the same plant on every machine and version, independent of `rand`.
struct Seq(u64);

impl Seq {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    /// Uniform in [0, 1).
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    /// Uniform integer in [lo, hi].
    fn between(&mut self, lo: usize, hi: usize) -> usize {
        lo + (self.next() % (hi - lo + 1) as u64) as usize
    }
}

/// Groups of departments that product families mostly visit.
const GROUPS: usize = 10;

/// The fleets a generated plant may have, in order: id, kind, count, speed, handling, capacity.
const FLEETS: [(&str, &str, &str, &str); 4] = [
    ("forklifts", "forklift", "{ loaded: 8 km/h, empty: 10 km/h }", "{ load: 40 s, unload: 30 s }"),
    ("tow-carts", "tow-cart", "{ loaded: 6 km/h, empty: 8 km/h }", "{ load: 30 s, unload: 30 s }"),
    ("walkers", "walker", "{ loaded: 0.9 m/s, empty: 1.2 m/s }", "{ load: 15 s, unload: 15 s }"),
    ("reach-trucks", "forklift", "{ loaded: 7 km/h, empty: 9 km/h }", "{ load: 50 s, unload: 40 s }"),
];

/// The scenario text (YAML) of the plant `spec` describes.
pub fn scenario(spec: &Spec) -> String {
    files(spec, false).swap_remove(0).1
}

/// The same plant with its locations, departments, layouts, products, demand
/// and routings as CSV tables: (file name, contents), the scenario
/// (`plant.yaml`, which names the tables beside it) first.
pub fn tables(spec: &Spec) -> Vec<(String, String)> {
    files(spec, true)
}

fn files(spec: &Spec, tables: bool) -> Vec<(String, String)> {
    let nd = spec.departments.max(2);
    let np = spec.products.max(1);
    let nf = spec.fleets.clamp(1, FLEETS.len());
    let (lo, hi) = (spec.min_operations.max(1), spec.max_operations.max(spec.min_operations.max(1)));
    let mut rng = Seq(spec.seed);

    // Routings first: each product's departments, processing means (min) and a rework branch.
    struct Product {
        ops: Vec<(usize, f64)>,
        rework: Option<(usize, f64)>,
        weight: f64,
    }
    let products: Vec<Product> = (0..np)
        .map(|_| {
            let n = rng.between(lo, hi);
            // A job shop's variable path, but not a uniform one: a product
            // belongs to a family that does three operations in four in its
            // own group of departments (every tenth department), the rest
            // anywhere. The starting grid scatters each group, so a search
            // has real flow to gather, as in a plant that grew over time.
            let family = rng.between(0, GROUPS.min(nd) - 1);
            let in_group = (0..nd).filter(|d| d % GROUPS.min(nd) == family).count();
            let mut ops: Vec<(usize, f64)> = Vec::with_capacity(n);
            for _ in 0..n {
                let mut d = if rng.unit() < 0.75 {
                    family + GROUPS.min(nd) * rng.between(0, in_group - 1)
                } else {
                    rng.between(0, nd - 1)
                };
                if ops.last().is_some_and(|&(p, _)| p == d) {
                    d = (d + 1) % nd;
                }
                ops.push((d, 3.0 + 27.0 * rng.unit()));
            }
            // One product in three may send a lot back one step (rework) at its last operation but one.
            let rework = (n >= 3 && rng.unit() < 1.0 / 3.0).then(|| (n - 2, 0.05 + 0.1 * rng.unit()));
            // Demand is skewed, as in most plants: a few runners, many strangers.
            let weight = 1.0 / (1.0 + 20.0 * rng.unit());
            Product { ops, rework, weight }
        })
        .collect();
    let total_weight: f64 = products.iter().map(|p| p.weight).sum();
    let rate = |p: &Product| spec.lots_per_hour * p.weight / total_weight;

    // Each department's load (machine-hours per hour), rework visits included.
    let mut load = vec![0.0; nd];
    for p in &products {
        let visits = p.rework.map_or(1.0, |(_, q)| 1.0 / (1.0 - q));
        for (k, &(d, mean_min)) in p.ops.iter().enumerate() {
            // A rework loop repeats the step it returns to and the one that sends it.
            let v = match p.rework {
                Some((at, _)) if k == at || k == at + 1 => visits,
                _ => 1.0,
            };
            load[d] += rate(p) * v * mean_min / 60.0;
        }
    }
    let machines: Vec<u32> = load.iter().map(|&l| ((l / spec.utilization).ceil() as u32).max(1)).collect();

    let side = (nd as f64).sqrt().ceil() as usize;
    let mut files: Vec<(String, String)> = Vec::new();
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# A synthetic plant of real size (invented, generated by `layflow generate`, seed {}):\n\
         # {nd} departments, {np} products with {lo}–{hi} operations, {nf} fleets, {} lots/h.\n\
         plant: generated plant ({nd} departments, {np} products)\n\
         run: {{ horizon: 30 d, warmup: 2 d, replications: 5, seed: 1 }}\n\
         distance: rectilinear",
        spec.seed, spec.lots_per_hour
    );
    let dock_out_y = (side.saturating_sub(1)) * 12;
    let ids: Vec<String> = (0..np).map(|i| format!("P{i:04}")).collect();
    if tables {
        let mut loc = String::from("Location,X,Y\n");
        for d in 0..nd {
            let _ = writeln!(loc, "L{d:03},{},{}", (d % side) * 12, (d / side) * 12);
        }
        let _ = writeln!(loc, "dock-in,-12,0\ndock-out,-12,{dock_out_y}");
        let mut dep = String::from("Department,Machines,Dock\nreceiving,,receiving\nshipping,,shipping\n");
        for (d, m) in machines.iter().enumerate() {
            let _ = writeln!(dep, "D{d:03},{m},");
        }
        let mut lay =
            String::from("Layout,Department,Location\ngrid,receiving,dock-in\ngrid,shipping,dock-out\n");
        for d in 0..nd {
            let _ = writeln!(lay, "grid,D{d:03},L{d:03}");
        }
        let mut prod = String::from("Part\n");
        let mut dem = String::from("Part,LotsPerHour\n");
        let mut rout = String::from("Part,Op,Name,WorkCentre,Dist,Mean,CV,Next,Prob\n");
        for (i, p) in products.iter().enumerate() {
            let id = &ids[i];
            let _ = writeln!(prod, "{id}");
            let _ = writeln!(dem, "{id},{:.6}", rate(p));
            let n = p.ops.len();
            for (k, &(d, mean)) in p.ops.iter().enumerate() {
                let (next, prob) = match p.rework {
                    Some((at, q)) if k == at + 1 => (
                        format!("{} / {}", (k + 2) * 10, (at + 1) * 10),
                        format!("{:.4} / {:.4}", 1.0 - q, q),
                    ),
                    _ => (String::new(), String::new()),
                };
                let _ = writeln!(
                    rout,
                    "{id},{},op{:03},D{d:03},gamma,{mean:.2},0.5,{next},{prob}",
                    (k + 1) * 10,
                    (k + 1) * 10
                );
            }
            let _ = writeln!(rout, "{id},{},ship,shipping,,,,,", (n + 1) * 10);
        }
        s.push_str(
            "locations: { table: locations.csv, columns: { id: Location, x: X, y: Y } }\n\
             departments: { table: departments.csv, columns: { id: Department, machines: Machines, dock: Dock } }\n\
             layouts: { table: layouts.csv, columns: { layout: Layout, department: Department, location: Location } }\n\
             products: { table: products.csv, columns: { id: Part } }\n\
             demand: { table: demand.csv, columns: { product: Part, per_hour: LotsPerHour } }\n\
             routings:\n  table: routings.csv\n  time_unit: min\n  columns: { part: Part, operation: Op, name: Name, \
             department: WorkCentre, distribution: Dist, mean: Mean, cv: CV, next: Next, probability: Prob }\n",
        );
        files.extend([
            ("locations.csv".to_string(), loc),
            ("departments.csv".to_string(), dep),
            ("layouts.csv".to_string(), lay),
            ("products.csv".to_string(), prod),
            ("demand.csv".to_string(), dem),
            ("routings.csv".to_string(), rout),
        ]);
    } else {
        s.push_str("locations:\n");
        for d in 0..nd {
            let _ = writeln!(s, "  - {{ id: L{d:03}, at: [{}, {}] }}", (d % side) * 12, (d / side) * 12);
        }
        let _ = writeln!(
            s,
            "  - {{ id: dock-in, at: [-12, 0] }}\n  - {{ id: dock-out, at: [-12, {dock_out_y}] }}\ndepartments:\n  \
             - {{ id: receiving, dock: receiving }}\n  - {{ id: shipping, dock: shipping }}"
        );
        for (d, m) in machines.iter().enumerate() {
            let _ = writeln!(s, "  - {{ id: D{d:03}, machines: {m} }}");
        }
        s.push_str("layouts:\n  grid:\n    receiving: dock-in\n    shipping: dock-out\n");
        for d in 0..nd {
            let _ = writeln!(s, "    D{d:03}: L{d:03}");
        }
        s.push_str("products:\n");
        for (i, p) in products.iter().enumerate() {
            let _ =
                writeln!(s, "  - id: {}\n    demand: {{ per_hour: {:.6} }}\n    routing:", ids[i], rate(p));
            let n = p.ops.len();
            for (k, &(d, mean)) in p.ops.iter().enumerate() {
                // Processing times: gamma with a coefficient of variation of 0.5.
                let _ = write!(
                    s,
                    "      - {{ step: op{:03}, at: D{d:03}, time: {{ gamma: {{ mean: {mean:.2} min, cv: 0.5 }} }}",
                    (k + 1) * 10
                );
                if let Some((at, q)) = p.rework.filter(|&(at, _)| k == at + 1) {
                    let next = if k + 1 < n { format!("op{:03}", (k + 2) * 10) } else { "ship".to_string() };
                    let _ = write!(
                        s,
                        ", then: [{{ step: {next}, p: {:.4} }}, {{ step: op{:03}, p: {:.4} }}]",
                        1.0 - q,
                        (at + 1) * 10,
                        q
                    );
                }
                s.push_str(" }\n");
            }
            s.push_str("      - { step: ship, at: shipping }\n");
        }
    }
    s.push_str("fleets:\n");
    for (f, (id, kind, speed, handling)) in FLEETS.iter().enumerate().take(nf) {
        // Enough movers for the fleet's share of the moves (about one per 8 moves an hour).
        let moves: f64 = products
            .iter()
            .enumerate()
            .filter(|(i, _)| i % nf == f)
            .map(|(_, p)| rate(p) * (p.ops.len() + 1) as f64)
            .sum();
        let count = ((moves / 8.0).ceil() as u32).max(1);
        let capacity = if *kind == "tow-cart" { "\n    capacity: 3" } else { "" };
        let carried: Vec<&str> =
            ids.iter().enumerate().filter(|(i, _)| i % nf == f).map(|(_, x)| x.as_str()).collect();
        let _ = writeln!(
            s,
            "  - id: {id}\n    kind: {kind}\n    count: {count}\n    speed: {speed}\n    handling: {handling}{capacity}\n    \
             home: receiving\n    carries: [{}]",
            carried.join(", ")
        );
    }
    files.insert(0, ("plant.yaml".to_string(), s));
    files
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_default_plant_loads_with_its_stated_size_and_no_department_over_capacity() {
        let text = scenario(&Spec::default());
        let plant = crate::parse_scenario(&text, std::path::Path::new("generated.yaml")).expect("it loads");
        assert_eq!(plant.departments.len(), 82, "80 work departments and 2 docks");
        assert_eq!(plant.products.len(), 1_000);
        assert_eq!(plant.fleets().len(), 4);
        for p in &plant.products {
            // 4–12 operations, plus the step to shipping.
            let ops = p.routing.len() - 1;
            assert!((4..=12).contains(&ops), "{} has {ops} operations", p.id);
        }
        let pic = crate::analysis::StaticPicture::new(&plant, 1.0);
        let worst = pic.utilization.iter().copied().fold(0.0, f64::max);
        // Sized for 75%: a department sits at or below it (rounding machines up only lowers it).
        assert!(worst <= 0.75 + 1e-9, "busiest department at {worst}");
        assert_eq!(scenario(&Spec::default()), text, "the same spec gives the same text");
    }

    #[test]
    fn the_table_form_compiles_to_the_same_plant_as_the_yaml_form() {
        let spec = Spec { departments: 30, products: 120, ..Spec::default() };
        let dir = tempfile::tempdir().unwrap();
        for (name, text) in tables(&spec) {
            std::fs::write(dir.path().join(name), text).unwrap();
        }
        let from_tables = crate::load_scenario(&dir.path().join("plant.yaml")).expect("the tables load");
        let from_yaml =
            crate::parse_scenario(&scenario(&spec), &dir.path().join("plant.yaml")).expect("the YAML loads");
        assert!(from_tables == from_yaml, "the two forms differ");
    }
}
