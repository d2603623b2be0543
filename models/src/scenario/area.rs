//! `area` and `size` of a department (the floor it needs) or a location (the floor it offers), checked into a [`Footprint`].
//!
//! Areas are square metres and sizes metres, whatever else the scenario
//! writes, because floor plans are drawn in metres; both are optional.

use super::context::Ctx;
use super::error::ScenarioError;
use super::locate::FieldPath;
use crate::limits;
use crate::plant::Footprint;

/// How far `area` and `size` may disagree, as a share of `area`: room for a
/// rounded area (a 12.5 × 8.2 m bay written as 102.5 m² or 103 m²), not for two different floors.
const AGREE_SHARE: f64 = 0.01;

/// The footprint of `what` `id` at `path` from its `area` and `size`, or `None` when neither is given.
pub(crate) fn footprint(
    area: Option<f64>,
    size: Option<&[f64]>,
    what: &str,
    id: &str,
    path: &FieldPath,
    ctx: &Ctx,
) -> Result<Option<Footprint>, ScenarioError> {
    let longest = limits::MAX_COORDINATE_M * 2.0;
    if let Some(a) = area {
        if !(a > 0.0 && a.is_finite()) {
            return Err(ctx
                .err(
                    &path.key("area"),
                    format!("the area of {what} \"{id}\" must be a number of square metres > 0, got {a}"),
                )
                .with_hint("write the floor area in m², e.g. `area: 120`, or leave `area` out"));
        }
        if a > longest * longest {
            return Err(ctx.err(
                &path.key("area"),
                format!(
                    "the area of {what} \"{id}\" ({a} m²) is larger than any floor: {}",
                    limits::LENGTH_WHY
                ),
            ));
        }
    }
    let size = match size {
        None => None,
        Some(s) => {
            let [w, d] = s[..] else {
                return Err(ctx
                    .err(
                        &path.key("size"),
                        format!(
                            "the size of {what} \"{id}\" needs two numbers, width and depth in metres; got {}",
                            if s.len() == 1 { "one".to_string() } else { s.len().to_string() }
                        ),
                    )
                    .with_hint("write e.g. `size: [12, 8]` (12 m along x, 8 m along y), or give `area` alone"));
            };
            for (x, which) in [(w, "width"), (d, "depth")] {
                if !(x > 0.0 && x.is_finite() && x <= longest) {
                    return Err(ctx
                        .err(
                            &path.key("size"),
                            format!("the {which} of {what} \"{id}\" must be a number of metres > 0, got {x}"),
                        )
                        .with_hint("write e.g. `size: [12, 8]` (12 m along x, 8 m along y)"));
                }
            }
            Some([w, d])
        }
    };
    Ok(match (area, size) {
        (None, None) => None,
        (Some(a), None) => Some(Footprint { area_m2: a, size_m: None }),
        (None, Some([w, d])) => Some(Footprint { area_m2: w * d, size_m: Some([w, d]) }),
        (Some(a), Some([w, d])) => {
            if (w * d - a).abs() > AGREE_SHARE * a {
                return Err(ctx
                    .err(
                        &path.key("area"),
                        format!(
                            "{what} \"{id}\" has area {a} m² but size [{w}, {d}], which is {} m²: \
                             they disagree by more than 1%",
                            w * d
                        ),
                    )
                    .with_hint("give one of them, or correct the one that is wrong"));
            }
            Some(Footprint { area_m2: a, size_m: Some([w, d]) })
        }
    })
}
