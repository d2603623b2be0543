//! Numbers and durations in words for people: the formatting that reports and tables share.

/// A number with about four significant digits, thousands not separated; `-` for NaN.
pub fn num(x: f64) -> String {
    if !x.is_finite() {
        return "-".to_string();
    }
    // Adding +0.0 turns -0.0 into 0.0, so a zero never prints as "-0.000".
    let x = x + 0.0;
    let a = x.abs();
    if a < 5e-4 {
        return "0".to_string();
    }
    if a >= 1e9 {
        return format!("{x:.3e}");
    }
    if a >= 1000.0 {
        format!("{x:.0}")
    } else if a >= 100.0 {
        format!("{x:.1}")
    } else if a >= 10.0 {
        format!("{x:.2}")
    } else {
        format!("{x:.3}")
    }
}

/// The unit (and its length in seconds) that reads best for a duration.
pub fn time_unit(seconds: f64) -> (&'static str, f64) {
    let a = seconds.abs();
    if a >= 2.0 * 86400.0 {
        ("d", 86400.0)
    } else if a >= 2.0 * 3600.0 {
        ("h", 3600.0)
    } else if a >= 120.0 {
        ("min", 60.0)
    } else {
        ("s", 1.0)
    }
}

/// An amount of a metric in its own unit: `5 min` for a duration, `0.500` otherwise.
pub fn amount(duration: bool, x: f64) -> String {
    if duration {
        let (u, s) = time_unit(x);
        format!("{} {u}", num(x / s).trim_end_matches('0').trim_end_matches('.'))
    } else {
        num(x)
    }
}
