//! Time buckets: which slice of the clock each moment of a run falls in (hour of day, shift, weekday, day, period).
//!
//! A user asks for results `--by hour-of-day`, `shift`, `day-of-week`, `day`
//! or `period=8 h`; [`By`] is that request and [`Grid`] the same compiled
//! against a plant and a run's observation window. Cyclic buckets (hour of
//! day, shift, day of week) fold every repetition of the cycle onto one: the
//! 10:00–11:00 bucket of a 20-day run holds 20 hours. The simulated clock
//! starts at 00:00 on a Monday (the convention that shifts, breaks and
//! demand profiles are written in: offsets from the start of the run).

use crate::limits;
use crate::plant::{DutyCalendar, Plant};
use crate::units::{format_duration, parse_duration};

const HOUR_S: f64 = 3600.0;
const DAY_S: f64 = 86_400.0;
const WEEK_S: f64 = 7.0 * DAY_S;

/// Most buckets a run may report. Each keeps its own tallies and histograms
/// in every replication (about 20 KB per fleet and per histogram), and a
/// table of more than a thousand rows is read by nobody.
pub const MAX_BUCKETS: u64 = 1_000;
/// Why [`MAX_BUCKETS`].
pub const MAX_BUCKETS_WHY: &str = "each bucket keeps its own histograms in every replication, and no one \
     reads a thousand rows; choose a longer period, or day-of-week / hour-of-day";

/// How to slice the clock, as the user asked.
#[derive(Debug, Clone, PartialEq)]
pub enum By {
    /// 24 buckets, 00:00–01:00 … 23:00–24:00, every day folded onto one.
    HourOfDay,
    /// The shifts of a calendar, by clock time, plus the time off shift. The
    /// calendar of the named department or fleet; `None`: the plant's only
    /// calendar.
    Shift(Option<String>),
    /// 7 buckets, Monday … Sunday, every week folded onto one.
    DayOfWeek,
    /// One bucket per day of the run (not folded).
    Day,
    /// One bucket per period of this many seconds from the start of the run (not folded).
    Period(f64),
}

impl By {
    /// Reads `hour-of-day`, `shift`, `shift=ID`, `day-of-week`, `day` or `period=DURATION`.
    pub fn parse(text: &str) -> Result<By, String> {
        let t = text.trim();
        let (kind, arg) = match t.split_once('=') {
            Some((k, a)) => (k.trim(), Some(a.trim())),
            None => (t, None),
        };
        let by = match (kind, arg) {
            ("hour-of-day", None) => By::HourOfDay,
            ("day-of-week", None) => By::DayOfWeek,
            ("day", None) => By::Day,
            ("shift", None) => By::Shift(None),
            ("shift", Some(id)) if !id.is_empty() => By::Shift(Some(id.to_string())),
            ("period", Some(d)) => {
                let s = parse_duration(d).map_err(|e| format!("--by period={d}: {e}"))?;
                if !(s >= 60.0) {
                    return Err(format!(
                        "--by period={d}: a period of {} is too short to read; give one of at least 1 min",
                        format_duration(s)
                    ));
                }
                By::Period(s)
            }
            ("period", None) => {
                return Err("--by period needs a length, e.g. --by \"period=8 h\"".to_string());
            }
            _ => {
                let known = ["hour-of-day", "shift", "day-of-week", "day", "period"];
                let hint = crate::suggest::did_you_mean(kind, known.iter().copied());
                return Err(format!(
                    "--by \"{t}\" is not a way to slice the clock{hint}: give hour-of-day, shift, \
                     shift=ID (a department or fleet with a calendar), day-of-week, day, or period=DURATION"
                ));
            }
        };
        Ok(by)
    }

    /// The name as a user types it: `hour-of-day`, `period=8 h`.
    pub fn name(&self) -> String {
        match self {
            By::HourOfDay => "hour-of-day".into(),
            By::Shift(None) => "shift".into(),
            By::Shift(Some(id)) => format!("shift={id}"),
            By::DayOfWeek => "day-of-week".into(),
            By::Day => "day".into(),
            By::Period(s) => format!("period={}", format_duration(*s)),
        }
    }

    /// Whether every repetition of a cycle folds onto one set of buckets.
    pub fn cyclic(&self) -> bool {
        matches!(self, By::HourOfDay | By::Shift(_) | By::DayOfWeek)
    }

    /// How long one bucket lasts, s (NaN by shift: shifts differ).
    pub fn bucket_width_s(&self) -> f64 {
        match self {
            By::HourOfDay => HOUR_S,
            By::DayOfWeek | By::Day => DAY_S,
            By::Period(p) => *p,
            By::Shift(_) => f64::NAN,
        }
    }
}

/// The buckets of one run: labels and the map from a time to its bucket.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    /// What the user asked for.
    pub by: By,
    /// One label per bucket, in report order: `10:00–11:00`, `Tue`, `day 3`.
    pub labels: Vec<String>,
    /// Cyclic: the cycle, s; not cyclic: the bucket width, s.
    cycle_s: f64,
    /// Cyclic: segment starts within the cycle (the first 0, increasing),
    /// each segment's end being the next start (the last ends at the cycle).
    starts: Vec<f64>,
    /// Cyclic: the bucket of each segment.
    segment_bucket: Vec<u32>,
    /// Not cyclic: the index (from the start of the run) of bucket 0.
    first: u64,
}

impl Grid {
    /// Compiles `by` for `plant` and the observation window [`warmup_s`, `horizon_s`].
    /// Errors are for people: a shift with no calendar, a period longer than
    /// the window, too many buckets.
    pub fn new(by: &By, plant: &Plant, warmup_s: f64, horizon_s: f64) -> Result<Grid, String> {
        let window = horizon_s - warmup_s;
        let longer = |what: &str, len: f64| {
            format!(
                "--by {}: {what} ({}) is longer than the observation window ({} after a warm-up of {}); \
                 use a shorter bucket or a longer --horizon",
                by.name(),
                format_duration(len),
                format_duration(window),
                format_duration(warmup_s)
            )
        };
        let cyclic = |cycle_s: f64, starts: Vec<f64>, segment_bucket: Vec<u32>, labels: Vec<String>| Grid {
            by: by.clone(),
            labels,
            cycle_s,
            starts,
            segment_bucket,
            first: 0,
        };
        let grid = match by {
            By::HourOfDay => {
                if window < HOUR_S {
                    return Err(longer("an hour", HOUR_S));
                }
                let starts = (0..24).map(|h| f64::from(h) * HOUR_S).collect();
                let labels = (0..24).map(|h| format!("{h:02}:00–{:02}:00", h + 1)).collect();
                cyclic(DAY_S, starts, (0..24).collect(), labels)
            }
            By::DayOfWeek => {
                if window < DAY_S {
                    return Err(longer("a day", DAY_S));
                }
                let starts = (0..7).map(|d| f64::from(d) * DAY_S).collect();
                let labels = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"].map(String::from).to_vec();
                cyclic(WEEK_S, starts, (0..7).collect(), labels)
            }
            By::Shift(which) => {
                let (owner, cal) = shift_calendar(plant, which.as_deref())?;
                shift_grid(by, &owner, cal)
            }
            By::Day | By::Period(_) => {
                let width = if let By::Period(p) = by { *p } else { DAY_S };
                if width > window {
                    return Err(longer(if matches!(by, By::Day) { "a day" } else { "the period" }, width));
                }
                let first = (warmup_s / width).floor() as u64;
                let last = ((horizon_s / width).ceil() as u64).max(first + 1);
                let n = last - first;
                limits::check_count("buckets", n, MAX_BUCKETS, MAX_BUCKETS_WHY)
                    .map_err(|e| format!("--by {}: {e}", by.name()))?;
                let labels = (first..last)
                    .map(|k| {
                        if matches!(by, By::Day) {
                            format!("day {}", k + 1)
                        } else {
                            clock_label(k as f64 * width)
                        }
                    })
                    .collect();
                Grid {
                    by: by.clone(),
                    labels,
                    cycle_s: width,
                    starts: Vec::new(),
                    segment_bucket: Vec::new(),
                    first,
                }
            }
        };
        Ok(grid)
    }

    /// How long one bucket lasts, s (NaN by shift: shifts differ).
    pub fn bucket_width_s(&self) -> f64 {
        self.by.bucket_width_s()
    }

    /// Buckets in the grid.
    pub fn len(&self) -> usize {
        self.labels.len()
    }

    /// Whether the grid has no bucket (never, once built).
    pub fn is_empty(&self) -> bool {
        self.labels.is_empty()
    }

    /// The bucket time `t` (s since the start of the run) falls in, and the
    /// time its stretch of that bucket ends (> t).
    pub fn locate(&self, t: f64) -> (usize, f64) {
        let t = t.max(0.0);
        // Buckets of one width (all but shifts): one division, no search.
        let width = self.bucket_width_s();
        if width > 0.0 {
            // t ≥ 0, so the cast is the floor; a quotient rounded down past an edge is stepped over.
            let mut k = (t / width) as u64;
            if (k + 1) as f64 * width <= t {
                k += 1;
            }
            let end = (k + 1) as f64 * width;
            let b = if self.by.cyclic() {
                (k % self.len() as u64) as usize
            } else {
                (k.saturating_sub(self.first) as usize).min(self.len() - 1)
            };
            return (b, end);
        }
        let c = (t / self.cycle_s).floor();
        let base = c * self.cycle_s;
        let x = t - base;
        // The last segment whose start is at or before x.
        let i = self.starts.partition_point(|&s| s <= x).saturating_sub(1);
        let seg_end = self.starts.get(i + 1).copied().unwrap_or(self.cycle_s);
        let end = base + seg_end;
        // Rounding can leave `end` at `t` on a boundary: step into the next segment.
        if end > t {
            (self.segment_bucket[i] as usize, end)
        } else {
            self.locate(end.next_up())
        }
    }

    /// Calls `f(bucket, seconds)` for each bucket that [`a`, `b`] overlaps, with the overlap.
    pub fn split(&self, a: f64, b: f64, mut f: impl FnMut(usize, f64)) {
        let mut t = a;
        while t < b {
            let (k, end) = self.locate(t);
            let e = end.min(b);
            f(k, e - t);
            t = e;
        }
    }
}

/// "day 2 08:00": a clock time of the run.
pub fn clock_label(t: f64) -> String {
    let day = (t / DAY_S).floor();
    let x = t - day * DAY_S;
    let (h, m) = ((x / HOUR_S).floor(), ((x % HOUR_S) / 60.0).floor());
    format!("day {} {:02}:{:02}", day as u64 + 1, h as u64, m as u64)
}

/// "06:00" for an offset into the day.
fn hhmm(x: f64) -> String {
    let x = x.rem_euclid(DAY_S);
    format!("{:02}:{:02}", (x / HOUR_S).floor() as u64, ((x % HOUR_S) / 60.0).floor() as u64)
}

/// The calendar `--by shift` reads: the named department's or fleet's, or the only one.
fn shift_calendar<'a>(plant: &'a Plant, which: Option<&str>) -> Result<(String, &'a DutyCalendar), String> {
    let mut found: Vec<(String, &DutyCalendar)> = Vec::new();
    for d in &plant.departments {
        if let Some(c) = &d.calendar {
            found.push((format!("department \"{}\"", d.id), &c.duty));
        }
    }
    for f in plant.fleets() {
        if let Some(c) = &f.operators.duty {
            found.push((format!("fleet \"{}\"", f.id), c));
        }
    }
    let ids = || {
        let mut v: Vec<String> = plant
            .departments
            .iter()
            .filter(|d| d.calendar.is_some())
            .map(|d| d.id.clone())
            .chain(plant.fleets().iter().filter(|f| f.operators.duty.is_some()).map(|f| f.id.clone()))
            .collect();
        v.dedup();
        v.join(", ")
    };
    match which {
        Some(id) => found.iter().find(|(o, _)| o.ends_with(&format!("\"{id}\""))).cloned().ok_or_else(|| {
            if found.is_empty() {
                format!("--by shift={id}: the scenario has no calendar, so there are no shifts to slice by")
            } else {
                format!(
                    "--by shift={id}: no department or fleet \"{id}\" has a calendar; those with one: {}",
                    ids()
                )
            }
        }),
        None => {
            if found.is_empty() {
                return Err("--by shift: the scenario has no calendar (no department `calendar`, no fleet \
                            operators' `shifts`), so there are no shifts to slice by; use --by hour-of-day, \
                            or --by \"period=8 h\" for round-the-clock shifts"
                    .to_string());
            }
            let first = found[0].1;
            if found.iter().all(|(_, c)| c.period_s == first.period_s && c.shifts == first.shifts) {
                Ok(found.swap_remove(0))
            } else {
                Err(format!(
                    "--by shift: the scenario has several different calendars; name the one to slice by, \
                     e.g. --by shift={} (those with a calendar: {})",
                    plant
                        .departments
                        .iter()
                        .find(|d| d.calendar.is_some())
                        .map(|d| d.id.clone())
                        .or_else(|| plant.fleets().first().map(|f| f.id.clone()))
                        .unwrap_or_default(),
                    ids()
                ))
            }
        }
    }
}

/// Shift buckets from a calendar's declared shifts: shifts at the same clock
/// times (the early shift of every weekday) share a bucket; the rest of the
/// cycle is one "off shift" bucket.
fn shift_grid(by: &By, owner: &str, cal: &DutyCalendar) -> Grid {
    let period = cal.period_s;
    let daily = (period / DAY_S).fract() == 0.0;
    let mut labels: Vec<String> = Vec::new();
    let mut keys: Vec<(f64, f64)> = Vec::new();
    let mut starts = Vec::new();
    let mut segment_bucket = Vec::new();
    let mut off: Option<u32> = None;
    let mut off_bucket = |labels: &mut Vec<String>, keys: &mut Vec<(f64, f64)>| {
        *off.get_or_insert_with(|| {
            labels.push("off shift".to_string());
            keys.push((f64::NAN, f64::NAN));
            (labels.len() - 1) as u32
        })
    };
    let mut t = 0.0;
    let _ = owner;
    for &(a, b) in &cal.shifts {
        if a > t {
            starts.push(t);
            segment_bucket.push(off_bucket(&mut labels, &mut keys));
        }
        let key = if daily { (a.rem_euclid(DAY_S), b - a) } else { (a, b - a) };
        let k = match keys.iter().position(|&k| k == key) {
            Some(k) => k,
            None => {
                labels.push(if daily {
                    format!("{}–{}", hhmm(a), hhmm(b))
                } else {
                    format!("{}–{}", clock_label(a), clock_label(b))
                });
                keys.push(key);
                labels.len() - 1
            }
        };
        starts.push(a);
        segment_bucket.push(k as u32);
        t = b;
    }
    if t < period {
        starts.push(t);
        segment_bucket.push(off_bucket(&mut labels, &mut keys));
    }
    Grid { by: by.clone(), labels, cycle_s: period, starts, segment_bucket, first: 0 }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn plant() -> Plant {
        crate::parse_scenario(
            &std::fs::read_to_string(concat!(
                env!("CARGO_MANIFEST_DIR"),
                "/../scenarios/shifts-setups-lots.yaml"
            ))
            .unwrap(),
            std::path::Path::new(concat!(
                env!("CARGO_MANIFEST_DIR"),
                "/../scenarios/shifts-setups-lots.yaml"
            )),
        )
        .unwrap()
    }

    #[test]
    fn names_read_back() {
        for s in ["hour-of-day", "shift", "shift=press", "day-of-week", "day"] {
            assert_eq!(By::parse(s).unwrap().name(), s);
        }
        assert_eq!(By::parse("period=8 h").unwrap(), By::Period(8.0 * HOUR_S));
        let e = By::parse("hour-of-week").unwrap_err();
        assert!(e.contains("hour-of-day"), "{e}");
        assert!(By::parse("period=10 s").is_err());
        assert!(By::parse("period").is_err());
    }

    #[test]
    fn hours_fold_every_day_onto_one() {
        let p = plant();
        let g = Grid::new(&By::HourOfDay, &p, 0.0, 3.0 * DAY_S).unwrap();
        assert_eq!(g.len(), 24);
        assert_eq!(g.locate(10.5 * HOUR_S), (10, 11.0 * HOUR_S));
        assert_eq!(g.locate(DAY_S + 10.0 * HOUR_S), (10, DAY_S + 11.0 * HOUR_S));
        assert_eq!(g.labels[10], "10:00–11:00");
        let mut seen = [0.0; 24];
        g.split(9.5 * HOUR_S, 11.25 * HOUR_S, |k, s| seen[k] += s);
        assert_eq!((seen[9], seen[10], seen[11]), (1800.0, 3600.0, 900.0));
    }

    #[test]
    fn days_and_periods_count_from_the_start_of_the_run() {
        let p = plant();
        let g = Grid::new(&By::Day, &p, 1.5 * DAY_S, 4.0 * DAY_S).unwrap();
        assert_eq!(g.labels, ["day 2", "day 3", "day 4"]);
        assert_eq!(g.locate(1.5 * DAY_S).0, 0);
        assert_eq!(g.locate(3.2 * DAY_S), (2, 4.0 * DAY_S));
        let g = Grid::new(&By::Period(8.0 * HOUR_S), &p, 0.0, DAY_S).unwrap();
        assert_eq!(g.labels, ["day 1 00:00", "day 1 08:00", "day 1 16:00"]);
        let e = Grid::new(&By::Period(2.0 * DAY_S), &p, 0.0, DAY_S).unwrap_err();
        assert!(e.contains("longer than the observation window"), "{e}");
        let e = Grid::new(&By::Period(60.0), &p, 0.0, 30.0 * DAY_S).unwrap_err();
        assert!(e.contains("ceiling"), "{e}");
    }

    #[test]
    fn shifts_group_by_clock_time_with_the_rest_off_shift() {
        let p = plant();
        let g = Grid::new(&By::Shift(Some("press".into())), &p, 0.0, 14.0 * DAY_S).unwrap();
        // Two shifts a weekday (06:00–14:00, 14:00–22:00) and the time off.
        assert_eq!(g.labels, ["off shift", "06:00–14:00", "14:00–22:00"]);
        assert_eq!(g.locate(7.0 * HOUR_S).0, 1);
        assert_eq!(g.locate(DAY_S + 15.0 * HOUR_S).0, 2);
        assert_eq!(g.locate(23.0 * HOUR_S).0, 0);
        assert_eq!(g.locate(5.5 * DAY_S).0, 0, "Saturday is off");
        let demo = crate::parse_scenario(
            &std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/../scenarios/demo.yaml")).unwrap(),
            std::path::Path::new("demo.yaml"),
        )
        .unwrap();
        let e = Grid::new(&By::Shift(None), &demo, 0.0, DAY_S).unwrap_err();
        assert!(e.contains("no calendar"), "{e}");
    }
}
