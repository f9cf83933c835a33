//! Boolean operations and offsets on film-space polygons: the only module that knows the
//! geometry library (`i_overlay`).
//!
//! Inputs are lists of rings filled with the non-zero winding rule (a cover, see
//! [`super::flatten`]); outputs are [`Region`]s: non-overlapping polygons, outer rings
//! counter-clockwise and holes clockwise.
//!
//! # The integer grid
//! The library computes on integers: every point is snapped to a grid, and points and
//! crossings closer than a few grid steps are merged. All operations of one film use the
//! same [`Grid`], a power-of-two step of at most 1/64 of the arc tolerance with its origin at the
//! film's origin, so the output of one operation is already on the grid of the next and
//! snapping never accumulates. A grid much finer than the tolerance costs a lot of time and
//! buys nothing: flattened caps and pads of neighbouring objects meet at grazing angles,
//! and on a picometre grid each such meeting becomes many distinct crossings (measured on
//! the bench board: a leaf of 256 pieces took 450–600 ms on the automatic grid of about
//! 15 pm and 8–11 ms on the default 2^-15 mm; docs/vector.md).

use super::{Region, Ring};
use i_overlay::core::fill_rule::FillRule;
use i_overlay::core::overlay::ShapeType;
use i_overlay::core::overlay_rule::OverlayRule;
use i_overlay::core::solver::Solver;
use i_overlay::float::overlay::{FloatOverlay, OverlayOptions};
use i_overlay::i_float::adapter::FloatPointAdapter;
use i_overlay::i_float::float::rect::FloatRect;
use i_overlay::mesh::float::outline::offset::OutlineOffset;
use i_overlay::mesh::float::style::{LineJoin, OutlineStyle};
use rayon::prelude::*;

/// Grid steps per arc tolerance (at least): snapping moves a point by a few steps, a small
/// fraction of the tolerance.
pub const GRID_STEPS_PER_TOLERANCE: f64 = 64.0;

/// The integer grid the boolean operations snap to (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Grid {
    /// Grid points per mm: a power of two, so grid points are exact in `f64`.
    pub per_mm: f64,
}

impl Grid {
    /// The grid for arc tolerance `tolerance_mm`: the coarsest power-of-two step that is at
    /// most `tolerance / GRID_STEPS_PER_TOLERANCE`.
    pub fn for_tolerance(tolerance_mm: f64) -> Grid {
        let t = if tolerance_mm.is_finite() && tolerance_mm > 0.0 {
            tolerance_mm
        } else {
            super::MIN_ARC_TOLERANCE_MM
        };
        let exp = (GRID_STEPS_PER_TOLERANCE / t)
            .log2()
            .ceil()
            .clamp(0.0, 60.0);
        Grid {
            per_mm: 2f64.powi(exp as i32),
        }
    }

    /// The grid step, mm.
    pub fn step_mm(&self) -> f64 {
        1.0 / self.per_mm
    }

    /// An adapter for points within `radius` of the origin: this grid when its integers
    /// fit the library's conservative range, else the finest grid that fits.
    fn adapter(&self, radius: f64) -> FloatPointAdapter<[f64; 2], i32> {
        // A power of two at least the radius keeps the rectangle's centre exactly at 0.
        let r = 2f64.powi(radius.max(1.0).log2().ceil() as i32);
        let rect = FloatRect::new(-r, r, -r, r).expect("finite square about the origin");
        FloatPointAdapter::try_with_scale_conservative(rect, self.per_mm)
            .unwrap_or_else(|_| FloatPointAdapter::new_conservative(rect))
    }
}

fn run(subj: &[Ring], clip: &[Ring], rule: OverlayRule, grid: Grid) -> Region {
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
    let mut radius: f64 = 0.0;
    let mut edges = 0;
    for r in subj.iter().chain(&clip) {
        edges += r.len();
        for p in r.iter() {
            radius = radius.max(p[0].abs()).max(p[1].abs());
        }
    }
    let mut overlay = FloatOverlay::new_custom(
        grid.adapter(radius),
        OverlayOptions::default(),
        Solver::FRAG,
        edges,
    );
    // Every point is within the adapter's square (its radius covers them all).
    for r in subj {
        overlay = overlay.unsafe_add_contour(r, ShapeType::Subject);
    }
    for r in clip {
        overlay = overlay.unsafe_add_contour(r, ShapeType::Clip);
    }
    overlay.overlay(rule, FillRule::NonZero)
}

/// The union of all rings (non-zero winding), as a clean region.
pub fn simplify(rings: &[Ring], grid: Grid) -> Region {
    run(rings, &[], OverlayRule::Subject, grid)
}

/// Pieces per leaf of [`union_many`]: small enough that each overlay is cheap.
const UNION_LEAF: usize = 256;

/// The union of many pieces, each a cover (non-zero winding), as [`simplify`] gives it,
/// computed in two stages: the pieces are ordered along a Z-order curve of their box
/// centres, leaves of neighbouring pieces are united in parallel, then all the leaves'
/// results in one overlay. Each leaf sees only nearby geometry and removes most of the
/// overlap (on the bench board 660,000 vertices become 200,000); one final overlay then
/// costs less than merging the leaves pairwise, because on a dense board most of the copper
/// joins into one polygon that every pairwise merge would have to process again
/// (docs/vector.md).
///
/// A piece's rings stay together: a hole ring alone in a leaf would be filled by the
/// non-zero rule.
pub fn union_many(pieces: Vec<Vec<Ring>>, grid: Grid) -> Region {
    let all = match super::rings_bounds(pieces.iter().flatten()) {
        None => return Region::new(),
        Some(all) => all,
    };
    let span = (all[2] - all[0]).max(all[3] - all[1]).max(1e-9);
    let q = |v: f64, o: f64| (((v - o) / span) * 65535.0).clamp(0.0, 65535.0) as u32;
    let mut keyed: Vec<(u64, Vec<Ring>)> = pieces
        .into_iter()
        .filter_map(|p| {
            let b = super::rings_bounds(&p)?;
            let key = morton(
                q((b[0] + b[2]) / 2.0, all[0]),
                q((b[1] + b[3]) / 2.0, all[1]),
            );
            Some((key, p))
        })
        .collect();
    keyed.sort_by_key(|k| k.0);
    let pieces: Vec<Vec<Ring>> = keyed.into_iter().map(|k| k.1).collect();
    if pieces.len() <= UNION_LEAF {
        let rings: Vec<Ring> = pieces.into_iter().flatten().collect();
        return simplify(&rings, grid);
    }
    let leaves: Vec<Ring> = pieces
        .par_chunks(UNION_LEAF)
        .flat_map_iter(|c| {
            let rings: Vec<Ring> = c.iter().flatten().cloned().collect();
            simplify(&rings, grid).into_iter().flatten()
        })
        .collect();
    simplify(&leaves, grid)
}

/// Interleaves the bits of x and y (Z-order).
fn morton(x: u32, y: u32) -> u64 {
    let spread = |v: u32| {
        let mut v = v as u64 & 0xffff_ffff;
        v = (v | (v << 16)) & 0x0000_ffff_0000_ffff;
        v = (v | (v << 8)) & 0x00ff_00ff_00ff_00ff;
        v = (v | (v << 4)) & 0x0f0f_0f0f_0f0f_0f0f;
        v = (v | (v << 2)) & 0x3333_3333_3333_3333;
        v = (v | (v << 1)) & 0x5555_5555_5555_5555;
        v
    };
    spread(x) | (spread(y) << 1)
}

/// `a ∪ b`.
pub fn union(a: &[Ring], b: &[Ring], grid: Grid) -> Region {
    run(a, b, OverlayRule::Union, grid)
}

/// `a − b`.
pub fn difference(a: &[Ring], b: &[Ring], grid: Grid) -> Region {
    if a.is_empty() {
        return Region::new();
    }
    if b.is_empty() {
        return simplify(a, grid);
    }
    run(a, b, OverlayRule::Difference, grid)
}

/// `a ∩ b`.
pub fn intersection(a: &[Ring], b: &[Ring], grid: Grid) -> Region {
    if a.is_empty() || b.is_empty() {
        return Region::new();
    }
    run(a, b, OverlayRule::Intersect, grid)
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
        let g = Grid::for_tolerance(1e-3);
        assert!((region_area(&union(&a, &b, g)) - 1.5).abs() < 1e-9);
        assert!((region_area(&difference(&a, &b, g)) - 0.5).abs() < 1e-9);
        assert!((region_area(&intersection(&a, &b, g)) - 0.5).abs() < 1e-9);
    }

    #[test]
    fn square_grown_with_round_joins() {
        // A square of side s grown by d: s² + 4sd + πd² (Steiner formula for convex sets).
        let a = simplify(&[rect_ring(0.0, 0.0, 2.0, 2.0)], Grid::for_tolerance(1e-4));
        let g = offset(&a, 0.5, 1e-4);
        let want = 4.0 + 4.0 * 2.0 * 0.5 + std::f64::consts::PI * 0.25;
        assert!((region_area(&g) - want).abs() < 1e-3, "{}", region_area(&g));
        // Shrinking a square keeps its corners square: (s − 2d)².
        let s = offset(&a, -0.5, 1e-4);
        assert!((region_area(&s) - 1.0).abs() < 1e-6, "{}", region_area(&s));
    }
}
