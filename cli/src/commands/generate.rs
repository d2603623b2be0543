//! `layflow generate`: write a synthetic plant of real size (a scenario file) for trials and benchmarks.

use std::path::PathBuf;

use clap::Args;
use layflow_models::generate::{scenario, tables, Spec};
use layflow_models::results::folder::check_new_file;
use layflow_models::results::write_atomic;

use crate::failure::Failure;
use crate::output::note;

/// Arguments of `layflow generate`.
#[derive(Args, Debug)]
pub struct GenerateArgs {
    /// Work departments (the two docks come on top).
    #[arg(long, default_value_t = 80)]
    pub departments: usize,
    /// Products (part numbers).
    #[arg(long, default_value_t = 1000)]
    pub products: usize,
    /// Fewest operations per product.
    #[arg(long, default_value_t = 4)]
    pub min_operations: usize,
    /// Most operations per product.
    #[arg(long, default_value_t = 12)]
    pub max_operations: usize,
    /// Fleets, 1 to 4 (forklifts, tow carts, walkers, reach trucks).
    #[arg(long, default_value_t = 4)]
    pub fleets: usize,
    /// Lots released per hour, all products together.
    #[arg(long, default_value_t = 60.0)]
    pub lots_per_hour: f64,
    /// Seed of the generator (the same seed gives the same plant).
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Write the plant as tables (locations, departments, layouts, products,
    /// demand, routings as CSV) with a `plant.yaml` that names them: -o is then a folder.
    #[arg(long)]
    pub tables: bool,
    /// The scenario file to write (with --tables, the folder).
    #[arg(short = 'o', long = "out", value_name = "FILE.yaml|DIR")]
    pub out: PathBuf,
    /// Replace the -o file if it exists.
    #[arg(long)]
    pub force: bool,
}

/// Write the generated scenario.
pub fn generate(args: &GenerateArgs) -> Result<(), Failure> {
    let bad = |what: &str| {
        Failure::input(format!(
            "{what}; e.g. layflow generate --departments 80 --products 1000 -o plant.yaml"
        ))
    };
    if !(2..=5_000).contains(&args.departments) {
        return Err(bad("--departments must be 2 to 5,000"));
    }
    if !(1..=100_000).contains(&args.products) {
        return Err(bad("--products must be 1 to 100,000"));
    }
    if args.min_operations == 0 || args.max_operations < args.min_operations || args.max_operations > 200 {
        return Err(bad(
            "--min-operations must be at least 1, and --max-operations at least that and at most 200",
        ));
    }
    if !(1..=4).contains(&args.fleets) {
        return Err(bad("--fleets must be 1 to 4"));
    }
    if !(args.lots_per_hour > 0.0 && args.lots_per_hour <= 100_000.0) {
        return Err(bad("--lots-per-hour must be above 0 and at most 100,000"));
    }
    let spec = Spec {
        departments: args.departments,
        products: args.products,
        min_operations: args.min_operations,
        max_operations: args.max_operations,
        fleets: args.fleets,
        lots_per_hour: args.lots_per_hour,
        utilization: 0.75,
        seed: args.seed,
    };
    if args.tables {
        std::fs::create_dir_all(&args.out).map_err(|e| {
            Failure::input(format!("-o {}: cannot create the folder: {e}", args.out.display()))
        })?;
        let files = tables(&spec);
        for (name, _) in &files {
            check_new_file(&args.out.join(name), "-o", args.force)?;
        }
        let mut bytes = 0;
        for (name, text) in &files {
            write_atomic(&args.out, name, text.as_bytes())?;
            bytes += text.len();
        }
        note!(
            "wrote {} and its tables in {} ({} departments, {} products, {} KB)",
            args.out.join("plant.yaml").display(),
            args.out.display(),
            args.departments,
            args.products,
            bytes / 1024
        );
        return Ok(());
    }
    check_new_file(&args.out, "-o", args.force)?;
    let text = scenario(&spec);
    let dir = args.out.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(std::path::Path::new("."));
    let name =
        args.out.file_name().and_then(|n| n.to_str()).ok_or_else(|| Failure::input("-o: bad file name"))?;
    write_atomic(dir, name, text.as_bytes())?;
    note!(
        "wrote {} ({} departments, {} products, {} KB)",
        args.out.display(),
        args.departments,
        args.products,
        text.len() / 1024
    );
    Ok(())
}
