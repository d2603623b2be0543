//! Small pieces of HTML every part of the report uses: escaping, number cells that carry their summary.csv row, the shell.

use std::fmt::Write as _;

use layflow_models::metrics::estimate::Estimate;
use layflow_models::metrics::registry::{find, Def, Kind as MetricKind, Scope, Unit};

use crate::render::palette::{mix, rgb, AISLE_IDLE, AMBER, BRICK, SLATE, TEAL};
use crate::render::table;

use super::study::Study;

/// Text safe inside an element or a quoted attribute.
pub fn esc(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&#39;"),
            _ => o.push(c),
        }
    }
    o
}

/// JSON safe inside `<script type="application/json">`: no `</script>` can end it early.
pub fn script_json(v: &serde_json::Value) -> String {
    serde_json::to_string(v).expect("JSON serialises").replace("</", "<\\/").replace("<!--", "<\\!--")
}

/// The registry's definition of a summary.csv row's metric.
pub fn def_of_row(study: &Study, row: usize) -> Option<&'static Def> {
    let scope = match study.csv.get(row, "scope") {
        "plant" => Scope::Plant,
        "product" => Scope::Product,
        "department" => Scope::Department,
        "fleet" => Scope::Fleet,
        "segment" => Scope::Segment,
        "crew" => Scope::Crew,
        _ => return None,
    };
    find(scope, study.csv.get(row, "metric"))
}

/// The row's label as tables print it ("flow time", "utilisation" …), with its subject.
pub fn row_label(study: &Study, row: usize) -> String {
    let name = study.csv.get(row, "metric");
    let label = def_of_row(study, row).map_or(name, |d| d.label);
    match study.csv.get(row, "subject") {
        "" => label.to_string(),
        s => format!("{s} {label}"),
    }
}

/// `mean ± half-width` in the metric's unit, as the terminal tables write it.
pub fn value_text(def: Option<&Def>, e: &Estimate) -> String {
    if e.n == 0 || !e.mean.is_finite() {
        return "-".to_string();
    }
    match def.map(|d| d.unit) {
        Some(Unit::Seconds) => table::dur(e),
        Some(Unit::Share) => table::pct(e),
        _ => table::pm(e, 1.0),
    }
}

/// A paired difference in the metric's unit, `*` when its interval excludes zero.
pub fn difference_text(def: Option<&Def>, e: &Estimate, excludes_zero: bool, scale_of: f64) -> String {
    let kind = def.map_or(MetricKind::Number, Def::kind);
    if def.map(|d| d.unit) == Some(Unit::Share) && e.n > 0 {
        let sign = if e.mean > 0.0 { "+" } else { "" };
        let hw = e.half_width.map_or(String::new(), |h| format!(" ± {:.1}", h * 100.0));
        let mark = if excludes_zero { " *" } else { "" };
        return format!("{sign}{:.1}{hw} points{mark}", e.mean * 100.0).replace('-', "−");
    }
    table::difference_cell(e, excludes_zero, kind, table::unit_for([scale_of, e.mean]))
}

/// A row's estimate from its `mean`, `half_width` and `n` cells (or the `difference…` cells with `prefix`).
pub fn estimate(study: &Study, row: usize, prefix: &str) -> Estimate {
    let c = |name: &str| format!("{prefix}{name}");
    let (m, h, n) = if prefix.is_empty() {
        ("mean".to_string(), "half_width".to_string(), "n".to_string())
    } else {
        (prefix.to_string(), c("_half_width"), c("_n"))
    };
    Estimate {
        mean: study.csv.num(row, &m).unwrap_or(f64::NAN),
        half_width: study.csv.num(row, &h),
        n: study.csv.get(row, &n).parse().unwrap_or(0),
    }
}

/// The attributes that tie a shown number to its summary.csv cell:
/// the study, the row (0 = the first line after the header), the column and
/// its exact text, and the row's identifying cells.
pub fn cell_attrs(study_index: usize, study: &Study, row: usize, col: &str) -> String {
    let ident = ["demand_factor", "point", "movers", "layout", "bucket", "scope", "subject", "metric"];
    let key: Vec<&str> =
        ident.iter().filter(|c| study.csv.col(c).is_some()).map(|c| study.csv.get(row, c)).collect();
    format!(
        " data-study=\"{study_index}\" data-row=\"{row}\" data-col=\"{}\" data-value=\"{}\" data-key=\"{}\"",
        esc(col),
        esc(study.csv.get(row, col)),
        esc(&key.join("|"))
    )
}

/// A table cell showing `text` for summary.csv's cell (`row`, `col`).
pub fn num_td(study_index: usize, study: &Study, row: usize, col: &str, text: &str) -> String {
    if study.csv.get(row, col).is_empty() {
        // Nothing observed (a product that shipped nothing): no number to tie.
        return "<td class=\"num\">-</td>".to_string();
    }
    format!("<td class=\"num\"{}>{}</td>", cell_attrs(study_index, study, row, col), esc(text))
}

/// A table cell showing row `row`'s mean in its metric's unit, tied to its
/// summary.csv cell; `-` where the results have no such row.
pub fn mean_td(study_index: usize, study: &Study, row: Option<usize>) -> String {
    match row {
        Some(r) => {
            num_td(study_index, study, r, "mean", &value_text(def_of_row(study, r), &estimate(study, r, "")))
        }
        None => "<td>-</td>".to_string(),
    }
}

/// The page's style sheet: our palette, one column of sections, tables that read across.
pub fn style() -> String {
    let (teal, amber, slate, brick) = (rgb(TEAL), rgb(AMBER), rgb(SLATE), rgb(BRICK));
    let pale = rgb(mix(TEAL, (255, 255, 255), 0.9));
    let line = rgb(AISLE_IDLE);
    let mut s = String::new();
    let _ = write!(
        s,
        "*{{box-sizing:border-box}}\
         body{{margin:0;background:#f6f7f9;color:{slate};font-family:{font};font-size:15px;line-height:1.45}}\
         main{{max-width:1240px;margin:0 auto;padding:24px 28px 60px}}\
         header.top{{border-bottom:4px solid {teal};padding-bottom:10px;margin-bottom:18px}}\
         header.top h1{{margin:0;font-size:26px}}\
         header.top p{{margin:4px 0 0;color:{muted}}}\
         section{{background:#fff;border:1px solid {line};border-radius:6px;padding:18px 22px;margin:18px 0}}\
         section h2{{margin:0 0 10px;font-size:19px}}\
         section h3{{margin:16px 0 6px;font-size:16px}}\
         #answer{{border-left:6px solid {teal};font-size:17px}}\
         #answer p{{margin:6px 0}}\
         #answer .assumed{{font-size:14px;color:{muted}}}\
         .note{{font-size:13px;color:{muted}}}\
         table{{border-collapse:collapse;margin:8px 0;font-size:14px}}\
         th,td{{padding:4px 10px;border-bottom:1px solid {line};text-align:left;vertical-align:top}}\
         th{{background:{pale};font-weight:600}}\
         td.num{{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}}\
         tr.best td{{font-weight:600}}\
         tr.peak td{{background:{peak}}}\
         .better{{color:{teal}}} .worse{{color:{brick}}}\
         .panels{{display:grid;grid-template-columns:repeat(auto-fit,minmax(380px,1fr));gap:14px}}\
         .panels.one{{grid-template-columns:minmax(380px,680px)}}\
         .panel h3{{margin:0 0 4px}}\
         .panel svg,.chart svg{{width:100%;height:auto;display:block}}\
         .legend{{display:flex;flex-wrap:wrap;gap:6px 18px;font-size:13px;margin-top:8px}}\
         .legend span.key{{display:inline-block;width:22px;height:10px;border-radius:2px;margin-right:6px;vertical-align:middle}}\
         .scroll{{overflow-x:auto}}\
         details summary{{cursor:pointer;color:{teal};margin:8px 0}}\
         dl.facts{{display:grid;grid-template-columns:max-content 1fr;gap:3px 18px;margin:0}}\
         dl.facts dt{{font-weight:600}} dl.facts dd{{margin:0}}\
         ul.cautions li{{margin:4px 0}}\
         .amber{{color:{amber}}}\
         footer{{font-size:13px;color:{muted};margin-top:24px}}",
        font = crate::render::plot::FONT_FAMILY,
        muted = rgb(mix(SLATE, (255, 255, 255), 0.35)),
        peak = rgb(mix(AMBER, (255, 255, 255), 0.82)),
    );
    s
}
