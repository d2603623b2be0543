//! serde's type errors ("invalid type: string, expected struct SpeedSpec") in the scenario's own words, with an example of the right form.
//!
//! serde names what it expected by Rust type (`f64`, `u32`, `struct
//! SpeedSpec`); a plant engineer wrote YAML and needs to see the YAML that
//! would have worked. The field path says most (`at`, `p`, `per_hour`), so it
//! is asked first; the Rust type is the fallback, and every type the schema
//! uses has a row (the tests feed each one a wrong value).

/// What a field wants, by its name in the file: (field, words with an example, hint).
/// Looked up by the last named segment of the path, so `locations[2].at[0]`
/// finds `at`.
const FIELD_WORDS: &[(&str, &str, &str)] = &[
    (
        "at",
        "a position [x, y]: metres as plain numbers, such as [15, 5], or lengths with a unit, such as [\"50 ft\", \"16 ft\"]",
        "lengths take m, mm or ft; a bare number is metres",
    ),
    ("p", "a probability, such as 0.9 or 90%", ""),
    ("demand_factor", "a factor, such as 1.2 or 120%", ""),
    ("efficiency", "a share of full speed, such as 0.85 or 85%", ""),
    (
        "per_km",
        "an amount of money per kilometre as a plain number, such as 0.4",
        "leave out the currency sign",
    ),
    (
        "per_load_metre",
        "an amount of money per load moved one metre as a plain number, such as 0.02",
        "leave out the currency sign",
    ),
    ("count", "a whole number of movers, such as 3", ""),
    ("machines", "a whole number of machines, such as 2", ""),
    ("capacity", "a whole number, such as 2", ""),
    ("replications", "a whole number of replications, such as 10", ""),
    ("seed", "a whole number, such as 42", ""),
    ("quantity", "a whole number of units, such as 40", ""),
    ("transfer_batch", "a whole number of units, such as 10", ""),
    ("inbound", "a whole number of loads, such as 4", ""),
    ("outbound", "a whole number of loads, such as 2", ""),
    ("movers", "a whole number of movers, such as 1", ""),
    ("length", "a length: metres as a plain number, such as 30, or with a unit, such as \"100 ft\"", ""),
    (
        "neighbour_distance",
        "a distance: metres as a plain number, such as 12, or with a unit, such as \"40 ft\"",
        "",
    ),
    ("k", "a whole number of phases, such as 3", ""),
    ("per_shift", "a number of lots per shift, such as 40", ""),
    ("per_day", "a number of lots per day, such as 80", ""),
    ("per_week", "a number of lots per week, such as 400", ""),
    ("per_month", "a number of lots per month, such as 1700", ""),
    ("days", "a whole number of working days a week, such as 5", ""),
    ("weeks_per_month", "a number of weeks, such as 4.33", ""),
    ("start", "a date-time such as 2026-03-02T00:00", ""),
    ("points", "a list of design points, such as [{ layout: current, demand: 1.2 }]", ""),
];

/// What a Rust type wants, in words with an example, for fields the table above does not name.
/// `struct X` and `enum X` rows carry the type name serde prints.
const TYPE_WORDS: &[(&str, &str)] = &[
    ("f64", "a number, such as 2.5"),
    ("u32", "a whole number of 0 or more, such as 3"),
    ("u64", "a whole number of 0 or more, such as 42"),
    ("a boolean", "true or false"),
    ("a string", "a name or text, such as dock-in"),
    ("a borrowed string", "a name or text, such as dock-in"),
    ("a sequence", "a list, such as [a, b]"),
    ("an array of length 2", "a pair, such as [10, 20]"),
    ("a tuple of size 2", "a pair, such as [5 min, 0.3]"),
    ("a map", "a mapping, such as { key: value }"),
    ("a YAML mapping", "a mapping, such as { key: value }"),
    ("struct Scenario", "a scenario: a mapping that starts `plant: <name>`, with run, locations, departments, layouts and products"),
    ("struct UnitsSpec", "a mapping such as { length: m }"),
    ("struct RunSpec", "a mapping such as { horizon: 5 d, warmup: 1 d, replications: 10 }"),
    ("struct LocationSpec", "a mapping such as { id: bay-a, at: [10, 0] }"),
    ("struct AislesSpec", "a mapping such as { nodes: [{ id: n1, at: [0, 0] }], segments: [{ from: n1, to: n2 }] }"),
    ("struct AisleNodeSpec", "a mapping such as { id: n1, at: [15, 22.5] }"),
    ("struct SegmentSpec", "a mapping such as { from: n1, to: n2, length: 30 }"),
    ("struct DepartmentSpec", "a mapping such as { id: cutting, machines: 2 }"),
    ("struct CalendarSpec", "a mapping such as { shifts: { every: 1 d, on: [[6 h, 14 h]] } }"),
    ("struct SetupsSpec", "a mapping such as { on_change: 20 min }"),
    ("struct BatchSpec", "a mapping such as { max: 6, time: 30 min }"),
    ("struct SetupPairSpec", "a mapping such as { from: bracket, to: housing, time: 30 min }"),
    ("struct StagingSpec", "a mapping such as { inbound: 4, outbound: 2 }"),
    ("struct BreakdownSpec", "a mapping such as { between: { exponential: { mean: 8 h } }, repair: 30 min }"),
    ("struct ChargingSpec", "a mapping such as { every: 6 h, for: 45 min }"),
    ("struct CrewSpec", "a mapping such as { id: machinists, size: 2, cost: { per_hour: 38 } }"),
    ("struct CrewCostSpec", "a mapping such as { per_hour: 38 }"),
    ("struct WalkSpec", "a mapping such as { speed: 1.2 m/s }"),
    ("struct PeopleSpec", "a mapping such as { crew: machinists, for: operation }"),
    ("struct DueSpec", "a mapping such as { within: 3 d }"),
    ("struct ProductSpec", "a mapping such as { id: bracket, demand: { per_hour: 2 }, routing: [...] }"),
    ("struct LotSpec", "a mapping such as { quantity: 40, transfer_batch: 10 }"),
    ("struct LoadSpec", "a mapping such as { weight: 800 kg }"),
    ("struct DemandSpec", "a mapping such as { per_hour: 2.5 } or { per_week: 400 }"),
    ("struct WorkingTimeSpec", "a mapping such as { shifts: { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }, days: 5 }"),
    ("struct ProfileSpec", "a mapping such as { every: 1 h, factors: [0.5, 1.5] }"),
    ("struct OrdersSpec", "a mapping such as { file: orders.csv }"),
    ("struct MeasuredFromToSpec", "a mapping such as { file: flows.csv, per: 8 h }"),
    ("struct StepSpec", "a mapping such as { step: cut, at: cutting, time: 5 min }"),
    ("struct BranchSpec", "a mapping such as { step: ship, p: 0.9 }"),
    ("struct EitherSpec", "a mapping such as { at: press-1, time: 5 min }"),
    ("struct FleetSpec", "a mapping such as { id: forklifts, kind: forklift, count: 2, speed: { loaded: 6 km/h, empty: 8 km/h }, home: dock-in }"),
    ("struct ServesSpec", "a mapping such as { from: saw, to: turning }"),
    ("struct ReserveSpec", "a mapping such as { movers: 1, at: receiving }"),
    ("struct OperatorsSpec", "a mapping such as { efficiency: 0.85 }"),
    ("struct ShiftsSpec", "a mapping such as { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }"),
    ("struct SpeedSpec", "a mapping such as { loaded: 6 km/h, empty: 8 km/h }"),
    ("struct HandlingSpec", "a mapping such as { load: 30 s, unload: 20 s }"),
    ("struct CostSpec", "a mapping such as { per_hour: 38, per_km: 0.4 }"),
    ("struct CostsSpec", "a mapping such as { per_load_metre: 0.02 }"),
    ("struct LayoutFileSpec", "a mapping such as { layouts: { proposed: { cutting: bay-a } } }"),
    ("struct SearchSpec", "a mapping such as { pinned: { receiving: dock-in } }"),
    ("struct TableSpec", "a table: a mapping such as { table: routings.csv, columns: { part: Part, operation: OpNo } }"),
    ("struct FloorCostSpec", "a mapping such as { department: painting, location: bay-b, per_hour: 5 }"),
    ("struct PlanSpec", "a plan: a mapping such as { scenario: demo.yaml, replications: 10, factors: { demand: [0.8, 1.2] } }"),
    ("struct variant DistSpec::Uniform", "a mapping such as { min: 2 min, max: 6 min }"),
    ("struct variant DistSpec::Triangular", "a mapping such as { min: 2 min, mode: 3 min, max: 6 min }"),
    ("struct variant DistSpec::Exponential", "a mapping such as { mean: 5 min }"),
    ("struct variant DistSpec::Normal", "a mapping such as { mean: 5 min, sd: 1 min }"),
    ("struct variant DistSpec::Lognormal", "a mapping such as { mean: 5 min, cv: 0.5 }"),
    ("struct variant DistSpec::Gamma", "a mapping such as { mean: 5 min, cv: 0.5 }"),
    ("struct variant DistSpec::Erlang", "a mapping such as { k: 3, mean: 5 min }"),
    ("struct variant DistSpec::Weibull", "a mapping such as { scale: 5 min, shape: 1.5 }"),
    ("newtype variant DistSpec::Constant", "a duration such as 5 min"),
    ("newtype variant DistSpec::Empirical", "a list of [value, probability] pairs, such as [[4 min, 0.2], [6 min, 0.8]]"),
    ("enum DistSpec", "a distribution such as { exponential: { mean: 5 min } }"),
    ("enum DistanceSpec", "rectilinear, euclidean, aisles or { matrix: distances.csv }"),
    ("enum FleetChoiceSpec", "first-listed or nearest-idle"),
    ("enum ShiftEndSpec", "finish or pause"),
    ("enum PersonForSpec", "setup, operation or loading"),
    ("enum CountedInSpec", "clock-time or busy-time"),
    ("enum InterruptedSpec", "resume or restart"),
    ("enum WhenFullSpec", "hold or turn-away"),
    ("enum QueueOrderSpec", "fifo, priority, earliest-due or shortest-time"),
    ("enum DockSpec", "receiving or shipping"),
    ("enum LoadStartSpec", "first-load or last-load"),
    ("enum MovesSpec", "instant"),
    ("enum KindSpec", "forklift, tow-cart or walker"),
    ("enum DispatchSpec", "nearest-idle, first-come, nearest-request or reserve"),
    ("enum IdleSpec", "stay, go-home or park"),
];

/// Words that give away a Rust type rather than a YAML form; no message shown
/// to a user may contain one (the tests check every message against this list).
pub const RUST_WORDS: &[&str] = &[
    "struct ",
    "enum ",
    "variant ",
    "f64",
    "f32",
    "u32",
    "u64",
    "usize",
    "i64",
    "i32",
    "Vec<",
    "Option<",
    "Option value",
    "tuple",
    "newtype",
    "unit value",
    "borrowed",
];

/// Said of a type the tables lack: vague, but never Rust.
const FALLBACK: &str = "a value of another form";

/// Rewrites serde's "invalid type/value/length ..., expected ..." for the
/// value at `path`; `None` when `msg` is not such a message.
pub(crate) fn type_error(msg: &str, path: &str) -> Option<(String, Option<String>)> {
    let (got, expected) = if let Some(rest) =
        msg.strip_prefix("invalid type: ").or_else(|| msg.strip_prefix("invalid value: "))
    {
        let (got, expected) = rest.rsplit_once(", expected ")?;
        (got_words(got), expected)
    } else if let Some(rest) = msg.strip_prefix("invalid length ") {
        let (n, expected) = rest.split_once(", expected ")?;
        let n = n.trim();
        (format!("a list of {n} {}", if n == "1" { "item" } else { "items" }), expected)
    } else {
        return None;
    };
    let (words, hint) = expected_words(path, expected);
    Some((format!("expected {words}, got {got}"), hint))
}

/// What the field at `path` should hold, in words with an example, and a hint where one helps.
pub(crate) fn expected_words(path: &str, expected: &str) -> (String, Option<String>) {
    let field = last_field(path);
    let parent_is = |name: &str| path.split(['.', '[']).any(|s| s == name);
    // The same field name means different things in different places.
    let special = match field {
        // A demand profile's factors; an experiment plan's `factors` is a mapping.
        "factors" if parent_is("profile") => {
            Some(("a list of factors, such as [0.5, 1.5] or [50%, 150%]", ""))
        }
        // A plan's horizon and warm-up are text; the scenario's are read by the duration parser.
        "horizon" | "warmup" => Some(("a duration, such as \"20 d\"", "")),
        "factors" => Some((
            "a mapping of factors to their levels, such as { layout: [current, proposed], demand: [0.8, 1.2] }",
            "",
        )),
        "per_hour" if parent_is("demand") => Some(("a number of lots per hour, such as 2.5", "")),
        "per_hour" => Some((
            "an amount of money per hour as a plain number, such as 38",
            "leave out the currency sign: `per_hour: 38`",
        )),
        _ => None,
    };
    // The field table describes a number or a pair; when serde wanted a name
    // or a mapping there, the type table says it better.
    let by_field = special.or_else(|| {
        FIELD_WORDS.iter().find(|(f, _, _)| *f == field).map(|(_, w, h)| (*w, *h)).filter(|_| {
            !expected.starts_with("struct") && !expected.starts_with("enum") && !expected.contains("string")
        })
    });
    if let Some((w, h)) = by_field {
        return (w.to_string(), (!h.is_empty()).then(|| h.to_string()));
    }
    if let Some((_, w)) = TYPE_WORDS.iter().find(|(t, _)| *t == expected) {
        return (w.to_string(), None);
    }
    if let Some(ty) = expected.strip_prefix("struct variant ") {
        // A variant the table lacks: say it is a mapping of the family's parameters.
        let family = ty.rsplit("::").next().unwrap_or(ty).to_lowercase();
        return (format!("a mapping of the {family} parameters"), None);
    }
    if RUST_WORDS.iter().any(|w| expected.contains(w)) {
        // A type the table lacks: better vague than in Rust.
        return (FALLBACK.to_string(), Some("see docs/scenario-format.md for this field".into()));
    }
    // Our own visitors already describe what they want in words.
    (expected.to_string(), None)
}

/// The last named segment of a path such as `products[0].routing[1].then[0].p`
/// or `locations[2].at[0]`: `p`, `at`.
fn last_field(path: &str) -> &str {
    let mut p = path;
    while let Some(stripped) = p.strip_suffix(']') {
        match stripped.rfind('[') {
            Some(i) => p = &stripped[..i],
            None => break,
        }
    }
    p.rsplit('.').next().unwrap_or(p)
}

/// serde's description of the value found (`string "1.3 m/s"`, `floating
/// point `1.5``, `map`) as the file showed it.
fn got_words(got: &str) -> String {
    if let Some(s) = got.strip_prefix("string ") {
        return s.to_string();
    }
    // A whole number past 64 bits: serde says "integer `N` as u128".
    if let Some(v) = got.strip_prefix("integer `").and_then(|v| v.split_once("` as ")) {
        return format!("{}, which is too large (the largest whole number is {})", v.0, u64::MAX);
    }
    for prefix in ["floating point ", "integer ", "boolean ", "character "] {
        if let Some(v) = got.strip_prefix(prefix) {
            return v.trim_matches('`').to_string();
        }
    }
    match got {
        "map" => "a mapping".into(),
        "sequence" => "a list".into(),
        "unit value" | "Option value" => "nothing".into(),
        "unit variant" | "enum" | "newtype variant" | "tuple variant" | "struct variant" => {
            "a tagged value".into()
        }
        other if RUST_WORDS.iter().any(|w| other.contains(w)) => "a value of another form".into(),
        other => other.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::schema::*;
    use crate::units::{Kilograms, MetresPerSecond, MetresPerSecondSquared, Seconds};
    use serde::de::DeserializeOwned;

    /// Wrong values of every shape: each type refuses most of them.
    const PROBES: &[&str] = &[
        "word",
        "1.3 m/s",
        "1.5",
        "-1",
        "4294967296000",
        "true",
        "~",
        "[1, 2, 3]",
        "[[1]]",
        "[[word, word]]",
        "{ zzz: 1 }",
        "{ uniform: 5 }",
        "{ triangular: [1] }",
        "{ exponential: word }",
        "{ normal: 1 }",
        "{ lognormal: 1 }",
        "{ gamma: 1 }",
        "{ erlang: { k: word, mean: 5 min } }",
        "{ weibull: 1 }",
        "{ constant: [1] }",
        "{ empirical: 5 }",
        "{ empirical: [[5 min, word]] }",
        "{ matrix: 5 }",
    ];

    /// Every message shown for `T` fed each probe.
    fn messages<T: DeserializeOwned>() -> Vec<String> {
        PROBES
            .iter()
            .filter_map(|probe| {
                let de = serde_norway::Deserializer::from_str(probe);
                serde_path_to_error::deserialize::<_, T>(de)
                    .err()
                    .map(|e| format!("{probe} -> {}", super::super::schema_error(&e, "f.yaml")))
            })
            .collect()
    }

    macro_rules! covered {
        ($($t:ty),* $(,)?) => {
            vec![$((stringify!($t), messages::<$t>())),*]
        };
    }

    /// Every type the schema deserializes, with the messages it gives for wrong values.
    fn every_type() -> Vec<(&'static str, Vec<String>)> {
        covered![
            Scenario,
            FleetChoiceSpec,
            UnitsSpec,
            RunSpec,
            LocationSpec,
            AislesSpec,
            AisleNodeSpec,
            SegmentSpec,
            DistanceSpec,
            DistanceField,
            MatrixSource,
            DepartmentSpec,
            WorkingTimeSpec,
            CalendarSpec,
            ShiftEndSpec,
            SetupsSpec,
            BatchSpec,
            SetupPairSpec,
            StagingSpec,
            BreakdownSpec,
            CountedInSpec,
            InterruptedSpec,
            WhenFullSpec,
            QueueOrderSpec,
            DueSpec,
            ChargingSpec,
            CrewSpec,
            CrewCostSpec,
            WalkSpec,
            PeopleSpec,
            PersonForSpec,
            DockSpec,
            Ordered<String>,
            Ordered<Ordered<String>>,
            Ordered<u32>,
            ProductSpec,
            LotSpec,
            LoadStartSpec,
            LoadSpec,
            DemandSpec,
            ProfileSpec,
            OrdersSpec,
            StepSpec,
            BranchSpec,
            EitherSpec,
            TimeSpec,
            DistSpec,
            MovesSpec,
            FleetSpec,
            ServesSpec,
            ReserveSpec,
            OperatorsSpec,
            ShiftsSpec,
            KindSpec,
            DispatchSpec,
            IdleSpec,
            SpeedSpec,
            HandlingSpec,
            CostSpec,
            CostsSpec,
            LayoutFileSpec,
            SearchSpec,
            FloorCostSpec,
            TableSpec,
            Listed<LocationSpec>,
            Entry<DepartmentSpec>,
            MeasuredFromToSpec,
            Layouts,
            LayoutValue,
            Share,
            Seconds,
            MetresPerSecond,
            MetresPerSecondSquared,
            Kilograms,
            f64,
            u32,
            u64,
            bool,
            String,
            Vec<String>,
            Vec<f64>,
            [f64; 2],
            [String; 2],
            [Seconds; 2],
            Vec<(Seconds, Share)>,
            Vec<Vec<f64>>,
            Vec<Vec<String>>,
            Option<u32>,
        ]
    }

    /// Names of the types `schema.rs` deserializes: derived or written by hand.
    fn schema_type_names() -> Vec<String> {
        let src = include_str!("schema.rs");
        let mut names = Vec::new();
        let mut derives = false;
        for line in src.lines().map(str::trim) {
            if line.starts_with("#[derive(") {
                derives = line.contains("Deserialize");
            } else if let Some(rest) =
                line.strip_prefix("pub(crate) struct ").or_else(|| line.strip_prefix("pub(crate) enum "))
            {
                let name: String = rest.chars().take_while(|c| c.is_alphanumeric()).collect();
                if derives {
                    names.push(name);
                }
                derives = false;
            } else if let Some((_, rest)) = line.split_once("Deserialize<'de> for ") {
                names.push(rest.chars().take_while(|c| c.is_alphanumeric()).collect());
            }
        }
        names.sort();
        names.dedup();
        names
    }

    /// The first Rust word a message leaks: a std type, the fallback words
    /// (a type with no row in TYPE_WORDS: a gap, not a pass), or one of `ours`.
    fn rust_word_in(m: &str, ours: &[String]) -> Option<String> {
        let words: Vec<&str> = m.split(|c: char| !c.is_alphanumeric()).collect();
        RUST_WORDS
            .iter()
            .chain(&[FALLBACK])
            .find(|w| m.contains(*w))
            .map(|w| w.to_string())
            .or_else(|| ours.iter().find(|n| words.contains(&n.as_str())).cloned())
    }

    #[test]
    fn every_schema_type_is_probed() {
        let probed: Vec<String> =
            every_type().iter().map(|(t, _)| t.split('<').next().unwrap().trim().to_string()).collect();
        let names = schema_type_names();
        assert!(names.len() > 40, "found only {names:?}");
        let missing: Vec<&String> = names.iter().filter(|n| !probed.contains(n)).collect();
        assert!(missing.is_empty(), "add these schema types to `every_type`: {missing:?}");
    }

    #[test]
    fn no_message_names_a_rust_type() {
        let mut ours = schema_type_names();
        ours.extend(
            ["Seconds", "MetresPerSecond", "MetresPerSecondSquared", "Kilograms", "String"].map(String::from),
        );
        let mut bad = Vec::new();
        let mut count = 0;
        for (ty, msgs) in every_type() {
            for m in msgs {
                count += 1;
                if let Some(w) = rust_word_in(&m, &ours) {
                    bad.push(format!("{ty}: {w:?} in: {m}"));
                }
            }
        }
        assert!(count > 500, "only {count} messages");
        assert!(bad.is_empty(), "{} messages name a Rust type:\n{}", bad.len(), bad.join("\n"));
    }

    #[test]
    fn the_issue_examples_read_as_yaml() {
        let (m, _) =
            type_error(r#"invalid type: string "1.3 m/s", expected struct SpeedSpec"#, "fleets[0].speed")
                .unwrap();
        assert_eq!(m, r#"expected a mapping such as { loaded: 6 km/h, empty: 8 km/h }, got "1.3 m/s""#);
        let (m, h) =
            type_error(r#"invalid type: string "$38", expected f64"#, "fleets[0].cost.per_hour").unwrap();
        assert_eq!(m, r#"expected an amount of money per hour as a plain number, such as 38, got "$38""#);
        assert!(h.unwrap().contains("currency"));
        let (m, _) =
            type_error(r#"invalid type: string "15 ft", expected f64"#, "locations[1].at[0]").unwrap();
        assert!(m.starts_with("expected a position [x, y]: metres"), "{m}");
        let (m, _) =
            type_error("invalid length 3, expected an array of length 2", "locations[1].at").unwrap();
        assert!(m.ends_with("got a list of 3 items"), "{m}");
    }

    #[test]
    fn last_field_skips_indices() {
        assert_eq!(last_field("locations[2].at[0]"), "at");
        assert_eq!(last_field("products[0].routing[1].then[0].p"), "p");
        assert_eq!(last_field("demand_factor"), "demand_factor");
    }

    /// Every node of every shipped scenario replaced in turn by wrong values:
    /// the messages a user can meet on real files, not only on bare types.
    #[test]
    fn no_message_on_a_damaged_shipped_scenario_names_a_rust_type() {
        use serde_norway::Value;
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios");
        let mut files: Vec<std::path::PathBuf> = ["demo.yaml", "aisles-demo.yaml", "shifts-setups-lots.yaml"]
            .iter()
            .map(|n| root.join(n))
            .collect();
        files.push(root.join("validation/all-fleet-rules.yaml"));
        files.push(root.join("staging-breakdowns.yaml"));
        let probes: Vec<Value> = ["word", "1.5", "[1, 2, 3]", "{ zzz: 1 }", "true"]
            .iter()
            .map(|p| serde_norway::from_str(p).unwrap())
            .collect();
        // Every path to a node, as a list of steps (key or index).
        fn paths(v: &Value, here: &mut Vec<Value>, out: &mut Vec<Vec<Value>>) {
            match v {
                Value::Mapping(m) => {
                    for (k, child) in m {
                        here.push(k.clone());
                        out.push(here.clone());
                        paths(child, here, out);
                        here.pop();
                    }
                }
                Value::Sequence(s) => {
                    for (i, child) in s.iter().enumerate() {
                        here.push(Value::from(i as u64));
                        out.push(here.clone());
                        paths(child, here, out);
                        here.pop();
                    }
                }
                _ => {}
            }
        }
        fn at<'a>(v: &'a mut Value, path: &[Value]) -> &'a mut Value {
            path.iter().fold(v, |node, step| match (node, step) {
                (Value::Mapping(m), k) => m.get_mut(k).unwrap(),
                (Value::Sequence(s), Value::Number(i)) => &mut s[i.as_u64().unwrap() as usize],
                _ => unreachable!("paths() only walks mappings and sequences"),
            })
        }
        let ours = schema_type_names();
        let (mut bad, mut errors) = (Vec::new(), 0);
        for file in &files {
            let text = std::fs::read_to_string(file).unwrap();
            let doc: Value = serde_norway::from_str(&text).unwrap();
            let mut all = Vec::new();
            paths(&doc, &mut Vec::new(), &mut all);
            for path in &all {
                for probe in &probes {
                    let mut d = doc.clone();
                    *at(&mut d, path) = probe.clone();
                    let Err(e) = crate::parse_scenario(&serde_norway::to_string(&d).unwrap(), file) else {
                        continue;
                    };
                    errors += 1;
                    let m = e.to_string();
                    if let Some(w) = rust_word_in(&m, &ours) {
                        bad.push(format!("{w:?} in: {m}"));
                    }
                }
            }
        }
        assert!(errors > 1000, "only {errors} damaged scenarios were refused");
        bad.sort();
        bad.dedup();
        assert!(bad.is_empty(), "{} messages name a Rust type:\n{}", bad.len(), bad.join("\n"));
    }
}
