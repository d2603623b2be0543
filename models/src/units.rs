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
const SPEED_UNITS: &[(&str, f64)] = &[("m/s", 1.0), ("m/min", 1.0 / 60.0), ("km/h", 1000.0 / 3600.0)];

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
pub const SPEED_EXAMPLE: &str = "write \"1.5 m/s\" or \"90 m/min\"";

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
        assert!(parse_speed("3 mph").unwrap_err().contains("m/s, m/min, km/h"));
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

    #[test]
    fn durations_format_readably() {
        assert_eq!(format_duration(300.0), "5 min");
        assert_eq!(format_duration(90.0), "1.5 min");
        assert_eq!(format_duration(12.0), "12 s");
    }
}
