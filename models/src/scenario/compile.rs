//! Resolves the names of a deserialized scenario into the index-based [`Plant`], checking every rule.
//!
//! Checks run in file order (run settings, locations, distance, departments,
//! layouts, products, the order trace, fleets) and stop at the first error, so a message can
//! rely on everything above it being valid.

use std::path::Path;

use super::context::{check_unique, resolve, Ctx};
use super::error::{ErrorKind, ScenarioError};
use super::locate::FieldPath;
use super::schema::{DockSpec, FleetChoiceSpec, Ordered, Scenario, WhenFullSpec};
use super::{area, batches, demand, distance, fleet, routing, staging, work};
use crate::limits;
use crate::plant::{Department, DepartmentRole, FleetChoice, Layout, Location, Plant, RunSettings};
use crate::units::format_duration;

/// Default number of replications when the scenario gives none.
const DEFAULT_REPLICATIONS: u32 = 10;

/// The scenario's `currency`: a short name or sign such as `EUR`, `USD` or `€`.
fn currency(s: &Scenario, ctx: &Ctx) -> Result<Option<String>, ScenarioError> {
    let Some(c) = &s.currency else {
        return Ok(None);
    };
    let c = c.trim();
    if c.is_empty() || c.chars().count() > 8 || c.chars().any(|ch| ch.is_whitespace() || ch.is_ascii_digit())
    {
        return Err(ctx
            .err(&FieldPath::root().key("currency"), format!("currency \"{c}\" is not a currency name"))
            .with_hint("write a code or sign of at most 8 characters, without digits or spaces, e.g. `currency: EUR`"));
    }
    Ok(Some(c.to_string()))
}

/// Turns a checked scenario into a plant.
pub(crate) fn compile(mut s: Scenario, ctx: &Ctx) -> Result<Plant, ScenarioError> {
    // Sections given as tables become YAML items first; their errors from
    // here on name the table's file, row and column.
    let expanded = super::tables::expand(&mut s, ctx)?;
    let with_tables = Ctx {
        text: ctx.text,
        origin: ctx.origin,
        file: ctx.file.clone(),
        tables: expanded.origins,
        moved: expanded.moved,
    };
    let ctx = &with_tables;
    let root = FieldPath::root();
    if let Some(u) = &s.units {
        if u.length != "m" {
            return Err(ctx
                .err(
                    &root.key("units").key("length"),
                    format!("length unit \"{}\" is not supported", u.length),
                )
                .with_hint(
                    "bare numbers are metres: write `units: { length: m }`, and give other lengths \
                     their unit where they are written, e.g. `at: [\"150 ft\", \"40 ft\"]`",
                ));
        }
    }
    if let Some(m) = &s.measured_from_to {
        let at = root.key("measured_from_to");
        if m.file.trim().is_empty() {
            return Err(ctx
                .err(&at.key("file"), "the measured from-to chart names no file")
                .with_hint("name the CSV matrix, relative to this scenario: `measured_from_to: { file: flows.csv, per: 8 h }`"));
        }
        if !(m.per.0 > 0.0) {
            return Err(ctx
                .err(
                    &at.key("per"),
                    "`per` must be longer than 0: the period the chart's loads were counted over",
                )
                .with_hint("e.g. `per: 8 h` for loads counted over a shift"));
        }
    }
    if s.plant.trim().is_empty() {
        return Err(ctx.err(&root.key("plant"), "the plant needs a name"));
    }
    let run = run_settings(&s, ctx)?;
    let demand_factor = s.demand_factor.map_or(1.0, |f| f.0);
    if !(demand_factor > 0.0 && demand_factor.is_finite()) {
        return Err(ctx.err(
            &root.key("demand_factor"),
            format!("demand_factor must be a number > 0, got {demand_factor}"),
        ));
    }
    limits::check_at_most("demand_factor", demand_factor, limits::MAX_FACTOR, limits::RATE_WHY)
        .map_err(|m| ctx.err(&root.key("demand_factor"), m))?;
    let locations = locations(&s, ctx)?;
    let (distance_rule, distance, aisles) = distance::compile(&s, &locations, ctx)?;
    let mut departments = departments(&s, &locations, ctx)?;
    let crews = super::crews::crews(&s, &departments, ctx)?;
    super::crews::attach(&s, &mut departments, &crews, run.horizon_s, ctx)?;
    if departments.len() > locations.len() {
        return Err(ctx
            .err(
                &root.key("departments"),
                format!(
                    "{} departments but only {} locations: every department needs a location of its own",
                    departments.len(),
                    locations.len()
                ),
            )
            .with_hint("add locations (empty ones are fine), or merge departments"));
    }
    let mut layouts = Vec::new();
    if s.layouts.0.is_empty() {
        return Err(ctx
            .err(&FieldPath::root().key("layouts"), "the scenario has no layout")
            .with_hint("add a layout mapping every department to a location"));
    }
    add_layouts(&s.layouts, &departments, &locations, ctx, &mut layouts)?;
    for (i, f) in s.layout_files.iter().flatten().enumerate() {
        layout_file(
            f,
            &FieldPath::root().key("layout_files").index(i),
            &departments,
            &locations,
            ctx,
            &mut layouts,
        )?;
    }
    let search = super::search::rules(&s, &departments, &locations, &layouts, ctx)?;
    let products = routing::products(&s, &departments, ctx)?;
    let orders = demand::order_trace(&s, &products, ctx)?;
    split_without_staging(&s, &departments, &products, ctx)?;
    batches::check(&s, &departments, &products, orders.as_ref(), ctx)?;
    super::queueing::check(&s, &departments, &products, orders.as_ref().map(|o| o.orders.as_slice()), ctx)?;
    let handling = fleet::handling(&s, &departments, &locations, &products, ctx)?;
    let cost_per_load_metre = s.costs.as_ref().map_or(0.0, |c| c.per_load_metre);
    if !(cost_per_load_metre >= 0.0 && cost_per_load_metre.is_finite()) {
        return Err(ctx.err(
            &root.key("costs").key("per_load_metre"),
            format!("per_load_metre must be a number >= 0, got {cost_per_load_metre}"),
        ));
    }
    limits::check_at_most("per_load_metre", cost_per_load_metre, limits::MAX_COST, limits::MAX_COST_WHY)
        .map_err(|m| ctx.err(&root.key("costs").key("per_load_metre"), m))?;
    if !search.floor_costs.is_empty() && cost_per_load_metre == 0.0 {
        return Err(ctx
            .err(
                &root.key("search").key("floor_costs"),
                "floor costs are in currency per hour, but the load-distance has no price",
            )
            .with_hint("set `costs: { per_load_metre: ... }` so handling and floor costs share one scale"));
    }
    let plant = Plant {
        name: s.plant.clone(),
        locations,
        distance_rule,
        distance,
        aisles,
        departments,
        layouts,
        products,
        handling,
        run,
        orders,
        demand_factor,
        cost_per_load_metre,
        currency: currency(&s, ctx)?,
        search,
        crews,
        fleet_choice: match s.fleet_choice {
            None | Some(FleetChoiceSpec::FirstListed) => FleetChoice::FirstListed,
            Some(FleetChoiceSpec::NearestIdle) => FleetChoice::NearestIdle,
        },
    };
    let lots = plant.lots_bound(plant.run.horizon_s, plant.demand_factor);
    limits::check_lots(lots, &format_duration(plant.run.horizon_s), plant.demand_factor).map_err(|m| {
        ctx.err(&root.key("run").key("horizon"), m).with_hint(
            "shorten the horizon, or lower `per_hour`, the profile's factors or the order quantities",
        )
    })?;
    Ok(plant)
}

/// Lots that move in several unit loads are not yet combined with finite
/// staging: a staging area counts loads, a machine's queue counts lots, and
/// the blocking rules assume one load per lot.
fn split_without_staging(
    s: &Scenario,
    departments: &[Department],
    products: &[crate::plant::Product],
    ctx: &Ctx,
) -> Result<(), ScenarioError> {
    let Some(p) = products.iter().position(|p| p.lot.is_some_and(|l| l.loads() > 1)) else {
        return Ok(());
    };
    let staged = departments.iter().position(|d| d.staging.is_limited() || d.turn_away);
    match staged {
        None => Ok(()),
        Some(d) => Err(ctx
            .err(
                &FieldPath::root().key("products").index(p).key("lot").key("transfer_batch"),
                format!(
                    "product \"{}\" moves in several unit loads, and department \"{}\" has finite staging: \
                     the two cannot be combined yet",
                    s.products[p].id, departments[d].id
                ),
            )
            .with_hint("leave out `transfer_batch` (the lot moves as one load) or the department's `staging`/`when_full`")),
    }
}

fn run_settings(s: &Scenario, ctx: &Ctx) -> Result<RunSettings, ScenarioError> {
    let p = FieldPath::root().key("run");
    let horizon = s.run.horizon.0;
    if !(horizon > 0.0) {
        return Err(ctx.err(
            &p.key("horizon"),
            format!("horizon must be longer than 0, got {}", format_duration(horizon)),
        ));
    }
    let warmup = s.run.warmup.map_or(0.0, |w| w.0);
    if !(warmup >= 0.0) {
        return Err(ctx
            .err(&p.key("warmup"), format!("warmup must not be negative, got {}", format_duration(warmup))));
    }
    if !(warmup < horizon) {
        return Err(ctx
            .err(
                &p.key("warmup"),
                format!(
                    "warmup ({}) must be shorter than the horizon ({})",
                    format_duration(warmup),
                    format_duration(horizon)
                ),
            )
            .with_hint("the horizon includes the warm-up; statistics are kept from warmup to horizon"));
    }
    let replications = s.run.replications.unwrap_or(DEFAULT_REPLICATIONS);
    if replications == 0 {
        return Err(ctx.err(&p.key("replications"), "replications must be at least 1"));
    }
    limits::check_count(
        "replications",
        u64::from(replications),
        u64::from(limits::MAX_REPLICATIONS),
        limits::MAX_REPLICATIONS_WHY,
    )
    .map_err(|m| ctx.err(&p.key("replications"), m))?;
    Ok(RunSettings {
        horizon_s: horizon,
        warmup_s: warmup,
        replications,
        seed: s.run.seed.unwrap_or(1),
        allow_overload: false,
    })
}

fn locations(s: &Scenario, ctx: &Ctx) -> Result<Vec<Location>, ScenarioError> {
    let p = FieldPath::root().key("locations");
    if s.locations.is_empty() {
        return Err(ctx.err(&p, "the plant has no locations"));
    }
    check_unique(
        ctx,
        "location",
        s.locations.iter().enumerate().map(|(i, l)| (l.id.as_str(), p.index(i).key("id"))),
    )?;
    let mut out = Vec::with_capacity(s.locations.len());
    for (i, l) in s.locations.iter().enumerate() {
        let [x, y] = l.at;
        if !(x.is_finite() && y.is_finite()) {
            return Err(ctx.err(
                &p.index(i).key("at"),
                format!("coordinates of location \"{}\" must be finite numbers (metres)", l.id),
            ));
        }
        limits::check_coordinates(x, y).map_err(|m| ctx.err(&p.index(i).key("at"), m))?;
        let footprint = area::footprint(l.area, l.size.as_deref(), "location", &l.id, &p.index(i), ctx)?;
        out.push(Location { id: l.id.clone(), x, y, footprint });
    }
    Ok(out)
}

fn departments(s: &Scenario, locations: &[Location], ctx: &Ctx) -> Result<Vec<Department>, ScenarioError> {
    let instant = s.moves.is_some();
    let p = FieldPath::root().key("departments");
    check_unique(
        ctx,
        "department",
        s.departments.iter().enumerate().map(|(i, d)| (d.id.as_str(), p.index(i).key("id"))),
    )?;
    let mut out = Vec::with_capacity(s.departments.len());
    for (i, d) in s.departments.iter().enumerate() {
        let (role, machines) = match (d.dock, d.machines) {
            (Some(_), Some(_)) => {
                return Err(ctx
                    .err(&p.index(i).key("machines"), format!("dock \"{}\" cannot have machines", d.id))
                    .with_hint("a dock is where lots enter or leave; remove `machines` or `dock`"))
            }
            (Some(DockSpec::Receiving), None) => (DepartmentRole::Receiving, 0),
            (Some(DockSpec::Shipping), None) => (DepartmentRole::Shipping, 0),
            (None, m) => (DepartmentRole::Work, m.unwrap_or(1)),
        };
        limits::check_count(
            "machines",
            u64::from(machines),
            u64::from(limits::MAX_MACHINES),
            limits::COUNT_WHY,
        )
        .map_err(|m| ctx.err(&p.index(i).key("machines"), m))?;
        if role == DepartmentRole::Work && machines == 0 {
            return Err(ctx.err(
                &p.index(i).key("machines"),
                format!("department \"{}\" needs at least 1 machine", d.id),
            ));
        }
        let dp = p.index(i);
        if role != DepartmentRole::Work {
            for (present, field) in [
                (d.staging.is_some(), "staging"),
                (d.breakdowns.is_some(), "breakdowns"),
                (d.calendar.is_some(), "calendar"),
                (d.setups.is_some(), "setups"),
            ] {
                if present {
                    return Err(ctx
                        .err(&dp.key(field), format!("dock \"{}\" cannot have `{field}`", d.id))
                        .with_hint(
                        "docks hold any number of lots and never break down; give it to a work department",
                    ));
                }
            }
        }
        if d.when_full.is_some() && role != DepartmentRole::Receiving {
            return Err(ctx
                .err(
                    &dp.key("when_full"),
                    format!("`when_full` is for receiving docks; \"{}\" is not one", d.id),
                )
                .with_hint(
                    "it says what a receiving dock does with a new lot when the first department is full",
                ));
        }
        let staging = staging::staging(d.staging.as_ref(), &d.id, &dp, locations, instant, ctx)?;
        let breakdowns = match &d.breakdowns {
            None => None,
            Some(b) => Some(staging::breakdowns(b, &dp.key("breakdowns"), true, ctx)?),
        };
        let turn_away = d.when_full == Some(WhenFullSpec::TurnAway);
        let calendar = match &d.calendar {
            None => None,
            Some(c) => work::calendar(c, &d.id, &dp, ctx)?,
        };
        let product_ids: Vec<&str> = s.products.iter().map(|p| p.id.as_str()).collect();
        let setups = match &d.setups {
            None => None,
            Some(st) => Some(work::setups(st, &d.id, &dp, &product_ids, ctx)?),
        };
        let batch = match &d.batch {
            None => None,
            Some(_) if role != DepartmentRole::Work => {
                return Err(ctx
                    .err(&dp.key("batch"), format!("dock \"{}\" cannot have `batch`", d.id))
                    .with_hint(
                        "give `batch` to the work department whose machines run several loads together",
                    ))
            }
            Some(b) => Some(batches::batching(b, d, &dp, &product_ids, ctx)?),
        };
        let footprint = area::footprint(d.area, d.size.as_deref(), "department", &d.id, &dp, ctx)?;
        out.push(Department {
            id: d.id.clone(),
            role,
            machines,
            staging,
            breakdowns,
            turn_away,
            calendar,
            setups,
            footprint,
            queue_order: super::queueing::department_order(s, i),
            batch,
            people: None,
            technicians: None,
        });
    }
    for (role, word) in [(DepartmentRole::Receiving, "receiving"), (DepartmentRole::Shipping, "shipping")] {
        if !out.iter().any(|d| d.role == role) {
            return Err(ctx
                .err(&p, format!("the plant has no {word} dock"))
                .with_hint(format!("add a department such as `- {{ id: {word}, dock: {word} }}`")));
        }
    }
    Ok(out)
}

/// Reads a file of extra layouts (relative to the scenario) and adds them;
/// errors name that file and its line.
fn layout_file(
    name: &str,
    at: &FieldPath,
    departments: &[Department],
    locations: &[Location],
    ctx: &Ctx,
    out: &mut Vec<Layout>,
) -> Result<(), ScenarioError> {
    let dir = ctx.origin.parent().unwrap_or_else(|| Path::new(""));
    let path = dir.join(name);
    let text = std::fs::read_to_string(&path).map_err(|e| {
        ctx.err(at, format!("cannot read the layout file {}: {e}", path.display()))
            .with_hint("layout files are named relative to the scenario file")
    })?;
    // Name both files: the one at fault and the scenario that includes it.
    let file = format!("{} (named in {} at {at})", path.display(), ctx.file);
    let de = serde_norway::Deserializer::from_str(&text);
    let spec: super::schema::LayoutFileSpec = serde_path_to_error::deserialize(de).map_err(|e| {
        let loc = e.inner().location();
        ScenarioError::new(ErrorKind::Schema, &file, format!("{}", e.inner()))
            .at_path(e.path().to_string())
            .at_line(loc.as_ref().map(|l| l.line()), loc.as_ref().map(|l| l.column()))
            .with_hint("a layout file holds `layouts:` with one mapping per layout, as `layflow search --out` writes")
    })?;
    let sub = Ctx { text: &text, origin: &path, file, tables: Vec::new(), moved: Vec::new() };
    add_layouts(&spec.layouts, departments, locations, &sub, out)
}

fn add_layouts(
    map: &Ordered<Ordered<String>>,
    departments: &[Department],
    locations: &[Location],
    ctx: &Ctx,
    out: &mut Vec<Layout>,
) -> Result<(), ScenarioError> {
    let p = FieldPath::root().key("layouts");
    let dept_ids: Vec<&str> = departments.iter().map(|d| d.id.as_str()).collect();
    let loc_ids: Vec<&str> = locations.iter().map(|l| l.id.as_str()).collect();
    for (name, assignment) in &map.0 {
        let lp = p.key(name);
        if out.iter().any(|l| &l.name == name) {
            return Err(ctx.err(&lp, format!("layout \"{name}\" is defined twice")).with_hint(
                "every layout needs its own name, in the scenario and in its layout files together",
            ));
        }
        let mut location_of: Vec<Option<usize>> = vec![None; departments.len()];
        let mut holder: Vec<Option<usize>> = vec![None; locations.len()];
        for (dept, loc) in &assignment.0 {
            let dp = lp.key(dept);
            let d = resolve(ctx, &dp, "department", dept, &dept_ids).map_err(|e| {
                if loc_ids.contains(&dept.as_str()) {
                    e.with_hint("a layout maps each department to a location: `department: location`")
                } else {
                    e
                }
            })?;
            let l = resolve(ctx, &dp, "location", loc, &loc_ids)?;
            if location_of[d].is_some() {
                return Err(ctx.err(&dp, format!("layout \"{name}\" places department \"{dept}\" twice")));
            }
            if let Some(other) = holder[l] {
                return Err(ctx
                    .err(
                        &dp,
                        format!(
                            "layout \"{name}\" puts \"{dept}\" in location \"{loc}\", which already holds \"{}\"",
                            dept_ids[other]
                        ),
                    )
                    .with_hint("each location holds at most one department"));
            }
            location_of[d] = Some(l);
            holder[l] = Some(d);
        }
        let mut resolved = Vec::with_capacity(departments.len());
        for (d, l) in location_of.iter().enumerate() {
            match l {
                Some(l) => resolved.push(*l),
                None => {
                    return Err(ctx
                        .err(
                            &lp,
                            format!(
                                "layout \"{name}\" leaves department \"{}\" without a location",
                                dept_ids[d]
                            ),
                        )
                        .with_hint(format!("add `{}: <location id>` to this layout", dept_ids[d])))
                }
            }
        }
        out.push(Layout { name: name.clone(), location_of: resolved });
    }
    Ok(())
}
