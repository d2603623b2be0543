//! Products: demand (see `demand.rs`), entry dock, lot weight, and the routing of steps with branches, rework loops and processing times.

use super::context::{check_unique, resolve, Ctx};
use super::demand;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{DistSpec, Scenario, StepSpec};
use super::times::time_dist;
use crate::dist::{rounded, Dist};
use crate::plant::{Department, DepartmentRole, Operation, Product};
use crate::suggest::{did_you_mean, name_list};

/// How far branch probabilities may sum from 1 (hand-typed decimals).
pub(crate) const BRANCH_SUM_TOLERANCE: f64 = 1e-9;

/// Compiles every product.
pub(crate) fn products(
    s: &Scenario,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<Vec<Product>, ScenarioError> {
    let p = FieldPath::root().key("products");
    if s.products.is_empty() {
        return Err(ctx.err(&p, "the plant has no products"));
    }
    check_unique(
        ctx,
        "product",
        s.products.iter().enumerate().map(|(i, pr)| (pr.id.as_str(), p.index(i).key("id"))),
    )?;
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let receiving: Vec<usize> =
        (0..departments.len()).filter(|&d| departments[d].role == DepartmentRole::Receiving).collect();
    let working = demand::working_time(s, ctx)?;
    let mut out = Vec::with_capacity(s.products.len());
    for (i, spec) in s.products.iter().enumerate() {
        let pp = p.index(i);
        let demand = demand::product_demand(spec, &pp, working.as_ref(), ctx)?;
        let enters_at = match &spec.enters_at {
            Some(name) => {
                let ep = pp.key("enters_at");
                let d = resolve(ctx, &ep, "department", name, &dept_ids)?;
                if departments[d].role != DepartmentRole::Receiving {
                    return Err(ctx.err(&ep, format!("\"{name}\" is not a receiving dock")).with_hint(
                        format!("receiving docks: {}", name_list(receiving.iter().map(|&r| dept_ids[r]))),
                    ));
                }
                d
            }
            None if receiving.len() == 1 => receiving[0],
            None => {
                return Err(ctx
                    .err(
                        &pp,
                        format!(
                            "product \"{}\" needs `enters_at`: the plant has several receiving docks",
                            spec.id
                        ),
                    )
                    .with_hint(format!(
                        "receiving docks: {}",
                        name_list(receiving.iter().map(|&r| dept_ids[r]))
                    )))
            }
        };
        // `tables::expand` gave every product its steps or refused the scenario.
        let steps = spec.routing.as_deref().unwrap_or(&[]);
        let routing = routing(&spec.id, steps, &pp.key("routing"), departments, ctx)?;
        let weight_kg = match &spec.load {
            None => None,
            Some(l) if l.weight.0 > 0.0 => Some(l.weight.0),
            Some(l) => {
                return Err(ctx.err(
                    &pp.key("load").key("weight"),
                    format!(
                        "the weight of a lot of product \"{}\" must be more than 0, got {} kg",
                        spec.id, l.weight.0
                    ),
                ))
            }
        };
        let lot = match &spec.lot {
            None => None,
            Some(l) => Some(super::work::lot(l, &spec.id, &pp, ctx)?),
        };
        let (priority, due_within_s) = super::queueing::product_terms(s, i, ctx)?;
        out.push(Product {
            id: spec.id.clone(),
            demand,
            enters_at,
            routing,
            weight_kg,
            lot,
            priority,
            due_within_s,
        });
    }
    Ok(out)
}

fn routing(
    product: &str,
    steps: &[StepSpec],
    rp: &FieldPath,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<Vec<Operation>, ScenarioError> {
    if steps.is_empty() {
        return Err(ctx.err(rp, format!("the routing of product \"{product}\" is empty")).with_hint(
            "list the steps, ending with one at a shipping dock: `- { step: ship, at: shipping }`",
        ));
    }
    check_unique(
        ctx,
        "step",
        steps.iter().enumerate().map(|(j, st)| (st.step.as_str(), rp.index(j).key("step"))),
    )?;
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let step_ids: Vec<&str> = steps.iter().map(|st| st.step.as_str()).collect();
    let mut ops = Vec::with_capacity(steps.len());
    for (j, st) in steps.iter().enumerate() {
        let sp = rp.index(j);
        let d = resolve(ctx, &sp.key("at"), "department", &st.at, &dept_ids)?;
        let (time, next) = match departments[d].role {
            DepartmentRole::Receiving => {
                return Err(ctx
                    .err(&sp.key("at"), format!("step \"{}\" is at receiving dock \"{}\"", st.step, st.at))
                    .with_hint(
                        "lots enter at the receiving dock already; start the routing at the first operation",
                    ))
            }
            DepartmentRole::Shipping => {
                if st.time.is_some() {
                    return Err(ctx
                        .err(
                            &sp.key("time"),
                            format!("step \"{}\" at shipping dock \"{}\" cannot take time", st.step, st.at),
                        )
                        .with_hint("delivery to a shipping dock ends the lot; remove `time`"));
                }
                if st.then.is_some() {
                    return Err(ctx
                        .err(
                            &sp.key("then"),
                            format!("step \"{}\" at shipping dock \"{}\" cannot have `then`", st.step, st.at),
                        )
                        .with_hint("delivery to a shipping dock ends the lot; remove `then`"));
                }
                (None, Vec::new())
            }
            DepartmentRole::Work => {
                let time = match &st.time {
                    Some(t) => processing_time(&t.0, &sp.key("time"), ctx)?,
                    None => {
                        return Err(ctx
                            .err(&sp, format!("step \"{}\" at \"{}\" has no `time`", st.step, st.at))
                            .with_hint("give a processing time such as `time: 5 min` or `time: { exponential: { mean: 5 min } }`"))
                    }
                };
                (Some(time), next_steps(product, st, j, steps.len(), &sp, &step_ids, ctx)?)
            }
        };
        ops.push(Operation { name: st.step.clone(), department: d, time, next });
    }
    check_exits(product, &ops, rp, ctx)?;
    Ok(ops)
}

fn next_steps(
    product: &str,
    st: &StepSpec,
    j: usize,
    len: usize,
    sp: &FieldPath,
    step_ids: &[&str],
    ctx: &Ctx,
) -> Result<Vec<(usize, f64)>, ScenarioError> {
    let Some(branches) = &st.then else {
        if j + 1 < len {
            return Ok(vec![(j + 1, 1.0)]);
        }
        return Err(ctx
            .err(sp, format!("the routing of product \"{product}\" never reaches a shipping dock"))
            .with_hint(format!(
                "the last step \"{}\" has no `then`; end the routing with a step at a shipping dock",
                st.step
            )));
    };
    let tp = sp.key("then");
    if branches.is_empty() {
        return Err(ctx
            .err(&tp, "`then` is empty")
            .with_hint("leave `then` out to go on to the next step in the list"));
    }
    let mut next: Vec<(usize, f64)> = Vec::with_capacity(branches.len());
    let mut sum = 0.0;
    for (k, b) in branches.iter().enumerate() {
        let bp = tp.index(k);
        let target = step_ids.iter().position(|s| *s == b.step).ok_or_else(|| {
            ctx.err(
                &bp.key("step"),
                format!("unknown step \"{}\"{}", b.step, did_you_mean(&b.step, step_ids.iter().copied())),
            )
            .with_hint(format!(
                "the steps of product \"{product}\" are: {}",
                name_list(step_ids.iter().copied())
            ))
        })?;
        if next.iter().any(|(t, _)| *t == target) {
            return Err(ctx.err(&bp.key("step"), format!("step \"{}\" is listed twice", b.step)));
        }
        let p = b.p.0;
        if !(p > 0.0 && p <= 1.0) {
            return Err(ctx
                .err(&bp.key("p"), format!("branch probability must lie in (0, 1], got {}", rounded(p)))
                .with_hint("write a probability as 0.9 or 90%"));
        }
        sum += p;
        next.push((target, p));
    }
    if !((sum - 1.0).abs() <= BRANCH_SUM_TOLERANCE) {
        return Err(ctx
            .err(&tp, format!("branch probabilities of step \"{}\" sum to {}, not 1", st.step, rounded(sum)))
            .with_hint(format!("make the `p` values add up to 1 (tolerance {BRANCH_SUM_TOLERANCE:e})")));
    }
    Ok(next)
}

/// Every step reachable from the first must be able to reach a shipping step;
/// otherwise lots would circulate for ever (a rework loop with no way out).
fn check_exits(product: &str, ops: &[Operation], rp: &FieldPath, ctx: &Ctx) -> Result<(), ScenarioError> {
    let n = ops.len();
    let mut reachable = vec![false; n];
    let mut stack = vec![0];
    reachable[0] = true;
    while let Some(j) = stack.pop() {
        for &(t, _) in &ops[j].next {
            if !reachable[t] {
                reachable[t] = true;
                stack.push(t);
            }
        }
    }
    // Backward closure from the exits, by repeated sweeps: routings are short.
    let mut exits: Vec<bool> = ops.iter().map(|o| o.next.is_empty()).collect();
    let mut changed = true;
    while changed {
        changed = false;
        for j in 0..n {
            if !exits[j] && ops[j].next.iter().any(|&(t, _)| exits[t]) {
                exits[j] = true;
                changed = true;
            }
        }
    }
    match (0..n).find(|&j| reachable[j] && !exits[j]) {
        None => Ok(()),
        Some(j) => Err(ctx
            .err(
                &rp.index(j),
                format!(
                    "unreachable shipping dock: lots of product \"{product}\" that reach step \"{}\" can never get to a shipping dock",
                    ops[j].name
                ),
            )
            .with_hint("a loop with no way out: give one of its steps a branch (`then`) that leads towards shipping")),
    }
}

/// Builds the processing time. The distribution's own messages quote time
/// parameters in seconds, so the hint says so unless the value was not a time.
fn processing_time(spec: &DistSpec, tp: &FieldPath, ctx: &Ctx) -> Result<Dist, ScenarioError> {
    time_dist(spec, tp, ctx, "processing time")
}
