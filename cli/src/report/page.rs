//! The report page: the answer first, then the plant, the comparison, fleet sizing, results over time, assumptions and the replay.

use std::fmt::Write as _;

use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::estimate::Estimate;
use layflow_models::metrics::registry::{find, Better, Scope, Unit};
use layflow_models::plant::Plant;
use layflow_models::results::folder::Kind;
use layflow_models::units::format_duration;
use serde_json::json;

use super::charts::{self, DiffRow, Marks, Series, Verdict};
use super::html::{
    def_of_row, difference_text, esc, estimate, mean_td, num_td, row_label, script_json, style, value_text,
};
use super::plant::{panels, Shading};
use super::study::Study;

/// The cautions every page carries.
pub const CAUTIONS: [&str; 4] = [
    "Safety is not assessed. layflow does not check aisle widths, forklift and pedestrian separation, sight \
     lines, racking or floor loads; follow local codes and licensed practice, and have a qualified person \
     review any layout before walls or racks move.",
    "The numbers describe the model, not the plant: they hold as far as the scenario's routings, times, \
     demand and fleet rules match the floor. Check the inputs with the people who run it.",
    "Every ± is a 95% confidence half-width over independent replications. A difference marked * excludes \
     zero; one without * could be noise, and more replications narrow it.",
    "Averages hide the peak hours: read the results over time where the study has them.",
];

/// What the page is made from.
pub struct Inputs<'a> {
    /// The scenario the studies ran.
    pub plant: &'a Plant,
    /// The scenario file, as found.
    pub scenario: String,
    /// SHA-256 of its text.
    pub scenario_sha256: String,
    /// The studies, in the order given.
    pub studies: &'a [Study],
    /// The replay section, when asked for.
    pub replay: Option<&'a super::replay::Replay>,
}

/// The whole page.
pub fn page(inp: &Inputs) -> String {
    let plant = inp.plant;
    let mut answer = String::new();
    let mut body = String::new();
    let mut facts = Vec::new();
    for (k, st) in inp.studies.iter().enumerate() {
        match st.kind {
            Kind::Compare => {
                answer.push_str(&compare_answer(inp, st));
                body.push_str(&compare_sections(inp, k, st));
            }
            Kind::Fleet => {
                answer.push_str(&fleet_answer(st));
                body.push_str(&fleet_sections(inp, k, st));
            }
            Kind::Experiment => {
                answer.push_str(&experiment_answer(st));
                body.push_str(&experiment_sections(inp, k, st));
            }
        }
        facts.push(study_facts(st));
    }
    let kinds: Vec<&str> = inp
        .studies
        .iter()
        .map(|s| match s.kind {
            Kind::Compare => "layout comparison",
            Kind::Fleet => "fleet sizing",
            Kind::Experiment => "experiment",
        })
        .collect();
    let data = json!({
        "layflow_version": env!("CARGO_PKG_VERSION"),
        "plant": plant.name,
        "scenario": inp.scenario,
        "scenario_sha256": inp.scenario_sha256,
        "studies": inp.studies.iter().map(|s| json!({
            "kind": s.kind,
            "source": s.source,
            "summary_csv_rows": s.csv.rows.len(),
        })).collect::<Vec<_>>(),
        "replay": inp.replay.map(|r| json!({
            "layout": r.layout, "replication": r.replication, "window_s": [r.window.0, r.window.1],
            "bytes": r.data_bytes,
        })),
    });
    let mut s = String::new();
    let _ = write!(
        s,
        "<!doctype html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
         <meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; script-src 'unsafe-inline'; \
         style-src 'unsafe-inline'; img-src data:\">\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
         <meta name=\"generator\" content=\"layflow {ver}\">\
         <title>{name} — layflow report</title><style>{style}</style></head><body><main>\
         <header class=\"top\"><h1>{name}</h1><p>layflow report · {kinds} · scenario {scen}</p></header>\
         <section id=\"answer\"><h2>The answer</h2>{answer}</section>",
        ver = env!("CARGO_PKG_VERSION"),
        name = esc(&plant.name),
        style = style(),
        kinds = esc(&kinds.join(", ")),
        scen = esc(&inp.scenario),
    );
    s.push_str(&unique_section_ids(&body));
    if let Some(r) = inp.replay {
        s.push_str(&r.html);
    }
    s.push_str(&assumptions(inp, &facts));
    let _ = write!(
        s,
        "<footer>Made by layflow {ver} from {src}. Every number on this page is read from the results files \
         (summary.json and summary.csv); each table cell carries its summary.csv row in its data attributes. \
         What the page holds and how to read it: docs/report.md in the layflow repository.</footer></main>\
         <script type=\"application/json\" id=\"layflow-data\">{data}</script>\
         <script>document.body.dataset.ready = \"1\";</script></body></html>",
        ver = env!("CARGO_PKG_VERSION"),
        src = esc(&inp.studies.iter().map(|s| s.source.clone()).collect::<Vec<_>>().join(", ")),
        data = script_json(&data)
    );
    s.push('\n');
    s
}

/// Several studies on one page each bring their sections: the second
/// `over-time` becomes `over-time-2`, so every id stays unique.
fn unique_section_ids(body: &str) -> String {
    let mut seen: Vec<String> = Vec::new();
    let mut out = String::with_capacity(body.len());
    let mut rest = body;
    while let Some(i) = rest.find("<section id=\"") {
        let start = i + "<section id=\"".len();
        out.push_str(&rest[..start]);
        let end = start + rest[start..].find('"').unwrap_or(0);
        let id = &rest[start..end];
        let n = seen.iter().filter(|x| *x == id).count();
        out.push_str(id);
        if n > 0 {
            let _ = write!(out, "-{}", n + 1);
        }
        seen.push(id.to_string());
        rest = &rest[end..];
    }
    out.push_str(rest);
    out
}

/// Whether an earlier study on the page has drawn the plant already.
fn plant_drawn_before(inp: &Inputs, k: usize) -> bool {
    inp.studies[..k].iter().any(|s| matches!(s.kind, Kind::Compare | Kind::Experiment))
}

/// The size of a difference without its sign, in a unit that reads well: "4.83 ± 1.17 min".
fn magnitude(def: Option<&layflow_models::metrics::registry::Def>, d: &Estimate) -> String {
    let e = Estimate { mean: d.mean.abs(), ..*d };
    match def.map(|x| x.unit) {
        Some(Unit::Seconds) => crate::render::table::dur_in(&e, crate::render::table::unit_for([e.mean])),
        Some(Unit::Share) => format!("{:.1} percentage points", e.mean * 100.0),
        _ => crate::render::table::pm(&e, 1.0),
    }
}

/// Rows of `st` that match `pred`, in file order.
fn rows_where(st: &Study, pred: impl Fn(usize) -> bool) -> Vec<usize> {
    (0..st.csv.rows.len()).filter(|&r| pred(r)).collect()
}

/// The first demand level's text as written in summary.csv.
fn first_level(st: &Study) -> String {
    st.csv.rows.first().map_or(String::new(), |_| st.csv.get(0, "demand_factor").to_string())
}

/// The whole-window row of (`layout`, scope, subject, metric) at demand level `level`.
fn compare_row(
    st: &Study,
    level: &str,
    layout: &str,
    scope: &str,
    subject: &str,
    metric: &str,
) -> Option<usize> {
    (0..st.csv.rows.len()).find(|&r| {
        st.csv.get(r, "demand_factor") == level
            && st.csv.get(r, "layout") == layout
            && st.csv.whole(r)
            && st.csv.get(r, "scope") == scope
            && st.csv.get(r, "subject") == subject
            && st.csv.get(r, "metric") == metric
    })
}

/// "5 replications of 5 d after a 1 d warm-up, seed 20261201".
fn run_words(reps: u64, horizon_s: f64, warmup_s: f64, seed: u64) -> String {
    format!(
        "{reps} replication{} of {} after a {} warm-up (seed {seed})",
        if reps == 1 { "" } else { "s" },
        format_duration(horizon_s - warmup_s),
        format_duration(warmup_s)
    )
}

fn compare_answer(inp: &Inputs, st: &Study) -> String {
    let j = &st.json;
    let ranked = st.str("ranked_on");
    let def = find(Scope::Plant, ranked);
    let label = crate::render::table::with_currency(
        def.map_or(ranked, |d| d.label).to_string(),
        inp.plant.currency.as_deref(),
    );
    let baseline = st.str("baseline");
    let level = first_level(st);
    let layouts: Vec<String> = j["levels"][0]["layouts"]
        .as_array()
        .map(|a| a.iter().filter_map(|l| l["layout"].as_str().map(str::to_string)).collect())
        .unwrap_or_default();
    let mut means: Vec<(String, usize, f64)> = layouts
        .iter()
        .filter_map(|l| {
            let r = compare_row(st, &level, l, "plant", "", ranked)?;
            Some((l.clone(), r, st.csv.num(r, "mean")?))
        })
        .collect();
    let higher = def.is_some_and(|d| d.better == Better::Higher);
    means.sort_by(|a, b| if higher { b.2.total_cmp(&a.2) } else { a.2.total_cmp(&b.2) });
    let mut s = String::new();
    let Some((best, best_row, _)) = means.first().cloned() else {
        return "<p>The results hold no value of the ranking metric.</p>".to_string();
    };
    let best_e = estimate(st, best_row, "");
    let reps = st.f64("replications").unwrap_or(0.0) as u64;
    let word = if higher { "highest" } else { "lowest" };
    let base_row = compare_row(st, &level, baseline, "plant", "", ranked);
    let base_e = base_row.map(|r| estimate(st, r, ""));
    let at = if j["levels"].as_array().map_or(0, Vec::len) > 1 {
        format!(" at demand ×{}", esc(&level))
    } else {
        String::new()
    };
    if best == baseline {
        let _ = write!(
            s,
            "<p><strong>Keep {b}</strong>, the baseline: it has the {word} mean {label}{at}, <span class=\"num\">{v}</span>.",
            b = esc(&best),
            v = esc(&value_text(def, &best_e))
        );
        if let Some((o, r, _)) = means.get(1) {
            let d = estimate(st, *r, "difference");
            let sure = st.csv.get(*r, "difference_excludes_zero") == "true";
            let _ = write!(
                s,
                " The next, <strong>{}</strong>, is {} {}{}.",
                esc(o),
                esc(&magnitude(def, &d)),
                if d.mean < 0.0 { "lower" } else { "higher" },
                if sure {
                    ": a real difference (its 95% paired interval excludes zero)"
                } else {
                    ", within the noise of the replications (its 95% paired interval includes zero)"
                }
            );
        }
        s.push_str("</p>");
    } else {
        let d = estimate(st, best_row, "difference");
        let sure = st.csv.get(best_row, "difference_excludes_zero") == "true";
        let base_mean = base_e.map_or(f64::NAN, |e| e.mean);
        let pct = if base_mean.abs() > 0.0 { 100.0 * d.mean.abs() / base_mean.abs() } else { f64::NAN };
        let _ = write!(
            s,
            "<p>{lead}: its mean {label}{at} is <span class=\"num\">{v}</span>, {diff}{pct} {dir} \
             than <strong>{base}</strong>'s {bv}.",
            lead = if sure {
                format!("<strong>Move to {}</strong>", esc(&best))
            } else {
                format!("<strong>{}</strong> may be better, not yet shown to be", esc(&best))
            },
            v = esc(&value_text(def, &best_e)),
            diff = esc(&magnitude(def, &d)),
            pct = if pct.is_finite() { format!(" ({pct:.1}%)") } else { String::new() },
            dir = if d.mean < 0.0 { "lower" } else { "higher" },
            base = esc(baseline),
            bv = esc(
                &base_e.map_or("-".to_string(), |e| value_text(def, &Estimate { half_width: None, ..e }))
            )
        );
        if sure {
            let _ = write!(
                s,
                " The 95% paired interval of the difference excludes zero over {reps} replications: a real \
                 difference, not noise.</p>"
            );
        } else {
            let _ = write!(
                s,
                " <span class=\"amber\">But the 95% paired interval includes zero: with {reps} replications the two \
                 cannot be told apart on {label}</span>; run more replications before moving anything.</p>"
            );
        }
    }
    // A demand sweep: the same metric's differences at every other level, one line each.
    let levels: Vec<String> = {
        let mut v: Vec<String> = Vec::new();
        for r in 0..st.csv.rows.len() {
            let l = st.csv.get(r, "demand_factor");
            if !v.iter().any(|x| x == l) {
                v.push(l.to_string());
            }
        }
        v
    };
    if levels.len() > 1 {
        s.push_str("<ul>");
        for lv in &levels[1..] {
            let parts: Vec<String> = layouts
                .iter()
                .filter(|l| l.as_str() != baseline)
                .filter_map(|l| {
                    let r = compare_row(st, lv, l, "plant", "", ranked)?;
                    let d = estimate(st, r, "difference");
                    let sure = st.csv.get(r, "difference_excludes_zero") == "true";
                    Some(format!("{} {}", esc(l), esc(&difference_text(def, &d, sure, d.mean))))
                })
                .collect();
            let _ = write!(
                s,
                "<li>At demand ×{}: {label} against {}: {}.</li>",
                esc(lv),
                esc(baseline),
                parts.join("; ")
            );
        }
        s.push_str("</ul>");
    }
    if let Some(sel) = j["levels"][0].get("selection").filter(|v| !v.is_null()) {
        if let Some(chosen) = sel["layouts"].as_array().and_then(|a| a.iter().find(|l| l["selected"] == true))
        {
            let _ = write!(
                s,
                "<p>{} selected <strong>{}</strong> as the best with {:.0}% confidence (indifference zone {}).</p>",
                esc(sel["procedure"].as_str().unwrap_or("The selection procedure")),
                esc(chosen["layout"].as_str().unwrap_or("")),
                sel["confidence"].as_f64().unwrap_or(0.0) * 100.0,
                sel["indifference"].as_f64().map_or(String::new(), layflow_models::text::num)
            );
        }
    }
    if let Some(rank) = j["levels"][0]["ranking"].as_array() {
        let agree = rank.iter().all(|r| r["static_rank"] == r["simulated_rank"]);
        let _ = write!(
            s,
            "<p class=\"assumed\">{} Assumed: demand ×{}, {}; scenario {}. Safety is not assessed (see the \
             cautions at the end).</p>",
            if agree {
                "The simulation ranks the layouts as the static load-distance method does.".to_string()
            } else {
                "The simulation does not rank the layouts as the static load-distance method does: queues, \
                 empty trips and waits for movers change the order."
                    .to_string()
            },
            esc(&level),
            run_words(
                reps,
                st.f64("horizon_s").unwrap_or(0.0),
                st.f64("warmup_s").unwrap_or(0.0),
                j["seed"].as_u64().unwrap_or(0)
            ),
            esc(st.str("scenario"))
        );
    }
    s
}

fn shading_of(
    inp: &Inputs,
    st: &Study,
    layout_name: &str,
    row_ok: &dyn Fn(usize) -> bool,
) -> Option<Shading> {
    let plant = inp.plant;
    let layout = plant.layouts.iter().position(|l| l.name == layout_name)?;
    let nd = plant.departments.len();
    let mut sh = Shading {
        layout,
        utilization: vec![None; nd],
        queue: vec![None; nd],
        congestion: vec![0.0; plant.aisles.as_ref().map_or(0, |n| n.segments.len())],
    };
    for r in 0..st.csv.rows.len() {
        if !row_ok(r) || !st.csv.whole(r) {
            continue;
        }
        if st.csv.col("layout").is_some() && st.csv.get(r, "layout") != layout_name {
            continue;
        }
        let v = st.csv.num(r, "mean");
        match (st.csv.get(r, "scope"), st.csv.get(r, "metric")) {
            ("department", m @ ("utilization" | "queue_mean")) => {
                if let Some(d) = plant.departments.iter().position(|d| d.id == st.csv.get(r, "subject")) {
                    if m == "utilization" {
                        sh.utilization[d] = v;
                    } else {
                        sh.queue[d] = v;
                    }
                }
            }
            ("segment", "congestion_delay_s_per_h") => {
                let k =
                    st.csv.get(r, "subject").strip_prefix("segment-").and_then(|k| k.parse::<usize>().ok());
                if let (Some(k), Some(v)) = (k, v) {
                    if k < sh.congestion.len() {
                        sh.congestion[k] = v;
                    }
                }
            }
            _ => {}
        }
    }
    Some(sh)
}

fn plant_section(inp: &Inputs, shadings: &[Shading], what: &str) -> String {
    let pic = StaticPicture::new(inp.plant, inp.plant.demand_factor);
    format!(
        "<section id=\"plant\"><h2>The plant, layout by layout</h2><p class=\"note\">{}</p>{}</section>",
        esc(what),
        panels(inp.plant, &pic, shadings)
    )
}

fn compare_sections(inp: &Inputs, k: usize, st: &Study) -> String {
    let mut s = String::new();
    let level = first_level(st);
    let baseline = st.str("baseline").to_string();
    let layouts: Vec<String> = st.json["levels"][0]["layouts"]
        .as_array()
        .map(|a| a.iter().filter_map(|l| l["layout"].as_str().map(str::to_string)).collect())
        .unwrap_or_default();
    let shadings: Vec<Shading> = layouts
        .iter()
        .filter_map(|l| shading_of(inp, st, l, &|r| st.csv.get(r, "demand_factor") == level))
        .collect();
    if !plant_drawn_before(inp, k) {
        s.push_str(&plant_section(
        inp,
        &shadings,
        &format!(
            "All layouts are drawn to one scale. Each department is shaded by its simulated utilisation at demand ×{level} (hover for the mean queue); \
             flows are the from-to chart's loads per hour, coloured by the fleet that carries them."
        ),
    ));
    }

    // The chart: plant metrics with a better direction.
    let others: Vec<&String> = layouts.iter().filter(|l| **l != baseline).collect();
    let mut rows = Vec::new();
    for l in &others {
        for r in rows_where(st, |r| {
            st.csv.get(r, "demand_factor") == level
                && st.csv.get(r, "layout") == l.as_str()
                && st.csv.whole(r)
                && st.csv.get(r, "scope") == "plant"
        }) {
            let Some(def) = def_of_row(st, r) else { continue };
            if def.better == Better::Neither {
                continue;
            }
            let base =
                compare_row(st, &level, &baseline, "plant", "", def.name).and_then(|b| st.csv.num(b, "mean"));
            let d = estimate(st, r, "difference");
            let (Some(base), true) = (base, d.n > 0 && d.mean.is_finite()) else { continue };
            if base.abs() <= 0.0 {
                continue;
            }
            let hw = d.half_width.unwrap_or(0.0);
            let sure = st.csv.get(r, "difference_excludes_zero") == "true";
            let lower_better = def.better == Better::Lower;
            let verdict = match (sure, (d.mean < 0.0) == lower_better) {
                (false, _) => Verdict::Unclear,
                (true, true) => Verdict::Better,
                (true, false) => Verdict::Worse,
            };
            rows.push(DiffRow {
                label: crate::render::table::with_currency(
                    if others.len() > 1 { format!("{l}: {}", def.label) } else { def.label.to_string() },
                    inp.plant.currency.as_deref(),
                ),
                pct: 100.0 * d.mean / base.abs(),
                lo: 100.0 * (d.mean - hw) / base.abs(),
                hi: 100.0 * (d.mean + hw) / base.abs(),
                text: difference_text(Some(def), &d, sure, base),
                verdict,
            });
        }
    }
    let _ = write!(
        s,
        "<section id=\"comparison\"><h2>The comparison</h2><p class=\"note\">Each layout against \
         <strong>{b}</strong>, replication by replication under common random numbers (the same lots, times \
         and routings): the paired difference as a share of {b}'s mean, with its 95% interval. \
         <span class=\"better\">Teal</span>: better beyond noise; <span class=\"worse\">brick</span>: worse \
         beyond noise; grey: not told apart from zero.</p><div class=\"chart\">{chart}</div>",
        b = esc(&baseline),
        chart = charts::differences(&rows, &baseline)
    );
    // The table: every plant metric, then every other metric folded away.
    let table = |scope_plant: bool| -> String {
        let mut t = String::from("<div class=\"scroll\"><table class=\"metrics\"><thead><tr><th>metric</th>");
        for l in &layouts {
            let _ = write!(t, "<th>{}{}</th>", esc(l), if *l == baseline { " (baseline)" } else { "" });
        }
        for l in &others {
            let _ = write!(t, "<th>{} − {}</th>", esc(l), esc(&baseline));
        }
        t.push_str("</tr></thead><tbody>");
        let firsts = rows_where(st, |r| {
            st.csv.get(r, "demand_factor") == level
                && st.csv.get(r, "layout") == baseline
                && st.csv.whole(r)
                && (st.csv.get(r, "scope") == "plant") == scope_plant
        });
        for r0 in firsts {
            let (scope, subject, metric) =
                (st.csv.get(r0, "scope"), st.csv.get(r0, "subject"), st.csv.get(r0, "metric"));
            let def = def_of_row(st, r0);
            let label = crate::render::table::with_currency(row_label(st, r0), inp.plant.currency.as_deref());
            let _ = write!(t, "<tr><td>{}</td>", esc(&label));
            let mut rs = Vec::new();
            for l in &layouts {
                match compare_row(st, &level, l, scope, subject, metric) {
                    Some(r) => {
                        t.push_str(&num_td(k, st, r, "mean", &value_text(def, &estimate(st, r, ""))));
                        rs.push((l, r));
                    }
                    None => t.push_str("<td>-</td>"),
                }
            }
            let base_mean = st.csv.num(r0, "mean").unwrap_or(0.0);
            for (l, r) in rs.iter().filter(|(l, _)| **l != baseline) {
                let _ = l;
                let sure = st.csv.get(*r, "difference_excludes_zero") == "true";
                let text = difference_text(def, &estimate(st, *r, "difference"), sure, base_mean);
                t.push_str(&num_td(k, st, *r, "difference", &text));
            }
            t.push_str("</tr>");
        }
        t.push_str("</tbody></table></div>");
        t
    };
    let _ = write!(
        s,
        "{}<details><summary>Every product, department and fleet metric</summary>{}</details>\
         <p class=\"note\">* the 95% paired interval excludes zero. Demand ×{}. Levels of other demand are in \
         summary.csv.</p></section>",
        table(true),
        table(false),
        esc(&level)
    );
    s.push_str(&compare_buckets(k, st, &level, &layouts, &baseline));
    s
}

/// Results by hour (or shift, weekday …) of a comparison: the ranking metric and WIP per bucket, the peak marked.
fn compare_buckets(k: usize, st: &Study, level: &str, layouts: &[String], baseline: &str) -> String {
    if st.csv.col("bucket").is_none() {
        return String::new();
    }
    let by = st.json["levels"][0]["layouts"][0]["by_bucket"]["by"].as_str().unwrap_or("bucket").to_string();
    let buckets: Vec<String> = st.json["levels"][0]["layouts"][0]["by_bucket"]["buckets"]
        .as_array()
        .map(|a| a.iter().filter_map(|b| b["bucket"].as_str().map(str::to_string)).collect())
        .unwrap_or_default();
    let ranked = st.str("ranked_on").to_string();
    let mut s = format!(
        "<section id=\"over-time\"><h2>Over the {}</h2><p class=\"note\">Each bucket's mean over the replications \
         with its 95% band; the shaded column is the baseline's peak.</p>",
        esc(&by.replace('-', " "))
    );
    for metric in [ranked.as_str(), "wip_mean"] {
        let def = find(Scope::Plant, metric);
        let scale = match def.map(|d| d.unit) {
            Some(Unit::Seconds) => table_scale(st, level, metric),
            _ => (1.0, String::new()),
        };
        let mut series = Vec::new();
        let mut cells: Vec<Vec<Option<usize>>> = Vec::new();
        for l in layouts {
            let mut pts = Vec::new();
            let mut rs = Vec::new();
            for b in &buckets {
                let r = (0..st.csv.rows.len()).find(|&r| {
                    st.csv.get(r, "demand_factor") == level
                        && st.csv.get(r, "layout") == l.as_str()
                        && st.csv.get(r, "bucket") == b.as_str()
                        && st.csv.get(r, "scope") == "plant"
                        && st.csv.get(r, "metric") == metric
                });
                pts.push(r.and_then(|r| st.csv.num(r, "mean").map(|m| (m, st.csv.num(r, "half_width")))));
                rs.push(r);
            }
            series.push(Series { points: pts });
            cells.push(rs);
        }
        let peak_label = st.json["levels"][0]["layouts"][0]["by_bucket"]["peak"]
            [if metric == "wip_mean" { "wip_mean" } else { "move_wait_p95_s" }]["bucket"]
            .as_str();
        let peak = if metric == "wip_mean" {
            peak_label.and_then(|p| buckets.iter().position(|b| b == p))
        } else {
            None
        };
        let label = def.map_or(metric, |d| d.label);
        let axis = if scale.1.is_empty() { label.to_string() } else { format!("{label} ({})", scale.1) };
        let mut legend = String::from("<div class=\"legend\">");
        for (i, l) in layouts.iter().enumerate() {
            let _ = write!(
                legend,
                "<span><span class=\"key\" style=\"background:{}\"></span>{}</span>",
                crate::render::palette::rgb(charts::series_colour(i)),
                esc(l)
            );
        }
        legend.push_str("</div>");
        let _ = write!(
            s,
            "<h3>{}</h3><div class=\"chart\">{}</div>{legend}",
            esc(label),
            charts::line_chart(
                &buckets,
                &series,
                &Marks { column: peak.map(|p| (p, "peak")), ..Marks::default() },
                &axis,
                scale.0
            )
        );
        // The table behind the chart.
        let _ = write!(s, "<details><summary>{} by bucket, as a table</summary><div class=\"scroll\"><table><thead><tr><th>{}</th>", esc(label), esc(&by));
        for l in layouts {
            let _ = write!(s, "<th>{}</th>", esc(l));
        }
        s.push_str("</tr></thead><tbody>");
        for (bi, b) in buckets.iter().enumerate() {
            let _ =
                write!(s, "<tr{}><td>{}</td>", if Some(bi) == peak { " class=\"peak\"" } else { "" }, esc(b));
            for rs in &cells {
                s.push_str(&mean_td(k, st, rs[bi]));
            }
            s.push_str("</tr>");
        }
        s.push_str("</tbody></table></div></details>");
    }
    // Peak lines from summary.json.
    s.push_str("<ul>");
    for l in st.json["levels"][0]["layouts"].as_array().into_iter().flatten() {
        let p = &l["by_bucket"]["peak"];
        if p.is_null() {
            continue;
        }
        let _ = write!(
            s,
            "<li><strong>{}</strong>: peak WIP at {} ({:.2} lots against an off-peak level of {:.2}); {}</li>",
            esc(l["layout"].as_str().unwrap_or("")),
            esc(p["wip_mean"]["bucket"].as_str().unwrap_or("-")),
            p["wip_mean"]["mean"].as_f64().unwrap_or(f64::NAN),
            p["off_peak_wip_mean"].as_f64().unwrap_or(f64::NAN),
            esc(p["recovery_note"].as_str().map_or_else(
                || p["recovery_h"].as_f64().map_or(String::new(), |h| format!("back within 10% of it {h:.1} h later")),
                str::to_string
            )
            .as_str())
        );
    }
    let _ = baseline;
    s.push_str("</ul></section>");
    s
}

/// The unit a duration metric's column reads best in, from its whole-window means.
fn table_scale(st: &Study, level: &str, metric: &str) -> (f64, String) {
    let means = (0..st.csv.rows.len())
        .filter(|&r| st.csv.get(r, "demand_factor") == level && st.csv.get(r, "metric") == metric)
        .filter_map(|r| st.csv.num(r, "mean"));
    let (u, s) = crate::render::table::unit_for(means);
    (s, u.to_string())
}

fn fleet_answer(st: &Study) -> String {
    let j = &st.json;
    let fleet = st.str("fleet");
    let targets: Vec<String> = j["targets"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|t| t["text"].as_str().map(str::to_string))
        .collect();
    let mut s = String::new();
    match j["smallest_meeting_targets"].as_u64() {
        Some(n) => {
            let cost = (0..st.csv.rows.len()).find(|&r| {
                st.csv.get(r, "movers") == n.to_string()
                    && st.csv.whole(r)
                    && st.csv.get(r, "metric") == "handling_cost_per_h"
            });
            let _ = write!(
                s,
                "<p><strong>{n} {fleet}</strong> is the smallest size tried that meets every target ({}) with 95% \
                 confidence{}.</p>",
                esc(&targets.join("; ")),
                cost.map_or(String::new(), |r| format!(
                    ", at a handling cost of {}{} per hour",
                    esc(&value_text(def_of_row(st, r), &estimate(st, r, ""))),
                    // The fleet's JSON names the scenario's currency, when it has one.
                    match st.str("currency") {
                        "" => String::new(),
                        c => format!(" {}", esc(c)),
                    }
                )),
                fleet = esc(fleet)
            );
        }
        None if targets.is_empty() => {
            let _ = write!(
                s,
                "<p>No target was given, so no size is recommended: the chart and table show what each size of \
                 <strong>{}</strong> gives.</p>",
                esc(fleet)
            );
        }
        None => {
            let kind = j["advice"]["kind"].as_str().unwrap_or("");
            let what = match kind {
                "size_cannot_meet" => {
                    "<strong>Do not buy more movers for this</strong>: the wait cannot fall below \
                                       the drive to the pick-up, whatever the fleet size."
                }
                "not_improving_with_size" => {
                    "Larger sizes are unlikely to help: the failing metrics did not improve \
                                              between the two largest sizes."
                }
                "try_larger_sizes" => {
                    "The failing metrics were still improving at the largest size: try larger sizes."
                }
                "more_replications" | "within_noise" => {
                    "The verdicts are within the noise: add replications."
                }
                "add_sizes" => "Only one size was simulated: add sizes to see whether more movers help.",
                _ => "",
            };
            let _ = write!(
                s,
                "<p>No size of <strong>{}</strong> tried meets every target ({}). {what}</p>",
                esc(fleet),
                esc(&targets.join("; "))
            );
            let levers: Vec<String> = j["advice"]["levers"]
                .as_array()
                .into_iter()
                .flatten()
                .filter_map(|l| l.as_str().map(esc))
                .collect();
            if !levers.is_empty() {
                let _ = write!(s, "<ul><li>{}</li></ul>", levers.join("</li><li>"));
            }
        }
    }
    let _ = write!(
        s,
        "<p class=\"assumed\">Assumed: layout {}, demand ×{}, {}; scenario {}. Safety is not assessed (see the \
         cautions at the end).</p>",
        esc(st.str("layout")),
        st.f64("demand_factor").map_or("-".into(), |f| f.to_string()),
        run_words(
            st.f64("replications").unwrap_or(0.0) as u64,
            st.f64("horizon_s").unwrap_or(0.0),
            st.f64("warmup_s").unwrap_or(0.0),
            j["seed"].as_u64().unwrap_or(0)
        ),
        esc(st.str("scenario"))
    );
    s
}

fn fleet_sections(inp: &Inputs, k: usize, st: &Study) -> String {
    let mut s = String::new();
    let layout = st.str("layout").to_string();
    let first_size = st.csv.rows.first().map(|_| st.csv.get(0, "movers").to_string()).unwrap_or_default();
    let shade: Vec<Shading> =
        shading_of(inp, st, &layout, &|r| st.csv.get(r, "movers") == first_size).into_iter().collect();
    if inp.studies.iter().all(|x| x.kind != Kind::Compare) {
        s.push_str(&plant_section(
            inp,
            &shade,
            "The layout the fleet was sized for; flows are the from-to chart's loads per hour, coloured by the fleet \
             that carries them.",
        ));
    }
    let fleet = st.str("fleet").to_string();
    let sizes: Vec<String> = st.json["sizes"]
        .as_array()
        .map(|a| a.iter().filter_map(|x| x["movers"].as_u64().map(|n| n.to_string())).collect())
        .unwrap_or_default();
    let recommended = st.json["smallest_meeting_targets"].as_u64().map(|n| n.to_string());
    let metrics = [
        "utilization",
        "move_wait_s",
        "move_wait_p95_s",
        "handling_cost_per_h",
        "throughput_per_h",
        "flow_time_s",
    ];
    let row = |size: &str, metric: &str| {
        (0..st.csv.rows.len()).find(|&r| {
            st.csv.get(r, "movers") == size && st.csv.whole(r) && st.csv.get(r, "metric") == metric
        })
    };
    // Wait and utilisation against size, the targets and the recommended size marked.
    let points = |metric: &str| -> Series {
        Series {
            points: sizes
                .iter()
                .map(|z| {
                    row(z, metric)
                        .and_then(|r| st.csv.num(r, "mean").map(|m| (m, st.csv.num(r, "half_width"))))
                })
                .collect(),
        }
    };
    let target_of = |metric: &str| -> Option<(f64, String)> {
        st.json["targets"]
            .as_array()
            .into_iter()
            .flatten()
            .find_map(|t| {
                let name = t["name"].as_str()?;
                (name.rsplit('/').next() == Some(metric)).then(|| (t["value"].as_f64(), t["text"].as_str()))
            })
            .and_then(|(v, text)| Some((v?, format!("target: {}", text?))))
    };
    let labels: Vec<String> = sizes.clone();
    let column =
        recommended.as_ref().and_then(|r| sizes.iter().position(|z| z == r)).map(|p| (p, "recommended"));
    let wait = points("move_wait_p95_s");
    let (unit, unit_s) = crate::render::table::unit_for(wait.points.iter().flatten().map(|p| p.0));
    let util = points("utilization");
    let wait_marks = Marks { column, target: target_of("move_wait_p95_s"), log: true };
    let util_marks = Marks { column, target: target_of("utilization"), log: false };
    let chart = format!(
        "<div class=\"panels\"><div class=\"chart\"><h3>wait for a mover, p95, by fleet size (log scale)</h3>{}</div>\
         <div class=\"chart\"><h3>fleet utilisation by fleet size</h3>{}</div></div>",
        charts::line_chart(&labels, &[wait], &wait_marks, &format!("wait p95 ({unit})"), unit_s),
        charts::line_chart(&labels, &[util], &util_marks, "utilisation (share of time)", 1.0)
    );
    let targets: Vec<String> = st.json["targets"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|t| t["text"].as_str().map(esc))
        .collect();
    let _ = write!(
        s,
        "<section id=\"fleet\"><h2>Fleet size: {f}</h2><p class=\"note\">Each size simulated with the same \
         replications (common random numbers). The shaded column is the recommended size{t}.</p>{chart}",
        f = esc(&fleet),
        t = if targets.is_empty() { String::new() } else { format!("; targets: {}", targets.join("; ")) }
    );
    let _ = write!(
        s,
        "<div class=\"scroll\"><table class=\"fleet\"><thead><tr><th>{} (movers)</th>",
        esc(&fleet)
    );
    for m in metrics {
        let scope = if find(Scope::Fleet, m).is_some() { Scope::Fleet } else { Scope::Plant };
        let label = find(scope, m).map_or(m.to_string(), |d| d.label.to_string());
        let label = crate::render::table::with_currency(label, inp.plant.currency.as_deref());
        let _ = write!(s, "<th>{}</th>", esc(&label));
    }
    s.push_str("<th>meets every target</th></tr></thead><tbody>");
    for z in &sizes {
        let _ = write!(
            s,
            "<tr{}><td>{}</td>",
            if Some(z) == recommended.as_ref() { " class=\"best peak\"" } else { "" },
            esc(z)
        );
        let mut meets = "";
        for m in metrics {
            match row(z, m) {
                Some(r) => {
                    meets = if st.csv.get(r, "meets_every_target") == "true" { "yes" } else { "no" };
                    s.push_str(&mean_td(k, st, Some(r)));
                }
                None => s.push_str("<td>-</td>"),
            }
        }
        let _ = write!(s, "<td>{meets}</td></tr>");
    }
    s.push_str("</tbody></table></div></section>");
    s.push_str(&fleet_buckets(k, st, &sizes, &fleet));
    s
}

/// With `--by`: the sized fleet's wait p95 per time bucket, one line per size.
fn fleet_buckets(k: usize, st: &Study, sizes: &[String], fleet: &str) -> String {
    if st.csv.col("bucket").is_none() {
        return String::new();
    }
    let by = st.json["by_bucket"]["by"].as_str().unwrap_or("bucket").replace('-', " ");
    let buckets: Vec<String> = st.json["by_bucket"]["buckets"]
        .as_array()
        .map(|a| a.iter().filter_map(|b| b["bucket"].as_str().map(str::to_string)).collect())
        .unwrap_or_default();
    let metric = "move_wait_p95_s";
    let target = st.json["targets"].as_array().into_iter().flatten().find_map(|t| {
        (t["name"].as_str()?.rsplit('/').next() == Some(metric))
            .then(|| Some((t["value"].as_f64()?, format!("target: {}", t["text"].as_str()?))))
            .flatten()
    });
    let row = |z: &str, b: &str| {
        (0..st.csv.rows.len()).find(|&r| {
            st.csv.get(r, "movers") == z
                && st.csv.get(r, "bucket") == b
                && st.csv.get(r, "scope") == "fleet"
                && st.csv.get(r, "metric") == metric
        })
    };
    let mut series = Vec::new();
    for z in sizes {
        series.push(Series {
            points: buckets
                .iter()
                .map(|b| {
                    row(z, b).and_then(|r| st.csv.num(r, "mean").map(|m| (m, st.csv.num(r, "half_width"))))
                })
                .collect(),
        });
    }
    let (unit, unit_s) =
        crate::render::table::unit_for(series.iter().flat_map(|x| x.points.iter().flatten().map(|p| p.0)));
    let mut legend = String::from("<div class=\"legend\">");
    for (i, z) in sizes.iter().enumerate() {
        let _ = write!(
            legend,
            "<span><span class=\"key\" style=\"background:{}\"></span>size {} ({})</span>",
            crate::render::palette::rgb(charts::series_colour(i)),
            esc(z),
            esc(fleet)
        );
    }
    legend.push_str("</div>");
    let mut s = format!(
        "<section id=\"over-time\"><h2>Wait for a mover over the {by}</h2><p class=\"note\">The {fleet}' wait \
         p95 in each bucket, each size with its 95% band (log scale): a size that meets a target over the whole \
         window can miss it in the peak hour.</p><div class=\"chart\">{}</div>{legend}",
        charts::line_chart(&buckets, &series, &Marks { log: true, target, ..Marks::default() }, &format!("wait p95 ({unit})"), unit_s),
        by = esc(&by),
        fleet = esc(fleet)
    );
    let _ = write!(
        s,
        "<details><summary>as a table</summary><div class=\"scroll\"><table><thead><tr><th>{}</th>",
        esc(&by)
    );
    for z in sizes {
        let _ = write!(s, "<th>{} {}</th>", esc(z), esc(fleet));
    }
    s.push_str("</tr></thead><tbody>");
    for b in &buckets {
        let _ = write!(s, "<tr><td>{}</td>", esc(b));
        for z in sizes {
            s.push_str(&mean_td(k, st, row(z, b)));
        }
        s.push_str("</tr>");
    }
    s.push_str("</tbody></table></div></details></section>");
    s
}

fn experiment_answer(st: &Study) -> String {
    let metric = "flow_time_s";
    let def = find(Scope::Plant, metric);
    let factors: Vec<String> = st.json["factors"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|f| f.as_str().map(str::to_string))
        .collect();
    let best = (0..st.csv.rows.len())
        .filter(|&r| {
            st.csv.get(r, "scope") == "plant" && st.csv.get(r, "metric") == metric && st.csv.whole(r)
        })
        .filter_map(|r| st.csv.num(r, "mean").map(|m| (r, m)))
        .min_by(|a, b| a.1.total_cmp(&b.1));
    let points = st.json["points"].as_array().map_or(0, Vec::len);
    let mut s = String::new();
    match best {
        Some((r, _)) => {
            let levels: Vec<String> = factors.iter().map(|f| format!("{f} = {}", st.csv.get(r, f))).collect();
            let _ = write!(
                s,
                "<p>Of {points} design points, <strong>point {}</strong> ({}) has the lowest mean flow time: \
                 <span class=\"num\">{}</span>.</p><p class=\"assumed\">Points are compared here by their own \
                 intervals; where two intervals overlap, compare the layouts with <code>layflow compare</code> \
                 (paired differences) before deciding. Safety is not assessed (see the cautions at the end).</p>",
                esc(st.csv.get(r, "point")),
                esc(&levels.join(", ")),
                esc(&value_text(def, &estimate(st, r, "")))
            );
        }
        None => s.push_str("<p>The experiment's summary holds no flow time.</p>"),
    }
    s
}

fn experiment_sections(inp: &Inputs, k: usize, st: &Study) -> String {
    let factors: Vec<String> = st.json["factors"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|f| f.as_str().map(str::to_string))
        .collect();
    let mut s = String::new();
    if factors.iter().any(|f| f == "layout") && !plant_drawn_before(inp, k) {
        let mut seen: Vec<String> = Vec::new();
        let mut shadings = Vec::new();
        for r in 0..st.csv.rows.len() {
            let l = st.csv.get(r, "layout").to_string();
            if seen.contains(&l) {
                continue;
            }
            let point = st.csv.get(r, "point").to_string();
            if let Some(sh) = shading_of_point(inp, st, &l, &point) {
                shadings.push(sh);
            }
            seen.push(l);
        }
        s.push_str(&plant_section(
            inp,
            &shadings,
            "Each layout shaded by its simulated utilisation at the first design point that has it.",
        ));
    }
    let metrics = ["throughput_per_h", "flow_time_s", "wip_mean", "move_wait_s", "handling_cost_per_h"];
    let _ = write!(
        s,
        "<section id=\"experiment\"><h2>Design points</h2><div class=\"scroll\"><table><thead><tr><th>point</th>"
    );
    for f in &factors {
        let _ = write!(s, "<th>{}</th>", esc(f));
    }
    for m in metrics {
        let label = find(Scope::Plant, m).map_or(m.to_string(), |d| d.label.to_string());
        let label = crate::render::table::with_currency(label, inp.plant.currency.as_deref());
        let _ = write!(s, "<th>{}</th>", esc(&label));
    }
    s.push_str("</tr></thead><tbody>");
    let mut points: Vec<String> = Vec::new();
    for r in 0..st.csv.rows.len() {
        let p = st.csv.get(r, "point").to_string();
        if !points.contains(&p) {
            points.push(p);
        }
    }
    for p in &points {
        let first = (0..st.csv.rows.len()).find(|&r| st.csv.get(r, "point") == p.as_str()).expect("a row");
        let _ = write!(s, "<tr><td>{}</td>", esc(p));
        for f in &factors {
            let _ = write!(s, "<td>{}</td>", esc(st.csv.get(first, f)));
        }
        for m in metrics {
            let r = (0..st.csv.rows.len()).find(|&r| {
                st.csv.get(r, "point") == p.as_str()
                    && st.csv.get(r, "scope") == "plant"
                    && st.csv.get(r, "metric") == m
            });
            s.push_str(&mean_td(k, st, r));
        }
        s.push_str("</tr>");
    }
    s.push_str("</tbody></table></div><p class=\"note\">Every metric of every point is in summary.csv; results by time bucket, where the plan has <code>by:</code>, in by_bucket.csv.</p></section>");
    s
}

fn shading_of_point(inp: &Inputs, st: &Study, layout: &str, point: &str) -> Option<Shading> {
    let mut sh = shading_of(inp, st, layout, &|r| st.csv.get(r, "point") == point)?;
    // shading_of filters by a `layout` column: the experiment's factor column has that name too.
    sh.layout = inp.plant.layouts.iter().position(|l| l.name == layout)?;
    Some(sh)
}

/// One study's run settings, for the assumptions.
struct Facts {
    source: String,
    kind: Kind,
    lines: Vec<(String, String)>,
}

fn study_facts(st: &Study) -> Facts {
    let mut lines = Vec::new();
    let j = &st.json;
    let mut push = |k: &str, v: String| lines.push((k.to_string(), v));
    match st.kind {
        Kind::Compare | Kind::Fleet => {
            let h = st.f64("horizon_s").unwrap_or(0.0);
            let w = st.f64("warmup_s").unwrap_or(0.0);
            push("horizon", format!("{} per replication, warm-up included", format_duration(h)));
            push(
                "warm-up",
                format!(
                    "{}{}",
                    format_duration(w),
                    if j.get("warmup_auto").is_some_and(|v| !v.is_null()) {
                        " (chosen by MSER-5 pilots)"
                    } else {
                        ""
                    }
                ),
            );
            push("replications", format!("{}", j["replications"].as_u64().unwrap_or(0)));
            push("seed", format!("{}", j["seed"].as_u64().unwrap_or(0)));
            if st.kind == Kind::Compare {
                let levels: Vec<String> = j["levels"]
                    .as_array()
                    .into_iter()
                    .flatten()
                    .filter_map(|l| l["demand_factor"].as_f64().map(|f| f.to_string()))
                    .collect();
                push("demand", format!("×{}", levels.join(", ×")));
                push("baseline", st.str("baseline").to_string());
                push("common random numbers", "yes: replication i of every layout sees the same lots".into());
            } else {
                push("demand", format!("×{}", st.f64("demand_factor").map_or("-".into(), |f| f.to_string())));
                push("fleet, layout", format!("{}, {}", st.str("fleet"), st.str("layout")));
            }
        }
        Kind::Experiment => {
            if let Some(e) = &st.experiment {
                push(
                    "horizon",
                    format!("{} (design point 1), warm-up included", format_duration(e.horizon_s)),
                );
                push("warm-up", format_duration(e.warmup_s));
                push("replications", e.replications.to_string());
                push("seed", e.seed.to_string());
                push("layflow version of the units", e.version.clone());
            }
            push("plan", j["plan_hash"].as_str().unwrap_or("").chars().take(16).collect());
        }
    }
    push("confidence", "95% (Student t over replications)".into());
    Facts { source: st.source.clone(), kind: st.kind, lines }
}

fn assumptions(inp: &Inputs, facts: &[Facts]) -> String {
    let mut s = format!(
        "<section id=\"assumptions\"><h2>What was assumed</h2><dl class=\"facts\"><dt>scenario</dt><dd>{} — {}</dd>\
         <dt>scenario SHA-256</dt><dd><code>{}</code></dd><dt>layflow version</dt><dd>{}</dd>{}</dl>",
        esc(&inp.plant.name),
        esc(&inp.scenario),
        esc(&inp.scenario_sha256),
        env!("CARGO_PKG_VERSION"),
        inp.plant.currency.as_deref().map_or(String::new(), |c| format!(
            "<dt>currency</dt><dd>{} (every cost on this page)</dd>",
            esc(c)
        ))
    );
    for f in facts {
        let _ = write!(
            s,
            "<h3>{} ({})</h3><dl class=\"facts\">",
            match f.kind {
                Kind::Compare => "Layout comparison",
                Kind::Fleet => "Fleet sizing",
                Kind::Experiment => "Experiment",
            },
            esc(&f.source)
        );
        for (k, v) in &f.lines {
            let _ = write!(s, "<dt>{}</dt><dd>{}</dd>", esc(k), esc(v));
        }
        s.push_str("</dl>");
    }
    s.push_str("<h3>Cautions</h3><ul class=\"cautions\">");
    for c in CAUTIONS {
        let _ = write!(s, "<li>{}</li>", esc(c));
    }
    s.push_str("</ul></section>");
    s
}
