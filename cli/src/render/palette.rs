//! One colour palette for every picture layflow draws: teal for means and departments, amber for tails and docks, slate for lines and text, brick for targets and limits.

/// Means, departments, flows.
pub const TEAL: (u8, u8, u8) = (27, 127, 121);
/// Tails (p95), docks, busy aisles.
pub const AMBER: (u8, u8, u8) = (217, 140, 0);
/// Lines, text, the analytic estimate.
pub const SLATE: (u8, u8, u8) = (61, 74, 92);
/// Targets, capacities, limits.
pub const BRICK: (u8, u8, u8) = (179, 64, 58);
/// An aisle that carries nothing: a pale slate.
pub const AISLE_IDLE: (u8, u8, u8) = (214, 219, 226);
/// Chart legend borders.
pub const LEGEND_BORDER: (u8, u8, u8) = (200, 200, 200);
/// Chart grid lines.
pub const GRID: (u8, u8, u8) = (235, 235, 235);

/// Each fleet's colour, in the order the scenario lists the fleets (the report's
/// flows and the replay's movers): slate, amber, then mixes; never teal, the
/// departments' colour, nor brick, which marks limits and congestion.
pub const FLEETS: [(u8, u8, u8); 4] = [SLATE, AMBER, (140, 100, 60), (95, 130, 160)];

/// A colour as SVG's `rgb(r,g,b)`.
pub fn rgb(c: (u8, u8, u8)) -> String {
    format!("rgb({},{},{})", c.0, c.1, c.2)
}

/// The colour `t` of the way from `a` to `b` (0 = `a`, 1 = `b`).
pub fn mix(a: (u8, u8, u8), b: (u8, u8, u8), t: f64) -> (u8, u8, u8) {
    let m = |x: u8, y: u8| (f64::from(x) + (f64::from(y) - f64::from(x)) * t.clamp(0.0, 1.0)).round() as u8;
    (m(a.0, b.0), m(a.1, b.1), m(a.2, b.2))
}

/// The traffic ramp: idle pale slate, through amber, to brick at the busiest aisle.
pub fn traffic_colour(share: f64) -> (u8, u8, u8) {
    if share <= 0.0 {
        AISLE_IDLE
    } else if share < 0.5 {
        mix(mix(AISLE_IDLE, AMBER, 0.35), AMBER, share / 0.5)
    } else {
        mix(AMBER, BRICK, (share - 0.5) / 0.5)
    }
}
