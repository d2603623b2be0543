//! One name per metric: the user guide's metric table and the library's registry list the same metrics, labels and directions.

use std::path::Path;

use layflow_models::metrics::registry::{canonical, ALIASES};
use layflow_models::metrics::{Better, DEFS};

/// The rows of `docs/metrics.md`'s metric table: (name, label, scope, better).
fn documented() -> Vec<(String, String, String, String)> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../docs/metrics.md");
    let text = std::fs::read_to_string(&path).expect("docs/metrics.md exists");
    text.lines()
        .filter(|l| l.starts_with("| `"))
        .filter_map(|l| {
            let cells: Vec<&str> = l.trim_matches('|').split('|').map(str::trim).collect();
            (cells.len() >= 5).then(|| {
                let name = cells[0].trim_matches('`').to_string();
                (name, cells[1].to_string(), cells[3].to_string(), cells[4].to_string())
            })
        })
        .collect()
}

#[test]
fn every_registry_metric_is_documented_under_its_name_label_scope_and_direction() {
    let docs = documented();
    for d in DEFS {
        let better = match d.better {
            Better::Lower => "lower",
            Better::Higher => "higher",
            Better::Neither => "neither",
        };
        let row = docs.iter().find(|r| r.0 == d.name && r.2 == d.scope.as_str()).unwrap_or_else(|| {
            panic!("docs/metrics.md has no row for {} ({}); add one", d.name, d.scope.as_str())
        });
        assert_eq!(row.1, d.label, "{} ({}): the table label in docs/metrics.md", d.name, d.scope.as_str());
        assert_eq!(
            row.3,
            better,
            "{} ({}): the better direction in docs/metrics.md",
            d.name,
            d.scope.as_str()
        );
    }
}

#[test]
fn every_documented_metric_is_in_the_registry() {
    for (name, _, scope, _) in documented() {
        if ALIASES.iter().any(|(old, _)| *old == name) {
            continue; // the table of older names
        }
        assert!(
            DEFS.iter().any(|d| d.name == name && d.scope.as_str() == scope),
            "docs/metrics.md lists {name} ({scope}), which no command reports"
        );
    }
}

#[test]
fn old_names_are_read_as_registry_names() {
    for (old, new) in ALIASES {
        assert_eq!(canonical(old).0, *new);
        assert!(DEFS.iter().any(|d| d.name == *new), "{old} → {new}, not a metric");
    }
}
