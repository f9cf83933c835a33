//! Boolean operations and offsets on film-space polygons: the only module that knows the
//! geometry library (`i_overlay`).
//!
//! Inputs are lists of rings filled with the non-zero winding rule (a cover, see
//! [`super::flatten`]); outputs are [`Region`]s: non-overlapping polygons, outer rings
//! counter-clockwise and holes clockwise. The library snaps coordinates to an integer grid
//! chosen from the inputs' extent (about 1 nm for a sheet-sized film).

use super::{Region, Ring};
use i_overlay::core::fill_rule::FillRule;
use i_overlay::core::overlay_rule::OverlayRule;
use i_overlay::float::overlay::FloatOverlay;
use i_overlay::mesh::float::outline::offset::OutlineOffset;
use i_overlay::mesh::float::style::{LineJoin, OutlineStyle};

fn run(subj: &[Ring], clip: &[Ring], rule: OverlayRule) -> Region {
    let finite = |r: &[Ring]| {
        r.iter()
            .flatten()
            .all(|p| p[0].is_finite() && p[1].is_finite())
    };
    if !finite(subj) || !finite(clip) {
        return Region::new();
    }
    let subj: Vec<&Ring> = subj.iter().filter(|r| r.len() >= 3).collect();
    let clip: Vec<&Ring> = clip.iter().filter(|r| r.len() >= 3).collect();
    if subj.is_empty() && clip.is_empty() {
        return Region::new();
    }
    let subj: Vec<Ring> = subj.into_iter().cloned().collect();
    let clip: Vec<Ring> = clip.into_iter().cloned().collect();
    FloatOverlay::with_subj_and_clip(&subj, &clip).overlay(rule, FillRule::NonZero)
}

/// The union of all rings (non-zero winding), as a clean region.
pub fn simplify(rings: &[Ring]) -> Region {
    run(rings, &[], OverlayRule::Subject)
}

/// `a ∪ b`.
pub fn union(a: &[Ring], b: &[Ring]) -> Region {
    run(a, b, OverlayRule::Union)
}

/// `a − b`.
pub fn difference(a: &[Ring], b: &[Ring]) -> Region {
    if a.is_empty() {
        return Region::new();
    }
    if b.is_empty() {
        return simplify(a);
    }
    run(a, b, OverlayRule::Difference)
}

/// `a ∩ b`.
pub fn intersection(a: &[Ring], b: &[Ring]) -> Region {
    if a.is_empty() || b.is_empty() {
        return Region::new();
    }
    run(a, b, OverlayRule::Intersect)
}

/// The rings of a region, in one list (a valid cover of the region).
pub fn rings_of(region: Region) -> Vec<Ring> {
    region.into_iter().flatten().collect()
}

/// The region grown by `distance` (shrunk when negative) with round joins: the set of
/// points within `distance` of it (or its points farther than `−distance` from its
/// complement). Joins are flattened to chords within `tolerance` of the true arc.
pub fn offset(region: &Region, distance: f64, tolerance: f64) -> Region {
    if region.is_empty() || distance == 0.0 || !distance.is_finite() {
        return region.clone();
    }
    // Round joins are given as the angle step of their chords: θ = 2·acos(1 − t/|d|) keeps
    // the sagitta |d|·(1 − cos(θ/2)) within t (the library clamps θ to 1.8°..45°).
    let d = distance.abs();
    let step = if tolerance >= d {
        std::f64::consts::FRAC_PI_4
    } else {
        2.0 * (1.0 - tolerance / d).acos()
    };
    let style = OutlineStyle::new(distance).line_join(LineJoin::Round(step));
    region.outline(&style)
}

#[cfg(test)]
mod tests {
    use super::super::{flatten::rect_ring, region_area};
    use super::*;

    #[test]
    fn union_and_difference_of_squares() {
        // Two unit squares overlapping by half: union area 1.5, difference 0.5 (arithmetic).
        let a = vec![rect_ring(0.0, 0.0, 1.0, 1.0)];
        let b = vec![rect_ring(0.5, 0.0, 1.5, 1.0)];
        assert!((region_area(&union(&a, &b)) - 1.5).abs() < 1e-9);
        assert!((region_area(&difference(&a, &b)) - 0.5).abs() < 1e-9);
        assert!((region_area(&intersection(&a, &b)) - 0.5).abs() < 1e-9);
    }

    #[test]
    fn square_grown_with_round_joins() {
        // A square of side s grown by d: s² + 4sd + πd² (Steiner formula for convex sets).
        let a = simplify(&[rect_ring(0.0, 0.0, 2.0, 2.0)]);
        let g = offset(&a, 0.5, 1e-4);
        let want = 4.0 + 4.0 * 2.0 * 0.5 + std::f64::consts::PI * 0.25;
        assert!((region_area(&g) - want).abs() < 1e-3, "{}", region_area(&g));
        // Shrinking a square keeps its corners square: (s − 2d)².
        let s = offset(&a, -0.5, 1e-4);
        assert!((region_area(&s) - 1.0).abs() < 1e-6, "{}", region_area(&s));
    }
}
