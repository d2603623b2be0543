//! A department's `batch` (a machine that runs several loads together): its rules read and checked, and what it cannot be combined with refused.

use super::context::{resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{BatchSpec, DepartmentSpec, Scenario};
use super::times::duration;
use crate::limits;
use crate::plant::{Batching, Department, OrderTrace, Product};
use crate::units::format_duration;

/// Compiles department `d`'s `batch` (`dp` is the department's path);
/// `products` are the product ids, by name (products are compiled after departments).
pub(crate) fn batching(
    spec: &BatchSpec,
    d: &DepartmentSpec,
    dp: &FieldPath,
    products: &[&str],
    ctx: &Ctx,
) -> Result<Batching, ScenarioError> {
    let bp = dp.key("batch");
    let id = &d.id;
    // A batch machine's own rules replace these; each would need rules of its own for a batch.
    for (present, field, why) in [
        (d.breakdowns.is_some(), "breakdowns", "a failure in the middle of a batch is not modelled yet"),
        (d.calendar.is_some(), "calendar", "a batch under way at the end of a shift is not modelled yet"),
        (d.setups.is_some(), "setups", "setups between batches are not modelled yet"),
        (d.people.is_some(), "people", "a person tending a whole batch is not modelled yet"),
        (d.staging.is_some(), "staging", "finite staging counts lots one at a time, not batches"),
        (
            d.queue_order.is_some(),
            "queue_order",
            "a batch machine takes the oldest waiting loads of one group",
        ),
    ] {
        if present {
            return Err(ctx
                .err(&dp.key(field), format!("batch department \"{id}\" cannot have `{field}`: {why}"))
                .with_hint(format!(
                    "remove `{field}`, or `batch` to make \"{id}\" a one-lot-at-a-time department"
                )));
        }
    }
    if spec.max == 0 {
        return Err(ctx
            .err(&bp.key("max"), format!("a batch at \"{id}\" must hold at least 1 load"))
            .with_hint("`max` is the most loads a machine runs together, e.g. `max: 6`"));
    }
    limits::check_count("batch max", u64::from(spec.max), u64::from(limits::MAX_BATCH), limits::COUNT_WHY)
        .map_err(|m| ctx.err(&bp.key("max"), m))?;
    let min = spec.min.unwrap_or(1);
    if min == 0 || min > spec.max {
        return Err(ctx
            .err(
                &bp.key("min"),
                format!("batch `min` at \"{id}\" must be between 1 and `max` ({}), got {min}", spec.max),
            )
            .with_hint(
                "`min` is how many compatible loads must wait before a batch starts; it cannot exceed `max`",
            ));
    }
    let max_wait_s = match spec.max_wait {
        None => None,
        Some(w) if w.0 > 0.0 && w.0.is_finite() => Some(w.0),
        Some(w) => {
            return Err(ctx
                .err(
                    &bp.key("max_wait"),
                    format!("`max_wait` at \"{id}\" must be longer than 0, got {}", format_duration(w.0)),
                )
                .with_hint("leave it out to wait for `min` loads however long it takes"))
        }
    };
    if max_wait_s.is_some() && min == 1 {
        return Err(ctx
            .err(&bp.key("max_wait"), format!("`max_wait` at \"{id}\" has no effect with `min: 1`"))
            .with_hint("with `min: 1` a batch starts as soon as one load waits; give `min` above 1, or remove `max_wait`"));
    }
    let time = duration(&spec.time.0, &bp.key("time"), "batch time", ctx)?;
    let per_load_s = match spec.per_load {
        None => 0.0,
        Some(t) if t.0 >= 0.0 && t.0.is_finite() => t.0,
        Some(t) => {
            return Err(ctx.err(
                &bp.key("per_load"),
                format!("`per_load` at \"{id}\" must not be negative, got {}", format_duration(t.0)),
            ))
        }
    };
    let (group_of, groups) = match &spec.together {
        None => (vec![0; products.len()], 1),
        Some(list) => together(list, &bp.key("together"), id, products, ctx)?,
    };
    Ok(Batching { max: spec.max, min, max_wait_s, time, per_load_s, group_of, groups })
}

/// The compatibility groups: per product its group, `u32::MAX` for a product in none.
fn together(
    list: &[Vec<String>],
    tp: &FieldPath,
    dept: &str,
    products: &[&str],
    ctx: &Ctx,
) -> Result<(Vec<u32>, u32), ScenarioError> {
    if list.is_empty() {
        return Err(ctx
            .err(tp, format!("`together` at \"{dept}\" lists no group"))
            .with_hint("leave it out to let any products share a batch, or list groups: `[[a, b], [c]]`"));
    }
    let mut group_of = vec![u32::MAX; products.len()];
    for (g, names) in list.iter().enumerate() {
        if names.is_empty() {
            return Err(
                ctx.err(&tp.index(g), format!("group {} of `together` at \"{dept}\" is empty", g + 1))
            );
        }
        for (k, name) in names.iter().enumerate() {
            let at = tp.index(g).index(k);
            let p = resolve(ctx, &at, "product", name, products)?;
            if group_of[p] != u32::MAX {
                return Err(ctx
                    .err(&at, format!("product \"{name}\" is in `together` at \"{dept}\" twice"))
                    .with_hint("each product belongs to one group of products that may share a batch"));
            }
            group_of[p] = g as u32;
        }
    }
    Ok((group_of, list.len() as u32))
}

/// The rules that need the routings: a step at a batch department takes its
/// time from the batch (checked in `routing.rs`); every product that visits
/// one is in a group of its `together`, is not split into several loads, and
/// reaches it by a plain step (not one of several alternatives).
pub(crate) fn check(
    s: &Scenario,
    departments: &[Department],
    products: &[Product],
    orders: Option<&OrderTrace>,
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let root = FieldPath::root();
    if let (Some(b), Some(f)) = (
        departments.iter().position(|d| d.batch.is_some()),
        departments.iter().position(|d| d.staging.is_limited()),
    ) {
        return Err(ctx
            .err(
                &root.key("departments").index(f).key("staging"),
                format!(
                    "department \"{}\" has finite staging and \"{}\" is a batch machine: the two cannot be combined yet",
                    departments[f].id, departments[b].id
                ),
            )
            .with_hint("a finished batch cannot yet be held on its machine when the next department is full; remove `staging` or `batch`"));
    }
    // A trace played again and again keeps every product coming.
    let repeats = orders.is_some_and(|o| o.repeat_s.is_some());
    for (d, dep) in departments.iter().enumerate() {
        let Some(b) = &dep.batch else { continue };
        let dp = root.key("departments").index(d).key("batch");
        for (p, prod) in products.iter().enumerate() {
            if !prod.routing.iter().any(|o| o.department == d) {
                continue;
            }
            let pp = root.key("products").index(p);
            if b.group_of[p] == u32::MAX {
                return Err(ctx
                    .err(
                        &dp.key("together"),
                        format!(
                            "product \"{}\" visits batch department \"{}\" but is in no group of `together`",
                            prod.id, dep.id
                        ),
                    )
                    .with_hint(format!("add it to a group, or give it one of its own: `[{}]`", prod.id)));
            }
            if prod.lot.is_some_and(|l| l.loads() > 1) {
                return Err(ctx
                    .err(
                        &pp.key("lot").key("transfer_batch"),
                        format!(
                            "product \"{}\" moves in several unit loads and visits batch department \"{}\": \
                             the two cannot be combined yet",
                            prod.id, dep.id
                        ),
                    )
                    .with_hint("leave out `transfer_batch` (the lot is one load of the batch) or the department's `batch`"));
            }
            if let Some(g) =
                prod.alternatives.iter().find(|g| g.ops.iter().any(|&o| prod.routing[o].department == d))
            {
                let j = s.products[p]
                    .routing
                    .as_deref()
                    .and_then(|r| r.iter().position(|st| st.step == g.step))
                    .unwrap_or(0);
                return Err(ctx
                    .err(
                        &pp.key("routing").index(j).key("either"),
                        format!(
                            "step \"{}\" of product \"{}\" chooses batch department \"{}\" among alternatives: \
                             not supported yet",
                            g.step, prod.id, dep.id
                        ),
                    )
                    .with_hint("send the step to the batch department with `at`"));
            }
        }
        if !repeats {
            stranded(departments, products, d, b, ctx)?;
        }
    }
    Ok(())
}

/// A batch that needs `min` loads and has no `max_wait` can never start for
/// the last loads of a group whose products come only from an order trace
/// played once: fewer than `min` of them may be left, and they would wait
/// for ever. Refused, naming `min`, so the user adds `max_wait`.
fn stranded(
    departments: &[Department],
    products: &[Product],
    d: usize,
    b: &Batching,
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    if b.min == 1 || b.max_wait_s.is_some() {
        return Ok(());
    }
    let visits = |p: &Product| p.routing.iter().any(|o| o.department == d);
    for g in 0..b.groups {
        let members: Vec<&Product> = products
            .iter()
            .enumerate()
            .filter(|&(p, prod)| b.group_of[p] == g && visits(prod))
            .map(|(_, prod)| prod)
            .collect();
        if let Some(first) = members.first() {
            if members.iter().all(|p| matches!(p.demand, crate::plant::Demand::Orders)) {
                return Err(ctx
                    .err(
                        &FieldPath::root().key("departments").index(d).key("batch").key("min"),
                        format!(
                            "batch department \"{}\" waits for {} loads, and \"{}\" comes only from the order trace: \
                             its last loads may be fewer than {} and would wait for ever",
                            departments[d].id, b.min, first.id, b.min
                        ),
                    )
                    .with_hint("give `max_wait` (e.g. `max_wait: 30 min`) so that a short batch starts at the latest then"));
            }
        }
    }
    Ok(())
}
