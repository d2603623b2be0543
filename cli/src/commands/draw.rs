//! `layflow draw`: one layout of the plant as an SVG picture (see `render/plant.rs` for what is drawn).

use std::path::PathBuf;

use clap::Args;
use layflow_models::analysis::StaticPicture;
use layflow_models::results::segments::read_segments;
use layflow_models::results::write_atomic;

use crate::failure::Failure;
use crate::output::note;
use crate::render::plant::{picture, FlowStyle};
use crate::settings::{demand_factor, layout, load};

/// Arguments of `layflow draw`.
#[derive(Args, Debug)]
pub struct DrawArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// The layout to draw (default: the first).
    #[arg(long, value_name = "NAME")]
    pub layout: Option<String>,
    /// A results folder (`compare --out`, or an experiment's folder): the
    /// aisles are coloured by the simulated congestion delay per segment (or
    /// by simulated traffic where nobody waited) from its summary.csv.
    #[arg(long, value_name = "DIR")]
    pub results: Option<PathBuf>,
    /// Scale every product's demand by this factor (overrides the scenario's demand_factor).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    /// How to draw the flows: curves from department to department, or along
    /// the aisles they use (the aisle network's shortest paths).
    #[arg(long, value_enum, default_value_t = FlowStyle::Curve)]
    pub flows: FlowStyle,
    /// The SVG file to write.
    #[arg(short = 'o', long = "out", value_name = "FILE.svg")]
    pub out: PathBuf,
    /// Replace the -o file if it exists (without it, an existing file is refused, never overwritten).
    #[arg(long)]
    pub force: bool,
}

/// Draw `args.layout` of `args.scenario` to `args.out`.
pub fn draw(args: &DrawArgs) -> Result<(), Failure> {
    layflow_models::results::folder::check_new_file(&args.out, "-o", args.force)?;
    let plant = load(&args.scenario)?;
    let layout = match &args.layout {
        None => 0,
        Some(name) => layout(&plant, name)?,
    };
    let factor = demand_factor(&plant, args.demand)?;
    if args.flows == FlowStyle::Aisle && plant.aisles.is_none() {
        return Err(Failure::input(format!(
            "--flows aisle: {} has no aisle network to draw the flows along; describe one under `aisles:` \
             (see docs/aisles.md) or leave out --flows",
            args.scenario.display()
        )));
    }
    let sim = match &args.results {
        Some(dir) => {
            if !dir.is_dir() {
                return Err(Failure::input(format!("--results {}: not a directory", dir.display())));
            }
            let text = std::fs::read(&args.scenario)
                .map_err(|e| Failure::input(format!("cannot read {}: {e}", args.scenario.display())))?;
            let sim =
                read_segments(dir, &plant, layout, &layflow_models::results::folder::sha256_hex(&text))?;
            if sim.is_none() {
                note!(
                    "note: --results {}: no per-segment results there. They come from the segment-by-segment \
                     simulation, which runs when the scenario's aisles have a capacity, a speed limit or a zone; \
                     the aisles are coloured by static traffic (the from-to chart over the shortest paths) instead.",
                    dir.display()
                );
            }
            sim
        }
        None => None,
    };
    let pic = StaticPicture::new(&plant, factor);
    let doc = picture(&plant, layout, &pic, &args.scenario, sim.as_ref(), args.flows);
    let dir = match args.out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = args
        .out
        .file_name()
        .ok_or_else(|| Failure::input(format!("-o {}: not a file name", args.out.display())))?
        .to_string_lossy()
        .into_owned();
    if !dir.is_dir() {
        return Err(Failure::input(format!(
            "-o {}: the folder {} does not exist",
            args.out.display(),
            dir.display()
        )));
    }
    write_atomic(&dir, &name, doc.to_string().as_bytes())?;
    note!("wrote {}", args.out.display());
    Ok(())
}
