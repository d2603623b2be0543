//! Location-to-location distances: rectilinear, euclidean, or a matrix given inline or in a CSV file.
//!
//! An inline matrix lists its rows in the order of `locations`. A CSV file
//! (its path relative to the scenario file) starts with a header row of
//! location ids, optionally preceded by one corner cell, then has one row
//! per location starting with that location's id. Rows and columns may be
//! in any order but must cover exactly the scenario's locations. Distances
//! may be asymmetric (one-way aisles) but must be finite, non-negative and
//! zero on the diagonal.

use super::compile::Ctx;
use super::error::{did_you_mean, ScenarioError};
use super::locate::FieldPath;
use super::schema::{DistanceSpec, MatrixSource, Scenario};
use crate::plant::{DistanceRule, Location};

/// The rule and the row-major n×n matrix.
pub(crate) fn compile(
    s: &Scenario,
    locations: &[Location],
    ctx: &Ctx,
) -> Result<(DistanceRule, Vec<f64>), ScenarioError> {
    let p = FieldPath::root().key("distance");
    let n = locations.len();
    let from_coordinates = |f: fn(f64, f64) -> f64| {
        let mut m = Vec::with_capacity(n * n);
        for a in locations {
            for b in locations {
                m.push(f(a.x - b.x, a.y - b.y));
            }
        }
        m
    };
    match s.distance.as_ref().map(|d| &d.0) {
        None | Some(DistanceSpec::Rectilinear) => {
            Ok((DistanceRule::Rectilinear, from_coordinates(|dx, dy| dx.abs() + dy.abs())))
        }
        Some(DistanceSpec::Euclidean) => Ok((DistanceRule::Euclidean, from_coordinates(f64::hypot))),
        Some(DistanceSpec::Matrix(MatrixSource::Inline(rows))) => {
            let mp = p.key("matrix");
            if rows.len() != n {
                return Err(ctx
                    .err(
                        &mp,
                        format!("the distance matrix has {} rows but there are {n} locations", rows.len()),
                    )
                    .with_hint("give one row per location, in the order of `locations`"));
            }
            let mut m = Vec::with_capacity(n * n);
            for (i, row) in rows.iter().enumerate() {
                if row.len() != n {
                    return Err(ctx.err(
                        &mp.index(i),
                        format!(
                            "row {i} of the distance matrix has {} values but there are {n} locations",
                            row.len()
                        ),
                    ));
                }
                for (j, &d) in row.iter().enumerate() {
                    check_entry(d, i == j, locations, i, j).map_err(|e| ctx.err(&mp.index(i).index(j), e))?;
                }
                m.extend_from_slice(row);
            }
            Ok((DistanceRule::Matrix { file: None }, m))
        }
        Some(DistanceSpec::Matrix(MatrixSource::File(name))) => {
            let mp = p.key("matrix");
            let dir = ctx.origin.parent().unwrap_or_else(|| std::path::Path::new(""));
            let resolved = dir.join(name);
            let text = std::fs::read_to_string(&resolved).map_err(|e| {
                ctx.err(&mp, format!("cannot read distance matrix {}: {e}", resolved.display()))
                    .with_hint("the CSV path is relative to the scenario file")
            })?;
            let m = read_csv(&text, locations)
                .map_err(|e| ctx.err(&mp, format!("in {}: {e}", resolved.display())))?;
            Ok((DistanceRule::Matrix { file: Some(name.clone()) }, m))
        }
    }
}

fn check_entry(d: f64, diagonal: bool, locs: &[Location], i: usize, j: usize) -> Result<(), String> {
    let (a, b) = (&locs[i].id, &locs[j].id);
    if !d.is_finite() {
        return Err(format!("distance from \"{a}\" to \"{b}\" is not a finite number"));
    }
    if d < 0.0 {
        return Err(format!("distance from \"{a}\" to \"{b}\" is negative ({d})"));
    }
    if diagonal && d != 0.0 {
        return Err(format!("distance from \"{a}\" to itself must be 0, got {d}"));
    }
    Ok(())
}

/// Reads a labelled CSV matrix and reorders it into location order.
fn read_csv(text: &str, locations: &[Location]) -> Result<Vec<f64>, String> {
    let n = locations.len();
    let ids: Vec<&str> = locations.iter().map(|l| l.id.as_str()).collect();
    let index_of = |name: &str, what: &str| {
        ids.iter().position(|i| *i == name).ok_or_else(|| {
            format!("{what} \"{name}\" is not a location{}", did_you_mean(name, ids.iter().copied()))
        })
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let mut records = reader.records();
    let header = match records.next() {
        Some(r) => r.map_err(|e| format!("row 1: {e}"))?,
        None => return Err("the file is empty".into()),
    };
    let header: Vec<&str> = header.iter().collect();
    // A corner cell above the row labels shows as one cell too many, or as a
    // first cell that is not a location id (often empty).
    let has_corner = header.len() == n + 1 || header.first().is_some_and(|c| !ids.contains(c));
    let labels = if has_corner { &header[1..] } else { &header[..] };
    if labels.len() != n {
        return Err(format!("the header row names {} columns but there are {n} locations", labels.len()));
    }
    let mut col = vec![usize::MAX; n];
    let mut seen = vec![false; n];
    for (c, name) in labels.iter().enumerate() {
        let l = index_of(name, "column")?;
        if seen[l] {
            return Err(format!("column \"{name}\" appears twice"));
        }
        seen[l] = true;
        col[c] = l;
    }
    let mut m = vec![f64::NAN; n * n];
    let mut row_seen = vec![false; n];
    let mut rows = 0;
    for (r, rec) in records.enumerate() {
        let line = r + 2;
        let rec = rec.map_err(|e| format!("row {line}: {e}"))?;
        if rec.iter().all(str::is_empty) {
            continue;
        }
        rows += 1;
        if rec.len() != n + 1 {
            return Err(format!(
                "row {line} has {} cells; expected the location id and {n} distances",
                rec.len()
            ));
        }
        let from = index_of(&rec[0], "row")?;
        if row_seen[from] {
            return Err(format!("row {line}: location \"{}\" has two rows", &rec[0]));
        }
        row_seen[from] = true;
        for (c, cell) in rec.iter().skip(1).enumerate() {
            let d: f64 = cell.parse().map_err(|_| format!("row {line}: \"{cell}\" is not a number"))?;
            let to = col[c];
            check_entry(d, from == to, locations, from, to).map_err(|e| format!("row {line}: {e}"))?;
            m[from * n + to] = d;
        }
    }
    if rows != n {
        let missing: Vec<&str> = (0..n).filter(|&i| !row_seen[i]).map(|i| ids[i]).collect();
        return Err(format!(
            "the matrix has {rows} rows but there are {n} locations (no row for: {})",
            missing.join(", ")
        ));
    }
    Ok(m)
}
