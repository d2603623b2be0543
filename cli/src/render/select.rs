//! `compare --select`'s outcome as a table and the guarantee in words.

use std::fmt::Write as _;

use layflow_models::metrics::Metric;
use layflow_models::study::select::{amount, Selection};

use super::table::{verbose, Table};

/// The selection as a table and the guarantee.
pub fn render(sel: &Selection, metric: &Metric) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "  Selecting the best layout on mean {} (the {} wins), to within {} with {:.0}% confidence",
        metric.human(),
        sel.goal,
        amount(metric, sel.indifference),
        sel.confidence * 100.0,
    );
    if verbose() {
        let _ = writeln!(
            s,
            "  {} procedure (Kim and Nelson 2001): n₀ = {} first-stage replications, η = {:.4}, h² = {:.4}, \
             {} stages, cap {} replications per layout",
            sel.procedure, sel.first_stage, sel.eta, sel.h2, sel.stages, sel.max_replications
        );
    }
    let mut t = Table::new(&["layout", "replications", &format!("mean {}", metric.human()), "outcome"]);
    for l in &sel.layouts {
        let outcome = match (l.eliminated_after, &sel.best) {
            (Some(r), _) => format!("dropped after replication {r}"),
            (None, Some(b)) if *b == l.layout => "BEST".to_string(),
            (None, _) if sel.identical => "tied: identical results".to_string(),
            (None, _) => "still in at the cap".to_string(),
        };
        t.row(vec![l.layout.clone(), l.replications.to_string(), amount(metric, l.mean), outcome]);
    }
    s.push_str(&t.render(2));
    let _ = writeln!(s, "  {}", sel.statement);
    s
}
