//! Values with units from scenario text: durations to seconds, speeds to metres per second,
//! accelerations to m/s², weights to kilograms.
//!
//! Every time and speed in a scenario carries its unit, because a bare `5`
//! is as likely to mean minutes as seconds and a silent guess would make a
//! plausible-looking but wrong plant. The serde wrappers [`Seconds`] and
//! [`MetresPerSecond`] parse while deserializing, so a bad value is reported
//! with the line it sits on.

use std::fmt;

use serde::de::{self, Deserialize, Deserializer, Visitor};

use crate::limits;

/// Duration units accepted, with their length in seconds.
const DURATION_UNITS: &[(&str, f64)] = &[("s", 1.0), ("min", 60.0), ("h", 3600.0), ("d", 86400.0)];

/// Speed units accepted, with their value in metres per second.
/// The foot and mile are the international ones (1 ft = 0.3048 m, 1 mi = 1609.344 m exactly),
/// so `ft/min` is 0.00508 m/s and `mph` 0.44704 m/s exactly (NIST SP 811, appendix B).
const SPEED_UNITS: &[(&str, f64)] = &[
    ("m/s", 1.0),
    ("m/min", 1.0 / 60.0),
    ("km/h", 1000.0 / 3600.0),
    ("ft/min", FOOT_M / 60.0),
    ("ft/s", FOOT_M),
    ("mph", MILE_M / 3600.0),
];

/// One international foot in metres, exactly.
pub const FOOT_M: f64 = 0.3048;

/// One international mile in metres, exactly (5280 ft).
pub const MILE_M: f64 = 1609.344;

/// Length units accepted, with their value in metres.
const LENGTH_UNITS: &[(&str, f64)] = &[("m", 1.0), ("mm", 0.001), ("ft", FOOT_M)];

/// The hint given when a length's unit is wrong.
pub const LENGTH_EXAMPLE: &str = "write \"12 m\", \"40 ft\" or \"1500 mm\" (a bare number is in the scenario's `units.length`, metres unless it says otherwise)";

/// Acceleration units accepted (both spellings of m/s²), with their value in m/s².
const ACCELERATION_UNITS: &[(&str, f64)] = &[("m/s2", 1.0), ("m/s²", 1.0)];

/// Weight units accepted, with their value in kilograms.
const WEIGHT_UNITS: &[(&str, f64)] = &[("kg", 1.0), ("t", 1000.0)];

/// The hint given when an acceleration has no unit.
pub const ACCELERATION_EXAMPLE: &str = "write \"0.5 m/s2\" or \"0.5 m/s²\"";

/// The hint given when a weight has no unit.
pub const WEIGHT_EXAMPLE: &str = "write \"800 kg\" or \"1.2 t\"";

/// The hint given when a duration has no unit.
pub const DURATION_EXAMPLE: &str = "write \"5 min\" or \"300 s\"";

/// The hint given when a speed has no unit.
pub const SPEED_EXAMPLE: &str = "write \"1.5 m/s\", \"90 m/min\", \"8 km/h\", \"300 ft/min\" or \"5 mph\"";

/// Parses a duration such as `"30 s"`, `"5 min"`, `"2 h"`, `"1.5 d"` or `"5min"` into seconds.
///
/// Negative values parse (the caller decides whether they make sense, so it
/// can say which field is wrong); NaN and infinities do not.
///
/// The result must also be finite after conversion and at most
/// [`limits::MAX_DURATION_S`] either way, so that every duration in a
/// scenario or on the command line gets the ceiling at once.
pub fn parse_duration(text: &str) -> Result<f64, String> {
    let s = parse_with_units(text, DURATION_UNITS, "duration", DURATION_EXAMPLE)?;
    limits::check_duration(text, s)
}

/// Parses a speed such as `"2.0 m/s"`, `"8 km/h"` or `"90 m/min"` into metres per second.
///
/// A speed above [`limits::MAX_SPEED_M_S`], or above zero but below
/// [`limits::MIN_SPEED_M_S`], is refused here; zero and negative speeds
/// parse, for the caller to name the field.
pub fn parse_speed(text: &str) -> Result<f64, String> {
    let v = parse_with_units(text, SPEED_UNITS, "speed", SPEED_EXAMPLE)?;
    if v.abs() > limits::MAX_SPEED_M_S || (v > 0.0 && v < limits::MIN_SPEED_M_S) {
        return Err(format!(
            "speed \"{}\" is outside {} to {} m/s: {}",
            text.trim(),
            limits::MIN_SPEED_M_S,
            limits::MAX_SPEED_M_S,
            limits::SPEED_WHY
        ));
    }
    Ok(v)
}

/// Parses a length such as `"12 m"`, `"40 ft"` or `"1500 mm"` into metres.
///
/// Only text with a unit comes here; a bare YAML number is metres and never
/// reaches this function (see [`Metres`]). The ceilings on lengths and
/// coordinates are the caller's, which knows which one applies.
pub fn parse_length(text: &str) -> Result<f64, String> {
    parse_with_units(text, LENGTH_UNITS, "length", LENGTH_EXAMPLE)
}

/// Parses an acceleration such as `"0.5 m/s2"` or `"0.5 m/s²"` into m/s².
pub fn parse_acceleration(text: &str) -> Result<f64, String> {
    // The unit ends in a digit or a superscript, which the letter-run split
    // of the other quantities would cut off, so match the known endings.
    let t = text.trim();
    match ACCELERATION_UNITS.iter().find(|(u, _)| t.ends_with(u)) {
        Some((u, factor)) => {
            let number = t[..t.len() - u.len()].trim();
            if number.is_empty() {
                return Err(format!("acceleration \"{t}\" has no number; {ACCELERATION_EXAMPLE}"));
            }
            let value: f64 = number.parse().map_err(|_| {
                format!("acceleration \"{t}\": \"{number}\" is not a number; {ACCELERATION_EXAMPLE}")
            })?;
            if !value.is_finite() {
                return Err(format!("acceleration \"{t}\" is not finite"));
            }
            let a = value * factor;
            if a.abs() > limits::MAX_ACCELERATION_M_S2 || (a > 0.0 && a < limits::MIN_ACCELERATION_M_S2) {
                return Err(format!(
                    "acceleration \"{t}\" is outside {} to {} m/s²: {}",
                    limits::MIN_ACCELERATION_M_S2,
                    limits::MAX_ACCELERATION_M_S2,
                    limits::ACCELERATION_WHY
                ));
            }
            Ok(a)
        }
        None if t.parse::<f64>().is_ok() => {
            Err(format!("acceleration \"{t}\" needs a unit: {ACCELERATION_EXAMPLE}"))
        }
        None => Err(format!(
            "acceleration \"{t}\": unknown or missing unit (accepted: {}); {ACCELERATION_EXAMPLE}",
            unit_list(ACCELERATION_UNITS)
        )),
    }
}

/// Parses a weight such as `"800 kg"` or `"1.2 t"` into kilograms.
pub fn parse_weight(text: &str) -> Result<f64, String> {
    let w = parse_with_units(text, WEIGHT_UNITS, "weight", WEIGHT_EXAMPLE)?;
    if w.abs() > limits::MAX_WEIGHT_KG {
        return Err(format!(
            "weight \"{}\" is more than the ceiling of {}: {}",
            text.trim(),
            format_weight(limits::MAX_WEIGHT_KG),
            limits::MAX_WEIGHT_WHY
        ));
    }
    Ok(w)
}

/// Formats kilograms for messages: tonnes from 1000 kg up.
pub fn format_weight(kg: f64) -> String {
    if kg.abs() >= 1000.0 {
        format!("{} t", trim_number(kg / 1000.0))
    } else {
        format!("{} kg", trim_number(kg))
    }
}

/// Formats seconds in the largest unit that keeps the number readable, for messages.
pub fn format_duration(seconds: f64) -> String {
    let a = seconds.abs();
    let (value, unit) = if a >= 86400.0 {
        (seconds / 86400.0, "d")
    } else if a >= 3600.0 {
        (seconds / 3600.0, "h")
    } else if a >= 60.0 {
        (seconds / 60.0, "min")
    } else {
        (seconds, "s")
    };
    format!("{} {unit}", trim_number(value))
}

fn trim_number(v: f64) -> String {
    let s = format!("{v:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

fn unit_list(units: &[(&str, f64)]) -> String {
    units.iter().map(|(u, _)| *u).collect::<Vec<_>>().join(", ")
}

fn parse_with_units(text: &str, units: &[(&str, f64)], what: &str, example: &str) -> Result<f64, String> {
    let text = text.trim();
    // The unit is the trailing run of letters and slashes; splitting there
    // (rather than at the first letter) keeps exponents like `1e3 s` intact.
    let split = text
        .char_indices()
        .rev()
        .take_while(|(_, c)| c.is_ascii_alphabetic() || *c == '/')
        .last()
        .map_or(text.len(), |(i, _)| i);
    let (number, unit) = (text[..split].trim(), &text[split..]);
    if number.is_empty() {
        return Err(format!("{what} \"{text}\" has no number; {example}"));
    }
    let value: f64 =
        number.parse().map_err(|_| format!("{what} \"{text}\": \"{number}\" is not a number; {example}"))?;
    if !value.is_finite() {
        return Err(format!("{what} \"{text}\" is not finite"));
    }
    if unit.is_empty() {
        return Err(format!("{what} \"{text}\" needs a unit: {example}"));
    }
    match units.iter().find(|(u, _)| *u == unit) {
        Some((_, factor)) => Ok(value * factor),
        None => Err(format!("unknown {what} unit \"{unit}\" in \"{text}\" (accepted: {})", unit_list(units))),
    }
}

/// A duration in seconds, deserialized from text with a unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Seconds(pub f64);

/// A speed in metres per second, deserialized from text with a unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MetresPerSecond(pub f64);

/// A length in metres: a bare YAML number (metres, as every length was before
/// units were accepted) or text with a unit (`"40 ft"`, `"1500 mm"`, `"12 m"`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Metres(pub f64);

impl<'de> Deserialize<'de> for Metres {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct V;
        impl<'de> Visitor<'de> for V {
            type Value = Metres;
            fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
                write!(f, "a length: a number of metres or {LENGTH_EXAMPLE}")
            }
            fn visit_str<E: de::Error>(self, v: &str) -> Result<Metres, E> {
                parse_length(v).map(Metres).map_err(E::custom)
            }
            fn visit_f64<E: de::Error>(self, v: f64) -> Result<Metres, E> {
                Ok(Metres(v))
            }
            fn visit_i64<E: de::Error>(self, v: i64) -> Result<Metres, E> {
                Ok(Metres(v as f64))
            }
            fn visit_u64<E: de::Error>(self, v: u64) -> Result<Metres, E> {
                Ok(Metres(v as f64))
            }
        }
        d.deserialize_any(V)
    }
}

/// `#[serde(deserialize_with)]` for a point `[x, y]` whose coordinates are lengths ([`Metres`]),
/// so the field stays `[f64; 2]` in metres for every reader.
pub fn point_in_metres<'de, D: Deserializer<'de>>(d: D) -> Result<[f64; 2], D::Error> {
    let [x, y] = <[Metres; 2]>::deserialize(d)?;
    Ok([x.0, y.0])
}

/// `#[serde(default, deserialize_with)]` for an optional length ([`Metres`]) kept as `Option<f64>` in metres.
pub fn optional_metres<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    Ok(Option::<Metres>::deserialize(d)?.map(|m| m.0))
}

/// An acceleration in m/s², deserialized from text with a unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MetresPerSecondSquared(pub f64);

/// A weight in kilograms, deserialized from text with a unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Kilograms(pub f64);

struct UnitVisitor {
    what: &'static str,
    example: &'static str,
    parse: fn(&str) -> Result<f64, String>,
}

impl<'de> Visitor<'de> for UnitVisitor {
    type Value = f64;

    fn expecting(&self, f: &mut fmt::Formatter) -> fmt::Result {
        write!(f, "a {} with a unit ({})", self.what, self.example)
    }

    fn visit_str<E: de::Error>(self, v: &str) -> Result<f64, E> {
        (self.parse)(v).map_err(E::custom)
    }

    fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
        Err(E::custom(format!("the {} {v} has no unit: {}", self.what, self.example)))
    }

    fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
        self.visit_f64(v as f64)
    }

    fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
        self.visit_f64(v as f64)
    }
}

impl<'de> Deserialize<'de> for Seconds {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(UnitVisitor { what: "duration", example: DURATION_EXAMPLE, parse: parse_duration })
            .map(Seconds)
    }
}

impl<'de> Deserialize<'de> for MetresPerSecond {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(UnitVisitor { what: "speed", example: SPEED_EXAMPLE, parse: parse_speed })
            .map(MetresPerSecond)
    }
}

impl<'de> Deserialize<'de> for MetresPerSecondSquared {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(UnitVisitor {
            what: "acceleration",
            example: ACCELERATION_EXAMPLE,
            parse: parse_acceleration,
        })
        .map(MetresPerSecondSquared)
    }
}

impl<'de> Deserialize<'de> for Kilograms {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(UnitVisitor { what: "weight", example: WEIGHT_EXAMPLE, parse: parse_weight })
            .map(Kilograms)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations_convert_to_seconds() {
        assert_eq!(parse_duration("30 s"), Ok(30.0));
        assert_eq!(parse_duration("5 min"), Ok(300.0));
        assert_eq!(parse_duration("5min"), Ok(300.0));
        assert_eq!(parse_duration("2 h"), Ok(7200.0));
        assert_eq!(parse_duration("1.5 d"), Ok(129600.0));
        assert_eq!(parse_duration("1e1 s"), Ok(10.0));
        assert_eq!(parse_duration("-2 s"), Ok(-2.0));
    }

    #[test]
    fn speeds_convert_to_metres_per_second() {
        assert_eq!(parse_speed("2.0 m/s"), Ok(2.0));
        assert_eq!(parse_speed("90 m/min"), Ok(1.5));
        let kmh = parse_speed("9 km/h").unwrap();
        assert!((kmh - 2.5).abs() < 1e-12);
    }

    #[test]
    fn bad_values_say_what_to_write() {
        assert!(parse_duration("300").unwrap_err().contains("write \"5 min\""));
        let e = parse_duration("5 weeks").unwrap_err();
        assert!(e.contains("accepted: s, min, h, d"), "{e}");
        assert!(parse_duration("min").unwrap_err().contains("no number"));
        assert!(parse_duration("inf s").is_err());
        assert!(parse_speed("3 knots").unwrap_err().contains("m/s, m/min, km/h, ft/min, ft/s, mph"));
        assert!(parse_length("3 yd").unwrap_err().contains("accepted: m, mm, ft"));
        assert!(parse_length("12").unwrap_err().contains("needs a unit"));
    }

    #[test]
    fn values_beyond_a_ceiling_are_refused() {
        let e = parse_duration("1e308 d").unwrap_err();
        assert!(e.contains("longer than the ceiling of 100 years"), "{e}");
        assert!(parse_duration("-1e308 d").is_err());
        assert_eq!(parse_duration("100 d"), Ok(8_640_000.0));
        assert!(parse_speed("1e308 m/s").unwrap_err().contains("outside"));
        assert!(parse_speed("1e-9 m/s").is_err());
        assert_eq!(parse_speed("0 m/s"), Ok(0.0), "zero is left for the field's own message");
        assert!(parse_acceleration("1e300 m/s2").unwrap_err().contains("outside"));
        assert!(parse_acceleration("5e-324 m/s2").unwrap_err().contains("outside"));
        assert_eq!(parse_acceleration("0 m/s2"), Ok(0.0), "zero is left for the field's own message");
        assert!(parse_weight("1e300 kg").unwrap_err().contains("ceiling"));
    }

    #[test]
    fn accelerations_and_weights_convert() {
        assert_eq!(parse_acceleration("0.5 m/s2"), Ok(0.5));
        assert_eq!(parse_acceleration("0.5 m/s²"), Ok(0.5));
        assert_eq!(parse_acceleration(" 1e-1m/s2 "), Ok(0.1));
        assert!(parse_acceleration("0.5").unwrap_err().contains("needs a unit"));
        assert!(parse_acceleration("0.5 g").unwrap_err().contains("m/s2, m/s²"));
        assert!(parse_acceleration("x m/s2").unwrap_err().contains("\"x\" is not a number"));
        assert_eq!(parse_weight("800 kg"), Ok(800.0));
        assert_eq!(parse_weight("1.2 t"), Ok(1200.0));
        assert!(parse_weight("800").unwrap_err().contains("needs a unit"));
        assert!(parse_weight("2 lb").unwrap_err().contains("accepted: kg, t"));
        assert_eq!(format_weight(800.0), "800 kg");
        assert_eq!(format_weight(1200.0), "1.2 t");
    }

    /// The definitions: NIST Special Publication 811 (2008), appendix B.8 and B.9:
    /// 1 ft = 0.3048 m, 1 mi = 1609.344 m, 1 mi/h = 0.44704 m/s, 1 km/h = 0.2777… m/s
    /// (1/3.6), 1 ft/min = 0.00508 m/s, all exact. Checked to 1e-12: a double's
    /// rounding of one product of these sizes is below 1e-15 relative, so 1e-12 fails
    /// only on a wrong factor, never on rounding.
    #[test]
    fn units_match_their_definitions() {
        let close = |a: f64, b: f64| assert!((a - b).abs() <= 1e-12 * b.abs().max(1.0), "{a} vs {b}");
        close(parse_length("1 ft").unwrap(), 0.3048);
        close(parse_length("1000 ft").unwrap(), 304.8);
        close(parse_length("1 mm").unwrap(), 0.001);
        close(parse_length("2.5 m").unwrap(), 2.5);
        close(parse_speed("1 mph").unwrap(), 0.44704);
        close(parse_speed("1 km/h").unwrap(), 1.0 / 3.6);
        close(parse_speed("1 ft/min").unwrap(), 0.00508);
        close(parse_speed("1 ft/s").unwrap(), 0.3048);
        close(parse_speed("10 mph").unwrap(), 4.4704);
        close(parse_speed("300 ft/min").unwrap(), 1.524);
    }

    #[test]
    fn durations_format_readably() {
        assert_eq!(format_duration(300.0), "5 min");
        assert_eq!(format_duration(90.0), "1.5 min");
        assert_eq!(format_duration(12.0), "12 s");
    }
}
