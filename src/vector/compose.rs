//! One film composed as polygons: the same operations, in the same order, as the raster
//! path (`film::compose`), done with boolean operations in film space.
//!
//! # Order (material space, `film::compose` module docs)
//! 1. The layer image in material terms: objects paint in order, Dark = union, Clear =
//!    difference (a Composite is combined first, then painted with its polarity). When the
//!    file's dark means absence of material, the material is the film rectangle minus the
//!    image: the same as painting the film rectangle Dark first and then every object with
//!    its polarity flipped. The result is clipped to the board's extents grown by
//!    `BOARD_CLIP_MARGIN_MM`.
//! 2. Drill-centre marks are subtracted.
//! 3. Targets, label (and frame) are added as material.
//! 4. Black = material, or the film rectangle minus it.
//! 5. The edge offset grows (positive) or shrinks (negative) the black region by exactly the
//!    requested distance with round joins, then everything is clipped to the film. As in the
//!    raster morphology, outside the film counts as clear when growing and as black when
//!    shrinking, so black touching the film's edge is not eaten from the edge.
//!
//! # How "in order" is evaluated
//! A point is covered by the painted image exactly when the *last* object containing it is
//! Dark. So the result is the union over every Dark object `D_i` of `D_i` minus the Clear
//! objects that come after it. Each Dark object is therefore cut only by the later Clear
//! objects whose boxes touch it (found with a grid index), and all the pieces are united in
//! one overlay at the end: a handful of large operations instead of one per object.
//! Straight strokes drawn end to end with the same pen and polarity, with nothing between
//! them in the image, count as one object: their chain's outline ([`super::chain`]).

use super::flatten::{rect_ring, FilmSpace, Flattener};
use super::{chain, ops, Region, Ring, VectorOptions};
use crate::film::compose::{
    artwork_shapes, drill_mark_shapes, film_map, FilmJob, BOARD_CLIP_MARGIN_MM,
};
use crate::image::Polarity;
use crate::process::DrillMarkStyle;
use rayon::prelude::*;

/// A film as polygons in film space (mm, origin at the film's lower-left corner, y up).
#[derive(Debug, Clone)]
pub struct VectorFilm {
    pub space: FilmSpace,
    /// The black (opaque) region, offset already applied.
    pub black: Region,
    /// The edge offset applied, film mm (exactly the recipe's request).
    pub offset_mm: f64,
    /// The arc tolerance used, mm.
    pub tolerance_mm: f64,
}

/// One painted item: its cover in film space and its box.
struct Item {
    dark: bool,
    rings: Vec<Ring>,
    bbox: [f64; 4],
    /// Layer-image material is clipped to the board; marks and artwork are not.
    clip_to_board: bool,
}

fn item(dark: bool, rings: Vec<Ring>, clip_to_board: bool) -> Option<Item> {
    let bbox = super::rings_bounds(&rings)?;
    Some(Item {
        dark,
        rings,
        bbox,
        clip_to_board,
    })
}

fn overlaps(a: &[f64; 4], b: &[f64; 4]) -> bool {
    a[0] <= b[2] && b[0] <= a[2] && a[1] <= b[3] && b[1] <= a[3]
}

fn inside(a: &[f64; 4], b: &[f64; 4]) -> bool {
    a[0] >= b[0] && a[1] >= b[1] && a[2] <= b[2] && a[3] <= b[3]
}

/// A uniform grid of the Clear items' boxes, to find the Clear items touching a box.
struct ClearIndex {
    origin: [f64; 2],
    cell: f64,
    nx: usize,
    ny: usize,
    cells: Vec<Vec<u32>>,
}

/// Cells per side of the index (at most).
const INDEX_CELLS: f64 = 256.0;

impl ClearIndex {
    fn new(items: &[Item]) -> ClearIndex {
        let all = super::rings_bounds(items.iter().flat_map(|i| i.rings.iter()))
            .unwrap_or([0.0, 0.0, 1.0, 1.0]);
        let span = (all[2] - all[0]).max(all[3] - all[1]).max(1e-6);
        let cell = span / INDEX_CELLS;
        let nx = (((all[2] - all[0]) / cell).floor() as usize + 1).min(INDEX_CELLS as usize + 1);
        let ny = (((all[3] - all[1]) / cell).floor() as usize + 1).min(INDEX_CELLS as usize + 1);
        let mut index = ClearIndex {
            origin: [all[0], all[1]],
            cell,
            nx,
            ny,
            cells: vec![Vec::new(); nx * ny],
        };
        for (i, it) in items.iter().enumerate() {
            if !it.dark {
                let (x0, y0, x1, y1) = index.cell_range(&it.bbox);
                for y in y0..=y1 {
                    for x in x0..=x1 {
                        index.cells[y * nx + x].push(i as u32);
                    }
                }
            }
        }
        index
    }

    fn cell_range(&self, b: &[f64; 4]) -> (usize, usize, usize, usize) {
        let c =
            |v: f64, o: f64, n: usize| (((v - o) / self.cell).floor().max(0.0) as usize).min(n - 1);
        (
            c(b[0], self.origin[0], self.nx),
            c(b[1], self.origin[1], self.ny),
            c(b[2], self.origin[0], self.nx),
            c(b[3], self.origin[1], self.ny),
        )
    }

    /// Clear items after `after` whose boxes overlap `b`, in order, without repeats.
    fn later_clears(&self, items: &[Item], after: usize, b: &[f64; 4]) -> Vec<u32> {
        let (x0, y0, x1, y1) = self.cell_range(b);
        let mut out = Vec::new();
        for y in y0..=y1 {
            for x in x0..=x1 {
                for &j in &self.cells[y * self.nx + x] {
                    if j as usize > after && overlaps(&items[j as usize].bbox, b) {
                        out.push(j);
                    }
                }
            }
        }
        out.sort_unstable();
        out.dedup();
        out
    }
}

/// The pieces of the items painted in order, each a cover (a Dark item minus the later
/// Clear items; see the module docs); their union is the painted image. Layer-image pieces
/// are clipped to `board_clip`.
fn paint(items: &[Item], board_clip: Option<&Ring>, grid: ops::Grid) -> Vec<Vec<Ring>> {
    let index = ClearIndex::new(items);
    let clip_box = board_clip.and_then(|r| super::rings_bounds(std::iter::once(r)));
    items
        .par_iter()
        .enumerate()
        .filter(|(_, it)| it.dark)
        .map(|(i, it)| {
            let cuts = index.later_clears(items, i, &it.bbox);
            let mut rings = if cuts.is_empty() {
                it.rings.clone()
            } else {
                let clip: Vec<Ring> = cuts
                    .iter()
                    .flat_map(|&j| items[j as usize].rings.iter().cloned())
                    .collect();
                ops::rings_of(ops::difference(&it.rings, &clip, grid))
            };
            if it.clip_to_board {
                match (board_clip, clip_box) {
                    (Some(r), Some(b)) if !inside(&it.bbox, &b) => {
                        rings =
                            ops::rings_of(ops::intersection(&rings, std::slice::from_ref(r), grid));
                    }
                    (None, _) => rings.clear(),
                    _ => {}
                }
            }
            rings
        })
        .filter(|rings: &Vec<Ring>| !rings.is_empty())
        .collect()
}

/// Composes one film as polygons. See the module docs for the order of operations.
pub fn compose_film(job: &FilmJob<'_>, opts: &VectorOptions) -> VectorFilm {
    let recipe = job.recipe;
    let map = film_map(job.frame, recipe);
    let tolerance_mm = opts.tolerance_mm(recipe.dpi_x, recipe.dpi_y);
    let fl = Flattener::new(&map, tolerance_mm);
    let space = fl.space;
    let frame = space.frame();

    // 1. The layer image in material terms.
    let flip = !recipe.dark_is_material;
    let mut items: Vec<Item> = Vec::new();
    if flip {
        items.extend(item(true, vec![frame.clone()], true));
    }
    // Chains of straight strokes become one outline each (`chain` module docs).
    let objects = &job.image.objects;
    let image: Vec<Option<Item>> = chain::runs(objects)
        .into_par_iter()
        .map(|run| {
            let o = &objects[run.start];
            let dark = (o.polarity == Polarity::Dark) != flip;
            let rings = if run.len() == 1 {
                fl.rings(&o.shape)
            } else {
                fl.chain(&objects[run])
            };
            item(dark, rings, true)
        })
        .collect();
    items.extend(image.into_iter().flatten());
    let board_clip = space.rect(&job.frame.board.grown(BOARD_CLIP_MARGIN_MM));

    // 2. Drill-centre marks: absence of material, after the image.
    if recipe.drill_marks != DrillMarkStyle::None && !job.drills.is_empty() {
        for s in drill_mark_shapes(job.drills, recipe.drill_marks, recipe.pilot_diameter_mm) {
            items.extend(item(false, fl.rings(&s), false));
        }
    }
    // 3. Targets and label, as material.
    for s in artwork_shapes(job) {
        items.extend(item(true, fl.rings(&s), false));
    }
    let grid = fl.grid();
    let material = ops::union_many(paint(&items, board_clip.as_ref(), grid), grid);
    drop(items);

    // 4. Black and clear.
    let black = if recipe.black_is_material {
        material
    } else {
        ops::difference(std::slice::from_ref(&frame), &ops::rings_of(material), grid)
    };

    // 5. The edge offset, exactly as requested, on the composed film.
    let offset_mm = if recipe.edge_offset_um.is_finite() {
        recipe.edge_offset_um / 1000.0
    } else {
        0.0
    };
    let black = offset_within_film(black, offset_mm, tolerance_mm, &space);
    VectorFilm {
        space,
        black,
        offset_mm,
        tolerance_mm,
    }
}

/// Grows or shrinks `black` by `d` mm inside the film rectangle: outside counts as clear
/// when growing and as black when shrinking (as `raster::morphology` does at its borders).
pub fn offset_within_film(black: Region, d: f64, tolerance: f64, space: &FilmSpace) -> Region {
    let grid = ops::Grid::for_tolerance(tolerance);
    if d == 0.0 || black.is_empty() {
        return black;
    }
    let frame = space.frame();
    let grown = if d > 0.0 {
        ops::offset(&black, d, tolerance)
    } else {
        // A band of black around the film, wider than the shrink, joined to the region.
        let m = -d + 1.0;
        let outer = rect_ring(-m, -m, space.width_mm + m, space.height_mm + m);
        let mut hole = frame.clone();
        hole.reverse();
        let mut rings = ops::rings_of(black);
        rings.push(outer);
        rings.push(hole);
        ops::offset(&ops::simplify(&rings, grid), d, tolerance)
    };
    ops::intersection(&ops::rings_of(grown), &[frame], grid)
}
