//! Finite staging, breakdowns and charging: the `staging`, `when_full`, `breakdowns` and `charging` fields of departments and fleets.

use super::context::{resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{BreakdownSpec, ChargingSpec, CountedInSpec, InterruptedSpec, StagingSpec};
use super::times::duration;
use crate::limits;
use crate::plant::{Breakdowns, Charging, FailureClock, Interrupted, Location, Staging};
use crate::units::format_duration;

/// Compiles a department's `staging` (`dept` is its id, for messages).
pub(crate) fn staging(
    spec: Option<&StagingSpec>,
    dept: &str,
    dp: &FieldPath,
    locations: &[Location],
    instant: bool,
    ctx: &Ctx,
) -> Result<Staging, ScenarioError> {
    let Some(spec) = spec else {
        return Ok(Staging::default());
    };
    let sp = dp.key("staging");
    for (v, field) in [(spec.inbound, "inbound"), (spec.outbound, "outbound")] {
        if v == Some(0) {
            return Err(ctx
                .err(
                    &sp.key(field),
                    format!("{field} staging of department \"{dept}\" must hold at least 1 load"),
                )
                .with_hint(
                    "leave the field out for unlimited space; the smallest staging area holds 1 load",
                ));
        }
    }
    let overflow = match &spec.overflow {
        None => None,
        Some(name) => {
            let op = sp.key("overflow");
            let ids: Vec<&str> = locations.iter().map(|l| l.id.as_str()).collect();
            let l = resolve(ctx, &op, "location", name, &ids)?;
            if spec.inbound.is_none() {
                return Err(ctx
                    .err(&op, format!("department \"{dept}\" has an overflow location but no inbound limit"))
                    .with_hint(
                        "loads go to the overflow only when the inbound area is full: add `inbound: N`",
                    ));
            }
            if instant {
                return Err(ctx
                    .err(&op, "an overflow location needs movers to take loads there; moves are instant")
                    .with_hint("with `moves: instant` a full inbound area holds the lot upstream instead"));
            }
            Some(l)
        }
    };
    Ok(Staging { inbound: spec.inbound, outbound: spec.outbound, overflow })
}

/// Compiles `breakdowns` of a department (`machines`) or a fleet (`!machines`,
/// where `interrupted` does not apply: a mover finishes its delivery first).
pub(crate) fn breakdowns(
    spec: &BreakdownSpec,
    bp: &FieldPath,
    machines: bool,
    ctx: &Ctx,
) -> Result<Breakdowns, ScenarioError> {
    let between = duration(&spec.between.0, &bp.key("between"), "time between failures", ctx)?;
    limits::check_period("a mean time between failures", between.mean())
        .map_err(|m| ctx.err(&bp.key("between"), m))?;
    let repair = duration(&spec.repair.0, &bp.key("repair"), "repair time", ctx)?;
    if !machines && spec.technician.is_some() {
        return Err(ctx
            .err(&bp.key("technician"), "`technician` applies to machines' repairs, not movers'")
            .with_hint("a mover goes to the workshop for repair; name a technician crew on a department's breakdowns"));
    }
    if !machines && spec.interrupted.is_some() {
        return Err(ctx
            .err(&bp.key("interrupted"), "`interrupted` applies to machines, not movers")
            .with_hint("a mover that fails finishes the delivery it is on, then goes for repair"));
    }
    Ok(Breakdowns {
        between,
        repair,
        clock: match spec.counted_in {
            None | Some(CountedInSpec::ClockTime) => FailureClock::ClockTime,
            Some(CountedInSpec::BusyTime) => FailureClock::BusyTime,
        },
        interrupted: match spec.interrupted {
            None | Some(InterruptedSpec::Resume) => Interrupted::Resume,
            Some(InterruptedSpec::Restart) => Interrupted::Restart,
        },
    })
}

/// Compiles a fleet's `charging`.
pub(crate) fn charging(spec: &ChargingSpec, cp: &FieldPath, ctx: &Ctx) -> Result<Charging, ScenarioError> {
    for (v, field) in [(spec.every.0, "every"), (spec.for_.0, "for")] {
        if !(v > 0.0 && v.is_finite()) {
            return Err(ctx.err(
                &cp.key(field),
                format!("charging `{field}` must be longer than 0, got {}", format_duration(v)),
            ));
        }
    }
    limits::check_period("a charging cycle", spec.every.0).map_err(|m| ctx.err(&cp.key("every"), m))?;
    Ok(Charging { every_s: spec.every.0, for_s: spec.for_.0 })
}
