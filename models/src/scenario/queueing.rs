//! Queue orders (plant-wide and per department), product priorities and due-date allowances, with the rules that tie them together.

use super::context::Ctx;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{QueueOrderSpec, Scenario};
use crate::limits;
use crate::plant::{Department, DepartmentRole, Order, Product, QueueOrder};
use crate::units::format_duration;

/// The plant's order for a scenario word.
pub(crate) fn order(spec: QueueOrderSpec) -> QueueOrder {
    match spec {
        QueueOrderSpec::Fifo => QueueOrder::Fifo,
        QueueOrderSpec::Priority => QueueOrder::Priority,
        QueueOrderSpec::EarliestDue => QueueOrder::EarliestDue,
        QueueOrderSpec::ShortestTime => QueueOrder::ShortestTime,
    }
}

/// Department `i`'s queue order: its own, else the plant's, else first in first out.
pub(crate) fn department_order(s: &Scenario, i: usize) -> QueueOrder {
    s.departments[i].queue_order.or(s.queue_order).map_or(QueueOrder::Fifo, order)
}

/// Product `i`'s priority and due allowance, s (checked: a due allowance is
/// longer than 0, or every lot would be late on release).
pub(crate) fn product_terms(
    s: &Scenario,
    i: usize,
    ctx: &Ctx,
) -> Result<(Option<u32>, Option<f64>), ScenarioError> {
    let spec = &s.products[i];
    let pp = FieldPath::root().key("products").index(i);
    let due = match &spec.due {
        None => None,
        Some(d) => {
            let w = d.within.0;
            if !(w > 0.0) {
                return Err(ctx
                    .err(
                        &pp.key("due").key("within"),
                        format!(
                            "product \"{}\" would be due before it arrives: `within` must be longer than 0, got {}",
                            spec.id,
                            format_duration(w)
                        ),
                    )
                    .with_hint("give the lead time a lot is allowed from release to shipping, e.g. `due: { within: 3 d }`"));
            }
            Some(
                limits::check_duration("due.within", w)
                    .map_err(|m| ctx.err(&pp.key("due").key("within"), m))?,
            )
        }
    };
    Ok((spec.priority, due))
}

/// The rules that need departments, products and the order trace together:
/// an order a department asks for must have something to order by, and a
/// department given its own order must be visited by some product.
pub(crate) fn check(
    s: &Scenario,
    departments: &[Department],
    products: &[Product],
    orders: Option<&[Order]>,
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let any_due = products.iter().any(|p| p.due_within_s.is_some())
        || orders.is_some_and(|o| o.iter().any(|o| o.due_s.is_some()));
    let any_priority = products.iter().any(|p| p.priority.is_some());
    // Where the message points: the department's own field, else the plant's.
    let at = |d: usize| {
        if s.departments[d].queue_order.is_some() {
            FieldPath::root().key("departments").index(d).key("queue_order")
        } else {
            FieldPath::root().key("queue_order")
        }
    };
    for (d, dep) in departments.iter().enumerate() {
        if dep.role != DepartmentRole::Work {
            continue;
        }
        let own = s.departments[d].queue_order.is_some_and(|o| o != QueueOrderSpec::Fifo);
        if own && !products.iter().any(|p| p.routing.iter().any(|op| op.department == d)) {
            return Err(ctx
                .err(
                    &at(d),
                    format!(
                        "department \"{}\" has `queue_order: {}`, but no product visits it",
                        dep.id,
                        dep.queue_order.word()
                    ),
                )
                .with_hint("add the department to a product's routing, or remove its `queue_order`"));
        }
        match dep.queue_order {
            QueueOrder::EarliestDue if !any_due => {
                return Err(ctx
                    .err(
                        &at(d),
                        format!(
                            "department \"{}\" serves the earliest due date first, but no product has a due date",
                            dep.id
                        ),
                    )
                    .with_hint(
                        "give products `due: { within: 3 d }`, or the order trace a `due` column, \
                         or choose another `queue_order`",
                    ));
            }
            QueueOrder::Priority if !any_priority => {
                return Err(ctx
                    .err(
                        &at(d),
                        format!(
                            "department \"{}\" serves by priority, but no product has a `priority`",
                            dep.id
                        ),
                    )
                    .with_hint("give products `priority: 1` (served first), `priority: 2`, …"));
            }
            _ => {}
        }
    }
    // The fleets' request orders (`requests`).
    for (f, fl) in s.fleets.iter().flatten().enumerate() {
        let fp = FieldPath::root().key("fleets").index(f).key("requests");
        match fl.requests {
            Some(QueueOrderSpec::ShortestTime) => {
                return Err(ctx
                    .err(&fp, format!("fleet \"{}\": `shortest-time` orders a department's queue, not move requests", fl.id))
                    .with_hint("use `requests: fifo`, `priority` or `earliest-due`; `dispatch: nearest-request` serves the nearest pick-up first"));
            }
            Some(QueueOrderSpec::EarliestDue) if !any_due => {
                return Err(ctx
                    .err(
                        &fp,
                        format!(
                            "fleet \"{}\" serves the earliest due date first, but no product has a due date",
                            fl.id
                        ),
                    )
                    .with_hint("give products `due: { within: 3 d }`, or the order trace a `due` column"));
            }
            Some(QueueOrderSpec::Priority) if !any_priority => {
                return Err(ctx
                    .err(
                        &fp,
                        format!("fleet \"{}\" serves by priority, but no product has a `priority`", fl.id),
                    )
                    .with_hint("give products `priority: 1` (served first), `priority: 2`, …"));
            }
            _ => {}
        }
    }
    Ok(())
}
