//! A study's results as the report reads them: summary.json as a JSON tree, summary.csv as exact text cells.
//!
//! The page shows every number from these two files only, so a reader (and
//! the test that reads the numbers back) can check each one against
//! summary.csv. The `--report` flags of `compare`, `fleet`, `search` and
//! `experiment` make the same two files in memory and go through here too.

use std::path::{Path, PathBuf};

use layflow_models::metrics::by_bucket::WHOLE;
use layflow_models::results::check::one_study;
use layflow_models::results::folder::{read_manifest, Kind, MANIFEST};
use serde_json::Value;

use crate::failure::Failure;

/// summary.csv: its header and rows, each cell as written.
#[derive(Debug, Clone)]
pub struct Table {
    /// Column names.
    pub header: Vec<String>,
    /// Rows in file order (row 0 is the file's second line).
    pub rows: Vec<Vec<String>>,
}

impl Table {
    /// Parse CSV bytes; `source` names the file in errors.
    pub fn parse(bytes: &[u8], source: &str) -> Result<Table, Failure> {
        let mut r = csv::ReaderBuilder::new().has_headers(true).from_reader(bytes);
        let header: Vec<String> = r
            .headers()
            .map_err(|e| Failure::input(format!("{source}: cannot read the header: {e}")))?
            .iter()
            .map(str::to_string)
            .collect();
        let mut rows = Vec::new();
        for (i, rec) in r.records().enumerate() {
            let rec = rec.map_err(|e| Failure::input(format!("{source}: line {}: {e}", i + 2)))?;
            rows.push(rec.iter().map(str::to_string).collect());
        }
        Ok(Table { header, rows })
    }

    /// The index of column `name`.
    pub fn col(&self, name: &str) -> Option<usize> {
        self.header.iter().position(|h| h == name)
    }

    /// Cell `name` of row `row` ("" when the column is missing).
    pub fn get(&self, row: usize, name: &str) -> &str {
        self.col(name).and_then(|c| self.rows[row].get(c)).map_or("", String::as_str)
    }

    /// Cell `name` of row `row` as a number (`None` when empty).
    pub fn num(&self, row: usize, name: &str) -> Option<f64> {
        self.get(row, name).parse().ok()
    }

    /// Whether row `row` describes the whole window (always, without a `bucket` column).
    pub fn whole(&self, row: usize) -> bool {
        self.col("bucket").is_none_or(|c| self.rows[row][c] == WHOLE)
    }
}

/// One study's results.
#[derive(Debug, Clone)]
pub struct Study {
    /// Which study wrote them.
    pub kind: Kind,
    /// Where they came from: the folder, or the command that made them.
    pub source: String,
    /// summary.json.
    pub json: Value,
    /// summary.csv.
    pub csv: Table,
    /// SHA-256 of the scenario text the study ran, where recorded.
    pub scenario_sha256: Option<String>,
    /// The scenario file as the study was given it (compare and fleet record it).
    pub scenario: Option<PathBuf>,
    /// An experiment's run settings (units.jsonl's header): horizon, warm-up, seed, replications.
    pub experiment: Option<ExperimentFacts>,
}

/// What an experiment's units.jsonl header says about its runs.
#[derive(Debug, Clone)]
pub struct ExperimentFacts {
    /// Replications per design point.
    pub replications: u32,
    /// Horizon of design point 1, s.
    pub horizon_s: f64,
    /// Warm-up of design point 1, s.
    pub warmup_s: f64,
    /// Base seed.
    pub seed: u64,
    /// The layflow version that ran the units.
    pub version: String,
}

impl Study {
    /// A study made in memory by the command that just ran (its `--report`).
    pub fn in_memory(kind: Kind, json: &str, csv: &[u8], scenario: &Path) -> Result<Study, Failure> {
        let json: Value = serde_json::from_str(json)
            .map_err(|e| Failure::run(format!("the report could not read back the results: {e}")))?;
        let text = std::fs::read(scenario).ok();
        Ok(Study {
            kind,
            source: "this run".to_string(),
            json,
            csv: Table::parse(csv, "summary.csv")?,
            scenario_sha256: text.map(|t| layflow_models::results::folder::sha256_hex(&t)),
            scenario: Some(scenario.to_path_buf()),
            experiment: None,
        })
    }

    /// Read the results folder `dir`: refused (exit 2) when it is not a
    /// layflow results folder, mixes studies, or its study did not finish.
    pub fn read(dir: &Path) -> Result<Study, Failure> {
        if !dir.is_dir() {
            return Err(Failure::input(format!(
                "{}: not a folder; name a results folder written by `layflow compare --out`, `layflow fleet --out` \
                 or `layflow experiment --out`",
                dir.display()
            )));
        }
        let Some(manifest) = read_manifest(dir)? else {
            return Err(Failure::input(format!(
                "{}: no {MANIFEST} here, so this is not a layflow results folder (or one from before results were \
                 labelled); name a folder written by `layflow compare --out`, `layflow fleet --out` or `layflow \
                 experiment --out`, or rerun the study",
                dir.display()
            )));
        };
        one_study(dir)?;
        let file = |name: &str| -> Result<Vec<u8>, Failure> {
            let path = dir.join(name);
            std::fs::read(&path).map_err(|e| {
                let hint = if manifest.kind == Kind::Experiment {
                    "; an experiment writes it once every unit is done: finish it with `layflow experiment PLAN \
                     --out DIR --resume`, or merge its shards with `layflow merge`"
                } else {
                    ""
                };
                Failure::input(format!("{}: cannot read: {e}{hint}", path.display()))
            })
        };
        let json_bytes = file("summary.json")?;
        let json: Value = serde_json::from_slice(&json_bytes).map_err(|e| {
            Failure::input(format!(
                "{}: not valid JSON ({e}); was it edited?",
                dir.join("summary.json").display()
            ))
        })?;
        let csv = Table::parse(&file("summary.csv")?, &dir.join("summary.csv").display().to_string())?;
        for need in ["scope", "subject", "metric", "mean", "half_width"] {
            if csv.col(need).is_none() {
                return Err(Failure::input(format!(
                    "{}: no `{need}` column; this is not a layflow summary.csv (was it edited?)",
                    dir.join("summary.csv").display()
                )));
            }
        }
        let scenario_sha256 = layflow_models::results::segments::recorded_scenario(dir)?;
        let scenario = json.get("scenario").and_then(Value::as_str).map(PathBuf::from);
        let experiment = if manifest.kind == Kind::Experiment {
            let path = dir.join(layflow_models::experiment::journal::FILE);
            let h = layflow_models::experiment::journal::read_header(&path).map_err(Failure::input)?;
            h.settings.map(|s| ExperimentFacts {
                replications: h.replications,
                horizon_s: s.horizon_s,
                warmup_s: s.warmup_s,
                seed: s.seed,
                version: s.layflow_version,
            })
        } else {
            None
        };
        Ok(Study {
            kind: manifest.kind,
            source: dir.display().to_string(),
            json,
            csv,
            scenario_sha256,
            scenario,
            experiment,
        })
    }

    /// A string field of summary.json.
    pub fn str(&self, key: &str) -> &str {
        self.json.get(key).and_then(Value::as_str).unwrap_or("")
    }

    /// A number field of summary.json.
    pub fn f64(&self, key: &str) -> Option<f64> {
        self.json.get(key).and_then(Value::as_f64)
    }
}
