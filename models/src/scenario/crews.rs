//! Crews: the top-level `crews:` section, a department's `people:` and a repair's `technician:`, and the static check that people and machines ever work at the same time.

use super::context::{check_unique, resolve, Ctx};
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::operators::duty_calendar;
use super::schema::{PersonForSpec, Scenario};
use super::times::duration;
use crate::limits;
use crate::plant::{Crew, People, PersonFor};
use crate::plant::{Department, DepartmentRole, DutyCalendar};

/// Compiles `crews:` (empty when absent). `departments` are compiled already (for `home`).
pub(crate) fn crews(s: &Scenario, departments: &[Department], ctx: &Ctx) -> Result<Vec<Crew>, ScenarioError> {
    let Some(list) = &s.crews else {
        return Ok(Vec::new());
    };
    let p = FieldPath::root().key("crews");
    check_unique(ctx, "crew", list.iter().enumerate().map(|(i, c)| (c.id.as_str(), p.index(i).key("id"))))?;
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let mut out = Vec::with_capacity(list.len());
    let fleet_ids: Vec<&str> = s.fleets.iter().flatten().map(|f| f.id.as_str()).collect();
    let product_ids: Vec<&str> = s.products.iter().map(|p| p.id.as_str()).collect();
    for (i, c) in list.iter().enumerate() {
        let cp = p.index(i);
        // Metrics are named `ID/METRIC`: a crew sharing an id with another subject would make a name mean two things.
        for (ids, what) in [(&dept_ids, "department"), (&fleet_ids, "fleet"), (&product_ids, "product")] {
            if ids.contains(&c.id.as_str()) {
                return Err(ctx
                    .err(&cp.key("id"), format!("crew \"{}\" has the id of a {what}", c.id))
                    .with_hint(format!(
                        "metrics are named `ID/METRIC`, so give the crew an id no {what} has, e.g. `{}-crew`",
                        c.id
                    )));
            }
        }
        if c.size == 0 {
            return Err(ctx
                .err(&cp.key("size"), format!("crew \"{}\" has size 0: a crew needs at least 1 person", c.id))
                .with_hint(
                    "give `size: 1` or more, or remove the crew and the `people:`/`technician:` that name it",
                ));
        }
        limits::check_count(
            "crew size",
            u64::from(c.size),
            u64::from(limits::MAX_MACHINES),
            limits::COUNT_WHY,
        )
        .map_err(|m| ctx.err(&cp.key("size"), m))?;
        let cost_per_h = c.cost.as_ref().map_or(0.0, |k| k.per_hour);
        if !(cost_per_h >= 0.0 && cost_per_h.is_finite()) {
            return Err(ctx.err(
                &cp.key("cost").key("per_hour"),
                format!("a person's cost per hour must be a number >= 0, got {cost_per_h}"),
            ));
        }
        limits::check_at_most("per_hour", cost_per_h, limits::MAX_COST, limits::MAX_COST_WHY)
            .map_err(|m| ctx.err(&cp.key("cost").key("per_hour"), m))?;
        let duty = match (&c.shifts, &c.breaks) {
            (None, None) => None,
            (None, Some(_)) => return Err(ctx
                .err(&cp.key("breaks"), format!("the breaks of crew \"{}\" need `shifts`", c.id))
                .with_hint(
                    "breaks repeat with the shift period: add `shifts: { every: 1 d, on: [[0 h, 24 h]] }`",
                )),
            (Some(sh), breaks) => {
                let (owner, who) = (format!("crew \"{}\"", c.id), format!("the people of crew \"{}\"", c.id));
                duty_calendar(sh, breaks.as_deref(), &cp, &owner, &who, ctx)?
            }
        };
        let home = match &c.home {
            None => None,
            Some(h) => Some(resolve(ctx, &cp.key("home"), "department", h, &dept_ids)?),
        };
        let walk_speed = match &c.walk {
            None => None,
            Some(w) => {
                if !(w.speed.0 > 0.0 && w.speed.0.is_finite()) {
                    return Err(ctx
                        .err(
                            &cp.key("walk").key("speed"),
                            format!("walking speed must be above 0, got {}", w.speed.0),
                        )
                        .with_hint("common practice for people walking in a plant is about 1.2–1.4 m/s"));
                }
                if home.is_none() {
                    return Err(ctx
                        .err(
                            &cp.key("walk"),
                            format!("crew \"{}\" walks, but from where: it has no `home`", c.id),
                        )
                        .with_hint("add `home: DEPARTMENT`, where its people wait between repairs"));
                }
                Some(w.speed.0)
            }
        };
        out.push(Crew { id: c.id.clone(), size: c.size, cost_per_h, duty, home, walk_speed });
    }
    Ok(out)
}

/// Sets each department's `people` and `technicians` from its `people:` and
/// `breakdowns.technician`, and refuses a need no crew can ever meet.
pub(crate) fn attach(
    s: &Scenario,
    departments: &mut [Department],
    crews: &[Crew],
    horizon_s: f64,
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let ids: Vec<&str> = crews.iter().map(|c| c.id.as_str()).collect();
    let p = FieldPath::root().key("departments");
    let no_crews = "declare it under `crews:` at the top level, e.g. `crews: [{ id: machinists, size: 2 }]`";
    for (i, d) in s.departments.iter().enumerate() {
        let dp = p.index(i);
        let find = |name: &str, at: &FieldPath| -> Result<usize, ScenarioError> {
            if ids.is_empty() {
                return Err(ctx
                    .err(at, format!("unknown crew \"{name}\": the scenario has no crews"))
                    .with_hint(no_crews));
            }
            resolve(ctx, at, "crew", name, &ids)
        };
        if let Some(ps) = &d.people {
            let pp = dp.key("people");
            if departments[i].role != DepartmentRole::Work {
                return Err(ctx
                    .err(&pp, format!("dock \"{}\" cannot have `people`", d.id))
                    .with_hint("people run machines; give `people:` to a work department"));
            }
            let crew = find(&ps.crew, &pp.key("crew"))?;
            let task = match ps.for_ {
                PersonForSpec::Setup => PersonFor::Setup,
                PersonForSpec::Operation => PersonFor::Operation,
                PersonForSpec::Loading => PersonFor::Loading,
            };
            let loading = match (&ps.loading, task) {
                (Some(t), PersonFor::Loading) => Some(duration(&t.0, &pp.key("loading"), "loading time", ctx)?),
                (None, PersonFor::Loading) => {
                    return Err(ctx
                        .err(&pp, format!("`for: loading` at department \"{}\" needs a loading time", d.id))
                        .with_hint("add `loading: 2 min` (or a distribution): the time a person spends loading each lot before processing"))
                }
                (Some(_), _) => {
                    return Err(ctx
                        .err(&pp.key("loading"), format!("`loading` is for `for: loading`; this department says `for: {}`", task.word()))
                        .with_hint("write `for: loading`, or leave `loading` out"))
                }
                (None, _) => None,
            };
            if task == PersonFor::Setup && departments[i].setups.is_none() {
                return Err(ctx
                    .err(
                        &pp.key("for"),
                        format!("department \"{}\" needs a person for setups but has no `setups`", d.id),
                    )
                    .with_hint(
                        "add `setups:` to the department, or say `for: operation` or `for: loading`",
                    ));
            }
            // The department would wait for ever for a person: the same message, its own remedy.
            let deadlock = |why: String, hint: &str| {
                Err(ctx
                    .err(
                        &pp.key("crew"),
                        format!(
                            "people deadlock: department \"{}\" needs a person from crew \"{}\", but {why}",
                            d.id, crews[crew].id
                        ),
                    )
                    .with_hint(hint))
            };
            if let Some(why) = idle_for_the_run(&crews[crew], horizon_s) {
                return deadlock(
                    why,
                    "give the crew a shift that starts before the horizon, or lengthen the run",
                );
            }
            if let Some(cal) = departments[i].calendar.as_ref() {
                if let Some(why) = never_together(&crews[crew], &cal.duty, horizon_s) {
                    return deadlock(why, "give the crew shifts that overlap the department's calendar");
                }
            }
            departments[i].people = Some(People { crew, task, loading });
        }
        if let Some(b) = &d.breakdowns {
            if let Some(t) = &b.technician {
                let at = dp.key("breakdowns").key("technician");
                let crew = find(t, &at)?;
                idle_for_the_run(&crews[crew], horizon_s).map_or(Ok(()), |why| {
                    Err(ctx
                        .err(
                            &at,
                            format!(
                                "the repairs of department \"{}\" need crew \"{}\", but {why}",
                                d.id, crews[crew].id
                            ),
                        )
                        .with_hint(
                            "give the crew a shift that starts before the horizon, or lengthen the run",
                        ))
                })?;
                departments[i].technicians = Some(crew);
            }
        }
    }
    Ok(())
}

/// Why crew `c` is never on duty before the horizon (`None`: it is at some time).
fn idle_for_the_run(c: &Crew, horizon_s: f64) -> Option<String> {
    let d = c.duty.as_ref()?;
    let first = d.on.first().map_or(f64::INFINITY, |w| w.0);
    (first >= horizon_s).then(|| {
        "the crew's first shift starts at or after the run's horizon, so it is never on duty in the run"
            .to_string()
    })
}

/// Why crew `c` is never on duty while a department with working windows
/// `dept` works, within the horizon (`None`: they overlap at some time).
/// Both calendars repeat from time 0, so walking both sets of windows up to
/// the horizon (at most a bounded number of periods) decides it.
fn never_together(c: &Crew, dept: &DutyCalendar, horizon_s: f64) -> Option<String> {
    let Some(cd) = c.duty.as_ref() else {
        return None; // always on duty
    };
    let a = windows(cd, horizon_s);
    let b = windows(dept, horizon_s);
    let (mut i, mut j) = (0, 0);
    while i < a.len() && j < b.len() {
        let (x, y) = (a[i], b[j]);
        if x.0 < y.1 && y.0 < x.1 && x.0.max(y.0) < horizon_s {
            return None;
        }
        if x.1 <= y.1 {
            i += 1;
        } else {
            j += 1;
        }
    }
    Some("the crew's shifts never overlap the department's working hours within the run's horizon, so its lots would wait for ever".into())
}

/// Every on-duty window of `d` that starts before the horizon (at most 100 000 periods), in time order.
fn windows(d: &DutyCalendar, horizon_s: f64) -> Vec<(f64, f64)> {
    let periods = ((horizon_s / d.period_s).ceil() as usize).clamp(1, 100_000);
    let mut out = Vec::with_capacity(periods * d.on.len());
    for k in 0..periods {
        let t0 = k as f64 * d.period_s;
        out.extend(d.on.iter().map(|&(a, b)| (a + t0, b + t0)));
    }
    out
}
