//! Traces: one replication's lots, visits, moves and lane states written as tidy CSV files while it runs.
//!
//! [`TraceSink`] holds the five files of one trace folder (every traced
//! replication of one layout goes into the same files, told apart by the
//! `replication` column); [`super::simulate_traced`] runs one replication with the
//! tracer switched on. Rows are streamed through buffered writers as they are
//! decided, never held in memory, so they come in decision order: a row
//! decided ahead (a load's travel, scheduled at its pick-up) can come before
//! rows with earlier times. The columns are documented in docs/traces.md.

use std::fmt;
use std::fs::File;
use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

use super::Plan;
use crate::plant::Plant;

/// The file names of a trace folder, in [`TraceSink`] order.
pub const TRACE_FILES: [&str; 5] =
    ["lots.csv", "visits.csv", "moves.csv", "mover_states.csv", "machine_states.csv"];

/// The header line of each file, in [`TRACE_FILES`] order.
const HEADERS: [&str; 5] = [
    "replication,lot,product,released,shipped,flow_time_s",
    "replication,lot,product,step,department,arrival,start,end,waiting,blocked",
    "replication,lot,fleet,mover,requested,assigned,picked_up,delivered,from,to,loaded_m,empty_m,congestion_s",
    "replication,fleet,mover,time,state",
    "replication,department,machine,time,state",
];

/// Which rows a trace keeps, and the names its rows use.
#[derive(Debug, Clone)]
pub struct TraceOptions {
    /// Simulated seconds [from, to]: a row is written when its interval (a
    /// lot's stay, a visit, a move) overlaps this window, or its state
    /// change falls in it; each lane also gets a row at `from` with its state then.
    pub window: (f64, f64),
    /// Department ids, by index, as CSV fields (quoted where they need it),
    /// then each department's overflow area as `<id> overflow`, by
    /// department index + the number of departments (the plan's numbering).
    pub departments: Vec<String>,
    /// Product ids, by index, as CSV fields.
    pub products: Vec<String>,
    /// Each product's step names, by routing index, as CSV fields.
    pub steps: Vec<Vec<String>>,
    /// Fleet ids, by index, as CSV fields.
    pub fleets: Vec<String>,
}

impl TraceOptions {
    /// The names of `plant` (as CSV fields), and the window `window` (s).
    pub fn new(plant: &Plant, window: (f64, f64)) -> TraceOptions {
        TraceOptions {
            window,
            departments: plant
                .departments
                .iter()
                .map(|d| csv_field(&d.id))
                .chain(plant.departments.iter().map(|d| csv_field(&format!("{} overflow", d.id))))
                .collect(),
            products: plant.products.iter().map(|p| csv_field(&p.id)).collect(),
            steps: plant
                .products
                .iter()
                .map(|p| p.routing.iter().map(|o| csv_field(&o.name)).collect())
                .collect(),
            fleets: plant.fleets().iter().map(|f| csv_field(&f.id)).collect(),
        }
    }
}

/// A name as one CSV field: quoted (RFC 4180) only when it holds a comma, a quote or a line break.
fn csv_field(name: &str) -> String {
    if name.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", name.replace('"', "\"\""))
    } else {
        name.to_string()
    }
}

/// Why a plant cannot be traced yet, in the user's words; `None` when it can.
///
/// The tracer follows lots, movers (single loads and tow trains, with
/// breakdowns and charging too) over direct trips or the simulated aisle
/// network, and machines (with breakdowns, calendars, setups and staging
/// limits too). Lots split into unit loads add rows the tracer does not
/// record yet, so a trace of such a plant would not add up to `run`'s
/// numbers; it is refused rather than written wrong.
pub fn untraceable(plan: &Plan) -> Option<&'static str> {
    if plan.split {
        Some("a product's lots move in several unit loads (lot: transfer_batch)")
    } else {
        None
    }
}

/// A trace file that could not be created or written.
#[derive(Debug)]
pub struct TraceError {
    /// The file.
    pub path: PathBuf,
    /// What the system said.
    pub error: io::Error,
}

impl fmt::Display for TraceError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "cannot write the trace file {}: {}", self.path.display(), self.error)
    }
}

impl std::error::Error for TraceError {}

/// The five open files of one trace folder.
pub struct TraceSink {
    pub(crate) files: [BufWriter<File>; 5],
    paths: [PathBuf; 5],
    /// The first write error, with the file it happened in; writing stops there.
    pub(crate) error: Option<(usize, io::Error)>,
}

/// Index of each file in [`TraceSink::files`].
pub(crate) const LOTS: usize = 0;
pub(crate) const VISITS: usize = 1;
pub(crate) const MOVES: usize = 2;
pub(crate) const MOVER_STATES: usize = 3;
pub(crate) const MACHINE_STATES: usize = 4;

impl TraceSink {
    /// Create the five files in `dir` (which must exist), each with its header line.
    pub fn create(dir: &Path) -> Result<TraceSink, TraceError> {
        let open = |i: usize| -> Result<BufWriter<File>, TraceError> {
            let path = dir.join(TRACE_FILES[i]);
            let mut w = File::create(&path)
                .map(|f| BufWriter::with_capacity(1 << 16, f))
                .map_err(|error| TraceError { path: path.clone(), error })?;
            writeln!(w, "{}", HEADERS[i]).map_err(|error| TraceError { path, error })?;
            Ok(w)
        };
        Ok(TraceSink {
            files: [open(0)?, open(1)?, open(2)?, open(3)?, open(4)?],
            paths: TRACE_FILES.map(|f| dir.join(f)),
            error: None,
        })
    }

    /// Write out what the buffers hold; the first error met while tracing, if any.
    pub fn flush(&mut self) -> Result<(), TraceError> {
        self.check()?;
        for i in 0..5 {
            if let Err(e) = self.files[i].flush() {
                self.error = Some((i, e));
                self.check()?;
            }
        }
        Ok(())
    }

    /// The first write error so far, naming its file.
    pub(crate) fn check(&mut self) -> Result<(), TraceError> {
        match self.error.take() {
            None => Ok(()),
            Some((i, error)) => {
                let kind = error.kind();
                let text = error.to_string();
                // Keep the sink failed: a later call reports the same error.
                self.error = Some((i, io::Error::new(kind, text)));
                Err(TraceError { path: self.paths[i].clone(), error })
            }
        }
    }
}
