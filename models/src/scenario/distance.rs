//! Location-to-location distances: rectilinear, euclidean, a matrix given inline or in a CSV file, or shortest paths over an aisle network.
//!
//! An inline matrix lists its rows in the order of `locations`. A CSV file
//! (its path relative to the scenario file) starts with a header row of
//! location ids, optionally preceded by one corner cell, then has one row
//! per location starting with that location's id. Rows and columns may be
//! in any order but must cover exactly the scenario's locations. Distances
//! may be asymmetric (one-way aisles) but must be finite, non-negative and
//! zero on the diagonal.
//!
//! With `distance: aisles` (or an `aisles:` section and no `distance`), each
//! location names its pick-up/drop-off `node`, and distances are shortest
//! paths over the network's segments ([`crate::network`]).

use super::context::{check_unique, resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{AislesSpec, DistanceSpec, MatrixSource, Scenario};
use crate::limits;
use crate::network::{AisleNetwork, AisleNode, NetworkError, Segment};
use crate::plant::{DistanceRule, Location};
use crate::suggest::did_you_mean;

/// The rule, the row-major n×n matrix, and the aisle network where there is one.
pub(crate) fn compile(
    s: &Scenario,
    locations: &[Location],
    ctx: &Ctx,
) -> Result<(DistanceRule, Vec<f64>, Option<AisleNetwork>), ScenarioError> {
    let p = FieldPath::root().key("distance");
    let spec = s.distance.as_ref().map(|d| &d.0);
    match (spec, &s.aisles) {
        (None | Some(DistanceSpec::Aisles), Some(a)) => {
            let (net, m) = aisles(s, a, locations, ctx)?;
            return Ok((DistanceRule::Aisles, m, Some(net)));
        }
        (Some(DistanceSpec::Aisles), None) => {
            return Err(ctx
                .err(&p, "`distance: aisles` needs an aisle network, and the scenario has no `aisles:` section")
                .with_hint("add `aisles: { nodes: [...], segments: [...] }`; see docs/aisles.md, section \"The aisle network\""));
        }
        (Some(_), Some(_)) => {
            return Err(ctx
                .err(&p, "the scenario describes an aisle network, but `distance` names another rule")
                .with_hint(
                    "write `distance: aisles` to travel over the network, or remove the `aisles:` section",
                ));
        }
        (_, None) => {}
    }
    if let Some(i) = s.locations.iter().position(|l| l.node.is_some()) {
        return Err(ctx
            .err(
                &FieldPath::root().key("locations").index(i).key("node"),
                format!(
                    "location \"{}\" names an aisle node, but the scenario has no aisle network",
                    s.locations[i].id
                ),
            )
            .with_hint("`node` is for `distance: aisles`; add an `aisles:` section or remove `node`"));
    }
    let (rule, m) = plain(s, locations, ctx)?;
    Ok((rule, m, None))
}

/// The rules without a network: from coordinates, or a given matrix.
fn plain(s: &Scenario, locations: &[Location], ctx: &Ctx) -> Result<(DistanceRule, Vec<f64>), ScenarioError> {
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
        // Handled by `compile` (the network, or an error when it is missing).
        Some(DistanceSpec::Aisles) => Err(ctx.err(&p, "`distance: aisles` needs an `aisles:` section")),
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
    limits::check_length(&format!("distance from \"{a}\" to \"{b}\":"), d)?;
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

/// Checks the aisle section and the locations' nodes, then finds every
/// location pair's shortest path.
fn aisles(
    s: &Scenario,
    a: &AislesSpec,
    locations: &[Location],
    ctx: &Ctx,
) -> Result<(AisleNetwork, Vec<f64>), ScenarioError> {
    let p = FieldPath::root().key("aisles");
    let np = p.key("nodes");
    if a.nodes.is_empty() {
        return Err(ctx.err(&np, "the aisle network has no nodes").with_hint(
            "list the junctions and pick-up/drop-off points: `nodes: [{ id: n1, at: [15, 22.5] }, ...]`",
        ));
    }
    check_unique(
        ctx,
        "aisle node",
        a.nodes.iter().enumerate().map(|(i, n)| (n.id.as_str(), np.index(i).key("id"))),
    )?;
    let mut nodes = Vec::with_capacity(a.nodes.len());
    for (i, n) in a.nodes.iter().enumerate() {
        let [x, y] = n.at;
        if !(x.is_finite() && y.is_finite()) {
            return Err(ctx.err(
                &np.index(i).key("at"),
                format!("coordinates of aisle node \"{}\" must be finite numbers (metres)", n.id),
            ));
        }
        limits::check_coordinates(x, y).map_err(|m| ctx.err(&np.index(i).key("at"), m))?;
        nodes.push(AisleNode { id: n.id.clone(), x, y, zone: n.zone.unwrap_or(false) });
    }
    let ids: Vec<&str> = nodes.iter().map(|n| n.id.as_str()).collect();
    let sp = p.key("segments");
    if a.segments.is_empty() {
        return Err(ctx
            .err(&sp, "the aisle network has no segments")
            .with_hint("join the nodes: `segments: [{ from: n1, to: n2 }, ...]`"));
    }
    let mut segments: Vec<Segment> = Vec::with_capacity(a.segments.len());
    for (i, g) in a.segments.iter().enumerate() {
        let gp = sp.index(i);
        let from = resolve(ctx, &gp.key("from"), "aisle node", &g.from, &ids)?;
        let to = resolve(ctx, &gp.key("to"), "aisle node", &g.to, &ids)?;
        if from == to {
            return Err(ctx.err(&gp.key("to"), format!("segment {i} starts and ends at node \"{}\"", g.from)));
        }
        if let Some(j) =
            segments.iter().position(|o| (o.from, o.to) == (from, to) || (o.from, o.to) == (to, from))
        {
            return Err(ctx
                .err(&gp, format!("segments {j} and {i} both join \"{}\" and \"{}\"", g.from, g.to))
                .with_hint(
                    "give each pair of nodes one segment; for two parallel aisles, add a node on one of them",
                ));
        }
        let length_m = match g.length {
            Some(l) => {
                if !(l > 0.0 && l.is_finite()) {
                    return Err(ctx
                        .err(
                            &gp.key("length"),
                            format!("segment length must be a number of metres > 0, got {l}"),
                        )
                        .with_hint("leave `length` out to use the straight line between the nodes"));
                }
                limits::check_length("segment length", l).map_err(|m| ctx.err(&gp.key("length"), m))?;
                l
            }
            None => {
                let (u, v) = (&nodes[from], &nodes[to]);
                let l = (u.x - v.x).hypot(u.y - v.y);
                if !(l > 0.0) {
                    return Err(ctx
                        .err(
                            &gp,
                            format!(
                                "nodes \"{}\" and \"{}\" are at the same point, so the segment has no length",
                                g.from, g.to
                            ),
                        )
                        .with_hint("give the segment a `length` in metres, or move one of the nodes"));
                }
                l
            }
        };
        if g.capacity == Some(0) {
            return Err(ctx
                .err(&gp.key("capacity"), "segment capacity must be at least 1 mover")
                .with_hint("leave `capacity` out for an aisle with room for any number of movers"));
        }
        let speed_limit_mps = match g.speed_limit {
            None => None,
            Some(v) if v.0 > 0.0 && v.0.is_finite() => Some(v.0),
            Some(v) => {
                return Err(ctx.err(
                    &gp.key("speed_limit"),
                    format!("a speed limit must be more than 0, got {} km/h", v.0 * 3.6),
                ))
            }
        };
        segments.push(Segment {
            from,
            to,
            length_m,
            one_way: g.one_way.unwrap_or(false),
            speed_limit_mps,
            capacity: g.capacity,
        });
    }
    for (i, n) in nodes.iter().enumerate() {
        if n.zone && !segments.iter().any(|g| g.from == i || g.to == i) {
            return Err(ctx
                .err(
                    &np.index(i).key("zone"),
                    format!("aisle node \"{}\" has zone control, but no segment meets it", n.id),
                )
                .with_hint(
                    "zone control is for a junction of aisles: join the node with segments, or remove `zone`",
                ));
        }
    }
    let lp = FieldPath::root().key("locations");
    let mut location_node = Vec::with_capacity(locations.len());
    for (i, l) in s.locations.iter().enumerate() {
        let Some(name) = &l.node else {
            return Err(ctx
                .err(&lp.index(i), format!("location \"{}\" has no aisle node", l.id))
                .with_hint("with `distance: aisles` every location names the node where movers pick up and drop off: `node: ...`"));
        };
        location_node.push(resolve(ctx, &lp.index(i).key("node"), "aisle node", name, &ids)?);
    }
    AisleNetwork::build(nodes, segments, location_node).map_err(|e| match e {
        NetworkError::Unreachable { from, to } => {
            let (a, b) = (&s.locations[from], &s.locations[to]);
            let (na, nb) = (a.node.as_deref().unwrap_or(""), b.node.as_deref().unwrap_or(""));
            ctx.err(
                &lp.index(from).key("node"),
                format!(
                    "location \"{}\" (node \"{na}\") cannot reach location \"{}\" (node \"{nb}\") over the aisles",
                    a.id, b.id
                ),
            )
            .with_hint("every location must reach every other: join the nodes with segments, or check which way the one-way segments run")
        }
        NetworkError::BadSegment { segment, reason } => {
            ctx.err(&sp.index(segment), format!("segment {segment}: {reason}"))
        }
        NetworkError::BadLocationNode { location } => {
            ctx.err(&lp.index(location).key("node"), "this node does not exist")
        }
    })
}
