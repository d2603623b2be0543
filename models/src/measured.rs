//! A measured from-to chart read from a CSV matrix, for the static method alone (`check --from-to`, `search --from-to`).
//!
//! A plant that starts from a flow study knows its loads between departments
//! before it knows its routings. The file is a matrix: the first row names
//! the departments the loads go to, the first column the departments they
//! come from, and each cell holds the loads counted over one period (a
//! shift, a week). Cells are divided by the period to give loads per hour,
//! the unit of the routings' chart. The delimiter (`,` `;` or tab) is the one
//! the first line uses most; with `;` or tab, decimal commas are read too
//! (`2,5`), by the rule of [`crate::decimals`].
//! UTF-8 with or without a byte-order mark, and CRLF line ends, are read.
//! Empty cells are 0. Departments the file leaves out get no flow.
//!
//! The chart replaces the routings' chart in the load-distance and the
//! search's objective only: the simulation always follows the routings.

use std::path::Path;

use crate::analysis::{load_distance, FlowChart, StaticPicture};
use crate::plant::Plant;
use crate::suggest::{did_you_mean, name_list};
use crate::textfile::{read_text, TextError};

/// A measured from-to chart as read, with where it came from, for every output that shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct MeasuredChart {
    /// The file as named on the command line.
    pub file: String,
    /// The period each cell counts loads over, seconds.
    pub per_s: f64,
    /// Loads per hour (cells ÷ the period), before any demand factor.
    pub chart: FlowChart,
    /// Departments of the plant the file leaves out: no flow to or from them.
    pub left_out: Vec<usize>,
}

impl MeasuredChart {
    /// Read `path` for `plant`, each cell counting loads over `per_s` seconds.
    pub fn read(path: &Path, plant: &Plant, per_s: f64) -> Result<MeasuredChart, String> {
        let (chart, left_out) = read_from_to(path, plant, per_s)?;
        Ok(MeasuredChart { file: path.display().to_string(), per_s, chart, left_out })
    }

    /// `pic` with this chart, times the picture's demand factor, in place of the routings'
    /// from-to chart, and each layout's load-distance and static cost from it. What
    /// depends on products (utilisations, the fleets' bounds, the chart per product)
    /// is left as the routings give it: callers say so, or leave it out.
    pub fn apply(&self, plant: &Plant, mut pic: StaticPicture) -> StaticPicture {
        let k = pic.demand_factor;
        let scaled: Vec<(usize, usize, f64)> = self.chart.iter().map(|(i, j, f)| (i, j, f * k)).collect();
        pic.from_to = FlowChart::from_contributions(self.chart.departments(), scaled);
        for (l, lp) in pic.layouts.iter_mut().enumerate() {
            lp.load_distance_m_per_h = load_distance(plant, l, &pic.from_to);
            lp.handling_cost_per_h = lp.load_distance_m_per_h * plant.cost_per_load_metre;
        }
        pic
    }
}

/// An example of the file, for every error message.
const EXAMPLE: &str = "a matrix such as\n  from\\to,receiving,saw,shipping\n  receiving,0,12,0\n  saw,0,0,12\n  \
                       shipping,0,0,0\n(first row: the departments loads go to; first column: the departments \
                       they come from; cells: loads per period)";

/// The chart in `path`, as loads per hour: each cell ÷ the period `per_s` (seconds).
/// Errors name the file, the row and column (1-based, as a spreadsheet counts them) and give an example.
pub fn read_from_to(path: &Path, plant: &Plant, per_s: f64) -> Result<(FlowChart, Vec<usize>), String> {
    let file = path.display().to_string();
    let text = read_text(path).map_err(|e| match e {
        TextError::Io(e) => format!("{file}: cannot read the from-to chart: {e}"),
        TextError::Encoding { line, column, message, hint } => {
            let at = match (line, column) {
                (Some(l), Some(c)) => format!(", row {l}, column {c}"),
                _ => String::new(),
            };
            format!("{file}{at}: {message}\n  hint: {hint}")
        }
    })?;
    parse(&text, &file, plant, per_s)
}

/// The delimiter the first line uses most: tab, `;` or `,` (`,` when it uses none).
fn delimiter(first: &str) -> u8 {
    let count = |c: char| first.matches(c).count();
    let (tab, semi, comma) = (count('\t'), count(';'), count(','));
    if tab > 0 && tab >= semi && tab >= comma {
        b'\t'
    } else if semi > 0 && semi >= comma {
        b';'
    } else {
        b','
    }
}

/// [`read_from_to`] on text already read; `file` names it in messages.
pub fn parse(text: &str, file: &str, plant: &Plant, per_s: f64) -> Result<(FlowChart, Vec<usize>), String> {
    let fail = |row: usize, col: Option<usize>, what: String, hint: &str| {
        let at = col.map_or(format!("row {row}"), |c| format!("row {row}, column {c}"));
        format!("{file}, {at}: {what}\n  hint: {hint}; the file is {EXAMPLE}")
    };
    let first = text.lines().find(|l| !l.trim().is_empty()).unwrap_or("");
    let delim = delimiter(first);
    let mut reader = csv::ReaderBuilder::new()
        .delimiter(delim)
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let ids: Vec<&str> = plant.departments.iter().map(|d| d.id.as_str()).collect();
    let department = |name: &str, row: usize, col: usize| -> Result<usize, String> {
        ids.iter().position(|&i| i == name).ok_or_else(|| {
            fail(
                row,
                Some(col),
                format!("unknown department \"{name}\"{}", did_you_mean(name, ids.iter().copied())),
                &format!("the departments are: {}", name_list(ids.iter().copied())),
            )
        })
    };
    let mut rows: Vec<(usize, csv::StringRecord)> = Vec::new();
    for rec in reader.records() {
        let rec = rec.map_err(|e| {
            let row = e.position().map_or(0, |p| p.line() as usize);
            fail(row, None, format!("not readable as CSV: {e}"), "check the quotes on this row")
        })?;
        let row = rec.position().map_or(rows.len() + 1, |p| p.line() as usize);
        if rec.iter().all(str::is_empty) {
            continue;
        }
        rows.push((row, rec));
    }
    let Some((head_row, head)) = rows.first() else {
        return Err(format!("{file}: the from-to chart is empty\n  hint: the file is {EXAMPLE}"));
    };
    // Columns: the departments in the first row, after its first cell.
    let mut cols: Vec<usize> = Vec::new();
    for (c, name) in head.iter().enumerate().skip(1) {
        if name.is_empty() {
            return Err(fail(
                *head_row,
                Some(c + 1),
                "a column has no department name".into(),
                "name every column",
            ));
        }
        let d = department(name, *head_row, c + 1)?;
        if cols.contains(&d) {
            return Err(fail(
                *head_row,
                Some(c + 1),
                format!("department \"{name}\" heads two columns"),
                "each department heads one column",
            ));
        }
        cols.push(d);
    }
    if cols.is_empty() {
        return Err(fail(
            *head_row,
            None,
            "the first row names no department".into(),
            "the first row names the departments loads go to",
        ));
    }
    // Decimal commas by the one rule every table file follows; columns by number, as messages give them.
    let col_names: Vec<String> = (0..=cols.len() + 1).map(|c| c.to_string()).collect();
    let number_cells = rows[1..].iter().flat_map(|(row, rec)| {
        rec.iter()
            .enumerate()
            .skip(1)
            .map(|(k, c)| (*row as u64, col_names[(k + 1).min(cols.len() + 1)].as_str(), c))
    });
    let decimals = crate::decimals::decide(delim, number_cells)
        .map_err(|e| fail(e.line as usize, e.column.parse().ok(), e.message, &e.hint))?;
    let per_h = per_s / 3600.0;
    let mut seen_rows: Vec<usize> = Vec::new();
    let mut parts = Vec::new();
    for (row, rec) in &rows[1..] {
        let name = rec.get(0).unwrap_or("");
        let from = department(name, *row, 1)?;
        if seen_rows.contains(&from) {
            return Err(fail(
                *row,
                Some(1),
                format!("department \"{name}\" starts two rows"),
                "each department starts one row",
            ));
        }
        if !cols.contains(&from) {
            return Err(fail(
                *row,
                Some(1),
                format!("department \"{name}\" has a row but no column"),
                &format!("add \"{name}\" to the first row, so the chart has a column of loads into it"),
            ));
        }
        seen_rows.push(from);
        if rec.len() > cols.len() + 1 {
            return Err(fail(
                *row,
                Some(cols.len() + 2),
                format!("{} cells, more than the {} columns the first row names", rec.len() - 1, cols.len()),
                "remove the extra cells, or name their department in the first row",
            ));
        }
        for (k, &to) in cols.iter().enumerate() {
            let col = k + 2;
            let Some(cell) = rec.get(k + 1) else {
                return Err(fail(
                    *row,
                    Some(col),
                    format!(
                        "the cell for \"{}\" is missing: the row has only {} cells",
                        ids[to],
                        rec.len() - 1
                    ),
                    "give every row a cell for every column (0 or empty where no load moves)",
                ));
            };
            if cell.is_empty() {
                continue;
            }
            let shown = decimals.read(cell);
            let x: f64 = shown.parse().ok().filter(|x: &f64| x.is_finite()).ok_or_else(|| {
                fail(
                    *row,
                    Some(col),
                    format!("\"{cell}\" is not a number of loads"),
                    "write the loads counted over the period as a plain number, e.g. 12 or 2.5",
                )
            })?;
            if x < 0.0 {
                return Err(fail(
                    *row,
                    Some(col),
                    format!("a negative load ({cell}) from \"{name}\" to \"{}\"", ids[to]),
                    "loads are counts: 0 or more",
                ));
            }
            if from == to && x > 0.0 {
                return Err(fail(
                    *row,
                    Some(col),
                    format!(
                        "{cell} loads from \"{name}\" to itself: a move within a department is not counted"
                    ),
                    "write 0 or leave the cell empty on the diagonal",
                ));
            }
            if x > 0.0 {
                parts.push((from, to, x / per_h));
            }
        }
    }
    if let Some(&missing) = cols.iter().find(|c| !seen_rows.contains(c)) {
        let last = rows.last().map_or(1, |r| r.0);
        return Err(fail(
            last,
            None,
            format!("department \"{}\" has a column but no row", ids[missing]),
            &format!("add a row starting with \"{}\" (its loads out)", ids[missing]),
        ));
    }
    let left_out = (0..ids.len()).filter(|d| !cols.contains(d)).collect();
    Ok((FlowChart::from_contributions(ids.len(), parts), left_out))
}
