//! A scenario's layout problem: flows from its from-to chart, distances from its locations, rules from its `search:` section.
//!
//! The objective is in load-metres per hour: Σ from-to loads/h × metres
//! between the two locations, the same sum as the static load-distance of
//! [`crate::analysis::LayoutPicture`]. Floor costs are currency per hour, so
//! they enter divided by the cost per load-metre; the search then ranks
//! layouts by total cost per hour, and a layout's cost per hour is its
//! objective × the cost per load-metre.

use crate::analysis::StaticPicture;
use crate::plant::Plant;

use super::qap::{Evaluation, Problem, Spec};

/// A scenario's layout problem, with what it takes to read its costs.
#[derive(Debug, Clone)]
pub struct PlantProblem {
    /// The problem the methods search: department d of the scenario is
    /// department d here, location l is location l.
    pub problem: Problem,
    /// Currency per load-metre (`costs.per_load_metre`; 0 when not given).
    pub per_load_metre: f64,
}

/// A layout's cost in the plant's terms.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LayoutCost {
    /// Σ flow × distance, load-metres per hour.
    pub load_distance_m_per_h: f64,
    /// Load-distance × cost per load-metre, currency per hour.
    pub handling_cost_per_h: f64,
    /// Floor costs of the locations the departments take, currency per hour.
    pub floor_cost_per_h: f64,
    /// Handling plus floor cost, currency per hour.
    pub total_cost_per_h: f64,
    /// Adjacency rules broken.
    pub rules_broken: usize,
    /// Departments on a location the rules forbid them (pinned elsewhere,
    /// kept empty). A search never reports such a layout; a scenario's own
    /// layout may be one.
    pub forbidden: usize,
}

impl PlantProblem {
    /// Build the problem from the plant and its static picture (whose demand
    /// factor sets the flows). Errors are for people: they say what to change
    /// in the scenario.
    pub fn new(plant: &Plant, picture: &StaticPicture) -> Result<PlantProblem, String> {
        let n = plant.departments.len();
        let m = plant.locations.len();
        let rules = &plant.search;
        let per_load_metre = plant.cost_per_load_metre;
        let mut spec = Spec::new(n, m, picture.from_to.dense(), plant.distance.clone());
        if !rules.floor_costs.is_empty() {
            if per_load_metre <= 0.0 {
                return Err(
                    "search.floor_costs are in currency per hour; set costs.per_load_metre > 0 so the \
                            load-distance is priced on the same scale"
                        .into(),
                );
            }
            let mut fixed = vec![0.0; n * m];
            for &(d, l, per_h) in &rules.floor_costs {
                fixed[d * m + l] += per_h / per_load_metre;
            }
            spec.fixed_cost = Some(fixed);
        }
        spec.pinned = rules.pinned.iter().enumerate().filter_map(|(d, p)| p.map(|l| (d, l))).collect();
        spec.keep_empty = (0..m).filter(|&l| rules.keep_empty.get(l).copied().unwrap_or(false)).collect();
        if !rules.adjacent.is_empty() || !rules.apart.is_empty() {
            let reach = rules
                .neighbour_distance_m
                .ok_or("adjacency rules need search.neighbour_distance (metres)")?;
            // Neighbours are symmetric even where distances are not (one-way aisles).
            let near = |k: usize, l: usize| plant.distance(k, l).min(plant.distance(l, k)) <= reach;
            spec.neighbours = Some((0..m * m).map(|x| x / m != x % m && near(x / m, x % m)).collect());
            spec.adjacent = rules.adjacent.clone();
            spec.apart = rules.apart.clone();
        }
        let problem = Problem::new(spec)?;
        Ok(PlantProblem { problem, per_load_metre })
    }

    /// The cost of a layout (`layout[d]`: location of department d).
    pub fn cost(&self, layout: &[usize]) -> Result<LayoutCost, String> {
        let e: Evaluation = self.problem.evaluate(layout)?;
        let handling = e.flow_cost * self.per_load_metre;
        let floor = e.fixed_cost * self.per_load_metre;
        Ok(LayoutCost {
            load_distance_m_per_h: e.flow_cost,
            handling_cost_per_h: handling,
            floor_cost_per_h: floor,
            total_cost_per_h: handling + floor,
            rules_broken: e.violations,
            forbidden: e.forbidden,
        })
    }

    /// Each search rule `layout` breaks, named in the scenario's words:
    /// which pair for `adjacent`/`apart`, which pin, which empty location.
    /// Pins and empty locations are the layout's `forbidden` departments;
    /// pairs are its `rules_broken`.
    pub fn broken_rules(plant: &Plant, layout: &[usize]) -> Vec<String> {
        let rules = &plant.search;
        let dept = |d: usize| plant.departments[d].id.as_str();
        let loc = |l: usize| plant.locations[l].id.as_str();
        let mut out = Vec::new();
        for (d, pin) in rules.pinned.iter().enumerate() {
            if let Some(l) = *pin {
                if layout.get(d).is_some_and(|&at| at != l) {
                    let holder = layout.iter().position(|&at| at == l);
                    let there = holder.map_or(String::new(), |h| format!("; {} holds {}", loc(l), dept(h)));
                    out.push(format!(
                        "pinned: {} must be on {} (is on {}{there})",
                        dept(d),
                        loc(l),
                        loc(layout[d])
                    ));
                }
            }
        }
        for (l, &empty) in rules.keep_empty.iter().enumerate() {
            if let (true, Some(d)) = (empty, layout.iter().position(|&at| at == l)) {
                out.push(format!("kept empty: {} holds {}", loc(l), dept(d)));
            }
        }
        if let Some(reach) = rules.neighbour_distance_m {
            // As in `new`: neighbours are symmetric even where distances are not.
            let gap = |a: usize, b: usize| {
                let (k, l) = (layout[a], layout[b]);
                plant.distance(k, l).min(plant.distance(l, k))
            };
            for &(a, b) in &rules.adjacent {
                let g = gap(a, b);
                if g > reach {
                    out.push(format!(
                        "adjacent: {} and {} are {} m apart (neighbours are within {} m)",
                        dept(a),
                        dept(b),
                        metres(g),
                        metres(reach)
                    ));
                }
            }
            for &(a, b) in &rules.apart {
                let g = gap(a, b);
                if g <= reach {
                    out.push(format!(
                        "apart: {} and {} are neighbours, {} m apart (must be more than {} m)",
                        dept(a),
                        dept(b),
                        metres(g),
                        metres(reach)
                    ));
                }
            }
        }
        out
    }
}

/// Metres without useless decimals.
fn metres(m: f64) -> String {
    let s = format!("{m:.1}");
    s.strip_suffix(".0").map_or(s.clone(), str::to_string)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::StaticPicture;

    const PLANT: &str = r#"
plant: four bays
run: { horizon: 1 d, warmup: 0 s, replications: 2, seed: 1 }
locations:
  - { id: door, at: [0, 0] }
  - { id: a, at: [10, 0] }
  - { id: b, at: [20, 0] }
  - { id: c, at: [30, 0] }
  - { id: out, at: [40, 0] }
distance: rectilinear
departments:
  - { id: in, dock: receiving }
  - { id: cut }
  - { id: weld }
  - { id: ship, dock: shipping }
layouts:
  now: { in: door, cut: c, weld: a, ship: out }
products:
  - id: frame
    demand: { per_hour: 2 }
    routing:
      - { step: cut, at: cut, time: 5 min }
      - { step: weld, at: weld, time: 5 min }
      - { step: ship, at: ship }
moves: instant
costs: { per_load_metre: 0.5 }
search:
  floor_costs:
    - { department: weld, location: b, per_hour: 3 }
"#;

    #[test]
    fn the_objective_is_the_static_load_distance_and_floor_costs_are_priced_alike() {
        let plant =
            crate::parse_scenario(PLANT, std::path::Path::new("four-bays.yaml")).expect("valid scenario");
        let pic = StaticPicture::new(&plant, 1.0);
        let pp = PlantProblem::new(&plant, &pic).expect("problem");
        // Hand computation: 2 loads/h on in→cut (door 0 m → c 30 m), cut→weld
        // (30 → 10) and weld→ship (10 → 40): 2 × (30 + 20 + 30) = 160 load-m/h.
        let now = &plant.layouts[0].location_of;
        let c = pp.cost(now).unwrap();
        assert_eq!(c.load_distance_m_per_h, 160.0);
        assert_eq!(c.load_distance_m_per_h, pic.layouts[0].load_distance_m_per_h);
        assert_eq!(c.handling_cost_per_h, 80.0);
        assert_eq!((c.floor_cost_per_h, c.rules_broken, c.forbidden), (0.0, 0, 0));
        // Welding in bay b: in→cut 10 (cut at a), cut→weld 10, weld→ship 20:
        // 2 × 40 = 80 load-m/h = 40 /h handling, plus 3 /h floor cost.
        let c = pp.cost(&[0, 1, 2, 4]).unwrap();
        assert_eq!(c.load_distance_m_per_h, 80.0);
        assert_eq!((c.handling_cost_per_h, c.floor_cost_per_h, c.total_cost_per_h), (40.0, 3.0, 43.0));
        // Docks are pinned: swapping the receiving dock with cutting puts both
        // on forbidden locations (in is pinned to door, and door is reserved for it).
        assert_eq!(pp.cost(&[1, 0, 2, 4]).unwrap().forbidden, 2);
    }

    /// Each broken rule is named: the pin, the empty location, the pair.
    /// Hand check on the line of bays (door 0, a 10, b 20, c 30, out 40 m):
    /// in at door, cut at a, weld at b puts weld off its pin at a, into b
    /// which is kept empty, and in and cut 10 m apart (neighbours within 10 m)
    /// although they must be apart; cut and weld are 10 m apart, so their
    /// adjacency rule holds. (No layout meets all four rules: cut would have
    /// to sit in b.)
    #[test]
    fn broken_rules_are_named_pair_by_pair_and_pin_by_pin() {
        let text = PLANT.replace(
            "search:\n  floor_costs:\n    - { department: weld, location: b, per_hour: 3 }\n",
            "search:\n  pinned: { weld: a }\n  keep_empty: [b]\n  neighbour_distance: 10\n  \
             adjacent: [[cut, weld]]\n  apart: [[in, cut]]\n",
        );
        let plant =
            crate::parse_scenario(&text, std::path::Path::new("four-bays.yaml")).expect("valid scenario");
        let pp = PlantProblem::new(&plant, &StaticPicture::new(&plant, 1.0)).expect("problem");
        let layout = [0, 1, 2, 4];
        let c = pp.cost(&layout).unwrap();
        assert_eq!(c.rules_broken, 1);
        let named = PlantProblem::broken_rules(&plant, &layout);
        assert_eq!(
            named,
            vec![
                "pinned: weld must be on a (is on b; a holds cut)".to_string(),
                "kept empty: b holds weld".into(),
                "apart: in and cut are neighbours, 10 m apart (must be more than 10 m)".into(),
            ]
        );
        // cut at c (30 m), weld on its pin at a (10 m): only the pair breaks.
        assert_eq!(
            PlantProblem::broken_rules(&plant, &[0, 3, 1, 4]),
            vec!["adjacent: cut and weld are 20 m apart (neighbours are within 10 m)".to_string()]
        );
    }

    #[test]
    fn floor_costs_need_a_price_per_load_metre() {
        let text = PLANT.replace("costs: { per_load_metre: 0.5 }", "");
        let plant = crate::parse_scenario(&text, std::path::Path::new("four-bays.yaml"));
        let msg = match plant {
            Err(e) => e.to_string(),
            Ok(p) => PlantProblem::new(&p, &StaticPicture::new(&p, 1.0)).unwrap_err(),
        };
        assert!(msg.contains("per_load_metre"), "{msg}");
    }
}
