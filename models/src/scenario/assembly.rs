//! Assembly in the scenario: a step's `parts` (the kit it waits for) and a component's `into` (where it is consumed), read and linked.
//!
//! The rules, in the words of docs/scenario-format.md ("Assembly"): a
//! product's step at a work department may list `parts: { impeller: 1 }`;
//! each component product ends its routing with a step at that same
//! department marked `into: <the assembling product>`, with no time and
//! nothing after it. A component feeds exactly one assembly step, so every
//! kit is matched from its own stock of parts.

use super::context::{resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{Scenario, StepSpec};
use crate::plant::{Department, DepartmentRole, Kit, Product};

/// The form of one step's `parts` or `into`, checked while its routing is
/// compiled (step `j` of `len`; the first `off` steps only branch from the dock).
pub(crate) fn check_step(
    st: &StepSpec,
    sp: &FieldPath,
    off: usize,
    j: usize,
    len: usize,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let key = match (&st.parts, &st.into) {
        (None, None) => return Ok(()),
        (Some(_), Some(_)) => {
            return Err(ctx
                .err(&sp.key("into"), format!("step \"{}\" has both `parts` and `into`", st.step))
                .with_hint(
                    "a step either assembles a kit (`parts`) or is a component's last step, where it is \
                     consumed (`into`); split it in two",
                ))
        }
        (Some(_), None) => "parts",
        (None, Some(_)) => "into",
    };
    let kp = sp.key(key);
    if st.either.is_some() {
        return Err(ctx
            .err(&kp, format!("step \"{}\" has `{key}` and alternative departments (`either`)", st.step))
            .with_hint("kits are matched at one department: name it with `at` instead of `either`"));
    }
    let dock = if j < off {
        Some("receiving")
    } else {
        let at = st.at.as_deref().unwrap_or("");
        match departments.iter().find(|d| d.id == at).map(|d| d.role) {
            Some(DepartmentRole::Receiving) => Some("receiving"),
            Some(DepartmentRole::Shipping) => Some("shipping"),
            // An unknown department is named by the routing's own check.
            _ => None,
        }
    };
    if let Some(kind) = dock {
        return Err(ctx
            .err(
                &kp,
                format!(
                    "step \"{}\" is at {kind} dock \"{}\" and cannot take `{key}`",
                    st.step,
                    st.at.as_deref().unwrap_or("")
                ),
            )
            .with_hint("kits are assembled at a work department (one with machines): name it in `at`"));
    }
    if j >= off {
        let at = st.at.as_deref().unwrap_or("");
        if departments.iter().any(|d| d.id == at && d.batch.is_some()) {
            // Kits are matched lot by lot as each arrives; a batch machine gathers lots by its own rule.
            return Err(ctx
                .err(&kp, format!("step \"{}\" is at batch department \"{at}\" and cannot take `{key}`", st.step))
                .with_hint(
                    "assemble at a one-lot-at-a-time department, and send the kit to the batch machine in a later step",
                ));
        }
    }
    if let Some(parts) = &st.parts {
        if parts.0.is_empty() {
            return Err(ctx.err(&kp, format!("`parts` of step \"{}\" is empty", st.step)).with_hint(
                "list the components and lots of each per kit: `parts: { impeller: 1, seal-kit: 2 }`",
            ));
        }
        for (k, (name, q)) in parts.0.iter().enumerate() {
            if parts.0[..k].iter().any(|(n, _)| n == name) {
                return Err(ctx
                    .err(&kp.key(name), format!("component \"{name}\" is listed twice in `parts`"))
                    .with_hint("give each component once, with the lots a kit takes"));
            }
            if *q == 0 {
                return Err(ctx
                    .err(&kp.key(name), format!("a kit of step \"{}\" takes 0 lots of \"{name}\"", st.step))
                    .with_hint(
                        "a kit takes at least 1 lot of each component listed; leave it out otherwise",
                    ));
            }
        }
        return Ok(());
    }
    if st.time.is_some() {
        return Err(ctx
            .err(&sp.key("time"), format!("step \"{}\" with `into` takes no time", st.step))
            .with_hint(
                "the component is consumed when it arrives; the assembly's time is on the assembling \
                 product's step (the one with `parts`)",
            ));
    }
    if st.then.is_some() || j + 1 != len {
        let at = if st.then.is_some() { sp.key("then") } else { kp };
        return Err(ctx
            .err(
                &at,
                format!("the routing goes on after step \"{}\", where the component is consumed", st.step),
            )
            .with_hint(
                "a component's routing ends at the assembly department: make the `into` step its last",
            ));
    }
    Ok(())
}

/// Link every `into` to its assembly step and every `parts` entry to its
/// component, and refuse what cannot work: an unknown product, a component
/// that does not end where its kit is assembled, a component of two steps,
/// circular assemblies, split lots, and finite inbound staging at an
/// assembly department (a kit deadlock waiting to happen).
pub(crate) fn link(
    s: &Scenario,
    products: &mut [Product],
    departments: &[Department],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let ids: Vec<String> = products.iter().map(|p| p.id.clone()).collect();
    let ids: Vec<&str> = ids.iter().map(String::as_str).collect();
    let steps = |i: usize| s.products[i].routing.as_deref().unwrap_or(&[]);
    let step_path = |i: usize, j: usize| FieldPath::root().key("products").index(i).key("routing").index(j);
    // Components first: (product, step index of its `into`).
    let mut into_step = vec![usize::MAX; products.len()];
    for i in 0..products.len() {
        for (j, st) in steps(i).iter().enumerate() {
            let Some(name) = &st.into else { continue };
            let ip = step_path(i, j).key("into");
            let parent = resolve(ctx, &ip, "product", name, &ids)?;
            if parent == i {
                return Err(ctx
                    .err(&ip, format!("product \"{name}\" goes `into` itself"))
                    .with_hint("name the product this component is assembled into"));
            }
            products[i].into = Some(parent);
            into_step[i] = j;
        }
    }
    let mut claimed: Vec<Option<(usize, usize)>> = vec![None; products.len()];
    for i in 0..products.len() {
        for (j, st) in steps(i).iter().enumerate() {
            let Some(parts) = &st.parts else { continue };
            let pp = step_path(i, j).key("parts");
            let op =
                products[i].routing.iter().position(|o| o.name == st.step).expect("the step was compiled");
            let dept = products[i].routing[op].department;
            let mut kit = Kit { op, parts: Vec::with_capacity(parts.0.len()) };
            for (name, q) in &parts.0 {
                let np = pp.key(name);
                let c = resolve(ctx, &np, "product", name, &ids)?;
                let (parent, step) = (&products[i].id, &st.step);
                if c == i {
                    return Err(ctx
                        .err(
                            &np,
                            format!("circular assembly: product \"{parent}\" lists itself in its `parts`"),
                        )
                        .with_hint("a product cannot be a component of its own kit"));
                }
                if let Some((a, b)) = claimed[c] {
                    return Err(ctx
                        .err(&np, format!(
                            "component \"{name}\" is already a part of product \"{}\" at step \"{}\"",
                            products[a].id, steps(a)[b].step
                        ))
                        .with_hint("a component feeds one assembly step: give the other kit a component product of its own"));
                }
                if products[c].into != Some(i) {
                    return Err(ctx
                        .err(&np, format!(
                            "product \"{name}\" is listed in the parts of \"{parent}\" at step \"{step}\", but its routing does not end with `into: {parent}`"
                        ))
                        .with_hint(format!(
                            "end the routing of \"{name}\" with a step at \"{}\" marked `into`: `- {{ step: to-{parent}, at: {}, into: {parent} }}`",
                            departments[dept].id, departments[dept].id
                        )));
                }
                let cj = into_step[c];
                let cop =
                    products[c].routing.iter().position(|o| o.name == steps(c)[cj].step).expect("compiled");
                let cdept = products[c].routing[cop].department;
                if cdept != dept {
                    return Err(ctx
                        .err(&step_path(c, cj).key("at"), format!(
                            "component \"{name}\" ends at \"{}\", but \"{parent}\" assembles it at \"{}\" (step \"{step}\")",
                            departments[cdept].id, departments[dept].id
                        ))
                        .with_hint(format!("end the routing of \"{name}\" at \"{}\"", departments[dept].id)));
                }
                claimed[c] = Some((i, j));
                kit.parts.push((c, *q));
            }
            if departments[dept].staging.inbound.is_some() {
                let dp = FieldPath::root().key("departments").index(dept).key("staging").key("inbound");
                return Err(ctx
                    .err(&dp, format!(
                        "kit deadlock: department \"{}\" assembles kits (product \"{}\", step \"{}\") and has finite inbound staging",
                        departments[dept].id, products[i].id, st.step
                    ))
                    .with_hint(
                        "lots waiting there for their parts could fill the inbound area and shut out the parts they \
                         wait for, so no kit could ever be made; leave its inbound staging unlimited (lots waiting \
                         for kits wait in the kitting area, apart from the machines' queue)",
                    ));
            }
            products[i].kits.push(kit);
        }
    }
    for c in 0..products.len() {
        if let (Some(parent), None) = (products[c].into, claimed[c]) {
            let (name, pid) = (&products[c].id, &products[parent].id);
            return Err(ctx
                .err(&step_path(c, into_step[c]).key("into"), format!(
                    "product \"{name}\" goes `into: {pid}`, but no step of \"{pid}\" lists \"{name}\" in its `parts`"
                ))
                .with_hint(format!("add `parts: {{ {name}: 1 }}` to the assembly step of \"{pid}\"")));
        }
    }
    for (i, prod) in products.iter().enumerate() {
        if (!prod.kits.is_empty() || prod.into.is_some()) && prod.lot.is_some_and(|l| l.loads() > 1) {
            return Err(ctx
                .err(
                    &FieldPath::root().key("products").index(i).key("lot"),
                    format!(
                        "product \"{}\" takes part in an assembly and moves in several unit loads",
                        prod.id
                    ),
                )
                .with_hint("kits are matched lot by lot: move its lots whole (leave out `transfer_batch`)"));
        }
    }
    check_cycles(products, &claimed, &step_path, ctx)
}

/// Refuse circular assemblies (A needs B, B needs A, or longer), naming the cycle.
fn check_cycles(
    products: &[Product],
    claimed: &[Option<(usize, usize)>],
    step_path: &dyn Fn(usize, usize) -> FieldPath,
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    // Each component has one parent, so following `into` from any product
    // either ends or comes back round: the graph's cycles are these chains.
    for start in 0..products.len() {
        let mut chain = vec![start];
        let mut p = start;
        while let Some(next) = products[p].into {
            if next == start {
                let mut names: Vec<&str> = chain.iter().rev().map(|&k| products[k].id.as_str()).collect();
                names.push(products[chain[chain.len() - 1]].id.as_str());
                let (a, j) = claimed[chain[0]].expect("a linked component is claimed");
                return Err(ctx
                    .err(
                        &step_path(a, j).key("parts"),
                        format!(
                            "circular assembly: {} (each needs the next as a part, so none can ever be made)",
                            names.join(" needs ")
                        ),
                    )
                    .with_hint("break the circle: one of these products must be made without the others"));
            }
            if chain.contains(&next) || chain.len() > products.len() {
                break; // a cycle that does not pass through `start`: found from one of its own members
            }
            chain.push(next);
            p = next;
        }
    }
    Ok(())
}
