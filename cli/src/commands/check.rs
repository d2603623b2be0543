//! `layflow check`: validate a scenario and print its static picture.

use std::path::PathBuf;

use clap::Args;
use layflow_models::analysis::StaticPicture;

use crate::failure::Failure;
use crate::output::out;
use crate::render::check::{render, to_json};
use crate::render::warnings::warn_overload;
use crate::settings::{demand_factor, load, Format};

/// Arguments of `layflow check`.
#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Scale every product's demand by this factor (overrides the scenario's demand_factor).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
}

/// Validate `args.scenario` and print its static picture.
pub fn check(args: &CheckArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    let factor = demand_factor(&plant, args.demand)?;
    let pic = StaticPicture::new(&plant, factor);
    match args.format {
        Format::Table => out(&render(&plant, &args.scenario, &pic))?,
        Format::Json => out(&(serde_json::to_string_pretty(&to_json(&plant, &pic)).expect("JSON") + "\n"))?,
    }
    warn_overload(&plant, &pic);
    for m in layflow_models::areas::misfits(&plant) {
        crate::output::note!("WARNING: {m}");
    }
    Ok(())
}
