//! The serde structs that mirror the scenario YAML, before any name is resolved.
//!
//! Unknown fields are refused everywhere so that a misspelt optional field
//! is an error rather than a silently ignored setting. Times and speeds are
//! parsed here (see [`crate::units`]) so that a missing unit is reported at
//! its line.

use std::fmt;

use serde::de::{self, Deserialize, Deserializer, MapAccess, SeqAccess, Visitor};
use serde::Deserialize as DeriveDeserialize;

use crate::units::{Kilograms, MetresPerSecond, MetresPerSecondSquared, Seconds};

/// A whole scenario file.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct Scenario {
    pub plant: String,
    pub units: Option<UnitsSpec>,
    pub run: RunSpec,
    pub demand_factor: Option<Share>,
    /// The working week that demand `per_shift`, `per_day`, `per_week` and `per_month` is spread over.
    pub working_time: Option<WorkingTimeSpec>,
    pub locations: Listed<LocationSpec>,
    pub distance: Option<DistanceField>,
    pub aisles: Option<AislesSpec>,
    pub departments: Listed<DepartmentSpec>,
    pub layouts: Layouts,
    pub layout_files: Option<Vec<String>>,
    pub search: Option<SearchSpec>,
    pub products: Listed<ProductSpec>,
    /// Routing steps of many products from one table (`tables.rs`).
    pub routings: Option<TableSpec>,
    /// Demand of many products from one table (`tables.rs`).
    pub demand: Option<TableSpec>,
    pub orders: Option<OrdersSpec>,
    pub moves: Option<MovesSpec>,
    pub fleets: Option<Vec<FleetSpec>>,
    pub fleet_choice: Option<FleetChoiceSpec>,
    pub costs: Option<CostsSpec>,
    /// `currency: EUR`: the currency every cost is in, shown beside cost figures.
    pub currency: Option<String>,
    /// `queue_order: priority`: which waiting lot a free machine takes, every department unless it says otherwise.
    pub queue_order: Option<QueueOrderSpec>,
    /// `measured_from_to: { file: flows.csv, per: 8 h }`: a measured from-to chart for
    /// `check` and `search` (read by them: see [`super::measured_source`]).
    pub measured_from_to: Option<MeasuredFromToSpec>,
    /// `crews: [{ id, size, cost, shifts, breaks, home, walk }]`: named pools of people.
    pub crews: Option<Vec<CrewSpec>>,
}

/// One crew: `{ id: machinists, size: 2, cost: { per_hour: 38 }, shifts: ..., breaks: ..., home: DEPT, walk: { speed: 1.2 m/s } }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CrewSpec {
    pub id: String,
    pub size: u32,
    pub cost: Option<CrewCostSpec>,
    pub shifts: Option<ShiftsSpec>,
    pub breaks: Option<Vec<[Seconds; 2]>>,
    pub home: Option<String>,
    pub walk: Option<WalkSpec>,
}

/// `cost: { per_hour: 38 }`: a person's cost per hour.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CrewCostSpec {
    pub per_hour: f64,
}

/// `walk: { speed: 1.2 m/s }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct WalkSpec {
    pub speed: MetresPerSecond,
}

/// A department's `people: { crew: machinists, for: operation, loading: 2 min }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct PeopleSpec {
    pub crew: String,
    #[serde(rename = "for")]
    pub for_: PersonForSpec,
    pub loading: Option<TimeSpec>,
}

/// `for: setup | operation | loading`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum PersonForSpec {
    Setup,
    Operation,
    Loading,
}

/// `queue_order: fifo | priority | earliest-due | shortest-time` (departments),
/// `requests: fifo | priority | earliest-due` (fleets).
#[derive(Debug, Clone, Copy, PartialEq, Eq, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum QueueOrderSpec {
    Fifo,
    Priority,
    EarliestDue,
    ShortestTime,
}

/// `due: { within: 3 d }`: each lot of the product is due this long after its release.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct DueSpec {
    pub within: Seconds,
}

/// `measured_from_to: { file: flows.csv, per: 8 h }`: the file (relative to the
/// scenario) and the period its cells count loads over, as `--from-to` and `--from-to-per`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct MeasuredFromToSpec {
    pub file: String,
    pub per: Seconds,
}

/// `fleet_choice: first-listed | nearest-idle`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum FleetChoiceSpec {
    FirstListed,
    NearestIdle,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct UnitsSpec {
    pub length: String,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RunSpec {
    pub horizon: Seconds,
    pub warmup: Option<Seconds>,
    pub replications: Option<u32>,
    pub seed: Option<u64>,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct LocationSpec {
    pub id: String,
    /// Metres: bare numbers, or lengths with a unit (`["150 ft", "40 ft"]`).
    #[serde(deserialize_with = "crate::units::point_in_metres")]
    pub at: [f64; 2],
    /// The aisle node where movers pick up and drop off (with `distance: aisles`).
    pub node: Option<String>,
    /// Floor area the slot offers, square metres.
    pub area: Option<f64>,
    /// `[width, depth]` of the slot in metres (a list, so that one number can be named as the error).
    pub size: Option<Vec<f64>>,
}

/// `aisles: { nodes: [...], segments: [...] }`: the aisle network for `distance: aisles`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct AislesSpec {
    pub nodes: Vec<AisleNodeSpec>,
    pub segments: Vec<SegmentSpec>,
}

/// `{ id: n1, at: [15, 22.5], zone: true }`: a junction, bend or pick-up/drop-off point (m).
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct AisleNodeSpec {
    pub id: String,
    #[serde(deserialize_with = "crate::units::point_in_metres")]
    pub at: [f64; 2],
    /// Zone control: one mover in the intersection at a time.
    pub zone: Option<bool>,
}

/// `{ from: n1, to: n2, length: 30, one_way: true, speed_limit: 5 km/h, capacity: 1 }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SegmentSpec {
    pub from: String,
    pub to: String,
    /// Metres (a bare number or a length with a unit); the straight line between the nodes when absent.
    #[serde(default, deserialize_with = "crate::units::optional_metres")]
    pub length: Option<f64>,
    pub one_way: Option<bool>,
    pub speed_limit: Option<MetresPerSecond>,
    pub capacity: Option<u32>,
}

/// `rectilinear`, `euclidean`, `{ matrix: ... }` or `aisles`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields, rename_all = "lowercase")]
pub(crate) enum DistanceSpec {
    Rectilinear,
    Euclidean,
    Matrix(MatrixSource),
    Aisles,
}

/// The distance rule, read by hand because the YAML deserializer takes a
/// mapping for an enum only through serde's generic map adapter.
#[derive(Debug)]
pub(crate) struct DistanceField(pub DistanceSpec);

impl<'de> Deserialize<'de> for DistanceField {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = DistanceField;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("rectilinear, euclidean, aisles or { matrix: ... }")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<DistanceField, E> {
                DistanceSpec::deserialize(de::value::StrDeserializer::<E>::new(v)).map(DistanceField)
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<DistanceField, A::Error> {
                DistanceSpec::deserialize(de::value::MapAccessDeserializer::new(m)).map(DistanceField)
            }
        }
        d.deserialize_any(V)
    }
}

/// `matrix: file.csv` or `matrix: [[...], ...]`.
#[derive(Debug)]
pub(crate) enum MatrixSource {
    File(String),
    Inline(Vec<Vec<f64>>),
}

impl<'de> Deserialize<'de> for MatrixSource {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = MatrixSource;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a CSV file name or a list of rows of distances in metres")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<MatrixSource, E> {
                Ok(MatrixSource::File(v.to_string()))
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut s: A) -> Result<MatrixSource, A::Error> {
                let mut rows = Vec::new();
                while let Some(row) = s.next_element::<Vec<f64>>()? {
                    rows.push(row);
                }
                Ok(MatrixSource::Inline(rows))
            }
        }
        d.deserialize_any(V)
    }
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct DepartmentSpec {
    pub id: String,
    pub machines: Option<u32>,
    pub dock: Option<DockSpec>,
    pub staging: Option<StagingSpec>,
    pub breakdowns: Option<BreakdownSpec>,
    pub when_full: Option<WhenFullSpec>,
    pub calendar: Option<CalendarSpec>,
    pub setups: Option<SetupsSpec>,
    /// Floor area the department needs, square metres.
    pub area: Option<f64>,
    /// `[width, depth]` the department needs, metres.
    pub size: Option<Vec<f64>>,
    /// This department's own `queue_order` (over the plant's).
    pub queue_order: Option<QueueOrderSpec>,
    /// A batch machine (see `batches.rs`).
    pub batch: Option<BatchSpec>,
    /// A person from a crew its operations need.
    pub people: Option<PeopleSpec>,
}

/// `batch: { max: 6, min: 2, max_wait: 30 min, time: DIST, per_load: 2 min, together: [[a, b], [c]] }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct BatchSpec {
    pub max: u32,
    pub min: Option<u32>,
    pub max_wait: Option<Seconds>,
    pub time: TimeSpec,
    pub per_load: Option<Seconds>,
    pub together: Option<Vec<Vec<String>>>,
}

/// `calendar: { shifts: { every: 1 d, on: [...] }, breaks: [...], at_shift_end: finish }`:
/// a department's working hours, written as a fleet's operators' are.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CalendarSpec {
    pub shifts: ShiftsSpec,
    pub breaks: Option<Vec<[Seconds; 2]>>,
    pub at_shift_end: Option<ShiftEndSpec>,
}

/// `at_shift_end: finish | pause`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum ShiftEndSpec {
    Finish,
    Pause,
}

/// `setups: { on_change: DIST, pairs: [{ from: A, to: B, time: DIST }] }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SetupsSpec {
    pub on_change: Option<TimeSpec>,
    pub pairs: Option<Vec<SetupPairSpec>>,
}

/// One entry of `setups.pairs`: the setup for a change from product `from` to product `to`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SetupPairSpec {
    pub from: String,
    pub to: String,
    pub time: TimeSpec,
}

/// `staging: { inbound: 4, outbound: 2, overflow: LOCATION }`: finite space at a department.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct StagingSpec {
    pub inbound: Option<u32>,
    pub outbound: Option<u32>,
    pub overflow: Option<String>,
}

/// `breakdowns: { between: DIST, repair: DIST, counted_in: busy-time, interrupted: resume }`.
/// Fleets use the same form without `interrupted`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct BreakdownSpec {
    pub between: TimeSpec,
    pub repair: TimeSpec,
    pub counted_in: Option<CountedInSpec>,
    pub interrupted: Option<InterruptedSpec>,
    /// The crew whose member each repair needs (departments only).
    pub technician: Option<String>,
}

/// `counted_in: clock-time | busy-time`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum CountedInSpec {
    ClockTime,
    BusyTime,
}

/// `interrupted: resume | restart`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum InterruptedSpec {
    Resume,
    Restart,
}

/// `when_full: hold | turn-away` on a receiving dock.
#[derive(Debug, Clone, Copy, PartialEq, Eq, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum WhenFullSpec {
    Hold,
    TurnAway,
}

/// `charging: { every: 6 h, for: 45 min }`: a battery truck's charge cycle.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ChargingSpec {
    pub every: Seconds,
    #[serde(rename = "for")]
    pub for_: Seconds,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, DeriveDeserialize)]
#[serde(rename_all = "lowercase")]
pub(crate) enum DockSpec {
    Receiving,
    Shipping,
}

/// `{ table: FILE, sheet: NAME, columns: { key: Header, ... }, time_unit: min }`:
/// a section read from a table file (CSV, .xlsx, .ods) named relative to the
/// scenario; `columns` maps our field names to the file's header names.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct TableSpec {
    pub table: String,
    pub sheet: Option<String>,
    pub columns: Ordered<String>,
    /// The unit of bare numbers in time columns (routings).
    pub time_unit: Option<String>,
}

/// A section written as a YAML list or read from tables: `- {...}` items,
/// `{ table: ..., columns: ... }`, or a list mixing both
/// (`[ { table: depts.csv, columns: {...} }, { id: rework-cell, machines: 1 } ]`).
/// The tables are expanded in their places before compiling, so compile
/// code reads the list alone (through `Deref`).
#[derive(Debug)]
pub(crate) struct Listed<T> {
    /// The YAML items, in file order.
    pub items: Vec<T>,
    /// The tables, each with its index in the YAML list (`None` for a section that is one table).
    pub tables: Vec<(Option<usize>, TableSpec)>,
}

impl<T> std::ops::Deref for Listed<T> {
    type Target = Vec<T>;
    fn deref(&self) -> &Vec<T> {
        &self.items
    }
}

/// The keys of a table entry; no item of a listed section has a field so named.
const TABLE_KEYS: &[&str] = &["table", "sheet", "columns", "time_unit"];

/// One entry of a listed section: an item, or a table.
pub(crate) enum Entry<T> {
    Item(T),
    Table(TableSpec),
}

/// A mapping whose first key was read already (to tell a table from an item),
/// given back first, the rest read from the file: every value is still read
/// from the scenario's own deserializer, so errors keep their paths and lines.
struct Replay<A> {
    first: Option<String>,
    rest: A,
}

impl<'de, A: MapAccess<'de>> MapAccess<'de> for Replay<A> {
    type Error = A::Error;
    fn next_key_seed<K: de::DeserializeSeed<'de>>(&mut self, seed: K) -> Result<Option<K::Value>, A::Error> {
        match self.first.take() {
            Some(k) => seed.deserialize(de::value::StringDeserializer::<A::Error>::new(k)).map(Some),
            None => self.rest.next_key_seed(seed),
        }
    }
    fn next_value_seed<V: de::DeserializeSeed<'de>>(&mut self, seed: V) -> Result<V::Value, A::Error> {
        self.rest.next_value_seed(seed)
    }
}

impl<'de, T: Deserialize<'de>> Deserialize<'de> for Entry<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V<T>(std::marker::PhantomData<T>);
        impl<'de, T: Deserialize<'de>> Visitor<'de> for V<T> {
            type Value = Entry<T>;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                // serde's own words for the item, which words.rs turns into an example.
                let name = std::any::type_name::<T>().rsplit("::").next().unwrap_or("");
                write!(f, "struct {name}")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Entry<T>, A::Error> {
                let first = m.next_key::<String>()?;
                let table = first.as_deref().is_some_and(|k| TABLE_KEYS.contains(&k));
                let replay = de::value::MapAccessDeserializer::new(Replay { first, rest: m });
                if table {
                    TableSpec::deserialize(replay).map(Entry::Table)
                } else {
                    T::deserialize(replay).map(Entry::Item)
                }
            }
        }
        d.deserialize_map(V(std::marker::PhantomData))
    }
}

impl<'de, T: Deserialize<'de>> Deserialize<'de> for Listed<T> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V<T>(std::marker::PhantomData<T>);
        impl<'de, T: Deserialize<'de>> Visitor<'de> for V<T> {
            type Value = Listed<T>;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a sequence, or a table such as { table: file.csv, columns: { ... } }")
            }
            fn visit_seq<A: SeqAccess<'de>>(self, mut s: A) -> Result<Listed<T>, A::Error> {
                let (mut items, mut tables) = (Vec::new(), Vec::new());
                let mut i = 0;
                while let Some(entry) = s.next_element::<Entry<T>>()? {
                    match entry {
                        Entry::Item(item) => items.push(item),
                        Entry::Table(t) => tables.push((Some(i), t)),
                    }
                    i += 1;
                }
                Ok(Listed { items, tables })
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<Listed<T>, A::Error> {
                let t = TableSpec::deserialize(de::value::MapAccessDeserializer::new(m))?;
                Ok(Listed { items: Vec::new(), tables: vec![(None, t)] })
            }
        }
        d.deserialize_any(V(std::marker::PhantomData))
    }
}

/// `layouts:` as a mapping of layouts, or `{ table: layouts.csv, columns: ... }`
/// (a layout cannot be named `table`). Expanded like [`Listed`].
#[derive(Debug)]
pub(crate) struct Layouts {
    pub map: Ordered<Ordered<String>>,
    pub table: Option<TableSpec>,
}

impl std::ops::Deref for Layouts {
    type Target = Ordered<Ordered<String>>;
    fn deref(&self) -> &Ordered<Ordered<String>> {
        &self.map
    }
}

/// One value under `layouts:`: a layout (a mapping) or a table's file or sheet name.
pub(crate) enum LayoutValue {
    Map(Ordered<String>),
    Text(String),
}

impl<'de> Deserialize<'de> for LayoutValue {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = LayoutValue;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a mapping of names")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<LayoutValue, E> {
                Ok(LayoutValue::Text(v.to_string()))
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<LayoutValue, A::Error> {
                Ordered::deserialize(de::value::MapAccessDeserializer::new(m)).map(LayoutValue::Map)
            }
        }
        d.deserialize_any(V)
    }
}

impl<'de> Deserialize<'de> for Layouts {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Layouts;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a mapping of names")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Layouts, A::Error> {
                let mut pairs = Vec::new();
                while let Some((k, v)) = m.next_entry::<String, LayoutValue>()? {
                    pairs.push((k, v));
                }
                let is_table = pairs.iter().any(|(k, v)| k == "table" && matches!(v, LayoutValue::Text(_)));
                if !is_table {
                    let mut layouts = Vec::new();
                    for (k, v) in pairs {
                        match v {
                            LayoutValue::Map(m) => layouts.push((k, m)),
                            LayoutValue::Text(t) => {
                                return Err(de::Error::invalid_type(de::Unexpected::Str(&t), &self))
                            }
                        }
                    }
                    return Ok(Layouts { map: Ordered(layouts), table: None });
                }
                let (mut table, mut sheet, mut columns) = (None, None, None);
                for (k, v) in pairs {
                    match (k.as_str(), v) {
                        ("table", LayoutValue::Text(t)) => table = Some(t),
                        ("sheet", LayoutValue::Text(t)) => sheet = Some(t),
                        ("columns", LayoutValue::Map(c)) => columns = Some(c),
                        (other, _) => {
                            return Err(de::Error::custom(format!(
                                "a layouts table takes `table`, `sheet` and `columns` (a mapping), not `{other}` \
                                 in that form"
                            )))
                        }
                    }
                }
                let columns = columns.ok_or_else(|| de::Error::missing_field("columns"))?;
                Ok(Layouts {
                    map: Ordered(Vec::new()),
                    table: Some(TableSpec {
                        table: table.unwrap_or_default(),
                        sheet,
                        columns,
                        time_unit: None,
                    }),
                })
            }
        }
        d.deserialize_map(V)
    }
}

/// A YAML mapping read as (key, value) pairs in file order, duplicates kept
/// so that the checks can name them.
#[derive(Debug)]
pub(crate) struct Ordered<V>(pub Vec<(String, V)>);

impl<'de, V: Deserialize<'de>> Deserialize<'de> for Ordered<V> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Vis<V>(std::marker::PhantomData<V>);
        impl<'de, V: Deserialize<'de>> Visitor<'de> for Vis<V> {
            type Value = Ordered<V>;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a mapping of names")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Ordered<V>, A::Error> {
                let mut pairs = Vec::new();
                while let Some((k, v)) = m.next_entry::<String, V>()? {
                    pairs.push((k, v));
                }
                Ok(Ordered(pairs))
            }
        }
        d.deserialize_map(Vis(std::marker::PhantomData))
    }
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ProductSpec {
    pub id: String,
    /// Absent exactly when the product's lots come from the order trace.
    pub demand: Option<DemandSpec>,
    pub enters_at: Option<String>,
    /// Absent when the steps come from the `routings` table; filled in
    /// before compiling (`tables.rs`), so compile code reads it as present.
    pub routing: Option<Vec<StepSpec>>,
    pub load: Option<LoadSpec>,
    pub lot: Option<LotSpec>,
    /// Rank under `queue_order: priority`: 1 is served first.
    pub priority: Option<u32>,
    pub due: Option<DueSpec>,
}

/// `lot: { quantity: 40, transfer_batch: 10, starts_on: first-load }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct LotSpec {
    pub quantity: u32,
    pub transfer_batch: Option<u32>,
    pub starts_on: Option<LoadStartSpec>,
}

/// `starts_on: first-load | last-load`.
#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum LoadStartSpec {
    FirstLoad,
    LastLoad,
}

/// `load: { weight: 800 kg }`: what one lot weighs, for fleets' `max_load`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct LoadSpec {
    pub weight: Kilograms,
}

/// One of `per_hour`, `per_shift`, `per_day`, `per_week`, `per_month` (lots in that time), with an
/// optional profile (with `per_hour` only).
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct DemandSpec {
    pub per_hour: Option<f64>,
    pub per_shift: Option<f64>,
    pub per_day: Option<f64>,
    pub per_week: Option<f64>,
    pub per_month: Option<f64>,
    pub profile: Option<ProfileSpec>,
}

/// `working_time: { shifts: { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }, breaks: [...], days: 5,
/// weeks_per_month: 4.33 }`: what a shift, a day, a week and a month of demand mean in working hours.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct WorkingTimeSpec {
    pub shifts: ShiftsSpec,
    pub breaks: Option<Vec<[Seconds; 2]>>,
    /// Working days a week, counted from Monday; 7 when absent.
    pub days: Option<u32>,
    /// Weeks in a month; 52/12 when absent.
    pub weeks_per_month: Option<f64>,
}

/// `profile: { every: 1 h, factors: [0.5, 1.5] }`: multipliers on `per_hour`, repeating.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ProfileSpec {
    pub every: Seconds,
    pub factors: Vec<Share>,
}

/// `orders: { file: orders.csv, repeat: 7 d }`: an order trace read from CSV.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct OrdersSpec {
    pub file: String,
    pub repeat: Option<Seconds>,
    /// `start: 2026-03-02T00:00`: the time column holds date-times, and time 0 is this
    /// instant (a Monday at 00:00).
    pub start: Option<String>,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct StepSpec {
    pub step: String,
    /// Absent exactly when `either` names the departments (`alternatives.rs`).
    pub at: Option<String>,
    pub time: Option<TimeSpec>,
    pub then: Option<Vec<BranchSpec>>,
    /// `either: [{ at: press1, time: 5 min }, ...]`: alternative departments for this operation.
    pub either: Option<Vec<EitherSpec>>,
    /// How a lot picks one of `either`: `first-free`, `shortest-queue`, `least-work` or `shares`.
    pub rule: Option<String>,
    /// `parts: { impeller: 1, seal-kit: 2 }`: an assembly step, which waits
    /// for these component products before its operation (`assembly.rs`).
    pub parts: Option<Ordered<u32>>,
    /// `into: pump`: a component's last step, where its lot is consumed into
    /// a kit of that product (`assembly.rs`).
    pub into: Option<String>,
}

/// One alternative department of an operation, with its own processing time
/// and, under `rule: shares`, the share of lots sent there.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct EitherSpec {
    pub at: String,
    pub time: Option<TimeSpec>,
    pub share: Option<Share>,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct BranchSpec {
    pub step: String,
    pub p: Share,
}

/// A processing time: a bare duration (constant) or `{ family: { parameters } }`.
#[derive(Debug)]
pub(crate) struct TimeSpec(pub DistSpec);

/// A distribution as written; times in seconds, other parameters plain numbers.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields, rename_all = "lowercase")]
pub(crate) enum DistSpec {
    Constant(Seconds),
    Uniform { min: Seconds, max: Seconds },
    Triangular { min: Seconds, mode: Seconds, max: Seconds },
    Exponential { mean: Seconds },
    Normal { mean: Seconds, sd: Seconds },
    Lognormal { mean: Seconds, cv: Option<f64>, sd: Option<Seconds> },
    Gamma { mean: Option<Seconds>, cv: Option<f64>, shape: Option<f64>, scale: Option<Seconds> },
    Erlang { k: u32, mean: Seconds },
    Weibull { scale: Seconds, shape: f64 },
    Empirical(Vec<(Seconds, Share)>),
}

impl<'de> Deserialize<'de> for TimeSpec {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = TimeSpec;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str(
                    "a duration such as \"5 min\" or a distribution such as { exponential: { mean: 5 min } }",
                )
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<TimeSpec, E> {
                crate::units::parse_duration(v)
                    .map(|s| TimeSpec(DistSpec::Constant(Seconds(s))))
                    .map_err(E::custom)
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<TimeSpec, E> {
                Err(E::custom(format!("the time {v} has no unit: {}", crate::units::DURATION_EXAMPLE)))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<TimeSpec, E> {
                self.visit_f64(v as f64)
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<TimeSpec, E> {
                self.visit_f64(v as f64)
            }
            fn visit_map<A: MapAccess<'de>>(self, m: A) -> Result<TimeSpec, A::Error> {
                DistSpec::deserialize(de::value::MapAccessDeserializer::new(m)).map(TimeSpec)
            }
        }
        d.deserialize_any(V)
    }
}

#[derive(Debug, DeriveDeserialize)]
#[serde(rename_all = "lowercase")]
pub(crate) enum MovesSpec {
    Instant,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct FleetSpec {
    pub id: String,
    pub kind: KindSpec,
    pub count: u32,
    /// Required except for walkers, which have defaults.
    pub speed: Option<SpeedSpec>,
    pub acceleration: Option<MetresPerSecondSquared>,
    pub handling: Option<HandlingSpec>,
    pub cost: Option<CostSpec>,
    pub home: String,
    pub dispatch: Option<DispatchSpec>,
    pub reserve: Option<ReserveSpec>,
    pub when_idle: Option<IdleSpec>,
    pub parking: Option<Vec<String>>,
    pub carries: Option<Vec<String>>,
    pub serves: Option<Vec<ServesSpec>>,
    pub max_load: Option<Kilograms>,
    pub capacity: Option<u32>,
    pub operators: Option<OperatorsSpec>,
    pub breakdowns: Option<BreakdownSpec>,
    pub charging: Option<ChargingSpec>,
    /// Which waiting move request a free mover takes: `fifo` (default), `priority`, `earliest-due`.
    pub requests: Option<QueueOrderSpec>,
}

/// One entry of `serves: [{ from: saw, to: turning }, { to: shipping }]`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ServesSpec {
    pub from: Option<String>,
    pub to: Option<String>,
}

/// `reserve: { movers: 1, at: DEPARTMENT }` for `dispatch: reserve`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ReserveSpec {
    pub movers: u32,
    pub at: Option<String>,
}

/// `operators: { efficiency: 0.85, shifts: { ... }, breaks: [[10 h, 10.5 h]] }`.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct OperatorsSpec {
    pub efficiency: Option<Share>,
    pub shifts: Option<ShiftsSpec>,
    pub breaks: Option<Vec<[Seconds; 2]>>,
}

/// `shifts: { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }`: working windows in a repeating period.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ShiftsSpec {
    pub every: Seconds,
    pub on: Vec<[Seconds; 2]>,
}

#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum KindSpec {
    Forklift,
    TowCart,
    Walker,
}

#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum DispatchSpec {
    NearestIdle,
    FirstCome,
    NearestRequest,
    Reserve,
}

#[derive(Debug, Clone, Copy, DeriveDeserialize)]
#[serde(rename_all = "kebab-case")]
pub(crate) enum IdleSpec {
    Stay,
    GoHome,
    AlwaysHome,
    Park,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SpeedSpec {
    pub loaded: MetresPerSecond,
    pub empty: MetresPerSecond,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct HandlingSpec {
    pub load: Seconds,
    pub unload: Seconds,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CostSpec {
    #[serde(default)]
    pub per_hour: f64,
    #[serde(default)]
    pub per_km: f64,
}

#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct CostsSpec {
    #[serde(default)]
    pub per_load_metre: f64,
}

/// A file of extra layouts (what `layflow search --out` writes).
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct LayoutFileSpec {
    pub layouts: Ordered<Ordered<String>>,
}

/// Rules `layflow search` must respect.
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct SearchSpec {
    pub pinned: Option<Ordered<String>>,
    pub keep_empty: Option<Vec<String>>,
    pub adjacent: Option<Vec<[String; 2]>>,
    pub apart: Option<Vec<[String; 2]>>,
    #[serde(default, deserialize_with = "crate::units::optional_metres")]
    pub neighbour_distance: Option<f64>,
    pub floor_costs: Option<Vec<FloorCostSpec>>,
}

/// A fixed cost of putting a department in a location (a reinforced floor, a vent).
#[derive(Debug, DeriveDeserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct FloorCostSpec {
    pub department: String,
    pub location: String,
    pub per_hour: f64,
}

/// How far branch probabilities or alternatives' shares may sum from 1 (hand-typed decimals).
pub(crate) const BRANCH_SUM_TOLERANCE: f64 = 1e-9;

/// A probability or factor: a plain number (`0.9`, `1.2`) or a percentage
/// (`90%`, `120 %`), which plant people write as often as decimals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Share(pub f64);

/// A number or a percentage (`0.9`, `90%`, `120 %`) as a plain number;
/// the error says which forms are accepted.
///
/// A percentage is divided by 100 rather than multiplied by 0.01: 0.01 is not
/// a double exactly, so `35 × 0.01` is 0.35000000000000003, while `35 / 100` is
/// correctly rounded and so the same double as `0.35` written out.
pub fn parse_factor(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let (digits, divisor) = match t.strip_suffix('%') {
        Some(d) => (d.trim_end(), 100.0),
        None => (t, 1.0),
    };
    match digits.parse::<f64>() {
        Ok(x) if x.is_finite() && !digits.is_empty() => Ok(x / divisor),
        _ => Err(format!("\"{t}\" is not a number or a percentage; write e.g. 0.9 or 90%")),
    }
}

impl<'de> Deserialize<'de> for Share {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Share;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                f.write_str("a number such as 0.9 or a percentage such as 90%")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Share, E> {
                parse_factor(v).map(Share).map_err(|_| E::invalid_value(de::Unexpected::Str(v), &self))
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Share, E> {
                Ok(Share(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Share, E> {
                Ok(Share(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Share, E> {
                Ok(Share(v as f64))
            }
        }
        d.deserialize_any(V)
    }
}
