//! Floor areas per layout: the area each department needs against the area its location offers, and the departments that do not fit.
//!
//! Only a check and a picture: areas never enter the simulation or the
//! search's objective. A department fits its location when its area is no
//! larger and, when both give a `size`, its rectangle fits in the location's
//! as given or turned by 90°.

use crate::plant::{Footprint, Plant};

/// One department in its location under one layout.
#[derive(Debug, Clone, PartialEq)]
pub struct AreaRow {
    /// Department index.
    pub department: usize,
    /// Location index.
    pub location: usize,
    /// What the department needs, where given.
    pub needed: Option<Footprint>,
    /// What the location offers, where given.
    pub available: Option<Footprint>,
}

impl AreaRow {
    /// `Some(false)` when the department does not fit; `None` when either side gives no area.
    pub fn fits(&self) -> Option<bool> {
        match (&self.needed, &self.available) {
            (Some(n), Some(a)) => Some(a.holds(n)),
            _ => None,
        }
    }
}

/// Whether any department or location gives an area (or a size).
pub fn has_areas(plant: &Plant) -> bool {
    plant.departments.iter().any(|d| d.footprint.is_some())
        || plant.locations.iter().any(|l| l.footprint.is_some())
}

/// Every department of `layout` with its location, in department order.
pub fn rows(plant: &Plant, layout: usize) -> Vec<AreaRow> {
    plant.layouts[layout]
        .location_of
        .iter()
        .enumerate()
        .map(|(d, &l)| AreaRow {
            department: d,
            location: l,
            needed: plant.departments[d].footprint,
            available: plant.locations[l].footprint,
        })
        .collect()
}

/// A footprint in words: `120 m²`, or `120 m² (12 × 10 m)`.
pub fn describe(f: &Footprint) -> String {
    match f.size_m {
        Some([w, d]) => format!("{} m² ({} × {} m)", short(f.area_m2), short(w), short(d)),
        None => format!("{} m²", short(f.area_m2)),
    }
}

/// Metres or square metres to a tenth, without a trailing `.0`: floor plans give whole or half metres.
fn short(x: f64) -> String {
    let t = format!("{x:.1}");
    t.strip_suffix(".0").map_or(t.clone(), str::to_string)
}

/// The warning for a department that does not fit its location under a layout, naming both,
/// the two areas and what to do; `None` when it fits or an area is missing.
pub fn misfit_message(plant: &Plant, layout: usize, row: &AreaRow) -> Option<String> {
    if row.fits() != Some(false) {
        return None;
    }
    let (need, have) = (row.needed?, row.available?);
    let why = if need.area_m2 > have.area_m2 {
        format!("{} m² more than the location offers", short(need.area_m2 - have.area_m2))
    } else {
        "the same area or less, but its rectangle does not fit the location's either way round".to_string()
    };
    Some(format!(
        "layout \"{}\": department \"{}\" needs {} but location \"{}\" offers {}: {why}. Move it to a larger \
         location, or correct the department's or the location's `area`/`size`.",
        plant.layouts[layout].name,
        plant.departments[row.department].id,
        describe(&need),
        plant.locations[row.location].id,
        describe(&have),
    ))
}

/// Every misfit warning over every layout, in layout then department order.
pub fn misfits(plant: &Plant) -> Vec<String> {
    (0..plant.layouts.len())
        .flat_map(|l| rows(plant, l).into_iter().filter_map(move |r| misfit_message(plant, l, &r)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_rectangle_fits_turned_but_not_when_too_long() {
        let loc = Footprint { area_m2: 120.0, size_m: Some([12.0, 10.0]) };
        let turned = Footprint { area_m2: 100.0, size_m: Some([10.0, 10.0]) };
        let long = Footprint { area_m2: 78.0, size_m: Some([13.0, 6.0]) };
        assert!(loc.holds(&turned));
        assert!(loc.holds(&Footprint { area_m2: 96.0, size_m: Some([8.0, 12.0]) }));
        assert!(!loc.holds(&long), "13 m is longer than either side of 12 × 10 m");
        assert!(!loc.holds(&Footprint { area_m2: 121.0, size_m: None }));
        assert!(loc.holds(&Footprint { area_m2: 120.0, size_m: None }), "exactly the area fits");
    }

    #[test]
    fn a_location_without_a_footprint_prints_as_before_footprints_existed() {
        // An experiment's content hash covers the plant's debug text: a plant
        // without areas must keep the text (and so the hash) it had.
        use crate::plant::Location;
        let l = Location { id: "bay".into(), x: 1.0, y: 2.5, footprint: None };
        assert_eq!(format!("{l:?}"), "Location { id: \"bay\", x: 1.0, y: 2.5 }");
        let l = Location { footprint: Some(Footprint { area_m2: 4.0, size_m: None }), ..l };
        assert!(format!("{l:?}").contains("footprint"));
    }
}
