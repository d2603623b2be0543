//! How loads move: instant moves, or fleets of forklifts, tow carts and walkers.

use super::compile::{check_unique, resolve, Ctx};
use super::error::{did_you_mean, name_list, ScenarioError};
use super::locate::FieldPath;
use super::schema::{DispatchSpec, FleetSpec, IdleSpec, KindSpec, Scenario};
use crate::plant::{Department, DispatchRule, Fleet, Handling, Home, IdleRule, Location, MoverKind, Product};

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
    for (v, field) in [(f.speed.loaded.0, "loaded"), (f.speed.empty.0, "empty")] {
        if !(v > 0.0) {
            return Err(ctx.err(
                &fp.key("speed").key(field),
                format!("{field} speed of fleet \"{}\" must be greater than 0, got {v} m/s", f.id),
            ));
        }
    }
    let (load_s, unload_s) = f.handling.as_ref().map_or((0.0, 0.0), |h| (h.load.0, h.unload.0));
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
    Ok(Fleet {
        id: f.id.clone(),
        kind: match f.kind {
            KindSpec::Forklift => MoverKind::Forklift,
            KindSpec::TowCart => MoverKind::TowCart,
            KindSpec::Walker => MoverKind::Walker,
        },
        count: f.count,
        speed_loaded: f.speed.loaded.0,
        speed_empty: f.speed.empty.0,
        load_s,
        unload_s,
        cost_per_h: per_h,
        cost_per_km: per_km,
        home,
        dispatch: match f.dispatch {
            None | Some(DispatchSpec::NearestIdle) => DispatchRule::NearestIdle,
            Some(DispatchSpec::FirstCome) => DispatchRule::FirstCome,
        },
        idle: match f.when_idle {
            None | Some(IdleSpec::Stay) => IdleRule::Stay,
            Some(IdleSpec::GoHome) => IdleRule::GoHome,
        },
        carries,
    })
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
