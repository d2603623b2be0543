//! Products: demand (see `demand.rs`), entry dock, lot weight, and the routing of steps with branches, rework loops and processing times.

use super::context::{check_unique, resolve, Ctx};
use super::demand;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{DistSpec, Scenario, StepSpec, BRANCH_SUM_TOLERANCE};
use super::times::time_dist;
use crate::dist::{rounded, Dist};
use crate::plant::{Alternatives, Department, DepartmentRole, Operation, Product};
use crate::suggest::{did_you_mean, name_list};

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
        // `tables::expand` gave every product its steps or refused the scenario.
        let steps = spec.routing.as_deref().unwrap_or(&[]);
        let rp = pp.key("routing");
        let dock_step = entry_step(steps, departments);
        let enters_at = match (&spec.enters_at, dock_step) {
            (Some(name), Some(d)) if *name != departments[d].id => {
                return Err(ctx
                    .err(&rp.index(0).key("at"), format!(
                        "the routing of product \"{}\" starts at receiving dock \"{}\", but `enters_at` is \"{name}\"",
                        spec.id, departments[d].id
                    ))
                    .with_hint("name the same dock in both, or leave `enters_at` out"))
            }
            (_, Some(d)) => d,
            (enters, None) => match enters {
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
            },
        };
        let Compiled { ops: routing, first, alternatives } = routing(&spec.id, steps, &rp, departments, ctx)?;
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
            first,
            alternatives,
            priority,
            due_within_s,
            kits: Vec::new(),
            into: None,
        });
    }
    super::alternatives::check_plant(&out, departments, ctx)?;
    super::assembly::link(s, &mut out, departments, ctx)?;
    Ok(out)
}

/// A product's routing compiled: operations (each alternative department
/// of a step an operation of its own), the first operations with their
/// probabilities, and the groups of alternatives.
struct Compiled {
    ops: Vec<Operation>,
    first: Vec<(usize, f64)>,
    alternatives: Vec<Alternatives>,
}

/// The receiving dock the routing starts at, when its first step is at one
/// (a step written only to branch from the dock).
fn entry_step(steps: &[StepSpec], departments: &[Department]) -> Option<usize> {
    let at = steps.first()?.at.as_deref()?;
    departments.iter().position(|d| d.id == at && d.role == DepartmentRole::Receiving)
}

fn routing(
    product: &str,
    steps: &[StepSpec],
    rp: &FieldPath,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<Compiled, ScenarioError> {
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
    // A first step at the receiving dock only says where lots go first.
    let off = usize::from(entry_step(steps, departments).is_some());
    // Per step: its operations' indices start here (one per alternative).
    let mut start = vec![0; steps.len() + 1];
    for (j, st) in steps.iter().enumerate() {
        let n = if j < off { 0 } else { st.either.as_ref().map_or(1, |e| e.len().max(1)) };
        start[j + 1] = start[j] + n;
    }
    // Step-level branches and, per step, its departments, times and shares.
    let mut step_next: Vec<Vec<(usize, f64)>> = Vec::with_capacity(steps.len());
    let mut step_ops: Vec<Vec<(usize, Option<Dist>, f64)>> = Vec::with_capacity(steps.len());
    let mut alternatives = Vec::new();
    for (j, st) in steps.iter().enumerate() {
        let sp = rp.index(j);
        super::assembly::check_step(st, &sp, off, j, steps.len(), departments, ctx)?;
        if j < off {
            if st.time.is_some() || st.either.is_some() || st.rule.is_some() {
                return Err(ctx
                    .err(&sp, format!("step \"{}\" at receiving dock \"{}\" can only branch", st.step, st.at.as_deref().unwrap_or("")))
                    .with_hint("a first step at the receiving dock takes no `time`, `either` or `rule`; give it `then` to say where lots go first"));
            }
            step_next.push(next_steps(product, st, j, steps.len(), &sp, &step_ids, ctx)?);
            step_ops.push(Vec::new());
            continue;
        }
        if st.either.is_some() {
            let e = super::alternatives::either(st, &sp, departments, ctx)?;
            step_next.push(next_steps(product, st, j, steps.len(), &sp, &step_ids, ctx)?);
            alternatives.push(Alternatives {
                step: st.step.clone(),
                ops: (start[j]..start[j + 1]).collect(),
                rule: e.rule,
                shares: e.shares.clone(),
            });
            step_ops.push(e.options.into_iter().zip(e.shares).map(|((d, t), s)| (d, Some(t), s)).collect());
            continue;
        }
        if st.rule.is_some() {
            return Err(super::alternatives::rule_without_either(st, &sp, ctx));
        }
        let Some(at) = st.at.as_deref() else {
            return Err(ctx
                .err(&sp, format!("step \"{}\" has no `at`", st.step))
                .with_hint("name its department, `at: laser`, or several with `either`"));
        };
        let d = resolve(ctx, &sp.key("at"), "department", at, &dept_ids)?;
        let (time, next) = match departments[d].role {
            DepartmentRole::Receiving => {
                return Err(ctx
                    .err(&sp.key("at"), format!("step \"{}\" is at receiving dock \"{}\"", st.step, at))
                    .with_hint(
                        "lots enter at the receiving dock already; only the first step may be there, to branch from it",
                    ))
            }
            DepartmentRole::Shipping => {
                if st.time.is_some() {
                    return Err(ctx
                        .err(
                            &sp.key("time"),
                            format!("step \"{}\" at shipping dock \"{}\" cannot take time", st.step, at),
                        )
                        .with_hint("delivery to a shipping dock ends the lot; remove `time`"));
                }
                if st.then.is_some() {
                    return Err(ctx
                        .err(
                            &sp.key("then"),
                            format!("step \"{}\" at shipping dock \"{}\" cannot have `then`", st.step, at),
                        )
                        .with_hint("delivery to a shipping dock ends the lot; remove `then`"));
                }
                (None, Vec::new())
            }
            DepartmentRole::Work if departments[d].batch.is_some() => {
                // The batch's time is the department's: one number for every load in the batch.
                if st.time.is_some() {
                    return Err(ctx
                        .err(
                            &sp.key("time"),
                            format!("step \"{}\" at batch department \"{}\" cannot take its own time", st.step, at),
                        )
                        .with_hint(format!("loads at \"{at}\" are processed together for the department's `batch.time`; remove this step's `time`")));
                }
                (None, next_steps(product, st, j, steps.len(), &sp, &step_ids, ctx)?)
            }
            // A component's last step: consumed into a kit there (`assembly.rs` checked its form).
            DepartmentRole::Work if st.into.is_some() => (None, Vec::new()),
            DepartmentRole::Work => {
                let time = match &st.time {
                    Some(t) => processing_time(&t.0, &sp.key("time"), ctx)?,
                    None => {
                        return Err(ctx
                            .err(&sp, format!("step \"{}\" at \"{}\" has no `time`", st.step, at))
                            .with_hint("give a processing time such as `time: 5 min` or `time: { exponential: { mean: 5 min } }`"))
                    }
                };
                (Some(time), next_steps(product, st, j, steps.len(), &sp, &step_ids, ctx)?)
            }
        };
        step_next.push(next);
        step_ops.push(vec![(d, time, 1.0)]);
    }
    // A branch to a step is a branch to each of its operations, in its shares.
    let expand = |branches: &[(usize, f64)], sp: &FieldPath| -> Result<Vec<(usize, f64)>, ScenarioError> {
        let mut out = Vec::with_capacity(branches.len());
        for (k, &(t, p)) in branches.iter().enumerate() {
            if t < off {
                let bp =
                    if steps[0].then.is_some() { sp.key("then").index(k).key("step") } else { sp.clone() };
                return Err(ctx
                    .err(&bp, format!("step \"{}\" leads back to the receiving dock", steps[t].step))
                    .with_hint("lots enter at the receiving dock once; lead to an operation instead"));
            }
            out.extend(step_ops[t].iter().enumerate().map(|(a, o)| (start[t] + a, p * o.2)));
        }
        Ok(out)
    };
    let first =
        if off == 1 { expand(&step_next[0], &rp.index(0))? } else { expand(&[(0, 1.0)], &rp.index(0))? };
    let mut ops = Vec::with_capacity(start[steps.len()]);
    let mut step_of = Vec::with_capacity(start[steps.len()]);
    for (j, st) in steps.iter().enumerate().skip(off) {
        let next = expand(&step_next[j], &rp.index(j))?;
        for (d, time, _) in &step_ops[j] {
            step_of.push(j);
            ops.push(Operation {
                name: st.step.clone(),
                department: *d,
                time: time.clone(),
                next: next.clone(),
            });
        }
    }
    check_exits(product, &ops, &first, rp, &step_of, ctx)?;
    Ok(Compiled { ops, first, alternatives })
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
fn check_exits(
    product: &str,
    ops: &[Operation],
    first: &[(usize, f64)],
    rp: &FieldPath,
    step_of: &[usize],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let n = ops.len();
    let mut reachable = vec![false; n];
    let mut stack: Vec<usize> = first.iter().map(|&(t, _)| t).collect();
    for &t in &stack {
        reachable[t] = true;
    }
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
                &rp.index(step_of[j]),
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
