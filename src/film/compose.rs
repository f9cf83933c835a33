//! Composing and rendering one film: the layer image, drill-centre marks, registration
//! targets and the label, rendered at the device's resolution with the recipe's polarity,
//! mirror, scale and edge offset.
//!
//! # Material space
//! Everything is first rendered in *material* terms (copper, mask opening, legend ink):
//! `material = image (or its complement when the file's dark means absence) − drill dots +
//! artwork`. Targets and labels count as material, so on every film they print in the
//! material's colour and end up as copper (or mask opening, or ink) in the board's margin:
//! visible on the film whatever its polarity. Drill dots are absence of material. Then
//! `black = material` or its complement (the recipe), and only then is the black edge offset
//! applied, on the composed film (docs/film-rules.md).

use super::marks;
use crate::excellon::DrillFile;
use crate::image::{Bounds, LayerImage, Object, Point, Polarity, Shape};
use crate::process::{DrillMarkStyle, FilmRecipe};
use crate::raster::morphology::{self, Pitch, RealizedOffset};
use crate::raster::{render, Bitmap, DeviceMap};
use serde::Serialize;

/// Sizes of the artwork umbra adds around the board (mm).
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ArtworkOptions {
    /// Draw the three registration targets.
    pub registration: bool,
    /// Outer diameter of a registration target.
    pub target_size_mm: f64,
    /// Clearance between the board and the nearest target edge.
    pub target_margin_mm: f64,
    /// Line width of targets, frame and corner marks.
    pub line_mm: f64,
    /// Draw the label.
    pub label: bool,
    /// Cap height of label text; 1.5 mm reads easily with a loupe at 600 dpi and up.
    pub label_cap_mm: f64,
    /// Clear border around everything, inside the film.
    pub border_mm: f64,
    /// Draw a thin frame at the film's edge, for cutting it out.
    pub frame: bool,
}

impl Default for ArtworkOptions {
    fn default() -> Self {
        ArtworkOptions {
            registration: true,
            target_size_mm: 5.0,
            target_margin_mm: 3.0,
            line_mm: 0.2,
            label: true,
            label_cap_mm: 1.5,
            border_mm: 2.0,
            frame: false,
        }
    }
}

/// Where things go on every film of one board. All films of a board share it, so the
/// targets sit at the same board coordinates on each (docs/film-rules.md, Registration).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BoardFrame {
    /// The board's extents (outline, or copper when there is no outline), mm.
    pub board: Bounds,
    /// Registration target centres, board mm.
    pub targets: Option<[Point; 3]>,
    /// Lower-left corner of the label block, board mm.
    pub label_anchor: Point,
    /// Lower-left corner of the side indicator (TOP/BOT and a boxed F), right of the label.
    pub indicator_anchor: Point,
    /// The film's area in board mm: everything above plus the border.
    pub film: Bounds,
}

impl BoardFrame {
    /// Plans the frame for a board of extents `board` whose largest label block is
    /// `label_size` (w, h) mm and whose side indicator is `indicator_size` (w, h) mm.
    pub fn new(
        board: Bounds,
        label_size: (f64, f64),
        indicator_size: (f64, f64),
        opts: &ArtworkOptions,
    ) -> BoardFrame {
        let mut all = board;
        let targets = opts.registration.then(|| {
            let t = marks::registration_targets(board, opts.target_margin_mm, opts.target_size_mm);
            for p in &t {
                all.add_circle(*p, opts.target_size_mm / 2.0);
            }
            t
        });
        // The label goes below everything drawn so far, left-aligned; the side indicator
        // to its right, level with the label's first line.
        let gap = if opts.label { 1.5 } else { 0.0 };
        let label_anchor = Point::new(all.min_x, all.min_y - gap - label_size.1);
        let indicator_anchor = Point::new(
            label_anchor.x + label_size.0 + 3.0,
            label_anchor.y + label_size.1 - indicator_size.1,
        );
        if opts.label && label_size.0 > 0.0 {
            all.add_point(label_anchor);
            all.add_point(Point::new(
                label_anchor.x + label_size.0,
                label_anchor.y + label_size.1,
            ));
            if indicator_size.0 > 0.0 {
                all.add_point(indicator_anchor);
                all.add_point(Point::new(
                    indicator_anchor.x + indicator_size.0,
                    indicator_anchor.y + indicator_size.1,
                ));
            }
        }
        BoardFrame {
            board,
            targets,
            label_anchor,
            indicator_anchor,
            film: all.grown(opts.border_mm),
        }
    }
}

/// One film ready to render.
#[derive(Debug, Clone)]
pub struct FilmJob<'a> {
    pub image: &'a LayerImage,
    pub recipe: &'a FilmRecipe,
    pub drills: &'a [&'a DrillFile],
    pub frame: &'a BoardFrame,
    /// Label lines (already decided by the caller, including the realized offset).
    pub label: Vec<String>,
    pub label_mirrored: bool,
    /// The side indicator to draw beside the label (None: none).
    pub face: Option<marks::BoardFace>,
    /// Draw stacking targets (for films printed in several copies and stacked).
    pub stack_targets: bool,
    pub opts: &'a ArtworkOptions,
}

/// A drill hit and the finished hole's diameter, board mm.
#[derive(Debug, Clone, Copy)]
struct Hit {
    at: Point,
    hole_mm: f64,
}

fn drill_hits(drills: &[&DrillFile]) -> Vec<Hit> {
    let mut hits = Vec::new();
    for d in drills {
        for h in &d.holes {
            hits.push(Hit {
                at: h.at,
                hole_mm: d.tools[h.tool].diameter_mm,
            });
        }
    }
    hits
}

/// The drill-centre marks (absence of material) for `style`.
pub(crate) fn drill_mark_shapes(
    drills: &[&DrillFile],
    style: DrillMarkStyle,
    pilot_mm: f64,
) -> Vec<Shape> {
    let mut shapes = Vec::new();
    if style == DrillMarkStyle::None {
        return shapes;
    }
    for d in drills {
        for h in &d.holes {
            let dia = match style {
                DrillMarkStyle::Full => d.tools[h.tool].diameter_mm,
                _ => pilot_mm,
            };
            shapes.push(Shape::Disc {
                center: h.at,
                diameter: dia,
            });
        }
        for s in &d.slots {
            let w = d.tools[s.tool].diameter_mm;
            match style {
                DrillMarkStyle::Full => {
                    for pair in s.path.windows(2) {
                        shapes.push(Shape::Stroke {
                            start: pair[0],
                            end: pair[1],
                            arc: None,
                            width: w,
                        });
                    }
                }
                _ => {
                    // A pilot dot at each end: where the cutter plunges.
                    for p in [s.path.first(), s.path.last()].into_iter().flatten() {
                        shapes.push(Shape::Disc {
                            center: *p,
                            diameter: pilot_mm,
                        });
                    }
                }
            }
        }
    }
    shapes
}

/// The artwork (material) around the board: targets and label.
pub(crate) fn artwork_shapes(job: &FilmJob<'_>) -> Vec<Shape> {
    let o = job.opts;
    let mut shapes = Vec::new();
    if let Some(t) = &job.frame.targets {
        for p in t {
            shapes.extend(if job.stack_targets {
                marks::stack_target_shapes(*p, o.target_size_mm, o.line_mm)
            } else {
                marks::target_shapes(*p, o.target_size_mm, o.line_mm)
            });
        }
    }
    if o.label && !job.label.is_empty() {
        shapes.extend(marks::label_shapes(
            &job.label,
            job.frame.label_anchor,
            o.label_cap_mm,
            job.label_mirrored,
        ));
        if let Some(face) = job.face {
            shapes.extend(marks::side_indicator_shapes(
                face,
                job.frame.indicator_anchor,
                o.label_cap_mm * INDICATOR_CAPS,
                job.label_mirrored,
            ));
        }
    }
    if o.frame {
        shapes.extend(marks::frame_shapes(
            job.frame.film.grown(-o.line_mm),
            o.line_mm,
        ));
    }
    shapes
}

/// The side indicator's cap height in label cap heights: large enough to see at arm's length.
pub const INDICATOR_CAPS: f64 = 2.0;

/// A film rendered at device resolution: bit 1 = black (opaque).
#[derive(Debug, Clone)]
pub struct RenderedFilm {
    pub bitmap: Bitmap,
    pub map: DeviceMap,
    pub realized: RealizedOffset,
    /// Holes whose drill mark or hole leaves less copper ring than the minimum: (centre, ring mm).
    pub thin_rings: Vec<(Point, f64)>,
    /// Every warning of the render, the annular-ring warning (if any) included.
    pub warnings: Vec<String>,
    /// The annular-ring warning alone (also in `warnings`), for runs without the process check
    /// (`crate::check` measures rings on the finished film and is the one source of ring
    /// findings wherever it runs; the films job therefore renders without this check).
    pub ring_warning: Option<String>,
}

/// The device map of a film: the frame's film area at the recipe's resolution, with the
/// printer-stretch correction and the mirror.
pub fn film_map(frame: &BoardFrame, recipe: &FilmRecipe) -> DeviceMap {
    let sx = recipe.dpi_x / 25.4 * recipe.scale_x;
    let sy = recipe.dpi_y / 25.4 * recipe.scale_y;
    let w = (frame.film.width() * sx).ceil().max(1.0) as usize;
    let h = (frame.film.height() * sy).ceil().max(1.0) as usize;
    let mut map = DeviceMap::new(
        Point::new(frame.film.min_x, frame.film.min_y),
        w,
        h,
        recipe.dpi_x,
        recipe.dpi_y,
    )
    .with_mirror(recipe.mirror);
    map.scale_x = recipe.scale_x;
    map.scale_y = recipe.scale_y;
    map
}

/// The radius passed to the morphology so that the realized offset is the *nearest* whole
/// number of pixels to the request (the disc reaches floor(r/pitch) pixels; see
/// raster::morphology), along the finer axis. (A radius of n + ½ pixels was tried: for small
/// n its discrete disc overshoots the true Minkowski growth by about as much as the n-pixel
/// disc falls short, so the simpler n is kept.)
pub fn morphology_radius_um(offset_um: f64, pitch: Pitch) -> f64 {
    let p = pitch.x_um.min(pitch.y_um);
    let n = (offset_um.abs() / p).round();
    offset_um.signum() * n * p
}

/// What the film's edge offset becomes on its pixel grid.
pub fn realized_for(recipe: &FilmRecipe) -> RealizedOffset {
    let pitch = Pitch::from_dpi(recipe.dpi_x, recipe.dpi_y);
    let mut r =
        morphology::realized_offset(morphology_radius_um(recipe.edge_offset_um, pitch), pitch);
    r.requested_um = recipe.edge_offset_um;
    r
}

fn objects(shapes: Vec<Shape>, polarity: Polarity) -> Vec<Object> {
    shapes
        .into_iter()
        .map(|shape| Object { polarity, shape })
        .collect()
}

/// How far beyond the board's extents layer artwork is kept, mm (the outline is drawn with a
/// line whose width reaches outside the nominal edge).
pub(crate) const BOARD_CLIP_MARGIN_MM: f64 = 0.5;

/// Clears every pixel whose centre lies outside `keep` (board mm).
fn clear_outside(bitmap: &mut Bitmap, map: &DeviceMap, keep: &Bounds) {
    let (ax, ay) = map.to_px(Point::new(keep.min_x, keep.min_y));
    let (bx, by) = map.to_px(Point::new(keep.max_x, keep.max_y));
    let (x0, x1) = (ax.min(bx), ax.max(bx));
    let (y0, y1) = (ay.min(by), ay.max(by));
    // Pixel i is kept when its centre i + 0.5 lies in [x0, x1].
    let first = |v: f64| (v - 0.5).ceil().max(0.0) as usize;
    let last = |v: f64, n: usize| ((v - 0.5).floor().max(-1.0) + 1.0).min(n as f64) as usize;
    let (kx0, kx1) = (first(x0), last(x1, bitmap.width()));
    let (ky0, ky1) = (first(y0), last(y1, bitmap.height()));
    let w = bitmap.width();
    for y in 0..bitmap.height() {
        if y < ky0 || y >= ky1 || kx0 >= kx1 {
            if w > 0 {
                bitmap.fill_span(y, 0, w, false);
            }
            continue;
        }
        if kx0 > 0 {
            bitmap.fill_span(y, 0, kx0, false);
        }
        if kx1 < w {
            bitmap.fill_span(y, kx1, w, false);
        }
    }
}

/// Sets `dst` to `dst & !src` (`clear`) or `dst | src`, word by word.
fn combine(dst: &mut Bitmap, src: &Bitmap, clear: bool) {
    for y in 0..dst.height() {
        let s = src.row(y).to_vec();
        for (d, s) in dst.row_mut(y).iter_mut().zip(s) {
            if clear {
                *d &= !s;
            } else {
                *d |= s;
            }
        }
    }
}

/// Renders one film. See the module docs for the order of operations.
pub fn render_film(job: &FilmJob<'_>, min_annular_ring_mm: f64) -> RenderedFilm {
    render_film_on(
        job,
        film_map(job.frame, job.recipe),
        Some(min_annular_ring_mm),
    )
}

/// [`render_film`] on any pixel grid of the recipe's resolution: a band of the film's rows
/// (banded output; the band must be grown by the edge offset's reach, then cropped) or a whole
/// screen around the film. The annular-ring check needs the whole film around each hole, so
/// it runs only when `min_annular_ring_mm` is given.
pub fn render_film_on(
    job: &FilmJob<'_>,
    map: DeviceMap,
    min_annular_ring_mm: Option<f64>,
) -> RenderedFilm {
    let recipe = job.recipe;
    let mut warnings = Vec::new();

    // 1. The layer image in material terms.
    let mut material = render(&job.image.objects, &map);
    if !recipe.dark_is_material {
        material.invert();
    }
    // Nothing outside the board edge is made: notes and fab drawings that some EDA programs
    // put beside the board on copper layers would otherwise print into the label and targets.
    clear_outside(
        &mut material,
        &map,
        &job.frame.board.grown(BOARD_CLIP_MARGIN_MM),
    );

    // 2. Drill-centre marks, after checking the copper ring each leaves.
    let mut thin_rings = Vec::new();
    let mut ring_warning = None;
    if recipe.drill_marks != DrillMarkStyle::None && !job.drills.is_empty() {
        // No ring check without the whole film around the holes (see render_film_on).
        let checked = match min_annular_ring_mm {
            Some(_) => drill_hits(job.drills),
            None => Vec::new(),
        };
        let min_annular_ring_mm = min_annular_ring_mm.unwrap_or(0.0);
        for hit in checked {
            let mark = match recipe.drill_marks {
                DrillMarkStyle::Full => hit.hole_mm,
                _ => recipe.pilot_diameter_mm,
            };
            // After etching and drilling, the hole is the larger of the mark and the drill.
            let need = hit.hole_mm.max(mark) / 2.0 + min_annular_ring_mm;
            if let Some(ring) =
                copper_ring(&material, &map, hit.at, hit.hole_mm.max(mark) / 2.0, need)
            {
                thin_rings.push((hit.at, ring));
            }
        }
        let dots = drill_mark_shapes(job.drills, recipe.drill_marks, recipe.pilot_diameter_mm);
        let dots = render(&objects(dots, Polarity::Dark), &map);
        combine(&mut material, &dots, true);
        if !thin_rings.is_empty() {
            ring_warning = Some(format!(
                "{} hole(s) would keep less than the {:.2} mm minimum annular ring (smallest {:.3} mm at {:.2}, {:.2} mm)",
                thin_rings.len(),
                min_annular_ring_mm,
                thin_rings.iter().map(|r| r.1).fold(f64::INFINITY, f64::min),
                thin_rings[0].0.x,
                thin_rings[0].0.y
            ));
            warnings.extend(ring_warning.clone());
        }
    }

    // 3. Targets and label, as material.
    let art = artwork_shapes(job);
    if !art.is_empty() {
        let art = render(&objects(art, Polarity::Dark), &map);
        combine(&mut material, &art, false);
    }

    // 4. Black and clear, then the edge offset on the composed film.
    if !recipe.black_is_material {
        material.invert();
    }
    let pitch = Pitch::from_dpi(recipe.dpi_x, recipe.dpi_y);
    let realized = realized_for(recipe);
    let radius = morphology_radius_um(recipe.edge_offset_um, pitch);
    let bitmap = if radius != 0.0 {
        morphology::offset(&material, radius, pitch)
    } else {
        material
    };
    if recipe.edge_offset_um != 0.0 && realized.x_px == 0 && realized.y_px == 0 {
        warnings.push(format!(
            "edge offset {:+.1} µm is below half a pixel ({:.1} µm at {} dpi): realized 0 px (+0 µm)",
            recipe.edge_offset_um,
            pitch.x_um.min(pitch.y_um) / 2.0,
            recipe.dpi_x.max(recipe.dpi_y)
        ));
    }
    RenderedFilm {
        bitmap,
        map,
        realized,
        thin_rings,
        warnings,
        ring_warning,
    }
}

/// The copper ring left around a hole of radius `hole_r` at `at`, when it is thinner than
/// needed: measures the distance from `at` to the nearest non-material pixel centre outside
/// the hole, up to `need` mm. `None` when the ring is at least `need − hole_r` wide or there
/// is no copper at the hole at all (a hole in a bare area, e.g. a mounting hole).
fn copper_ring(
    material: &Bitmap,
    map: &DeviceMap,
    at: Point,
    hole_r: f64,
    need: f64,
) -> Option<f64> {
    let (cx, cy) = map.to_px(at);
    let (ix, iy) = (cx.floor() as i64, cy.floor() as i64);
    let inside = |x: i64, y: i64| {
        x >= 0
            && y >= 0
            && (x as usize) < material.width()
            && (y as usize) < material.height()
            && material.get(x as usize, y as usize)
    };
    // No copper at the centre: nothing to keep a ring of.
    if !inside(ix, iy) {
        return None;
    }
    let sx = map.px_per_mm_x();
    let sy = map.px_per_mm_y();
    let ry = (need * sy).ceil() as i64 + 1;
    // This runs around every hole of a copper film, so it works on squared distances and
    // finds the nearest clear pixel of each row a word at a time: on either side of the
    // centre column, pixel-centre distance grows with the column, so the first clear pixel
    // met going outwards is that side's nearest.
    let need2 = need * need;
    let mut nearest2 = f64::INFINITY;
    for y in (iy - ry)..=(iy + ry) {
        let dy = (y as f64 + 0.5 - cy) / sy;
        let dy2 = dy * dy;
        if dy2 > need2 || dy2 >= nearest2 {
            continue;
        }
        // Columns whose centres can lie within `need` of the hole centre.
        let reach = ((need2 - dy2).sqrt() * sx).ceil() as i64 + 1;
        // Inside the hole nothing counts (some programs draw pads with their hole): each
        // side's scan starts at the first column whose centre is at least `hole_r` away.
        let inner = (hole_r * hole_r - dy2).max(0.0).sqrt() * sx;
        let start_right = ix.max((cx - 0.5 + inner).ceil() as i64);
        let start_left = (ix - 1).min((cx - 0.5 - inner).floor() as i64);
        let right = nearest_clear_in_row(material, y, start_right, ix + reach);
        let left = nearest_clear_in_row(material, y, start_left, ix - 1 - reach);
        for x in [right, left].into_iter().flatten() {
            let dx = (x as f64 + 0.5 - cx) / sx;
            let d2 = dx * dx + dy2;
            if d2 <= need2 && d2 < nearest2 {
                nearest2 = d2;
            }
        }
    }
    if nearest2.is_finite() {
        Some((nearest2.sqrt() - hole_r).max(0.0))
    } else {
        None
    }
}

/// The first clear (unset) pixel of row `y` met going from column `from` towards column `to`
/// (inclusive; rightwards when `to >= from`, else leftwards). Pixels outside the bitmap count
/// as clear. Whole words of set pixels are skipped at once (MSB-first rows, see
/// raster::Bitmap).
fn nearest_clear_in_row(b: &Bitmap, y: i64, from: i64, to: i64) -> Option<i64> {
    let (w, h) = (b.width() as i64, b.height() as i64);
    if y < 0 || y >= h || from < 0 || from >= w {
        return Some(from);
    }
    let row = b.row(y as usize);
    if to >= from {
        let last = to.min(w - 1);
        let mut x = from;
        while x <= last {
            let word = (x / 64) as usize;
            // Clear pixels as ones, from column x on (the zero padding past the width turns
            // into ones too: the first of them is column `w`, outside, i.e. clear).
            let bits = !row[word] & (u64::MAX >> (x % 64));
            if bits != 0 {
                let px = word as i64 * 64 + bits.leading_zeros() as i64;
                return (px <= to).then_some(px);
            }
            x = (word as i64 + 1) * 64;
        }
        (to >= w).then_some(w)
    } else {
        let first = to.max(0);
        let mut x = from;
        while x >= first {
            let word = (x / 64) as usize;
            // Clear pixels as ones, up to and including column x.
            let bits = !row[word] & (u64::MAX << (63 - x % 64));
            if bits != 0 {
                let px = word as i64 * 64 + 63 - bits.trailing_zeros() as i64;
                return (px >= to).then_some(px);
            }
            x = word as i64 * 64 - 1;
        }
        (to < 0).then_some(-1)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The nearest clear column by brute force, for comparison.
    fn brute(b: &Bitmap, y: i64, from: i64, to: i64) -> Option<i64> {
        let clear = |x: i64| {
            y < 0
                || x < 0
                || y >= b.height() as i64
                || x >= b.width() as i64
                || !b.get(x as usize, y as usize)
        };
        if to >= from {
            (from..=to).find(|&x| clear(x))
        } else {
            (to..=from).rev().find(|&x| clear(x))
        }
    }

    #[test]
    fn nearest_clear_in_row_matches_brute_force() {
        // Rows of several word lengths with long runs of set pixels and a few clear ones.
        let mut seed: u64 = 0x9E37_79B9_7F4A_7C15;
        let mut next = move || {
            seed ^= seed << 13;
            seed ^= seed >> 7;
            seed ^= seed << 17;
            seed
        };
        for width in [1usize, 63, 64, 65, 130, 200] {
            let mut b = Bitmap::new(width, 3);
            for y in 0..3 {
                b.fill_span(y, 0, width, true);
                for _ in 0..(y * 2) {
                    b.set((next() % width as u64) as usize, y, false);
                }
            }
            for _ in 0..400 {
                let y = (next() % 5) as i64 - 1;
                let from = (next() % (width as u64 + 4)) as i64 - 2;
                let to = (next() % (width as u64 + 140)) as i64 - 70;
                assert_eq!(
                    nearest_clear_in_row(&b, y, from, to),
                    brute(&b, y, from, to),
                    "width {width}, row {y}, {from} → {to}"
                );
            }
        }
    }
}
