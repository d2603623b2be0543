//! Sections read from table files (`locations`, `departments`, `layouts`, `products`, `demand`, `routings`), expanded into the YAML structs before compiling.
//!
//! Each table row becomes the item the YAML would have held, built as a
//! small tree of cells and read with the same serde structs, so a table
//! takes exactly the values and units the YAML takes (and any field added to
//! the YAML later). Every item remembers its file, row and columns
//! ([`TableOrigin`]), so a check in the compile passes that fails on it names
//! the cell rather than a YAML path. The checks only a table needs (a missing
//! column, operation numbers, branch lists, a part with no operations) are
//! made here.

use std::path::Path;

use serde::de::{self, DeserializeOwned, IntoDeserializer, Visitor};

use super::context::{Ctx, TableOrigin};
use super::error::{ErrorKind, ScenarioError};
use super::locate::FieldPath;
use super::schema::BRANCH_SUM_TOLERANCE;
use super::schema::{parse_factor, Listed, Ordered, Scenario, TableSpec};
use super::table_read::{self, Row, Table};
use super::words::type_error;
use crate::dist::rounded;
use crate::suggest::{did_you_mean, name_list};
use crate::units::parse_duration;

/// The keys a routings table maps, in the order messages list them.
const ROUTING_KEYS: &[&str] = &[
    "part",
    "operation",
    "department",
    "name",
    "time",
    "distribution",
    "mean",
    "sd",
    "cv",
    "min",
    "mode",
    "max",
    "k",
    "shape",
    "scale",
    "next",
    "probability",
];

/// Distribution parameters that are times (a bare number takes `time_unit`).
const TIME_PARAMETERS: &[&str] = &["mean", "sd", "min", "mode", "max", "scale"];

/// An example of each key's cells, for messages.
fn example(key: &str) -> &'static str {
    match key {
        "id" => "saw",
        "x" | "y" => "15.5 (metres)",
        "machines" => "2",
        "dock" => "receiving or shipping (empty for a work department)",
        "part" | "product" => "the product's id, e.g. pump-housing",
        "operation" => "a whole number such as 10 (gaps such as 10, 20, 30 are fine)",
        "department" => "a department's id, e.g. milling",
        "time" => "12 with `time_unit: min`, 12 min, or { gamma: { mean: 40 min, cv: 0.4 } }",
        "distribution" => "gamma (empty for a constant time)",
        "next" => "60, or 60 / 80 for branches",
        "probability" => "1, or 0.92 / 0.08 (or 92% / 8%) for branches",
        "layout" => "current",
        "location" => "bay-a1",
        "per_hour" | "demand.per_hour" => "1.5",
        _ => "see docs/scenario-format.md, section Tables",
    }
}

/// Where the scenario's items came from: table rows, and YAML items that a
/// table before them in a mixed list moved to another index.
pub(crate) struct Expanded {
    pub origins: Vec<TableOrigin>,
    /// (the item's path after expansion, its path in the scenario text).
    pub moved: Vec<(FieldPath, FieldPath)>,
}

/// Reads every table the scenario names into its sections, in the order
/// later sections need them; returns where each item came from.
pub(crate) fn expand(s: &mut Scenario, ctx: &Ctx) -> Result<Expanded, ScenarioError> {
    let mut origins = Vec::new();
    let mut moved = Vec::new();
    let mut places = Places { ctx, origins: &mut origins, moved: &mut moved };
    places.listed(&mut s.locations, "locations", &["id", "x", "y"], |t, row, origin, ctx| {
        for k in ["x", "y"] {
            if t.cell(row, k).is_empty() {
                return Err(t
                    .cell_err(row, k, format!("the cell is empty; expected {}", example(k)))
                    .with_hint("every location needs its pick-up/drop-off point: x and y in metres"));
            }
        }
        let mut node = t.pass_through(row, &["x", "y"]);
        let xy = Node::Seq(vec![
            Node::Cell(t.cell(row, "x").to_string()),
            Node::Cell(t.cell(row, "y").to_string()),
        ]);
        if let Node::Map(m) = &mut node {
            m.push(("at".to_string(), xy));
        }
        origin.columns.push(("at".to_string(), t.header("x").to_string()));
        t.item(row, node, origin, ctx)
    })?;
    places.listed(&mut s.departments, "departments", &["id"], |t, row, origin, ctx| {
        t.item(row, t.pass_through(row, &[]), origin, ctx)
    })?;
    if let Some(spec) = s.layouts.table.take() {
        layouts(s, &spec, ctx, places.origins)?;
    }
    places.listed(&mut s.products, "products", &["id"], |t, row, origin, ctx| {
        t.item(row, t.pass_through(row, &[]), origin, ctx)
    })?;
    if let Some(spec) = s.demand.take() {
        demand(s, &spec, ctx, &mut origins)?;
    }
    let routed = match s.routings.take() {
        Some(spec) => Some(routings(s, &spec, ctx, &mut origins)?),
        None => None,
    };
    // A product with no steps: in the YAML without a routings table, the
    // field is missing; otherwise it has no rows in the routings table.
    let pp = FieldPath::root().key("products");
    if let Some(i) = s.products.iter().position(|p| p.routing.is_none()) {
        let id = &s.products[i].id;
        let from_table = origins.iter().any(|o| o.prefix == pp.index(i));
        // A YAML product after a products table is named at its own line.
        let ctx =
            &Ctx { text: ctx.text, origin: ctx.origin, file: ctx.file.clone(), tables: Vec::new(), moved };
        let in_text = ctx.in_text(&pp.index(i));
        return Err(match &routed {
            None if !from_table => ScenarioError::new(ErrorKind::Schema, &ctx.file, "missing field \"routing\"")
                .at_path(in_text.to_string())
                .at_line(super::locate::line_of(ctx.text, &in_text), None)
                .with_hint("add `routing:` here, or give the steps in a `routings:` table"),
            None => ctx
                .err_with(&origins, &pp.index(i).key("id"), format!("part \"{id}\" has no operations"))
                .with_hint("give the steps in a `routings:` table (see docs/scenario-format.md, section Tables)"),
            Some(shown) => ctx
                .err_with(&origins, &pp.index(i).key("id"), format!("part \"{id}\" has no operations in {shown}"))
                .with_hint(
                    "add its rows to the routings table (one per operation, ending with one at a shipping dock), \
                     or give it `routing:` in the scenario",
                ),
        });
    }
    Ok(Expanded { origins, moved })
}

/// The bookkeeping of expanding the listed sections in place.
struct Places<'a, 'c> {
    ctx: &'a Ctx<'c>,
    origins: &'a mut Vec<TableOrigin>,
    moved: &'a mut Vec<(FieldPath, FieldPath)>,
}

impl Places<'_, '_> {
    /// Expands `list` (section `key`): each table's rows, as `row_item`
    /// makes them, take the table's place among the YAML items.
    fn listed<T>(
        &mut self,
        list: &mut Listed<T>,
        key: &str,
        required: &[&str],
        row_item: impl Fn(&Loaded, &Row, &mut TableOrigin, &Ctx) -> Result<T, ScenarioError>,
    ) -> Result<(), ScenarioError> {
        if list.tables.is_empty() {
            return Ok(());
        }
        let sec = FieldPath::root().key(key);
        let mut tables = std::mem::take(&mut list.tables).into_iter().peekable();
        let mut yaml = std::mem::take(&mut list.items).into_iter();
        let mut out = Vec::with_capacity(yaml.len());
        for k in 0..yaml.len() + tables.len() {
            if tables.peek().is_some_and(|(at, _)| at.is_none_or(|a| a == k)) {
                let Some((at, spec)) = tables.next() else { break };
                let t = Loaded::open(
                    &spec,
                    at.map_or_else(|| sec.clone(), |a| sec.index(a)),
                    self.ctx,
                    None,
                    required,
                )?;
                for row in &t.table.rows {
                    let mut origin = t.origin(sec.index(out.len()), row);
                    out.push(row_item(&t, row, &mut origin, self.ctx)?);
                    self.origins.push(origin);
                }
            } else if let Some(item) = yaml.next() {
                if out.len() != k {
                    self.moved.push((sec.index(out.len()), sec.index(k)));
                }
                out.push(item);
            }
        }
        list.items = out;
        Ok(())
    }
}

/// `layouts: { table: ..., columns: { layout, department, location } }`: one row per department per layout.
fn layouts(
    s: &mut Scenario,
    spec: &TableSpec,
    ctx: &Ctx,
    origins: &mut Vec<TableOrigin>,
) -> Result<(), ScenarioError> {
    let keys = ["layout", "department", "location"];
    let at = FieldPath::root().key("layouts");
    let t = Loaded::open(spec, at.clone(), ctx, Some(&keys), &keys)?;
    let dept_ids: Vec<&str> = s.departments.iter().map(|d| d.id.as_str()).collect();
    let loc_ids: Vec<&str> = s.locations.iter().map(|l| l.id.as_str()).collect();
    let mut map: Vec<(String, Ordered<String>)> = Vec::new();
    for row in &t.table.rows {
        let [name, dept, loc] = keys.map(|k| t.cell(row, k));
        for k in keys {
            if t.cell(row, k).is_empty() {
                return Err(t.cell_err(row, k, format!("the cell is empty; expected {}", example(k))));
            }
        }
        for (k, v, ids) in [("department", dept, &dept_ids), ("location", loc, &loc_ids)] {
            if !ids.contains(&v) {
                return Err(t
                    .cell_err(row, k, format!("unknown {k} \"{v}\"{}", did_you_mean(v, ids.iter().copied())))
                    .with_hint(format!("the {k}s are: {}", name_list(ids.iter().copied()))));
            }
        }
        let lp = at.key(name);
        let slot = match map.iter().position(|(n, _)| n == name) {
            Some(p) => p,
            None => {
                let mut o = t.origin(lp.clone(), row);
                o.columns = vec![(String::new(), t.header("layout").to_string())];
                origins.push(o);
                map.push((name.to_string(), Ordered(Vec::new())));
                map.len() - 1
            }
        };
        let mut o = t.origin(lp.key(dept), row);
        o.columns = vec![(String::new(), t.header("department").to_string())];
        origins.push(o);
        map[slot].1 .0.push((dept.to_string(), loc.to_string()));
    }
    s.layouts.map = Ordered(map);
    Ok(())
}

/// `demand: { table: ..., columns: { product: Part, per_hour: Rate } }`: each product's `demand`.
fn demand(
    s: &mut Scenario,
    spec: &TableSpec,
    ctx: &Ctx,
    origins: &mut Vec<TableOrigin>,
) -> Result<(), ScenarioError> {
    let t = Loaded::open(spec, FieldPath::root().key("demand"), ctx, None, &["product"])?;
    for row in &t.table.rows {
        let i = t.product(row, "product", s)?;
        if s.products[i].demand.is_some() {
            return Err(t
                .cell_err(
                    row,
                    "product",
                    format!(
                        "product \"{}\" already has `demand` (in the scenario or an earlier row)",
                        s.products[i].id
                    ),
                )
                .with_hint("give each product's demand once"));
        }
        let origin = t.origin(FieldPath::root().key("products").index(i).key("demand"), row);
        let node = t.pass_through(row, &["product"]);
        s.products.items[i].demand = Some(t.item(row, node, &origin, ctx)?);
        origins.push(origin);
    }
    Ok(())
}

/// `routings: { table: ..., columns: { part, operation, department, time, next, probability, ... } }`:
/// one row per operation; returns the file as shown, for later messages.
fn routings(
    s: &mut Scenario,
    spec: &TableSpec,
    ctx: &Ctx,
    origins: &mut Vec<TableOrigin>,
) -> Result<String, ScenarioError> {
    let at = FieldPath::root().key("routings");
    let t = Loaded::open(spec, at.clone(), ctx, Some(ROUTING_KEYS), &["part", "operation", "department"])?;
    let unit = match &spec.time_unit {
        None => None,
        Some(u) => match parse_duration(&format!("1 {u}")) {
            Ok(_) => Some(u.clone()),
            Err(_) => {
                return Err(ctx
                    .err(&at.key("time_unit"), format!("\"{u}\" is not a unit of time"))
                    .with_hint(
                        "the unit of bare numbers in the time columns: s, min, h or d, e.g. `time_unit: min`",
                    ))
            }
        },
    };
    if !t.has("time") && !t.has("distribution") {
        return Err(ctx
            .err(&at.key("columns"), "the columns give no `time` (nor `distribution`)")
            .with_hint("map the processing time's column, e.g. `time: RunMin` with `time_unit: min`"));
    }
    // Rows by part, in the order parts first appear.
    let mut parts: Vec<(usize, Vec<(u64, &Row)>)> = Vec::new();
    for row in &t.table.rows {
        let i = t.product(row, "part", s)?;
        if s.products[i].routing.is_some() && !parts.iter().any(|(p, _)| *p == i) {
            return Err(t
                .cell_err(
                    row,
                    "part",
                    format!("part \"{}\" already has a `routing` in the scenario", s.products[i].id),
                )
                .with_hint("give a product's steps in the scenario or in the table, not both"));
        }
        let text = t.cell(row, "operation");
        let op = text.parse::<u64>().map_err(|_| {
            t.cell_err(
                row,
                "operation",
                format!("\"{text}\" is not an operation number; expected {}", example("operation")),
            )
            .with_hint("operations run in the order of their numbers; `next` names them by number")
        })?;
        match parts.iter_mut().find(|(p, _)| *p == i) {
            Some((_, rows)) => rows.push((op, row)),
            None => parts.push((i, vec![(op, row)])),
        }
    }
    for (i, mut rows) in parts {
        rows.sort_by_key(|(op, _)| *op);
        for w in rows.windows(2) {
            if w[0].0 == w[1].0 {
                let (a, b) = (w[0].1.number.min(w[1].1.number), w[0].1.number.max(w[1].1.number));
                let later = if w[0].1.number > w[1].1.number { w[0].1 } else { w[1].1 };
                return Err(t
                    .cell_err(
                        later,
                        "operation",
                        format!(
                            "operation {} of part \"{}\" appears twice (rows {a} and {b})",
                            w[0].0, s.products[i].id
                        ),
                    )
                    .with_hint(
                        "each operation of a part needs its own number; gaps such as 10, 20, 30 are fine",
                    ));
            }
        }
        let names: Vec<String> = rows
            .iter()
            .map(|(op, row)| match t.cell(row, "name") {
                "" => op.to_string(),
                n => n.to_string(),
            })
            .collect();
        let ops: Vec<u64> = rows.iter().map(|(op, _)| *op).collect();
        let mut steps = Vec::with_capacity(rows.len());
        for (j, (op, row)) in rows.iter().enumerate() {
            let prefix = FieldPath::root().key("products").index(i).key("routing").index(j);
            let department = t.cell(row, "department");
            if department.is_empty() {
                return Err(t
                    .cell_err(
                        row,
                        "department",
                        format!("the cell is empty; expected {}", example("department")),
                    )
                    .with_hint(
                        "every operation is done at a department (a shipping dock for the last one)",
                    ));
            }
            let mut node = vec![
                ("step".to_string(), Node::Cell(names[j].clone())),
                ("at".to_string(), Node::Cell(department.to_string())),
            ];
            if let Some(time) = t.time(row, unit.as_deref())? {
                node.push(("time".to_string(), time));
            }
            if let Some(then) = t.branches(row, *op, &s.products[i].id, &ops, &names)? {
                node.push(("then".to_string(), then));
            }
            let mut origin = t.origin(prefix, row);
            let name_col = if t.has("name") { "name" } else { "operation" };
            let time_col = if t.has("time") { "time" } else { "distribution" };
            let branch_col = if t.has("probability") { "probability" } else { "next" };
            origin.columns = vec![
                (String::new(), t.header("operation").to_string()),
                ("step".into(), t.header(name_col).to_string()),
                ("at".into(), t.header("department").to_string()),
                ("time".into(), t.header(time_col).to_string()),
                ("then".into(), t.header(branch_col).to_string()),
                ("then.step".into(), t.header("next").to_string()),
                ("then.p".into(), t.header(branch_col).to_string()),
            ];
            for p in ["mean", "sd", "cv", "min", "mode", "max", "k", "shape", "scale"] {
                if t.has(p) {
                    origin.columns.push((format!("time.{p}"), t.header(p).to_string()));
                }
            }
            steps.push(t.item(row, Node::Map(node), &origin, ctx)?);
            origins.push(origin);
        }
        s.products.items[i].routing = Some(steps);
    }
    Ok(t.shown)
}

/// A table file opened with its columns found.
struct Loaded {
    /// The file as messages show it.
    shown: String,
    /// Where the table is named in the scenario (`routings`).
    at: FieldPath,
    table: Table,
    /// (our key, its header, the column's index).
    cols: Vec<(String, String, usize)>,
}

impl Loaded {
    /// Reads the table `spec` names and finds every mapped column; `allowed`
    /// lists the keys this section takes (`None`: the fields of the YAML item).
    fn open(
        spec: &TableSpec,
        at: FieldPath,
        ctx: &Ctx,
        allowed: Option<&[&str]>,
        required: &[&str],
    ) -> Result<Loaded, ScenarioError> {
        let dir = ctx.origin.parent().unwrap_or_else(|| Path::new(""));
        let path = dir.join(&spec.table);
        let spreadsheet = table_read::is_spreadsheet(&path);
        if spec.sheet.is_some() && !spreadsheet {
            return Err(ctx
                .err(&at.key("sheet"), format!("{} is not a spreadsheet, so it has no sheets", spec.table))
                .with_hint("`sheet` is for .xlsx and .ods files; remove it for a CSV file"));
        }
        let read = if spreadsheet {
            table_read::read_sheet(&path, spec.sheet.as_deref())
        } else {
            table_read::read_csv(&path)
        };
        let sheet_name = |t: Option<&str>| t.map_or(String::new(), |s| format!(", sheet {s}"));
        let shown_for = |sheet: &str| format!("{}{sheet} (the `{at}` table of {})", path.display(), ctx.file);
        let mut table = read.map_err(|e| {
            let shown = shown_for(&sheet_name(spec.sheet.as_deref()));
            let err = match e.row {
                Some(r) => ScenarioError::new(ErrorKind::Read, &shown, e.message).at_cell(r, None),
                None => ScenarioError::new(ErrorKind::Read, &shown, e.message),
            };
            match e.hint {
                Some(h) => err.with_hint(h),
                None => err,
            }
        })?;
        let shown = shown_for(&sheet_name(table.sheet.as_deref()));
        let mut cols = Vec::new();
        for (key, header) in &spec.columns.0 {
            if let Some(allowed) = allowed {
                if !allowed.contains(&key.as_str()) {
                    return Err(ctx
                        .err(
                            &at.key("columns").key(key),
                            format!(
                                "unknown column key \"{key}\"{}",
                                did_you_mean(key, allowed.iter().copied())
                            ),
                        )
                        .with_hint(format!("this table's keys: {}", name_list(allowed.iter().copied()))));
                }
            }
            let found = table
                .headers
                .iter()
                .position(|h| h == header)
                .or_else(|| table.headers.iter().position(|h| h.eq_ignore_ascii_case(header.trim())));
            let Some(c) = found else {
                return Err(ScenarioError::new(
                    ErrorKind::Invalid,
                    &shown,
                    format!(
                        "the header row has no column \"{header}\" (for `{key}`){}",
                        did_you_mean(header, table.headers.iter().map(String::as_str))
                    ),
                )
                .at_cell(table.header_row, Some(header))
                .with_hint(format!(
                    "its columns are: {}; name one of them in `columns: {{ {key}: ... }}` in {}",
                    name_list(table.headers.iter().map(String::as_str)),
                    ctx.file
                )));
            };
            cols.push((key.clone(), table.headers[c].clone(), c));
        }
        for r in required {
            if !cols.iter().any(|(k, _, _)| k == r) {
                return Err(ctx.err(&at.key("columns"), format!("the columns give no `{r}`")).with_hint(
                    format!(
                        "map `{r}` to the header of its column, e.g. `columns: {{ {r}: ... }}` ({})",
                        example(r)
                    ),
                ));
            }
        }
        decimal_commas(&mut table, &cols, &shown)?;
        Ok(Loaded { shown, at, table, cols })
    }

    fn index(&self, key: &str) -> Option<usize> {
        self.cols.iter().find(|(k, _, _)| k == key).map(|c| c.2)
    }

    fn has(&self, key: &str) -> bool {
        self.index(key).is_some()
    }

    /// The header mapped to `key` (empty when unmapped).
    fn header(&self, key: &str) -> &str {
        self.cols.iter().find(|(k, _, _)| k == key).map_or("", |c| c.1.as_str())
    }

    /// The cell of `key` in `row`, empty when unmapped.
    fn cell<'r>(&self, row: &'r Row, key: &str) -> &'r str {
        self.index(key).map_or("", |c| row.cell(c))
    }

    /// An error at a cell.
    fn cell_err(&self, row: &Row, key: &str, message: String) -> ScenarioError {
        let h = self.header(key);
        ScenarioError::new(ErrorKind::Invalid, &self.shown, message)
            .at_cell(row.number, if h.is_empty() { None } else { Some(h) })
    }

    /// Where the item read from `row` came from.
    fn origin(&self, prefix: FieldPath, row: &Row) -> TableOrigin {
        TableOrigin {
            prefix,
            file: self.shown.clone(),
            row: row.number,
            columns: self.cols.iter().map(|(k, h, _)| (k.clone(), h.clone())).collect(),
        }
    }

    /// The product named in column `key` (for demand and routings tables).
    fn product(&self, row: &Row, key: &str, s: &Scenario) -> Result<usize, ScenarioError> {
        let name = self.cell(row, key);
        let ids: Vec<&str> = s.products.iter().map(|p| p.id.as_str()).collect();
        ids.iter().position(|p| *p == name).ok_or_else(|| {
            let msg = if name.is_empty() {
                format!("the cell is empty; expected {}", example(key))
            } else {
                format!("unknown product \"{name}\"{}", did_you_mean(name, ids.iter().copied()))
            };
            self.cell_err(row, key, msg)
                .with_hint(format!("the products are: {}", name_list(ids.iter().copied())))
        })
    }

    /// Every mapped cell of `row` but those of `skip`, nested by the dots
    /// in their keys (`demand.per_hour`); empty cells are left out.
    fn pass_through(&self, row: &Row, skip: &[&str]) -> Node {
        let mut root = Vec::new();
        for (key, _, c) in &self.cols {
            let v = row.cell(*c);
            if skip.contains(&key.as_str()) || v.is_empty() {
                continue;
            }
            insert(&mut root, &key.split('.').collect::<Vec<_>>(), Node::Cell(v.to_string()));
        }
        Node::Map(root)
    }

    /// The processing time of a routing row: a family with parameter
    /// columns, or the `time` cell (a number, a duration, or the YAML form).
    fn time(&self, row: &Row, unit: Option<&str>) -> Result<Option<Node>, ScenarioError> {
        let with_unit = |v: &str| match unit {
            Some(u) if v.parse::<f64>().is_ok() => Node::Cell(format!("{v} {u}")),
            _ => Node::Cell(v.to_string()),
        };
        let family = self.cell(row, "distribution");
        if family.is_empty() || family.eq_ignore_ascii_case("constant") {
            let v = self.cell(row, "time");
            if v.is_empty() {
                return Ok(None);
            }
            if v.starts_with('{') {
                return serde_norway::from_str::<serde_norway::Value>(v)
                    .map(|y| Some(Node::Yaml(y)))
                    .map_err(|e| {
                        self.cell_err(row, "time", format!("not a time: {}", super::bare_message(&e)))
                            .with_hint(format!("expected {}", example("time")))
                    });
            }
            return Ok(Some(if family.is_empty() {
                with_unit(v)
            } else {
                Node::Map(vec![("constant".into(), with_unit(v))])
            }));
        }
        let mut params = Vec::new();
        for p in ["mean", "sd", "cv", "min", "mode", "max", "k", "shape", "scale"] {
            let v = self.cell(row, p);
            if !v.is_empty() {
                params.push((
                    p.to_string(),
                    if TIME_PARAMETERS.contains(&p) { with_unit(v) } else { Node::Cell(v.to_string()) },
                ));
            }
        }
        Ok(Some(Node::Map(vec![(family.to_ascii_lowercase(), Node::Map(params))])))
    }

    /// The `then` of a routing row from its `next` and `probability` cells, checked.
    fn branches(
        &self,
        row: &Row,
        op: u64,
        part: &str,
        ops: &[u64],
        names: &[String],
    ) -> Result<Option<Node>, ScenarioError> {
        let (next, prob) = (self.cell(row, "next"), self.cell(row, "probability"));
        if next.is_empty() {
            if !prob.is_empty() {
                return Err(self
                    .cell_err(row, "probability", "a probability without next operations".to_string())
                    .with_hint(format!("list the next operations in the next column: {}", example("next"))));
            }
            return Ok(None);
        }
        let mut targets = Vec::new();
        for n in next.split('/').map(str::trim) {
            let k =
                n.parse::<u64>().ok().and_then(|v| ops.iter().position(|o| *o == v)).ok_or_else(|| {
                    self.cell_err(row, "next", format!("part \"{part}\" has no operation \"{n}\"")).with_hint(
                        format!(
                            "its operations are {}; expected {}",
                            ops.iter().map(u64::to_string).collect::<Vec<_>>().join(", "),
                            example("next")
                        ),
                    )
                })?;
            targets.push(k);
        }
        let shares: Vec<String> = if prob.is_empty() && targets.len() == 1 {
            vec!["1".to_string()]
        } else {
            prob.split('/').map(|p| p.trim().to_string()).collect()
        };
        if shares.len() != targets.len() {
            return Err(self
                .cell_err(
                    row,
                    "probability",
                    format!(
                        "{} next operations but {} probabilities",
                        targets.len(),
                        if prob.is_empty() { 0 } else { shares.len() }
                    ),
                )
                .with_hint(format!(
                    "one probability per next operation, in the same order: {}",
                    example("probability")
                )));
        }
        let mut sum = 0.0;
        for p in &shares {
            sum += parse_factor(p).map_err(|m| self.cell_err(row, "probability", m))?;
        }
        if !((sum - 1.0).abs() <= BRANCH_SUM_TOLERANCE) {
            return Err(self
                .cell_err(
                    row,
                    "probability",
                    format!(
                        "the branch probabilities of operation {op} of part \"{part}\" sum to {}, not 1",
                        rounded(sum)
                    ),
                )
                .with_hint(format!("make them add up to 1: {}", example("probability"))));
        }
        let then = targets
            .iter()
            .zip(&shares)
            .map(|(&k, p)| {
                Node::Map(vec![
                    ("step".into(), Node::Cell(names[k].clone())),
                    ("p".into(), Node::Cell(p.clone())),
                ])
            })
            .collect();
        Ok(Some(Node::Seq(then)))
    }

    /// Reads the item a row's cells make, with a message at its cell when a value is wrong.
    fn item<T: DeserializeOwned>(
        &self,
        row: &Row,
        node: Node,
        origin: &TableOrigin,
        ctx: &Ctx,
    ) -> Result<T, ScenarioError> {
        serde_path_to_error::deserialize::<_, T>(node).map_err(|e| {
            let path = e.path().to_string();
            let raw = e.inner().to_string();
            let keys: Vec<&str> = path
                .split('.')
                .map(|k| k.split('[').next().unwrap_or(""))
                .filter(|k| !k.is_empty() && *k != "?")
                .collect();
            let quoted: Vec<&str> = raw.split('`').skip(1).step_by(2).collect();
            if raw.starts_with("unknown field") {
                let given = quoted.first().copied().unwrap_or("");
                let mut key = keys.clone();
                if key.last() != Some(&given) {
                    key.push(given);
                }
                return ctx
                    .err(
                        &self.at.key("columns").key(&key.join(".")),
                        format!(
                            "unknown column key \"{}\"{}",
                            key.join("."),
                            did_you_mean(given, quoted[1..].iter().copied())
                        ),
                    )
                    .with_hint(format!("allowed here: {}", name_list(quoted[1..].iter().copied())));
            }
            if raw.starts_with("missing field") {
                let given = quoted.first().copied().unwrap_or("");
                let mut key = keys.clone();
                key.push(given);
                let column = origin.column(&key).filter(|h| !h.is_empty());
                return match column {
                    Some(h) => ScenarioError::new(
                        ErrorKind::Invalid,
                        &self.shown,
                        "the cell is empty: every row needs a value in this column",
                    )
                    .at_cell(row.number, Some(h))
                    .with_hint(format!("expected {}", example(&key.join(".")))),
                    None => ctx
                        .err(&self.at.key("columns"), format!("the columns give no `{}`", key.join(".")))
                        .with_hint(format!("map `{}` to the header of its column", key.join("."))),
                };
            }
            let column = origin.column(&keys).map(str::to_string);
            let (message, hint) = if raw.starts_with("unknown variant") {
                let given = quoted.first().copied().unwrap_or("");
                (
                    format!("unknown value \"{given}\"{}", did_you_mean(given, quoted[1..].iter().copied())),
                    Some(format!("accepted here: {}", name_list(quoted[1..].iter().copied()))),
                )
            } else {
                type_error(&raw, &path).unwrap_or((raw.clone(), None))
            };
            let hint =
                hint.unwrap_or_else(|| format!("expected {}", example(keys.first().copied().unwrap_or(""))));
            ScenarioError::new(ErrorKind::Invalid, &self.shown, message)
                .at_cell(row.number, column.as_deref().filter(|h| !h.is_empty()))
                .with_hint(hint)
        })
    }
}

/// Keys whose cells are names, never numbers: a dotted part number such as
/// `4711.02` there says nothing about how the file writes decimals.
const NAME_KEYS: &[&str] =
    &["id", "part", "product", "department", "location", "layout", "name", "distribution", "dock", "next"];

/// Reads the decimal commas of a `;`- or tab-separated file (or a sheet's
/// text cells) as points, by the one rule order traces follow
/// ([`crate::decimals`]), before any cell is read as a number.
fn decimal_commas(
    table: &mut Table,
    cols: &[(String, String, usize)],
    shown: &str,
) -> Result<(), ScenarioError> {
    let numbers: Vec<&(String, String, usize)> =
        cols.iter().filter(|(k, _, _)| !NAME_KEYS.contains(&k.as_str())).collect();
    let cells = table.rows.iter().flat_map(|r| {
        numbers
            .iter()
            .filter(|(_, _, c)| !r.stored_numbers.get(*c).copied().unwrap_or(false))
            .map(move |(_, h, c)| (r.number as u64, h.as_str(), r.cell(*c)))
    });
    // A sheet has no separator to confuse a comma with.
    let decimals = crate::decimals::decide(table.separator.unwrap_or(b';'), cells).map_err(|e| {
        ScenarioError::new(ErrorKind::Invalid, shown, e.message)
            .at_cell(e.line as usize, Some(&e.column))
            .with_hint(e.hint)
    })?;
    if decimals == crate::decimals::Decimals::Comma {
        for r in &mut table.rows {
            for (_, _, c) in &numbers {
                let stored = r.stored_numbers.get(*c).copied().unwrap_or(false);
                if let Some(cell) = r.cells.get_mut(*c).filter(|_| !stored) {
                    *cell = decimals.read(cell);
                }
            }
        }
    }
    Ok(())
}

/// Puts `value` at the dotted `path` in a tree of mappings.
fn insert(map: &mut Vec<(String, Node)>, path: &[&str], value: Node) {
    let (first, rest) = (path[0], &path[1..]);
    if rest.is_empty() {
        map.push((first.to_string(), value));
        return;
    }
    if !map.iter().any(|(k, _)| k == first) {
        map.push((first.to_string(), Node::Map(Vec::new())));
    }
    if let Some((_, Node::Map(inner))) = map.iter_mut().find(|(k, _)| k == first) {
        insert(inner, rest, value);
    }
}

/// The value a row gives one field: a cell's text, the YAML written in a
/// cell, or a mapping or list built from several cells. Read with the YAML
/// structs through serde, a cell is a number where the field wants one and
/// text where it wants text (a part number such as 4711 stays text).
enum Node {
    Cell(String),
    Yaml(serde_norway::Value),
    Map(Vec<(String, Node)>),
    Seq(Vec<Node>),
}

type DeError = de::value::Error;

impl<'de> IntoDeserializer<'de, DeError> for Node {
    type Deserializer = Node;
    fn into_deserializer(self) -> Node {
        self
    }
}

impl<'de> de::Deserializer<'de> for Node {
    type Error = DeError;

    fn deserialize_any<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        match self {
            Node::Cell(t) => {
                if let Ok(u) = t.parse::<u64>() {
                    v.visit_u64(u)
                } else if let Ok(i) = t.parse::<i64>() {
                    v.visit_i64(i)
                } else if let Some(f) = t.parse::<f64>().ok().filter(|f| f.is_finite()) {
                    v.visit_f64(f)
                } else {
                    v.visit_string(t)
                }
            }
            Node::Yaml(y) => y.deserialize_any(v).map_err(|e| de::Error::custom(super::bare_message(&e))),
            Node::Map(m) => v.visit_map(de::value::MapDeserializer::new(m.into_iter())),
            Node::Seq(s) => v.visit_seq(de::value::SeqDeserializer::new(s.into_iter())),
        }
    }

    fn deserialize_option<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        v.visit_some(self)
    }

    fn deserialize_string<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        match self {
            Node::Cell(t) => v.visit_string(t),
            other => other.deserialize_any(v),
        }
    }

    fn deserialize_str<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        self.deserialize_string(v)
    }

    fn deserialize_identifier<V: Visitor<'de>>(self, v: V) -> Result<V::Value, DeError> {
        self.deserialize_string(v)
    }

    fn deserialize_enum<V: Visitor<'de>>(
        self,
        name: &'static str,
        variants: &'static [&'static str],
        v: V,
    ) -> Result<V::Value, DeError> {
        match self {
            Node::Cell(t) => v.visit_enum(de::value::StringDeserializer::<DeError>::new(t)),
            Node::Yaml(y) => {
                y.deserialize_enum(name, variants, v).map_err(|e| de::Error::custom(super::bare_message(&e)))
            }
            Node::Map(m) => v.visit_enum(de::value::MapAccessDeserializer::new(
                de::value::MapDeserializer::new(m.into_iter()),
            )),
            other => other.deserialize_any(v),
        }
    }

    serde::forward_to_deserialize_any! {
        bool i8 i16 i32 i64 i128 u8 u16 u32 u64 u128 f32 f64 char bytes byte_buf unit
        unit_struct newtype_struct seq tuple tuple_struct map struct ignored_any
    }
}
