//! Alternative departments of one routing step (`either:` and `rule:`): read, checked, and given their shares.

use super::context::{resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::StepSpec;
use super::schema::BRANCH_SUM_TOLERANCE;
use super::times::time_dist;
use crate::dist::{rounded, Dist};
use crate::plant::{AltRule, Department, DepartmentRole, Product};
use crate::suggest::{did_you_mean, name_list};

/// A step's alternatives as read: (department, processing time) in listed
/// order, the rule, and the shares (exact under `shares`, estimated otherwise).
pub(crate) struct Either {
    pub(crate) options: Vec<(usize, Dist)>,
    pub(crate) rule: AltRule,
    pub(crate) shares: Vec<f64>,
}

/// Reads `either:` and `rule:` of step `st` (which has `either`).
pub(crate) fn either(
    st: &StepSpec,
    sp: &FieldPath,
    departments: &[Department],
    ctx: &Ctx,
) -> Result<Either, ScenarioError> {
    let list = st.either.as_deref().unwrap_or(&[]);
    let ep = sp.key("either");
    if st.at.is_some() {
        return Err(ctx
            .err(&sp.key("at"), format!("step \"{}\" has both `at` and `either`", st.step))
            .with_hint("name one department with `at`, or several with `either`, not both"));
    }
    if st.time.is_some() {
        return Err(ctx
            .err(
                &sp.key("time"),
                format!("step \"{}\" has alternatives: its `time` would be ambiguous", st.step),
            )
            .with_hint("give each alternative its own time: `either: [{ at: press1, time: 5 min }, ...]`"));
    }
    if list.len() < 2 {
        return Err(ctx
            .err(&ep, format!("step \"{}\" lists {} alternative(s) in `either`", st.step, list.len()))
            .with_hint("list at least two departments, or write the step with `at`"));
    }
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let mut options: Vec<(usize, Dist)> = Vec::with_capacity(list.len());
    for (k, alt) in list.iter().enumerate() {
        let ap = ep.index(k);
        let d = resolve(ctx, &ap.key("at"), "department", &alt.at, &dept_ids)?;
        if departments[d].role != DepartmentRole::Work {
            return Err(ctx
                .err(&ap.key("at"), format!("\"{}\" is a dock, not a work department", alt.at))
                .with_hint("alternatives are work departments with machines"));
        }
        if options.iter().any(|(o, _)| *o == d) {
            return Err(ctx.err(&ap.key("at"), format!("department \"{}\" is listed twice", alt.at)));
        }
        let time = match &alt.time {
            Some(t) => time_dist(&t.0, &ap.key("time"), ctx, "processing time")?,
            None => {
                return Err(ctx
                    .err(&ap, format!("alternative \"{}\" of step \"{}\" has no `time`", alt.at, st.step))
                    .with_hint("give each alternative its processing time there, e.g. `time: 5 min`"))
            }
        };
        options.push((d, time));
    }
    let any_share = list.iter().any(|a| a.share.is_some());
    let rule = match &st.rule {
        Some(name) => rule_named(name, &sp.key("rule"), ctx)?,
        None if any_share => AltRule::Shares,
        None => {
            return Err(ctx
                .err(
                    &ep,
                    format!("step \"{}\" does not say how a lot picks one of its alternatives", st.step),
                )
                .with_hint(format!("add `rule:` ({}), or give each alternative a `share`", rule_names())))
        }
    };
    let shares = if rule == AltRule::Shares {
        let mut shares = Vec::with_capacity(list.len());
        for (k, alt) in list.iter().enumerate() {
            let Some(s) = &alt.share else {
                return Err(ctx
                    .err(&ep.index(k), format!("alternative \"{}\" has no `share`", alt.at))
                    .with_hint("under `rule: shares` every alternative needs its share, e.g. `share: 0.4`"));
            };
            if !(s.0 > 0.0 && s.0 <= 1.0) {
                return Err(ctx
                    .err(
                        &ep.index(k).key("share"),
                        format!("a share must lie in (0, 1], got {}", rounded(s.0)),
                    )
                    .with_hint("write a share as 0.4 or 40%"));
            }
            shares.push(s.0);
        }
        let sum: f64 = shares.iter().sum();
        if !((sum - 1.0).abs() <= BRANCH_SUM_TOLERANCE) {
            return Err(ctx
                .err(&ep, format!("the shares of step \"{}\" sum to {}, not 1", st.step, rounded(sum)))
                .with_hint(format!(
                    "make the `share` values add up to 1 (tolerance {BRANCH_SUM_TOLERANCE:e})"
                )));
        }
        shares
    } else {
        if let Some(k) = list.iter().position(|a| a.share.is_some()) {
            return Err(ctx
                .err(
                    &ep.index(k).key("share"),
                    format!("`share` is for `rule: shares`, not `{}`", rule.name()),
                )
                .with_hint("remove the shares, or write `rule: shares`"));
        }
        capacity_shares(&options, departments)
    };
    Ok(Either { options, rule, shares })
}

/// The static picture's estimate of where a dynamic rule sends lots: in
/// proportion to each department's capacity for the operation, machines ÷
/// mean time (what each would take if all were kept equally busy).
fn capacity_shares(options: &[(usize, Dist)], departments: &[Department]) -> Vec<f64> {
    let cap: Vec<f64> = options
        .iter()
        .map(|(d, t)| f64::from(departments[*d].machines) / t.mean().max(f64::MIN_POSITIVE))
        .collect();
    let total: f64 = cap.iter().sum();
    if total > 0.0 && total.is_finite() {
        cap.iter().map(|c| c / total).collect()
    } else {
        vec![1.0 / options.len() as f64; options.len()]
    }
}

fn rule_names() -> String {
    name_list(AltRule::ALL.iter().map(|r| r.name()))
}

fn rule_named(name: &str, path: &FieldPath, ctx: &Ctx) -> Result<AltRule, ScenarioError> {
    AltRule::ALL.iter().copied().find(|r| r.name() == name).ok_or_else(|| {
        ctx.err(
            path,
            format!("unknown rule \"{name}\"{}", did_you_mean(name, AltRule::ALL.iter().map(|r| r.name()))),
        )
        .with_hint(format!("the rules for alternatives are: {}", rule_names()))
    })
}

/// `rule:` on a step without `either`.
pub(crate) fn rule_without_either(st: &StepSpec, sp: &FieldPath, ctx: &Ctx) -> ScenarioError {
    ctx.err(&sp.key("rule"), format!("step \"{}\" has `rule` but no `either`", st.step))
        .with_hint("a rule picks one of several departments: list them in `either`, or remove `rule`")
}

/// Plant-wide limits of the dynamic rules, checked once every product is
/// compiled: `first-free` holds a machine for the lot while it is moved, so
/// it needs departments whose machines are plain (no breakdowns, working
/// hours, setups or finite staging anywhere in the plant); a lot split into
/// loads moves load by load, which a state-dependent choice does not follow;
/// and one first-free group's shared queue serves all its departments, so a
/// department can belong to only one set of first-free alternatives.
pub(crate) fn check_plant(
    products: &[Product],
    departments: &[Department],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let staging = departments.iter().any(|d| d.staging.is_limited());
    let mut pool_of: Vec<Option<Vec<usize>>> = vec![None; departments.len()];
    for (i, prod) in products.iter().enumerate() {
        let pp = FieldPath::root().key("products").index(i).key("routing");
        for g in &prod.alternatives {
            if !g.rule.is_dynamic() {
                continue;
            }
            if prod.lot.is_some_and(|l| l.loads() > 1) {
                return Err(ctx
                    .err(&pp, format!("step \"{}\" of product \"{}\" uses `rule: {}`, but its lots move in several loads", g.step, prod.id, g.rule.name()))
                    .with_hint("use `rule: shares` for a product whose lots are split into loads, or move the lot whole"));
            }
            if g.rule != AltRule::FirstFree {
                continue;
            }
            let depts: Vec<usize> = g.ops.iter().map(|&o| prod.routing[o].department).collect();
            if let Some(&d) = depts.iter().find(|&&d| {
                let dep = &departments[d];
                dep.breakdowns.is_some() || dep.calendar.is_some() || dep.setups.is_some()
            }) {
                return Err(ctx
                    .err(&pp, format!("step \"{}\" uses `rule: first-free`, but department \"{}\" has breakdowns, working hours or setups", g.step, departments[d].id))
                    .with_hint("first-free needs plain machines; use `rule: shortest-queue` or `least-work` there"));
            }
            if staging {
                return Err(ctx
                    .err(&pp, format!("step \"{}\" uses `rule: first-free` in a plant with finite staging", g.step))
                    .with_hint("first-free holds a machine while the lot is moved; use `rule: shortest-queue` or `least-work` with finite staging"));
            }
            let mut set = depts.clone();
            set.sort_unstable();
            for &d in &depts {
                match &pool_of[d] {
                    Some(other) if *other != set => {
                        return Err(ctx
                            .err(&pp, format!("department \"{}\" is in two different first-free groups", departments[d].id))
                            .with_hint("a first-free group shares one queue among its departments: list the same departments wherever one of them is first-free"));
                    }
                    _ => pool_of[d] = Some(set.clone()),
                }
            }
        }
    }
    Ok(())
}
