//! Layout search: the quadratic assignment problem of departments to locations, and three methods that search it.
//!
//! - [`qap`]: the problem (flows, distances, fixed costs, pins, empty
//!   locations, adjacency rules) and its cost;
//! - [`delta`]: swap deltas, O(n) from scratch and O(1) maintained (Taillard 1991);
//! - [`exchange`]: pairwise exchange, steepest descent, with restarts;
//! - [`anneal`]: simulated annealing;
//! - [`tabu`]: robust tabu search (Taillard 1991);
//! - [`qaplib`]: the QAPLIB file formats, for checking against published optima;
//! - [`plant`]: a scenario's layout problem and its costs in the plant's terms.
//!
//! Every method takes the problem, [`Settings`] (start, seed, limits, how
//! many distinct good layouts to keep) and a progress callback
//! `FnMut(elapsed_s, best_objective)`, called whenever the best improves.
//! With iteration limits (no time limit) a run is deterministic for its seed.

pub mod anneal;
pub mod delta;
mod driver;
pub mod exchange;
pub mod plant;
pub mod qap;
pub mod qaplib;
pub mod tabu;

#[cfg(test)]
mod tests;

pub use anneal::{anneal, AnnealParams};
pub use delta::{Assignment, DeltaMatrix};
pub use driver::{Limits, Outcome, Ranked, Settings, TopK, TracePoint};
pub use exchange::steepest_descent;
pub use plant::{LayoutCost, PlantProblem};
pub use qap::{Evaluation, Problem, Spec};
pub use tabu::{robust_tabu, TabuParams};

/// A search method with its parameters, for callers that choose at run time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Method {
    /// Pairwise exchange, steepest descent; `restarts` from random layouts until the limits.
    Exchange {
        /// Restart from random layouts at each local optimum.
        restarts: bool,
    },
    /// Simulated annealing.
    Anneal(AnnealParams),
    /// Robust tabu search.
    Tabu(TabuParams),
}

/// Run `method` on `problem`.
pub fn search(
    problem: &Problem,
    method: &Method,
    settings: &Settings,
    progress: impl FnMut(f64, f64),
) -> Result<Outcome, String> {
    match method {
        Method::Exchange { restarts } => steepest_descent(problem, settings, *restarts, progress),
        Method::Anneal(p) => anneal(problem, settings, p, progress),
        Method::Tabu(p) => robust_tabu(problem, settings, p, progress),
    }
}

/// A random permutation of the problem's m facilities that respects its
/// forbidden pairs, from `seed` (the start every method draws when
/// [`Settings::start`] is `None`).
pub fn random_start(problem: &Problem, seed: u64) -> Vec<usize> {
    problem.random_permutation(&mut driver::Tracker::rng(seed, driver::keys::START))
}
