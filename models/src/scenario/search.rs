//! The scenario's `search:` section: pinned departments, empty locations, adjacency rules and floor costs.

use super::context::{resolve, Ctx};
use super::locate::FieldPath;
use super::schema::Scenario;
use super::ScenarioError;
use crate::limits;
use crate::plant::{Department, DepartmentRole, Layout, Location, SearchRules};

/// Resolve and check the search rules (defaults when the section is absent).
pub(crate) fn rules(
    s: &Scenario,
    departments: &[Department],
    locations: &[Location],
    layouts: &[Layout],
    ctx: &Ctx,
) -> Result<SearchRules, ScenarioError> {
    let p = FieldPath::root().key("search");
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let loc_ids: Vec<&str> = locations.iter().map(|l| l.id.as_str()).collect();
    let mut r = SearchRules {
        pinned: vec![None; departments.len()],
        keep_empty: vec![false; locations.len()],
        ..SearchRules::default()
    };
    // Docks are doors in the building's walls: they stay put unless pinned elsewhere.
    for (d, dep) in departments.iter().enumerate() {
        if dep.role != DepartmentRole::Work {
            r.pinned[d] = Some(layouts[0].location_of[d]);
        }
    }
    let Some(spec) = &s.search else { return Ok(r) };
    if let Some(pins) = &spec.pinned {
        let pp = p.key("pinned");
        for (dept, loc) in &pins.0 {
            let at = pp.key(dept);
            let d = resolve(ctx, &at, "department", dept, &dept_ids)?;
            let l = resolve(ctx, &at, "location", loc, &loc_ids)?;
            r.pinned[d] = Some(l);
        }
        for (d, pin) in r.pinned.iter().enumerate() {
            if let Some(other) = (0..d).find(|&o| pin.is_some() && r.pinned[o] == *pin) {
                return Err(ctx
                    .err(
                        &pp,
                        format!(
                            "\"{}\" and \"{}\" are both pinned to location \"{}\"",
                            dept_ids[other],
                            dept_ids[d],
                            loc_ids[pin.expect("checked")]
                        ),
                    )
                    .with_hint(
                        "a location holds one department; docks are pinned where the first layout puts them",
                    ));
            }
        }
    }
    for (i, loc) in spec.keep_empty.iter().flatten().enumerate() {
        let at = p.key("keep_empty").index(i);
        let l = resolve(ctx, &at, "location", loc, &loc_ids)?;
        if let Some(d) = r.pinned.iter().position(|&x| x == Some(l)) {
            return Err(ctx.err(
                &at,
                format!("location \"{loc}\" must stay empty, but \"{}\" is pinned there", dept_ids[d]),
            ));
        }
        r.keep_empty[l] = true;
    }
    let free = r.keep_empty.iter().filter(|&&e| !e).count();
    if free < departments.len() {
        return Err(ctx
            .err(
                &p.key("keep_empty"),
                format!("{} departments but only {free} locations may hold one", departments.len()),
            )
            .with_hint("keep fewer locations empty, or add locations"));
    }
    let pairs = |key: &str, list: &Option<Vec<[String; 2]>>| -> Result<Vec<(usize, usize)>, ScenarioError> {
        let mut out = Vec::new();
        for (i, [a, b]) in list.iter().flatten().enumerate() {
            let at = p.key(key).index(i);
            let x = resolve(ctx, &at, "department", a, &dept_ids)?;
            let y = resolve(ctx, &at, "department", b, &dept_ids)?;
            if x == y {
                return Err(ctx.err(&at, format!("\"{a}\" is paired with itself")));
            }
            out.push((x.min(y), x.max(y)));
        }
        Ok(out)
    };
    r.adjacent = pairs("adjacent", &spec.adjacent)?;
    r.apart = pairs("apart", &spec.apart)?;
    if let Some(&(a, b)) = r.adjacent.iter().find(|pair| r.apart.contains(pair)) {
        return Err(ctx
            .err(&p, format!("\"{}\" and \"{}\" must be both adjacent and apart", dept_ids[a], dept_ids[b]))
            .with_hint("remove the pair from `adjacent` or from `apart`"));
    }
    match spec.neighbour_distance {
        Some(d) if !(d > 0.0 && d.is_finite()) => {
            return Err(
                ctx.err(&p.key("neighbour_distance"), format!("must be a distance in metres > 0, got {d}"))
            )
        }
        Some(d) if d > limits::MAX_LENGTH_M => {
            return Err(ctx.err(
                &p.key("neighbour_distance"),
                limits::check_length("neighbour_distance", d).expect_err("checked above"),
            ))
        }
        None if !r.adjacent.is_empty() || !r.apart.is_empty() => {
            return Err(ctx.err(&p, "adjacency rules need `neighbour_distance`").with_hint(
                "e.g. `neighbour_distance: 30`: two locations at most 30 m apart count as neighbours",
            ))
        }
        d => r.neighbour_distance_m = d,
    }
    for (i, fc) in spec.floor_costs.iter().flatten().enumerate() {
        let at = p.key("floor_costs").index(i);
        let d = resolve(ctx, &at, "department", &fc.department, &dept_ids)?;
        let l = resolve(ctx, &at, "location", &fc.location, &loc_ids)?;
        if !(fc.per_hour.is_finite() && fc.per_hour >= 0.0) {
            return Err(
                ctx.err(&at.key("per_hour"), format!("must be a cost per hour >= 0, got {}", fc.per_hour))
            );
        }
        limits::check_at_most("per_hour", fc.per_hour, limits::MAX_COST, limits::MAX_COST_WHY)
            .map_err(|m| ctx.err(&at.key("per_hour"), m))?;
        r.floor_costs.push((d, l, fc.per_hour));
    }
    Ok(r)
}
