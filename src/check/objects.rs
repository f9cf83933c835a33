//! What the check reads besides the film's pixels: the drill holes (annular rings) and the
//! layer image's objects (copper and clearances that leave nothing on the film).

use super::area::Area;
use super::measure::any_set;
use super::{finding, FilmInput, Finding, FindingKind, ProcessLimits, BOARD_MARGIN_MM};
use crate::image::{Bounds, Point, Polarity, Shape};
use crate::process::DrillMarkStyle;
use crate::raster::Bitmap;

/// Drawn objects narrower than this are not reported as lost: EDA programs leave slivers of a
/// fraction of a micrometre in pours (board 01 of the real-world corpus has 0.2 µm squares),
/// and nothing that narrow is meant to be made.
const MIN_DRAWN_MM: f64 = 0.005;
/// A drill hole on a copper film: centre, finished radius, and the radius after etching and
/// drilling (the larger of the mark and the drill).
#[derive(Debug, Clone, Copy)]
pub(super) struct HoleSite {
    pub at: Point,
    pub hole_mm: f64,
    pub mark_r: f64,
    pub open_r: f64,
}

pub(super) fn hole_sites(input: &FilmInput<'_>) -> Vec<HoleSite> {
    let mark_r = |hole: f64| match input.recipe.drill_marks {
        DrillMarkStyle::Full => hole / 2.0,
        DrillMarkStyle::Pilot => input.recipe.pilot_diameter_mm / 2.0,
        DrillMarkStyle::None => 0.0,
    };
    let mut out = Vec::new();
    for d in input.drills {
        for h in &d.holes {
            let Some(tool) = d.tools.get(h.tool) else {
                continue;
            };
            let hole = tool.diameter_mm;
            let m = mark_r(hole);
            out.push(HoleSite {
                at: h.at,
                hole_mm: hole,
                mark_r: m,
                open_r: m.max(hole / 2.0),
            });
        }
    }
    out
}

/// The copper ring around `hole` on `material` (crop pixels): `None` when no copper is near
/// the hole at all (a hole in a bare area) or the ring is at least `min_ring` wide.
///
/// Looks only at the annulus from the hole's edge to `min_ring` (plus a pixel) beyond it, row
/// by row; copper counts as "near" in that annulus or halfway between the mark and the hole's
/// edge (a pad no larger than its drill still shows there when the mark is a pilot dot).
pub(super) fn ring_of(
    material: &Bitmap,
    area: &Area,
    hole: &HoleSite,
    min_ring: f64,
) -> Option<f64> {
    let need = hole.open_r + min_ring;
    let reach = need + area.pixel_mm();
    let (cx, cy) = area.to_px(hole.at);
    let get = |x: i64, y: i64| x >= 0 && y >= 0 && material.get(x as usize, y as usize);
    let mut copper_near = copper_inside_hole_edge(material, area, hole);
    // Squared distances in the loop; one square root at the end.
    let (need2, open2, reach2) = (need * need, hole.open_r * hole.open_r, reach * reach);
    let mut nearest_gap = f64::INFINITY;
    let ry = (reach / area.mm_y).ceil() as i64 + 1;
    let iy = cy.floor() as i64;
    for y in (iy - ry)..=(iy + ry) {
        let dy = (y as f64 + 0.5 - cy) * area.mm_y;
        let rest2 = reach2 - dy * dy;
        if rest2 < 0.0 {
            continue;
        }
        // Columns whose centres lie within `reach` on this row.
        let half = rest2.sqrt() / area.mm_x;
        let (x0, x1) = (floor_i(cx - half - 0.5), ceil_i(cx + half - 0.5));
        // Columns a whole pixel inside the hole's edge cannot count (d² < open²): the
        // row's pixels run in two pieces either side of them.
        let inner2 = open2 - dy * dy;
        let ih = if inner2 > 0.0 {
            inner2.sqrt() / area.mm_x - 1.0
        } else {
            -1.0
        };
        let (s0, s1) = if ih >= 0.0 {
            (ceil_i(cx - 0.5 - ih), floor_i(cx - 0.5 + ih))
        } else {
            (x1 + 1, x1)
        };
        let (s0, s1) = if s0 <= s1 { (s0, s1) } else { (x1 + 1, x1) };
        // The candidate columns are x0..=x1 without s0..=s1. On either side of the centre the
        // distance grows with |dx|, so scanning outward from the centre, the first clear
        // pixel is the row's nearest gap on that side and the first copper pixel the
        // nearest copper: the scan stops once both are known (or beyond `reach`).
        let mid = floor_i(cx - 0.5); // columns <= mid lie left of the centre
        let (l1, r0) = if s0 <= s1 && s0 <= x1 {
            (s0 - 1, s1 + 1)
        } else {
            (x1, x0)
        };
        let left = (x0..=l1.min(mid)).rev();
        let right = r0.max(mid + 1)..=x1;
        let mut scan = |cols: &mut dyn Iterator<Item = i64>| {
            let (mut copper, mut gap) = (false, false);
            for x in cols {
                let dx = (x as f64 + 0.5 - cx) * area.mm_x;
                let d2 = dx * dx + dy * dy;
                if d2 > reach2 {
                    break;
                }
                if d2 < open2 {
                    continue;
                }
                if get(x, y) {
                    if !copper {
                        copper = true;
                        copper_near |= d2 <= need2;
                    }
                } else if !gap {
                    gap = true;
                    if d2 < nearest_gap {
                        nearest_gap = d2;
                    }
                }
                if copper && gap {
                    break;
                }
            }
        };
        scan(&mut left.into_iter());
        scan(&mut right.into_iter());
    }
    if !copper_near || !nearest_gap.is_finite() {
        return None;
    }
    let nearest_gap = nearest_gap.sqrt();
    // The nearest clear pixel's centre lies half a pixel beyond the copper's edge.
    let ring = (nearest_gap - 0.5 * area.pixel_mm() - hole.open_r).max(0.0);
    (ring < min_ring - 0.5 * area.pixel_mm()).then_some(ring)
}

/// Whether copper shows halfway between the mark's edge and the hole's (eight directions):
/// a pad no larger than its drill, under a pilot mark.
fn copper_inside_hole_edge(material: &Bitmap, area: &Area, hole: &HoleSite) -> bool {
    let (cx, cy) = area.to_px(hole.at);
    let mid = 0.5 * (hole.mark_r + hole.open_r);
    hole.open_r > hole.mark_r
        && (0..8).any(|k| {
            let a = k as f64 * std::f64::consts::FRAC_PI_4;
            let (x, y) = (
                (cx + mid * a.cos() / area.mm_x).floor() as i64,
                (cy + mid * a.sin() / area.mm_y).floor() as i64,
            );
            x >= 0 && y >= 0 && material.get(x as usize, y as usize)
        })
}

/// ⌊v⌋ without a library call (pixel coordinates, far below 2⁵³; the ring loop takes
/// several per row of every hole).
fn floor_i(v: f64) -> i64 {
    let t = v as i64;
    t - i64::from(t as f64 > v)
}

/// ⌈v⌉, as [`floor_i`].
fn ceil_i(v: f64) -> i64 {
    let t = v as i64;
    t + i64::from((t as f64) < v)
}

/// Objects of the layer image narrower than `limit` that leave nothing on the film: copper
/// with no copper pixel in its box, or a clearance with no clear pixel in its box.
pub(super) fn vanished(
    input: &FilmInput<'_>,
    material: &Bitmap,
    area: &Area,
    board: &Bounds,
    limits: &ProcessLimits,
) -> Vec<Finding> {
    let Some(image) = input.image else {
        return Vec::new();
    };
    let keep = board.grown(BOARD_MARGIN_MM);
    let (w, h) = (material.width(), material.height());
    let mut out = Vec::new();
    for o in &image.objects {
        let is_material = (o.polarity == Polarity::Dark) == input.recipe.dark_is_material;
        let b = o.shape.bounds();
        let narrow = match &o.shape {
            Shape::Stroke { width, .. } => *width,
            Shape::Disc { diameter, .. } => *diameter,
            _ => b.width().min(b.height()),
        };
        let limit = if is_material {
            limits.min_copper_width_mm
        } else {
            limits.min_gap_mm
        };
        if narrow < MIN_DRAWN_MM || narrow >= limit || b.is_empty() || !keep.contains(&b) {
            continue;
        }
        let (x0, x1, y0, y1) = area.pixels_in(&b, w, h);
        let present = if is_material {
            any_set(material, x0, x1, y0, y1)
        } else {
            (y0..y1).any(|y| (x0..x1).any(|x| !material.get(x, y)))
        };
        if !present {
            let kind = if is_material {
                FindingKind::CopperVanishes
            } else {
                FindingKind::GapCloses
            };
            let at = Point::new(0.5 * (b.min_x + b.max_x), 0.5 * (b.min_y + b.max_y));
            out.push(finding(
                input,
                kind,
                at,
                0.0,
                limit,
                [b.width(), b.height()],
                Some(narrow),
            ));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::raster::DeviceMap;

    /// The ring by definition: every pixel centre between the hole's edge and `reach`, one
    /// by one (the nearest clear one, and whether copper lies within the needed ring).
    fn ring_by_every_pixel(
        material: &Bitmap,
        area: &Area,
        hole: &HoleSite,
        min_ring: f64,
    ) -> Option<f64> {
        let need = hole.open_r + min_ring;
        let reach = need + area.pixel_mm();
        let (cx, cy) = area.to_px(hole.at);
        let get = |x: i64, y: i64| x >= 0 && y >= 0 && material.get(x as usize, y as usize);
        // The eight samples inside the hole's edge are not what this test is about.
        let mut copper_near = copper_inside_hole_edge(material, area, hole);
        let mut nearest = f64::INFINITY;
        for y in -5..(material.height() as i64 + 5) {
            for x in -5..(material.width() as i64 + 5) {
                let dx = (x as f64 + 0.5 - cx) * area.mm_x;
                let dy = (y as f64 + 0.5 - cy) * area.mm_y;
                let d2 = dx * dx + dy * dy;
                if d2 < hole.open_r * hole.open_r || d2 > reach * reach {
                    continue;
                }
                if get(x, y) {
                    copper_near |= d2 <= need * need;
                } else {
                    nearest = nearest.min(d2);
                }
            }
        }
        if !copper_near || !nearest.is_finite() {
            return None;
        }
        let ring = (nearest.sqrt() - 0.5 * area.pixel_mm() - hole.open_r).max(0.0);
        (ring < min_ring - 0.5 * area.pixel_mm()).then_some(ring)
    }

    #[test]
    fn ring_scan_agrees_with_every_pixel() {
        // Pads of random size around holes at random sub-pixel places, with random clear
        // specks, at 600 and 1200 dpi and a non-square grid; marks larger and smaller than
        // the drill.
        let mut seed = 17u64;
        let mut u = move || {
            seed = seed
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for (dpi_x, dpi_y) in [(600.0, 600.0), (1200.0, 1200.0), (1200.0, 1000.0)] {
            // The film covers the board and its margin (7 × 6 mm).
            let px = |mm: f64, dpi: f64| (mm * dpi / 25.4).ceil() as usize;
            let map = DeviceMap::new(
                Point::new(0.0, 0.0),
                px(7.0, dpi_x),
                px(6.0, dpi_y),
                dpi_x,
                dpi_y,
            );
            let board = Bounds {
                min_x: 0.5,
                min_y: 0.5,
                max_x: 6.0,
                max_y: 5.5,
            };
            let area = Area::of(&map, &board);
            let (w, h) = area.size(&board);
            for _ in 0..60 {
                let at = Point::new(2.5 + u(), 2.5 + u());
                let pad_r = 0.3 + 0.5 * u();
                let hole_mm = 0.3 + 0.5 * u();
                let mark_r = if u() < 0.5 { 0.2 * u() } else { hole_mm / 2.0 };
                let hole = HoleSite {
                    at,
                    hole_mm,
                    mark_r,
                    open_r: mark_r.max(hole_mm / 2.0),
                };
                let mut material = Bitmap::new(w, h);
                for y in 0..h {
                    for x in 0..w {
                        let p = area.to_mm(x as f64 + 0.5, y as f64 + 0.5);
                        let inside = p.dist(at) <= pad_r && u() > 0.03;
                        material.set(x, y, inside);
                    }
                }
                for min_ring in [0.1, 0.15, 0.3] {
                    assert_eq!(
                        ring_of(&material, &area, &hole, min_ring),
                        ring_by_every_pixel(&material, &area, &hole, min_ring),
                        "{dpi_x}×{dpi_y} dpi, hole {hole:?}, pad {pad_r}, ring {min_ring}"
                    );
                }
            }
        }
    }
}
