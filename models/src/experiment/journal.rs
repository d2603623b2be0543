//! The results file of an experiment: one JSON line per finished unit, appended durably, read back with torn-line recovery.
//!
//! The first line is a header naming the plan's content hash, the shard,
//! the factors, the design points and the metrics; every later line is one
//! unit (design point × replication) with every metric's value and the
//! unit's flow-time and move-wait histograms in HdrHistogram's V2
//! interchange format (base64). A line counts as done only once it has
//! been written, flushed and synced, so after a crash, a kill or a power
//! cut the file holds every finished unit and at most one torn line at the
//! end, which [`read`] drops and reports.
//!
//! Every unit line ends with `"sum"`: the first 16 hex digits of the SHA-256
//! of the unit's canonical JSON (the line as layflow writes it, without the
//! sum). A changed digit or base64 character parses as a different unit,
//! whose canonical bytes no longer match the sum, so [`read`] refuses the
//! line with its number instead of letting it change the results. Lines
//! written before sums existed are read unchecked and counted.

use std::io::Write as _;
use std::path::{Path, PathBuf};

use base64::Engine as _;
use layflow_engine::TickHistogram;
use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};

use crate::sim::{RepStats, TICK_S};

use super::plan::{unit_of, Experiment};

/// The results file's name inside an output folder.
pub const FILE: &str = "units.jsonl";

/// Format version of the file.
const VERSION: u32 = 1;

/// Which share of the units a run takes: units u with u mod `of` = `index` − 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Shard {
    /// 1-based shard number.
    pub index: u32,
    /// Number of shards.
    pub of: u32,
}

impl Shard {
    /// The whole plan.
    pub const ALL: Shard = Shard { index: 1, of: 1 };

    /// Parse `K/N` (1 ≤ K ≤ N).
    pub fn parse(text: &str) -> Result<Shard, String> {
        let bad =
            || format!("--shard {text:?}: write K/N with 1 ≤ K ≤ N, e.g. 2/8 for the second of eight shards");
        let (k, n) = text.split_once('/').ok_or_else(bad)?;
        let (index, of) =
            (k.trim().parse::<u32>().map_err(|_| bad())?, n.trim().parse::<u32>().map_err(|_| bad())?);
        if index == 0 || of == 0 || index > of {
            return Err(bad());
        }
        Ok(Shard { index, of })
    }

    /// Whether unit `u` belongs to this shard. Units are dealt round-robin,
    /// so every shard gets a share of every design point.
    pub fn owns(&self, u: u64) -> bool {
        u % u64::from(self.of) == u64::from(self.index - 1)
    }
}

impl std::fmt::Display for Shard {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}/{}", self.index, self.of)
    }
}

/// The header line: what every unit line belongs to.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Header {
    /// File format version.
    pub layflow_experiment: u32,
    /// Content hash of the plan and scenario (see [`Experiment::hash`]).
    pub hash: String,
    /// The shard this file holds (1/1 for a whole plan, or a merge).
    pub shard: Shard,
    /// Units in the whole plan.
    pub units: u64,
    /// Replications per design point.
    pub replications: u32,
    /// Factor names.
    pub factors: Vec<String>,
    /// Levels of every design point, as text.
    pub points: Vec<Vec<String>>,
    /// Metric labels (`flow_time_s`, `pump-housing/flow_time_s`, …), with scope and subject.
    pub metrics: Vec<MetricName>,
    /// The settings behind the hash, so a refused resume can say which one
    /// changed (absent in files written before they were recorded).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub settings: Option<Settings>,
    /// With `by:` in the plan: the buckets and the metrics every unit reports
    /// per bucket (absent without `by:`, so such files are as before).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub by: Option<BucketHeader>,
    /// The scenario's `currency`, so the summary's cost columns name it
    /// (absent without one, and in files written before it was recorded;
    /// the hash covers the scenario, so it never tells two plans apart).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub currency: Option<String>,
}

/// What a unit's `by` arrays mean: the grid and the metric order, given once.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BucketHeader {
    /// How the clock was sliced, as the plan gives it (`hour-of-day`).
    pub by: String,
    /// Bucket labels of design point 1, in order (every point has as many:
    /// a point whose grid differs in length is refused when it compiles).
    pub buckets: Vec<String>,
    /// The metrics of each bucket's array, in order (registry names).
    pub metrics: Vec<MetricName>,
}

/// What decides the results besides the factors, recorded to explain a changed hash.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Settings {
    /// The layflow version that ran the units.
    pub layflow_version: String,
    /// The plan's base seed.
    pub seed: u64,
    /// Whether replication r of every design point sees the same random numbers.
    pub common_random_numbers: bool,
    /// Simulated horizon of design point 1, seconds.
    pub horizon_s: f64,
    /// Warm-up of design point 1, seconds.
    pub warmup_s: f64,
    /// SHA-256 of the scenario file's text.
    pub scenario_sha256: String,
}

/// A metric's identity in the file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MetricName {
    /// plant, product, department or fleet.
    pub scope: String,
    /// The product, department or fleet id; empty for the plant.
    pub subject: String,
    /// The metric's name, e.g. `flow_time_s`.
    pub name: String,
}

impl Header {
    /// The header for `shard` of `exp`.
    pub fn new(exp: &Experiment, shard: Shard) -> Header {
        Header {
            layflow_experiment: VERSION,
            hash: exp.hash.clone(),
            shard,
            units: exp.units(),
            replications: exp.replications,
            factors: exp.factors.iter().map(|f| f.name.clone()).collect(),
            points: (0..exp.point_count()).map(|p| exp.point(p).labels()).collect(),
            metrics: crate::metrics::metrics(&exp.first().plant)
                .into_iter()
                .map(|m| MetricName {
                    scope: m.scope.as_str().into(),
                    subject: m.subject,
                    name: m.name.into(),
                })
                .collect(),
            settings: Some(Settings {
                layflow_version: env!("CARGO_PKG_VERSION").to_string(),
                seed: exp.seed,
                common_random_numbers: exp.common_random_numbers,
                horizon_s: exp.first().spec.horizon_s,
                warmup_s: exp.first().spec.warmup_s,
                scenario_sha256: exp.scenario_sha256.clone(),
            }),
            by: exp.first().sim.buckets().map(|g| BucketHeader {
                by: g.by.name(),
                buckets: g.labels.clone(),
                metrics: crate::metrics::bucket_metrics(&exp.first().plant)
                    .into_iter()
                    .map(|m| MetricName {
                        scope: m.scope.as_str().into(),
                        subject: m.subject,
                        name: m.name.into(),
                    })
                    .collect(),
            }),
            currency: exp.first().plant.currency.clone(),
        }
    }

    /// The design point and replication of unit `u`.
    pub fn unit(&self, u: u64) -> (usize, u64) {
        unit_of(u, self.replications)
    }

    /// The same plan, whatever the shard. The recorded settings only explain
    /// a difference (the hash covers them), so an edit that leaves every
    /// compiled plant alone, such as a comment in the scenario, changes nothing.
    /// The currency is left out too: a folder written before it was recorded
    /// still resumes and merges with one that records it.
    pub fn same_plan(&self, other: &Header) -> bool {
        Header { shard: Shard::ALL, settings: None, currency: None, ..self.clone() }
            == Header { shard: Shard::ALL, settings: None, currency: None, ..other.clone() }
    }

    /// Whether `self` (a folder's header) is `exp`'s plan with fewer
    /// replications and nothing else changed: its hash is the one `exp`
    /// would have with that count, and factors, points and metrics agree.
    /// Such a folder can be continued to `exp`'s size (see [`Header::rekeyed`]).
    pub fn fewer_replications_of(&self, exp: &Experiment) -> bool {
        let now = Header::new(exp, self.shard);
        self.replications < now.replications
            && exp.content_hash(self.replications).is_ok_and(|h| h == self.hash)
            && Header {
                replications: now.replications,
                units: now.units,
                hash: now.hash.clone(),
                ..self.clone()
            }
            .same_plan(&now)
    }

    /// The settings that differ between `self` (a folder's header) and
    /// `now`, in words (`seed (11 there, 12 now)`); empty when none that
    /// the header records differs (then something else the hash covers did).
    pub fn differences(&self, now: &Header) -> Vec<String> {
        let mut out = Vec::new();
        let differ = |out: &mut Vec<String>, what: &str, there: String, here: String| {
            if there != here {
                out.push(format!("{what} ({there} there, {here} now)"));
            }
        };
        if let (Some(a), Some(b)) = (&self.settings, &now.settings) {
            differ(&mut out, "layflow version", a.layflow_version.clone(), b.layflow_version.clone());
            differ(&mut out, "seed", a.seed.to_string(), b.seed.to_string());
            differ(
                &mut out,
                "common_random_numbers",
                a.common_random_numbers.to_string(),
                b.common_random_numbers.to_string(),
            );
            differ(&mut out, "horizon", format!("{} s", a.horizon_s), format!("{} s", b.horizon_s));
            differ(&mut out, "warm-up", format!("{} s", a.warmup_s), format!("{} s", b.warmup_s));
            if a.scenario_sha256 != b.scenario_sha256 {
                out.push("the scenario file's content (it was edited since)".to_string());
            }
        }
        differ(&mut out, "replications", self.replications.to_string(), now.replications.to_string());
        if self.factors != now.factors {
            differ(&mut out, "factors", self.factors.join(", "), now.factors.join(", "));
        } else {
            for (i, f) in self.factors.iter().enumerate() {
                let levels = |h: &Header| {
                    let mut seen: Vec<String> = Vec::new();
                    for p in &h.points {
                        if let Some(l) = p.get(i) {
                            if !seen.contains(l) {
                                seen.push(l.clone());
                            }
                        }
                    }
                    seen.join(", ")
                };
                differ(&mut out, &format!("the levels of factor `{f}`"), levels(self), levels(now));
            }
            if out.is_empty() && self.points != now.points {
                out.push(format!(
                    "the design points ({} there, {} now)",
                    self.points.len(),
                    now.points.len()
                ));
            }
        }
        let by = |h: &Header| h.by.as_ref().map_or("none".to_string(), |b| b.by.clone());
        differ(&mut out, "by", by(self), by(now));
        if self.metrics != now.metrics {
            out.push("the scenario's products, departments or fleets (the metrics differ)".to_string());
        }
        out
    }

    /// `units` (done under `self`) renumbered for the same plan with
    /// `now.replications` per point: replication r of point p becomes unit
    /// p × replications + r, as a run planned that size from the start numbers it.
    pub fn rekeyed(&self, now: &Header, units: Vec<Unit>) -> Vec<Unit> {
        let plan = now.hash[..16].to_string();
        units
            .into_iter()
            .map(|u| Unit {
                unit: u.point as u64 * u64::from(now.replications) + u.replication,
                plan: plan.clone(),
                ..u
            })
            .collect()
    }
}

/// One finished unit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Unit {
    /// The first 16 hex digits of the plan's hash: a line from another plan is caught even out of context.
    pub plan: String,
    /// Unit number (design point × replications + replication).
    pub unit: u64,
    /// Design point, 0-based.
    pub point: usize,
    /// Replication, 0-based.
    pub replication: u64,
    /// Events simulated.
    pub events: u64,
    /// Every metric's value, in the header's order; `null` where the replication observed nothing.
    pub values: Vec<Option<f64>>,
    /// Flow-time histogram, V2 base64, ticks of [`TICK_S`].
    pub flow_time_hist: String,
    /// Move-wait histogram (every fleet), V2 base64, ticks of [`TICK_S`].
    pub move_wait_hist: String,
    /// With `by:`: every bucketed metric in every bucket, `[bucket][metric]`
    /// in the header's `by` order; `null` where the bucket observed nothing.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub by: Option<Vec<Vec<Option<f64>>>>,
}

impl Unit {
    /// The record of unit `u` of `exp` from its replication's results; `plant` is its design point's.
    pub fn new(exp: &Experiment, u: u64, plant: &crate::plant::Plant, rep: &RepStats) -> Unit {
        let (point, replication) = exp.unit(u);
        let b64 = |h: &TickHistogram| base64::engine::general_purpose::STANDARD.encode(h.to_v2());
        Unit {
            plan: exp.hash[..16].to_string(),
            unit: u,
            point,
            replication,
            events: rep.events,
            values: crate::metrics::values(plant, rep)
                .into_iter()
                .map(|v| v.is_finite().then_some(v))
                .collect(),
            flow_time_hist: b64(&rep.flow_hist),
            move_wait_hist: b64(&rep.move_wait_hist),
            by: (!rep.by.is_empty()).then(|| {
                let list = crate::metrics::bucket_metrics(plant);
                crate::metrics::bucket_values(plant, &list, rep)
                    .into_iter()
                    .map(|row| row.into_iter().map(|v| v.is_finite().then_some(v)).collect())
                    .collect()
            }),
        }
    }

    /// Decode one of the unit's histograms.
    pub fn histogram(text: &str) -> Result<TickHistogram, String> {
        let bytes =
            base64::engine::general_purpose::STANDARD.decode(text).map_err(|e| format!("bad base64: {e}"))?;
        TickHistogram::from_v2(&bytes, TICK_S)
    }
}

/// One JSON line, newline included.
fn line<T: Serialize>(v: &T) -> Vec<u8> {
    let mut s = serde_json::to_vec(v).expect("plain data serializes");
    s.push(b'\n');
    s
}

/// The checksum of a unit: 16 hex digits of the SHA-256 of its canonical JSON.
fn unit_sum(canonical: &[u8]) -> String {
    Sha256::digest(canonical)[..8].iter().map(|b| format!("{b:02x}")).collect()
}

/// A unit's line as every results file holds it: its canonical JSON with
/// `"sum"` added as the last field, newline included.
pub fn unit_line(unit: &Unit) -> Vec<u8> {
    let mut s = serde_json::to_vec(unit).expect("plain data serializes");
    let sum = unit_sum(&s);
    debug_assert_eq!(s.last(), Some(&b'}'));
    s.pop();
    s.extend_from_slice(format!(",\"sum\":\"{sum}\"}}\n").as_bytes());
    s
}

/// The checksum field of a unit line (absent in files written before sums existed).
#[derive(Deserialize)]
struct Sum {
    sum: Option<String>,
}

/// A results file open for appending.
pub struct Writer {
    file: std::fs::File,
    path: PathBuf,
}

impl Writer {
    /// Start a new file with its header (replacing none: the caller checked).
    pub fn create(path: &Path, header: &Header) -> std::io::Result<Writer> {
        let mut file = std::fs::OpenOptions::new().create_new(true).write(true).open(path)?;
        file.write_all(&line(header))?;
        file.sync_all()?;
        Ok(Writer { file, path: path.to_path_buf() })
    }

    /// Reopen a file for appending after its first `keep` bytes (what
    /// [`read`] found intact; a torn tail is cut off).
    pub fn append(path: &Path, keep: u64) -> std::io::Result<Writer> {
        let file = std::fs::OpenOptions::new().write(true).open(path)?;
        file.set_len(keep)?;
        file.sync_all()?;
        let mut w = Writer { file, path: path.to_path_buf() };
        use std::io::Seek as _;
        w.file.seek(std::io::SeekFrom::End(0))?;
        Ok(w)
    }

    /// Append one unit; when this returns, the line is on disk.
    pub fn write(&mut self, unit: &Unit) -> std::io::Result<()> {
        self.file.write_all(&unit_line(unit))?;
        self.file.flush()?;
        self.file.sync_data()
    }

    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

/// Only the header of a results file (its first line), without reading the units.
pub fn read_header(path: &Path) -> Result<Header, String> {
    use std::io::BufRead as _;
    let file = std::fs::File::open(path).map_err(|e| format!("cannot read {}: {e}", path.display()))?;
    let mut first = String::new();
    std::io::BufReader::new(file)
        .read_line(&mut first)
        .map_err(|e| format!("cannot read {}: {e}", path.display()))?;
    serde_json::from_str(&first).map_err(|e| {
        format!(
            "{}: line 1 is not a layflow experiment header ({e}); is this a results file?",
            path.display()
        )
    })
}

/// What [`read`] found.
#[derive(Debug, Clone)]
pub struct Contents {
    /// The header.
    pub header: Header,
    /// Every intact unit, in file order.
    pub units: Vec<Unit>,
    /// Bytes up to the end of the last intact line.
    pub intact_bytes: u64,
    /// Bytes dropped from the end: a line cut off mid-write (0 when none).
    pub torn_bytes: u64,
    /// Units read without a checksum (lines written by a layflow from before sums).
    pub unchecked: usize,
}

/// Read a results file. A damaged tail (a last line without its newline, or
/// lines at the end that do not parse, as a crash mid-write leaves) is
/// dropped and counted in `torn_bytes`; a bad line followed by good ones is
/// damage no crash explains, and an error.
pub fn read(path: &Path) -> Result<Contents, String> {
    let bytes = std::fs::read(path).map_err(|e| format!("cannot read {}: {e}", path.display()))?;
    let mut lines: Vec<(usize, usize)> = Vec::new(); // (start, end incl. newline)
    let mut start = 0;
    for (i, &b) in bytes.iter().enumerate() {
        if b == b'\n' {
            lines.push((start, i + 1));
            start = i + 1;
        }
    }
    let header_line = lines.first().ok_or_else(|| {
        format!(
            "{}: no complete header line; the run stopped before it wrote one, so start afresh",
            path.display()
        )
    })?;
    let header: Header = serde_json::from_slice(&bytes[header_line.0..header_line.1]).map_err(|e| {
        format!(
            "{}: line 1 is not a layflow experiment header ({e}); is this a results file?",
            path.display()
        )
    })?;
    if header.layflow_experiment != VERSION {
        return Err(format!(
            "{}: written by a different results format (version {}); this layflow reads version {VERSION}",
            path.display(),
            header.layflow_experiment
        ));
    }
    let mut units = Vec::new();
    let mut intact = header_line.1;
    let mut bad: Option<(usize, String)> = None;
    let mut unchecked = 0;
    for (n, &(a, b)) in lines.iter().enumerate().skip(1) {
        match serde_json::from_slice::<Unit>(&bytes[a..b]) {
            Ok(u) if bad.is_none() => {
                match serde_json::from_slice::<Sum>(&bytes[a..b]).ok().and_then(|s| s.sum) {
                    None => unchecked += 1,
                    Some(sum) => {
                        let canonical = serde_json::to_vec(&u).expect("plain data serializes");
                        if unit_sum(&canonical) != sum {
                            return Err(format!(
                                "{}, line {}: unit {} does not match its checksum: the line was changed after \
                                 layflow wrote it (a disk error or an edit), so its numbers cannot be trusted; \
                                 delete that line and run the experiment again with --resume (and the same \
                                 --shard, if any) to redo that unit, or restore the file from a copy",
                                path.display(),
                                n + 1,
                                u.unit
                            ));
                        }
                    }
                }
                if u.plan != header.hash[..16] {
                    return Err(format!(
                        "{}, line {}: a result of another plan (hash {}, this file's plan is {}); results of different \
                         plans or scenario versions cannot be mixed",
                        path.display(),
                        n + 1,
                        u.plan,
                        &header.hash[..16]
                    ));
                }
                let by_fits = match (&header.by, &u.by) {
                    (None, None) => true,
                    (Some(h), Some(b)) => {
                        b.len() == h.buckets.len() && b.iter().all(|row| row.len() == h.metrics.len())
                    }
                    _ => false,
                };
                if u.values.len() != header.metrics.len() || u.unit >= header.units || !by_fits {
                    return Err(format!(
                        "{}, line {}: does not fit the header (wrong unit or metric count)",
                        path.display(),
                        n + 1
                    ));
                }
                units.push(u);
                intact = b;
            }
            Ok(_) => {
                let (line, e) = bad.take().expect("set");
                return Err(format!(
                    "{}, line {line}: not a result line ({e}), yet good lines follow it: the file is damaged, not just \
                     cut off; move it away and rerun, or restore it from a copy",
                    path.display()
                ));
            }
            Err(e) => {
                if bad.is_none() {
                    bad = Some((n + 1, e.to_string()));
                }
            }
        }
    }
    Ok(Contents {
        header,
        units,
        intact_bytes: intact as u64,
        torn_bytes: (bytes.len() - intact) as u64,
        unchecked,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shard_specs_are_checked_and_deal_units_round_robin() {
        assert_eq!(Shard::parse("2/3"), Ok(Shard { index: 2, of: 3 }));
        for bad in ["0/3", "4/3", "3", "a/b", "1/0", "-1/3"] {
            assert!(Shard::parse(bad).is_err(), "{bad}");
        }
        let s = [Shard::parse("1/3").unwrap(), Shard::parse("2/3").unwrap(), Shard::parse("3/3").unwrap()];
        for u in 0..30u64 {
            assert_eq!(s.iter().filter(|x| x.owns(u)).count(), 1, "unit {u} has exactly one shard");
        }
    }
}
