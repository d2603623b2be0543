//! Travel time of a mover over a distance, with or without an acceleration limit.
//!
//! The mover starts and ends at rest and brakes as hard as it accelerates.
//! If the trip is long enough to reach top speed `v` (d ≥ v²/a) the velocity
//! profile is a trapezoid: accelerating and braking each take v/a s and cover
//! v²/(2a) m, so t = d/v + v/a. A shorter trip never reaches top speed: the
//! profile is a triangle peaking at √(d·a), so t = 2√(d/a). Both give 2v/a at
//! d = v²/a, so the time is continuous in d.

/// Seconds to travel `d` metres at top speed `v` m/s, accelerating and braking
/// at `accel` m/s²; `None` means speed changes are instantaneous (t = d/v).
///
/// Runs in the simulation's hot loop, so it validates nothing and never
/// allocates: the caller guarantees `d >= 0`, `v > 0` and `accel > 0` (the
/// scenario loader checks them once). Outside that range it returns a
/// meaningless value (NaN or infinite), never panics.
#[inline]
pub fn travel_time(d: f64, v: f64, accel: Option<f64>) -> f64 {
    match accel {
        None => d / v,
        // d·a ≥ v² is the switch test d ≥ v²/a without a division.
        Some(a) if d * a >= v * v => d / v + v / a,
        Some(a) => 2.0 * (d / a).sqrt(),
    }
}

/// The shortest distance at which a mover reaches top speed: v²/a metres.
/// Trips shorter than this follow the triangular profile.
#[inline]
pub fn cruise_distance(v: f64, accel: f64) -> f64 {
    v * v / accel
}

#[cfg(test)]
mod tests {
    use super::*;

    // Closed-form values are compared to 1e-9 s: the formulas are a handful
    // of floating-point operations on numbers of order 1–100, so rounding
    // error is near 1e-14; the reference values with six significant figures
    // are compared to half a unit in their last printed digit.

    #[test]
    fn references_section_8_first_check() {
        // docs/formulas.md §8, v = 2 m/s, a = 0.5 m/s², switch at v²/a = 8 m.
        let (v, a) = (2.0, Some(0.5));
        assert!((cruise_distance(2.0, 0.5) - 8.0).abs() < 1e-12);
        // §8: d = 50 m gives 29 s (trapezoid: 50/2 + 2/0.5).
        assert!((travel_time(50.0, v, a) - 29.0).abs() < 1e-9);
        // §8: d = 8 m gives 8 s from both branches.
        assert!((travel_time(8.0, v, a) - 8.0).abs() < 1e-9);
        assert!((8.0 / 2.0 + 2.0 / 0.5 - 8.0_f64).abs() < 1e-12);
        assert!((2.0 * (8.0_f64 / 0.5).sqrt() - 8.0).abs() < 1e-12);
        // §8: d = 5 m gives 6.32456 s (printed to 6 figures, so ±5e-6).
        assert!((travel_time(5.0, v, a) - 6.32456).abs() < 5e-6);
        // §8: d = 0.5 m gives 2 s.
        assert!((travel_time(0.5, v, a) - 2.0).abs() < 1e-9);
    }

    #[test]
    fn references_section_8_second_check() {
        // docs/formulas.md §8: v = 3 m/s, a = 0.6 m/s², d = 60 m gives 25 s.
        assert!((travel_time(60.0, 3.0, Some(0.6)) - 25.0).abs() < 1e-9);
    }

    #[test]
    fn without_acceleration_limit_is_distance_over_speed() {
        // Constant-speed kinematics t = d/v (standard physics).
        assert_eq!(travel_time(50.0, 2.0, None), 25.0);
        assert_eq!(travel_time(0.0, 2.0, None), 0.0);
    }

    #[test]
    fn zero_distance_takes_no_time() {
        // Both kinematic branches give 0 at d = 0 (standard physics: 2√(0/a) = 0).
        assert_eq!(travel_time(0.0, 2.0, Some(0.5)), 0.0);
        assert_eq!(travel_time(0.0, 2.0, Some(1e12)), 0.0);
    }

    #[test]
    fn continuous_at_the_switch_point() {
        // Both branches equal 2v/a at d = v²/a (docs/formulas.md §8 derivation),
        // so a step of 1e-9 m either side moves t by about 1e-9/v s there.
        for &(v, a) in &[(2.0, 0.5), (3.0, 0.6), (1.2, 0.3), (0.7, 2.0)] {
            let s = cruise_distance(v, a);
            let at = travel_time(s, v, Some(a));
            assert!((at - 2.0 * v / a).abs() < 1e-9, "v={v} a={a}");
            let below = travel_time(s - 1e-9, v, Some(a));
            let above = travel_time(s + 1e-9, v, Some(a));
            assert!((below - at).abs() < 1e-8 && (above - at).abs() < 1e-8, "v={v} a={a}");
        }
    }

    #[test]
    fn monotone_in_distance() {
        // A longer trip on the same profile can never be quicker (physics:
        // the position under either profile increases with time).
        let (v, a) = (2.0, Some(0.5));
        let mut last = 0.0;
        for k in 1..=2000 {
            let t = travel_time(k as f64 * 0.05, v, a);
            assert!(t > last, "not increasing at d = {}", k as f64 * 0.05);
            last = t;
        }
    }

    #[test]
    fn huge_acceleration_tends_to_distance_over_speed() {
        // As a → ∞ the ramps vanish: t = d/v + v/a → d/v (limit of the §8 formula).
        for &d in &[0.5, 8.0, 50.0, 300.0] {
            let plain = d / 2.0;
            let mut last_gap = f64::INFINITY;
            for &a in &[1e2, 1e4, 1e6, 1e9] {
                let gap = travel_time(d, 2.0, Some(a)) - plain;
                assert!(gap >= 0.0 && gap < last_gap, "d={d} a={a}");
                last_gap = gap;
            }
            // At a = 1e9 the extra time is v/a = 2e-9 s.
            assert!(last_gap < 1e-8, "d={d}");
        }
    }

    /// Drives a simulated mover in steps of `dt`: full acceleration until top
    /// speed, cruise, and full braking once the stopping distance v²/(2a)
    /// reaches what is left, then braking to a stop (latched, so rounding
    /// cannot make it chatter). Returns the time at which it has stopped.
    fn integrate(d: f64, v_max: f64, a: f64, dt: f64) -> f64 {
        let (mut x, mut v, mut t) = (0.0_f64, 0.0_f64, 0.0_f64);
        let mut braking = false;
        loop {
            braking = braking || v * v / (2.0 * a) >= d - x;
            let dv = if braking { -a * dt } else { (a * dt).min(v_max - v) };
            let v_new = (v + dv).max(0.0);
            // Trapezoidal rule: exact for a velocity that is linear in the step.
            x += 0.5 * (v + v_new) * dt;
            v = v_new;
            t += dt;
            if braking && v == 0.0 {
                return t;
            }
        }
    }

    #[test]
    fn matches_numerical_integration_of_the_velocity_profile() {
        // Independent check: step the bang-bang motion (standard physics)
        // with dt = 1e-4 s. The braking decision lands up to one step late
        // and the last step may overshoot the stop, so the simulated time is
        // off by a few steps (1–3 when this was written); 2e-3 s (20 steps)
        // bounds that with margin, while a wrong branch would be off by
        // tenths of a second or more.
        let dt = 1e-4;
        for &(d, v, a) in
            &[(50.0, 2.0, 0.5), (8.0, 2.0, 0.5), (5.0, 2.0, 0.5), (0.5, 2.0, 0.5), (60.0, 3.0, 0.6)]
        {
            let sim = integrate(d, v, a, dt);
            let closed = travel_time(d, v, Some(a));
            assert!((sim - closed).abs() < 2e-3, "d={d} v={v} a={a}: simulated {sim}, closed form {closed}");
        }
    }
}
