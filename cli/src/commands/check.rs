//! `layflow check`: validate a scenario and print its static picture.

use std::path::{Path, PathBuf};

use clap::Args;
use layflow_models::analysis::StaticPicture;
use layflow_models::measured::MeasuredChart;
use layflow_models::plant::Plant;

use crate::failure::Failure;
use crate::output::{note, out};
use crate::render::check::{render, to_json};
use crate::render::warnings::warn_overload;
use crate::settings::{demand_factor, duration_arg, load, Format};

/// Arguments of `layflow check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Scale every product's demand by this factor (overrides the scenario's demand_factor).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    #[command(flatten)]
    pub from_to: FromToArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

/// `--from-to FILE.csv --from-to-per DURATION`: a measured from-to chart in place of the routings'
/// (`check` and `search`; the static method only).
#[derive(Args, Debug, Clone, Default)]
pub struct FromToArgs {
    /// A measured from-to chart (CSV matrix: first row the departments loads go to, first column the
    /// departments they come from, cells the loads counted over --from-to-per) used in place of the
    /// chart the routings give, for the load-distance and the search. `run` and `compare` still
    /// simulate the routings.
    #[arg(long, value_name = "FILE.csv", requires = "from_to_per")]
    pub from_to: Option<PathBuf>,
    /// The period the --from-to chart's loads were counted over, e.g. "8 h" (a shift), "1 h", "5 d".
    #[arg(long, value_name = "DURATION", requires = "from_to")]
    pub from_to_per: Option<String>,
}

impl FromToArgs {
    /// The measured chart, read and checked against the plant's departments: from
    /// `--from-to`, else from the scenario's `measured_from_to` (the flags override
    /// it, and say so); `None` with neither.
    pub fn read(&self, plant: &Plant, scenario: &Path) -> Result<Option<MeasuredChart>, Failure> {
        let named = layflow_models::measured_source(scenario);
        let Some(file) = &self.from_to else {
            let Some(src) = named else { return Ok(None) };
            let line = src.line.map_or(String::new(), |l| format!(" at line {l}"));
            return MeasuredChart::read(&src.path, plant, src.per_s).map(Some).map_err(|e| {
                Failure::input(format!(
                    "{e}\n  (the chart `measured_from_to`{line} of {} names; its file is relative to the scenario)",
                    scenario.display()
                ))
            });
        };
        if let Some(src) = named {
            note!(
                "note: --from-to {} overrides the scenario's measured_from_to ({})",
                file.display(),
                src.path.display()
            );
        }
        let per_s = duration_arg("--from-to-per", &self.from_to_per, 0.0)?;
        if per_s <= 0.0 {
            return Err(Failure::input(
                "--from-to-per must be longer than 0: the period the chart's loads were counted over, e.g. \"8 h\"",
            ));
        }
        MeasuredChart::read(file, plant, per_s).map(Some).map_err(Failure::input)
    }
}

/// Validate `args.scenario` and print its static picture.
pub fn check(args: &CheckArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    let factor = demand_factor(&plant, args.demand)?;
    let measured = args.from_to.read(&plant, &args.scenario)?;
    let mut pic = StaticPicture::new(&plant, factor);
    if let Some(m) = &measured {
        pic = m.apply(&plant, pic);
    }
    match args.format {
        Format::Table => out(&render(&plant, &args.scenario, &pic, measured.as_ref()))?,
        Format::Json => out(&(serde_json::to_string_pretty(&to_json(&plant, &pic, measured.as_ref()))
            .expect("JSON")
            + "\n"))?,
    }
    warn_overload(&plant, &pic);
    for m in layflow_models::areas::misfits(&plant) {
        crate::output::note!("WARNING: {m}");
    }
    Ok(())
}
