//! How loads move: instant moves, or fleets of forklifts, tow carts and walkers, and which fleet may serve which move.

use super::context::{check_unique, resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::operators::operators;
use super::schema::{DispatchSpec, FleetSpec, IdleSpec, KindSpec, Scenario};
use crate::limits;
use crate::plant::{
    Department, DispatchRule, Fleet, Handling, Home, IdleRule, Location, MoveFilter, MoverKind, Product,
};
use crate::suggest::{did_you_mean, name_list};
use crate::units::format_weight;

/// A walker's speed, loaded and empty, when the scenario gives none, m/s:
/// free walking is about 1.2–1.4 m/s (docs/formulas.md §10, common practice); the
/// low end, since the walker carries something.
const WALKER_SPEED: f64 = 1.2;
/// A walker's time to pick up or set down a tote when the scenario gives none, s (common practice).
const WALKER_HANDLING_S: f64 = 10.0;

/// Compiles `moves` and `fleets`.
pub(crate) fn handling(
    s: &Scenario,
    departments: &[Department],
    locations: &[Location],
    products: &[Product],
    ctx: &Ctx,
) -> Result<Handling, ScenarioError> {
    let p = FieldPath::root().key("fleets");
    let fleets: &[FleetSpec] = s.fleets.as_deref().unwrap_or(&[]);
    if s.moves.is_some() {
        if !fleets.is_empty() {
            return Err(ctx
                .err(&p, "`moves: instant` and `fleets` cannot both be given")
                .with_hint("remove `fleets` to validate without handling, or remove `moves: instant`"));
        }
        return Ok(Handling::Instant);
    }
    if fleets.is_empty() && s.fleets.is_some() {
        // `fleets: []` is written: point at it.
        return Err(ctx
            .err(&FieldPath::root().key("fleets"), "the list is empty, so the plant has no way to move loads")
            .with_hint(
                "list at least one fleet (forklifts, tow carts, walkers), or write `moves: instant` instead of \
                 `fleets` for moves that take no time",
            ));
    }
    if fleets.is_empty() {
        return Err(ScenarioError::new(
            super::error::ErrorKind::Invalid,
            &ctx.file,
            "the plant has no way to move loads",
        )
        .at_path("fleets")
        .with_hint(
            "add `fleets:` (forklifts, tow carts, walkers), or `moves: instant` for moves that take no time",
        ));
    }
    check_unique(
        ctx,
        "fleet",
        fleets.iter().enumerate().map(|(i, f)| (f.id.as_str(), p.index(i).key("id"))),
    )?;
    let out = fleets
        .iter()
        .enumerate()
        .map(|(i, f)| fleet(f, &p.index(i), departments, locations, products, ctx))
        .collect::<Result<Vec<_>, _>>()?;
    for (k, product) in products.iter().enumerate() {
        if !out.iter().any(|f| f.carries[k]) {
            return Err(ctx
                .err(&p, format!("product \"{}\" is carried by no fleet", product.id))
                .with_hint(format!(
                    "add \"{}\" to a fleet's `carries`, or leave `carries` out so that a fleet carries every product",
                    product.id
                )));
        }
    }
    every_move_served(s, &out, departments, products, ctx)?;
    Ok(Handling::Fleets(out))
}

fn fleet(
    f: &FleetSpec,
    fp: &FieldPath,
    departments: &[Department],
    locations: &[Location],
    products: &[Product],
    ctx: &Ctx,
) -> Result<Fleet, ScenarioError> {
    if f.count == 0 {
        return Err(ctx.err(&fp.key("count"), format!("fleet \"{}\" needs at least 1 mover", f.id)));
    }
    limits::check_count("movers", u64::from(f.count), u64::from(limits::MAX_MOVERS), limits::COUNT_WHY)
        .map_err(|m| ctx.err(&fp.key("count"), m))?;
    let (speed_loaded, speed_empty) = match (&f.speed, f.kind) {
        (Some(sp), _) => (sp.loaded.0, sp.empty.0),
        (None, KindSpec::Walker) => (WALKER_SPEED, WALKER_SPEED),
        (None, _) => {
            return Err(ctx.err(&fp.key("speed"), format!("fleet \"{}\" needs `speed`", f.id)).with_hint(
                "give `speed: { loaded: 7 km/h, empty: 9 km/h }`; only walkers have a default speed",
            ))
        }
    };
    for (v, field) in [(speed_loaded, "loaded"), (speed_empty, "empty")] {
        if !(v > 0.0) {
            return Err(ctx.err(
                &fp.key("speed").key(field),
                format!("{field} speed of fleet \"{}\" must be greater than 0, got {v} m/s", f.id),
            ));
        }
    }
    let accel = f.acceleration.map(|a| a.0);
    if let Some(a) = accel {
        if !(a > 0.0) {
            return Err(ctx.err(
                &fp.key("acceleration"),
                format!("acceleration of fleet \"{}\" must be greater than 0, got {a} m/s²", f.id),
            ));
        }
    }
    let default_handling = if matches!(f.kind, KindSpec::Walker) { WALKER_HANDLING_S } else { 0.0 };
    let (load_s, unload_s) =
        f.handling.as_ref().map_or((default_handling, default_handling), |h| (h.load.0, h.unload.0));
    for (v, field) in [(load_s, "load"), (unload_s, "unload")] {
        if !(v >= 0.0) {
            return Err(ctx.err(
                &fp.key("handling").key(field),
                format!("{field} time of fleet \"{}\" must not be negative, got {v} s", f.id),
            ));
        }
    }
    let (per_h, per_km) = f.cost.as_ref().map_or((0.0, 0.0), |c| (c.per_hour, c.per_km));
    for (v, field) in [(per_h, "per_hour"), (per_km, "per_km")] {
        if !(v >= 0.0 && v.is_finite()) {
            return Err(ctx.err(
                &fp.key("cost").key(field),
                format!("cost {field} of fleet \"{}\" must be a number >= 0, got {v}", f.id),
            ));
        }
        limits::check_at_most(field, v, limits::MAX_COST, limits::MAX_COST_WHY)
            .map_err(|m| ctx.err(&fp.key("cost").key(field), m))?;
    }
    let home = home(&f.home, &fp.key("home"), departments, locations, ctx)?;
    let carries = match &f.carries {
        None => vec![true; products.len()],
        Some(names) => {
            let ids: Vec<&str> = products.iter().map(|p| p.id.as_str()).collect();
            let mut c = vec![false; products.len()];
            for (k, name) in names.iter().enumerate() {
                c[resolve(ctx, &fp.key("carries").index(k), "product", name, &ids)?] = true;
            }
            c
        }
    };
    let max_load_kg = f.max_load.map(|w| w.0);
    if let Some(w) = max_load_kg {
        if !(w > 0.0) {
            return Err(ctx.err(
                &fp.key("max_load"),
                format!("max_load of fleet \"{}\" must be more than 0, got {w} kg", f.id),
            ));
        }
    }
    let capacity = f.capacity.unwrap_or(1);
    if capacity == 0 {
        return Err(ctx
            .err(&fp.key("capacity"), format!("capacity of fleet \"{}\" must be at least 1 load", f.id))
            .with_hint("a forklift carries 1 load; a tow train carries as many as it has carts"));
    }
    limits::check_count("loads", u64::from(capacity), u64::from(limits::MAX_TRAIN_LOADS), limits::COUNT_WHY)
        .map_err(|m| {
            ctx.err(&fp.key("capacity"), m)
                .with_hint("a forklift carries 1 load; a tow train carries as many as it has carts")
        })?;
    let breakdowns = match &f.breakdowns {
        None => None,
        Some(b) => Some(super::staging::breakdowns(b, &fp.key("breakdowns"), false, ctx)?),
    };
    let charging = match &f.charging {
        None => None,
        Some(c) => Some(super::staging::charging(c, &fp.key("charging"), ctx)?),
    };
    Ok(Fleet {
        breakdowns,
        charging,
        id: f.id.clone(),
        kind: match f.kind {
            KindSpec::Forklift => MoverKind::Forklift,
            KindSpec::TowCart => MoverKind::TowCart,
            KindSpec::Walker => MoverKind::Walker,
        },
        count: f.count,
        speed_loaded,
        speed_empty,
        load_s,
        unload_s,
        cost_per_h: per_h,
        cost_per_km: per_km,
        home,
        dispatch: dispatch(f, fp, departments, ctx)?,
        idle: idle(f, fp, ctx)?,
        carries,
        accel,
        serves: serves(f, fp, departments, ctx)?,
        max_load_kg,
        capacity,
        parking: parking(f, fp, locations, ctx)?,
        operators: operators(f.operators.as_ref(), &f.id, &fp.key("operators"), ctx)?,
        request_order: f.requests.map_or(crate::plant::QueueOrder::Fifo, super::queueing::order),
    })
}

/// `dispatch`, with `reserve: { movers, at }` exactly when it is `reserve`.
fn dispatch(
    f: &FleetSpec,
    fp: &FieldPath,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<DispatchRule, ScenarioError> {
    match (f.dispatch, &f.reserve) {
        (Some(DispatchSpec::Reserve), None) => Err(ctx
            .err(&fp.key("dispatch"), format!("`dispatch: reserve` of fleet \"{}\" needs `reserve`", f.id))
            .with_hint("add `reserve: { movers: 1 }` (and `at: <department>` to choose where)")),
        (Some(DispatchSpec::Reserve), Some(r)) => {
            let rp = fp.key("reserve");
            if r.movers == 0 || r.movers > f.count {
                return Err(ctx.err(
                    &rp.key("movers"),
                    format!(
                        "reserve movers of fleet \"{}\" must be from 1 to its count ({}), got {}",
                        f.id, f.count, r.movers
                    ),
                ));
            }
            let at = match &r.at {
                None => None,
                Some(name) => {
                    let ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
                    Some(resolve(ctx, &rp.key("at"), "department", name, &ids)?)
                }
            };
            Ok(DispatchRule::Reserve { movers: r.movers, at })
        }
        (_, Some(_)) => Err(ctx
            .err(&fp.key("reserve"), format!("fleet \"{}\" has `reserve` but not `dispatch: reserve`", f.id))
            .with_hint("set `dispatch: reserve`, or remove `reserve`")),
        (None | Some(DispatchSpec::NearestIdle), None) => Ok(DispatchRule::NearestIdle),
        (Some(DispatchSpec::FirstCome), None) => Ok(DispatchRule::FirstCome),
        (Some(DispatchSpec::NearestRequest), None) => Ok(DispatchRule::NearestRequest),
    }
}

/// `when_idle`; `park` needs `parking`, and `parking` needs `park`.
fn idle(f: &FleetSpec, fp: &FieldPath, ctx: &Ctx) -> Result<IdleRule, ScenarioError> {
    match (f.when_idle, &f.parking) {
        (Some(IdleSpec::Park), None) => Err(ctx
            .err(&fp.key("when_idle"), format!("`when_idle: park` of fleet \"{}\" needs `parking`", f.id))
            .with_hint("add `parking: [<location id>, ...]`")),
        (Some(IdleSpec::Park), Some(_)) => Ok(IdleRule::Park),
        (_, Some(_)) => Err(ctx
            .err(&fp.key("parking"), format!("fleet \"{}\" has `parking` but not `when_idle: park`", f.id))
            .with_hint("set `when_idle: park`, or remove `parking`")),
        (None | Some(IdleSpec::Stay), None) => Ok(IdleRule::Stay),
        (Some(IdleSpec::GoHome), None) => Ok(IdleRule::GoHome),
        (Some(IdleSpec::AlwaysHome), None) => Ok(IdleRule::AlwaysHome),
    }
}

/// The parking locations, in listed order.
fn parking(
    f: &FleetSpec,
    fp: &FieldPath,
    locations: &[Location],
    ctx: &Ctx,
) -> Result<Vec<usize>, ScenarioError> {
    let Some(names) = &f.parking else {
        return Ok(Vec::new());
    };
    let pp = fp.key("parking");
    if names.is_empty() {
        return Err(ctx
            .err(&pp, format!("`parking` of fleet \"{}\" is empty", f.id))
            .with_hint("list one or more location ids"));
    }
    let ids: Vec<&str> = locations.iter().map(|l| l.id.as_str()).collect();
    names.iter().enumerate().map(|(k, n)| resolve(ctx, &pp.index(k), "location", n, &ids)).collect()
}

/// The `serves` entries (absent: every move).
fn serves(
    f: &FleetSpec,
    fp: &FieldPath,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<Vec<MoveFilter>, ScenarioError> {
    let Some(list) = &f.serves else {
        return Ok(Vec::new());
    };
    let sp = fp.key("serves");
    if list.is_empty() {
        return Err(ctx
            .err(&sp, format!("`serves` of fleet \"{}\" is empty: it could serve no move", f.id))
            .with_hint("leave `serves` out to serve every move, or list entries such as `{ from: saw }`"));
    }
    let ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let mut out = Vec::with_capacity(list.len());
    for (k, e) in list.iter().enumerate() {
        let ep = sp.index(k);
        if e.from.is_none() && e.to.is_none() {
            return Err(ctx.err(&ep, "a `serves` entry needs `from`, `to` or both").with_hint(
                "e.g. `{ from: receiving }`, `{ to: shipping }` or `{ from: saw, to: turning }`",
            ));
        }
        let side = |name: &Option<String>, key: &str| {
            name.as_ref().map(|n| resolve(ctx, &ep.key(key), "department", n, &ids)).transpose()
        };
        out.push(MoveFilter { from: side(&e.from, "from")?, to: side(&e.to, "to")? });
    }
    Ok(out)
}

/// Every move a lot can make (from its receiving dock to its first step, and
/// along every branch from a step it can reach) must have a fleet allowed to serve it.
fn every_move_served(
    s: &Scenario,
    fleets: &[Fleet],
    departments: &[Department],
    products: &[Product],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    for (p, prod) in products.iter().enumerate() {
        let pp = FieldPath::root().key("products").index(p);
        let ops = &prod.routing;
        // The step (as written) of an operation: alternatives share their step's name.
        let written = s.products[p].routing.as_deref().unwrap_or(&[]);
        let step_of = |j: usize| written.iter().position(|st| st.step == ops[j].name).unwrap_or(0);
        for &(f, _) in &prod.first {
            let first = ops[f].department;
            if first != prod.enters_at && !served(fleets, p, prod, prod.enters_at, first) {
                let what = format!(
                    "from its receiving dock \"{}\" to step \"{}\" (at \"{}\")",
                    departments[prod.enters_at].id, ops[f].name, departments[first].id
                );
                let at = pp.key("routing").index(step_of(f));
                return Err(unserved(
                    ctx,
                    &at,
                    fleets,
                    departments,
                    (p, prod),
                    (prod.enters_at, first),
                    &what,
                ));
            }
        }
        for j in reachable(prod) {
            let from = ops[j].department;
            for (k, &(t, _)) in ops[j].next.iter().enumerate() {
                let to = ops[t].department;
                if to == from || served(fleets, p, prod, from, to) {
                    continue;
                }
                let sj = step_of(j);
                let sp = pp.key("routing").index(sj);
                let has_then = written.get(sj).is_some_and(|st| st.then.is_some());
                // With alternatives a step's branches are expanded, so `k` no longer counts `then`.
                let at = if has_then && prod.alternatives.is_empty() { sp.key("then").index(k) } else { sp };
                let what = format!(
                    "from step \"{}\" (at \"{}\") to step \"{}\" (at \"{}\")",
                    ops[j].name, departments[from].id, ops[t].name, departments[to].id
                );
                return Err(unserved(ctx, &at, fleets, departments, (p, prod), (from, to), &what));
            }
        }
    }
    Ok(())
}

fn served(fleets: &[Fleet], p: usize, prod: &Product, from: usize, to: usize) -> bool {
    fleets.iter().any(|f| f.may_serve(p, prod.weight_kg, from, to))
}

/// The error for a move no fleet may serve, saying why each fleet may not.
fn unserved(
    ctx: &Ctx,
    at: &FieldPath,
    fleets: &[Fleet],
    departments: &[Department],
    (p, prod): (usize, &Product),
    (from, to): (usize, usize),
    what: &str,
) -> ScenarioError {
    let reasons: Vec<String> = fleets
        .iter()
        .map(|f| {
            if !f.carries[p] {
                format!("\"{}\" does not carry it", f.id)
            } else if !f.may_carry(p, prod.weight_kg) {
                format!(
                    "\"{}\" lifts at most {} and a lot weighs {}",
                    f.id,
                    format_weight(f.max_load_kg.unwrap_or(0.0)),
                    format_weight(prod.weight_kg.unwrap_or(0.0))
                )
            } else {
                format!(
                    "\"{}\" serves no move from \"{}\" to \"{}\"",
                    f.id, departments[from].id, departments[to].id
                )
            }
        })
        .collect();
    ctx.err(at, format!("no fleet may serve the move of product \"{}\" {what}", prod.id))
        .with_hint(format!("{}; widen a fleet's `serves`, `carries` or `max_load`", reasons.join("; ")))
}

/// Steps a lot of `prod` can reach from its first step.
fn reachable(prod: &Product) -> Vec<usize> {
    let mut seen = vec![false; prod.routing.len()];
    let mut stack: Vec<usize> = prod.first.iter().map(|&(t, _)| t).collect();
    for &t in &stack {
        seen[t] = true;
    }
    let mut out = Vec::new();
    while let Some(j) = stack.pop() {
        out.push(j);
        for &(t, _) in &prod.routing[j].next {
            if !seen[t] {
                seen[t] = true;
                stack.push(t);
            }
        }
    }
    out.sort_unstable();
    out
}

/// A location id is a fixed home; a department id is a home that moves with the layout.
/// A name that is both is taken as the location, so that the home does not
/// change between the layouts being compared.
fn home(
    name: &str,
    hp: &FieldPath,
    departments: &[Department],
    locations: &[Location],
    ctx: &Ctx,
) -> Result<Home, ScenarioError> {
    if let Some(l) = locations.iter().position(|l| l.id == name) {
        return Ok(Home::Location(l));
    }
    if let Some(d) = departments.iter().position(|d| d.id == name) {
        return Ok(Home::Department(d));
    }
    let all = locations.iter().map(|l| l.id.as_str()).chain(departments.iter().map(|d| d.id.as_str()));
    Err(ctx
        .err(hp, format!("unknown home \"{name}\"{}", did_you_mean(name, all.clone())))
        .with_hint(format!("a home is a location or a department: {}", name_list(all))))
}
