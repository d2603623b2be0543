//! Ceilings on the values a scenario or a command line may give, each with the reason people are told.
//!
//! A value that is legal but huge (a horizon of 1e308 days, 4,294,967,296
//! lots an hour, four billion forklifts) used to pass every check and then
//! hang the run or abort it when memory ran out. Every quantity is therefore
//! held below a ceiling that no real plant reaches but that keeps a run
//! bounded in time and memory; the ceilings are listed, with these reasons,
//! in `docs/limits.md`. A leaf module: it reads nothing else in the crate, so
//! the unit parsers and the scenario checks can all use it.

/// Seconds in a year of 365.25 days.
pub const YEAR_S: f64 = 365.25 * 86_400.0;

/// Longest duration anywhere (horizon, warm-up, a time, a period): 100 years.
pub const MAX_DURATION_S: f64 = 100.0 * YEAR_S;
/// Why [`MAX_DURATION_S`].
pub const MAX_DURATION_WHY: &str = "no plant is planned further ahead, and the simulation clock \
     keeps sub-microsecond resolution up to there";

/// Shortest repeating period (shifts, calendars, profiles, charging, order
/// trace repeats) and shortest mean time between failures.
pub const MIN_PERIOD_S: f64 = 1.0;
/// Why [`MIN_PERIOD_S`].
pub const MIN_PERIOD_WHY: &str = "each period schedules events of its own, so a shorter one floods \
     the run with events and no plant changes shifts or rates faster";

/// Fastest mover, m/s (360 km/h).
pub const MAX_SPEED_M_S: f64 = 100.0;
/// Slowest moving mover, m/s (1 mm/s).
pub const MIN_SPEED_M_S: f64 = 0.001;
/// Why the speed range.
pub const SPEED_WHY: &str = "nothing that carries loads in a plant is faster, and anything slower never \
     arrives, so travel times stay finite";

/// Largest acceleration, m/s² (about 10 g).
pub const MAX_ACCELERATION_M_S2: f64 = 100.0;
/// Smallest acceleration above zero, m/s² (17 minutes from rest to 1 m/s).
pub const MIN_ACCELERATION_M_S2: f64 = 0.001;
/// Why the acceleration range.
pub const ACCELERATION_WHY: &str = "no load survives more, and a mover that takes longer to reach \
     walking pace never arrives, so travel times stay finite";

/// Largest weight, kg (10,000 t).
pub const MAX_WEIGHT_KG: f64 = 1e7;
/// Why [`MAX_WEIGHT_KG`].
pub const MAX_WEIGHT_WHY: &str = "heavier than any load a plant moves";

/// Largest coordinate, either axis, metres (1,000 km from the origin).
pub const MAX_COORDINATE_M: f64 = 1e6;
/// Longest length (an aisle segment, a matrix distance, a neighbour distance), metres.
pub const MAX_LENGTH_M: f64 = 1e7;
/// Why the coordinate and length ceilings.
pub const LENGTH_WHY: &str = "no plant floor is that large, and distances, their squares and the \
     load-distance stay finite below it";

/// Largest arrival rate of one product, lots per hour.
pub const MAX_PER_HOUR: f64 = 1e6;
/// Largest multiplier (a profile factor, the demand factor).
pub const MAX_FACTOR: f64 = 1e6;
/// Largest expected number of lots released in one replication.
pub const MAX_EXPECTED_LOTS: f64 = 1e9;
/// Why the rate ceilings.
pub const RATE_WHY: &str = "each lot costs events and memory, so a replication of more than \
     1e9 lots (a day's computing) cannot finish; no job shop releases lots that fast";

/// Largest cost rate (per load-metre, per hour, per km), in the scenario's currency.
pub const MAX_COST: f64 = 1e9;
/// Why [`MAX_COST`].
pub const MAX_COST_WHY: &str = "beyond any plant's budget in any currency, and handling costs summed \
     over a plant stay finite below it";

/// Lowest operator efficiency (travel and handling take 1/efficiency as long).
pub const MIN_EFFICIENCY: f64 = 0.01;
/// Why [`MIN_EFFICIENCY`].
pub const MIN_EFFICIENCY_WHY: &str = "below 1% every move takes more than a hundred times as long, \
     which is no operator's pace, and at 1e-300 travel times become infinite";

/// Most lots one line of an order trace releases at once.
pub const MAX_ORDER_LOTS: u32 = 1_000_000;
/// Why [`MAX_ORDER_LOTS`].
pub const MAX_ORDER_LOTS_WHY: &str =
    "the lots of one order enter at the same instant and are all held in memory";

/// Most movers in one fleet.
pub const MAX_MOVERS: u32 = 10_000;
/// Most loads one mover carries (a tow train's carts).
pub const MAX_TRAIN_LOADS: u32 = 100;
/// Most machines in one department.
pub const MAX_MACHINES: u32 = 10_000;
/// Most loads one batch machine runs together (`batch.max`): each machine keeps a slot per load,
/// so a department of the most machines keeps at most 10⁷ slots (40 MB).
pub const MAX_BATCH: u32 = 1_000;
/// Most unit loads one lot moves in (quantity ÷ transfer batch).
pub const MAX_LOADS_PER_LOT: u32 = 10_000;
/// Why the count ceilings.
pub const COUNT_WHY: &str = "each one has state of its own in every replication, and no plant has more";

/// Most replications of one study.
pub const MAX_REPLICATIONS: u32 = 1_000_000;
/// Why [`MAX_REPLICATIONS`].
pub const MAX_REPLICATIONS_WHY: &str = "confidence intervals stop narrowing long before, and a million \
     replications of even a short run take days";

/// Most worker threads.
pub const MAX_THREADS: usize = 4096;

/// Most iterations of one search method.
pub const MAX_ITERATIONS: u64 = 1_000_000_000_000;

/// A count as people read it in a message: `10,000`.
pub fn count_words(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::new();
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A number as a message shows it: as written for ordinary sizes, in
/// exponent form when it is huge or tiny (so 1e308 does not print 309 digits).
pub fn shown(x: f64) -> String {
    let a = x.abs();
    if a != 0.0 && a.is_finite() && !(1e-3..1e9).contains(&a) {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// The duration ceiling as messages give it.
pub fn max_duration_words() -> String {
    format!("100 years ({:.3e} s)", MAX_DURATION_S)
}

/// Checks that `seconds` (already converted) is finite and within the
/// duration ceiling; the error quotes `text`, the value as written.
pub fn check_duration(text: &str, seconds: f64) -> Result<f64, String> {
    if !seconds.is_finite() || seconds.abs() > MAX_DURATION_S {
        return Err(format!(
            "duration \"{}\" is longer than the ceiling of {}: {MAX_DURATION_WHY}",
            text.trim(),
            max_duration_words()
        ));
    }
    Ok(seconds)
}

/// Checks a repeating period against [`MIN_PERIOD_S`]; `what` names it.
pub fn check_period(what: &str, seconds: f64) -> Result<(), String> {
    if seconds < MIN_PERIOD_S {
        return Err(format!(
            "{what} of {} s is shorter than the floor of {MIN_PERIOD_S} s: {MIN_PERIOD_WHY}",
            shown(seconds)
        ));
    }
    Ok(())
}

/// Checks a count against its ceiling; `what` names one of them ("movers").
pub fn check_count(what: &str, n: u64, max: u64, why: &str) -> Result<(), String> {
    if n > max {
        return Err(format!(
            "{} {what} is more than the ceiling of {}: {why}",
            count_words(n),
            count_words(max)
        ));
    }
    Ok(())
}

/// Checks a point (a location, an aisle node) against [`MAX_COORDINATE_M`].
pub fn check_coordinates(x: f64, y: f64) -> Result<(), String> {
    if !(x.abs() <= MAX_COORDINATE_M && y.abs() <= MAX_COORDINATE_M) {
        return Err(format!(
            "[{}, {}] is farther from the origin than the ceiling of {MAX_COORDINATE_M:e} m on either axis: {LENGTH_WHY}",
            shown(x),
            shown(y)
        ));
    }
    Ok(())
}

/// Checks a length in metres (a segment, a matrix distance) against [`MAX_LENGTH_M`].
pub fn check_length(what: &str, metres: f64) -> Result<(), String> {
    if !(metres.abs() <= MAX_LENGTH_M) {
        return Err(format!(
            "{what} {metres} m is more than the ceiling of {MAX_LENGTH_M:e} m: {LENGTH_WHY}"
        ));
    }
    Ok(())
}

/// Checks a plain number (a rate, a factor) is finite and at most `max`.
pub fn check_at_most(what: &str, x: f64, max: f64, why: &str) -> Result<(), String> {
    if !x.is_finite() || x > max {
        return Err(format!("{what} {} is more than the ceiling of {max:e}: {why}", shown(x)));
    }
    Ok(())
}

/// Checks the bound on lots one replication draws ([`MAX_EXPECTED_LOTS`]);
/// `horizon` (in words) and `demand_factor` are named in the message.
pub fn check_lots(lots: f64, horizon: &str, demand_factor: f64) -> Result<(), String> {
    if !(lots <= MAX_EXPECTED_LOTS) {
        return Err(format!(
            "a replication of {horizon} at demand ×{demand_factor} would draw about {lots:.3e} lots (rates at \
             their profile peaks), more than the ceiling of {MAX_EXPECTED_LOTS:e}: {RATE_WHY}"
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ceilings_read_as_words() {
        assert_eq!(count_words(10_000), "10,000");
        assert_eq!(count_words(4_294_967_295), "4,294,967,295");
        assert_eq!(count_words(7), "7");
        assert_eq!(shown(1e308), "1e308");
        assert_eq!(shown(2.5), "2.5");
        assert_eq!(shown(1e-300), "1e-300");
        assert_eq!(max_duration_words(), "100 years (3.156e9 s)");
        assert!(check_duration("1e308 d", f64::INFINITY).unwrap_err().contains("ceiling of 100 years"));
        assert_eq!(check_duration("100 d", 8_640_000.0), Ok(8_640_000.0));
        assert!(check_period("a shift period", 0.5).is_err());
        assert!(check_count("movers", 4_000_000_000, 10_000, COUNT_WHY)
            .unwrap_err()
            .contains("4,000,000,000"));
    }
}
