//! How departments work and lots travel: a department's `calendar` and `setups`, and a product's `lot` (quantity, transfer batch, when the next operation starts).

use super::context::{resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::operators::duty_calendar;
use super::schema::{CalendarSpec, LoadStartSpec, LotSpec, SetupsSpec, ShiftEndSpec};
use super::times::duration;
use crate::limits;
use crate::plant::{LoadStart, LotSplit, Setups, ShiftEnd, WorkCalendar};

/// Compiles a department's `calendar` (`dp` is the department's path); `None`
/// when the shifts less breaks cover the whole period.
pub(crate) fn calendar(
    spec: &CalendarSpec,
    dept: &str,
    dp: &FieldPath,
    ctx: &Ctx,
) -> Result<Option<WorkCalendar>, ScenarioError> {
    let cp = dp.key("calendar");
    let owner = format!("department \"{dept}\"");
    let who = format!("the machines of department \"{dept}\"");
    let duty = duty_calendar(&spec.shifts, spec.breaks.as_deref(), &cp, &owner, &who, ctx)?;
    let at_shift_end = match spec.at_shift_end {
        None | Some(ShiftEndSpec::Finish) => ShiftEnd::Finish,
        Some(ShiftEndSpec::Pause) => ShiftEnd::Pause,
    };
    Ok(duty.map(|duty| WorkCalendar { duty, at_shift_end }))
}

/// Compiles a department's `setups`; `products` are the product ids, which
/// the pairs name (products are compiled after departments, so by name here).
pub(crate) fn setups(
    spec: &SetupsSpec,
    dept: &str,
    dp: &FieldPath,
    products: &[&str],
    ctx: &Ctx,
) -> Result<Setups, ScenarioError> {
    let sp = dp.key("setups");
    let on_change = match &spec.on_change {
        Some(t) => Some(duration(&t.0, &sp.key("on_change"), "setup time", ctx)?),
        None => None,
    };
    let mut pairs = Vec::new();
    for (i, pair) in spec.pairs.iter().flatten().enumerate() {
        let pp = sp.key("pairs").index(i);
        let from = resolve(ctx, &pp.key("from"), "product", &pair.from, products)?;
        let to = resolve(ctx, &pp.key("to"), "product", &pair.to, products)?;
        if from == to {
            return Err(ctx
                .err(&pp.key("to"), format!("a setup from product \"{}\" to itself is not a change", pair.to))
                .with_hint("a machine needs a setup only when the next lot is of another product"));
        }
        if pairs.iter().any(|&(f, t, _)| f == from && t == to) {
            return Err(
                ctx.err(&pp, format!("the setup from \"{}\" to \"{}\" is given twice", pair.from, pair.to))
            );
        }
        pairs.push((from, to, duration(&pair.time.0, &pp.key("time"), "setup time", ctx)?));
    }
    if on_change.is_none() && pairs.is_empty() {
        return Err(ctx
            .err(&sp, format!("the setups of department \"{dept}\" give no setup time"))
            .with_hint("give `on_change: 10 min` for any change of product, or `pairs: [{ from: A, to: B, time: 10 min }]`"));
    }
    Ok(Setups { on_change, pairs })
}

/// Compiles a product's `lot` (`pp` is the product's path).
pub(crate) fn lot(
    spec: &LotSpec,
    product: &str,
    pp: &FieldPath,
    ctx: &Ctx,
) -> Result<LotSplit, ScenarioError> {
    let lp = pp.key("lot");
    if spec.quantity == 0 {
        return Err(ctx
            .err(&lp.key("quantity"), format!("a lot of product \"{product}\" must hold at least 1 unit"))
            .with_hint(
                "`quantity` is the number of units released together as one lot, e.g. `quantity: 40`",
            ));
    }
    let transfer_batch = spec.transfer_batch.unwrap_or(spec.quantity);
    if transfer_batch == 0 || transfer_batch > spec.quantity {
        return Err(ctx
            .err(
                &lp.key("transfer_batch"),
                format!(
                    "the transfer batch of product \"{product}\" must hold 1 to {} units (the lot quantity), got {transfer_batch}",
                    spec.quantity
                ),
            )
            .with_hint("the transfer batch is how many units of a lot move together as one unit load"));
    }
    let start = match spec.starts_on {
        None | Some(LoadStartSpec::LastLoad) => LoadStart::LastLoad,
        Some(LoadStartSpec::FirstLoad) => LoadStart::FirstLoad,
    };
    let split = LotSplit { quantity: spec.quantity, transfer_batch, start };
    limits::check_count(
        "unit loads per lot",
        u64::from(split.loads()),
        u64::from(limits::MAX_LOADS_PER_LOT),
        limits::COUNT_WHY,
    )
    .map_err(|m| {
        ctx.err(&lp.key("transfer_batch"), m)
            .with_hint("a lot moves in quantity ÷ transfer_batch loads; raise `transfer_batch`")
    })?;
    Ok(split)
}
