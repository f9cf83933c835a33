//! The main job: a loaded board and a process profile in, a set of aligned, labelled film
//! sheets out (PDF, one PNG per sheet, manifest), plus the summary of every decision.

use crate::excellon::DrillFile;
use crate::film::compose::{self, BoardFrame, FilmJob, RenderedFilm};
use crate::film::marks::{self, BoardFace, LabelInfo};
use crate::image::{Bounds, LayerImage, Point};
use crate::job::Job;
use crate::layers::{LayerFunction, LayerId, Side};
use crate::load::{Board, Content};
use crate::output::pdf::{PageSize, PdfPage, PlacedImage};
use crate::process::{plan, FilmRecipe, FilmsSection, Profile};
use crate::raster::{render, Affine, Bitmap, DeviceMap};
use crate::sheet::{self, FilmRequest, Layout, Orientation};
use serde::Serialize;
use std::path::{Path, PathBuf};

/// Why the job could not make films.
#[derive(Debug, thiserror::Error)]
pub enum FilmsError {
    #[error("{0}")]
    Input(String),
    #[error("{0}")]
    Layout(String),
    #[error("{0}")]
    Output(String),
}

/// One film chosen from the board's files.
#[derive(Debug, Clone)]
pub struct Selected<'a> {
    /// Short, file-name-safe key: "copper-top".
    pub key: String,
    /// "copper top".
    pub title: String,
    pub source: String,
    pub id: LayerId,
    pub image: &'a LayerImage,
    pub image_negative: bool,
}

fn wanted(id: &LayerId, films: &FilmsSection) -> bool {
    let outer = matches!(id.side, Side::Top | Side::Bottom);
    match id.function {
        LayerFunction::Copper => (films.copper && outer) || (films.inner_copper && !outer),
        LayerFunction::SolderMask => films.mask && outer,
        LayerFunction::Legend => films.legend && outer,
        LayerFunction::Paste => films.paste && outer,
        _ => false,
    }
}

fn side_order(s: Side) -> u32 {
    match s {
        Side::Top => 0,
        Side::Inner(n) => n,
        Side::Bottom => 1000,
        _ => 2000,
    }
}

fn function_order(f: LayerFunction) -> u32 {
    match f {
        LayerFunction::Copper => 0,
        LayerFunction::SolderMask => 1,
        LayerFunction::Legend => 2,
        LayerFunction::Paste => 3,
        _ => 4,
    }
}

/// The identity of each file, with the job file's word over everything else.
pub fn identities(board: &Board, job: Option<&Job>) -> Vec<Option<LayerId>> {
    board
        .files
        .iter()
        .map(|f| match job.and_then(|j| j.layer_of(&f.base_name)) {
            Some(id) => id,
            None => f.id,
        })
        .collect()
}

/// Chooses the films to make. Two files claiming the same layer is an error: guessing
/// which one the user meant would print the wrong artwork.
pub fn select<'a>(
    board: &'a Board,
    ids: &[Option<LayerId>],
    films: &FilmsSection,
) -> Result<Vec<Selected<'a>>, FilmsError> {
    let mut out: Vec<Selected<'a>> = Vec::new();
    for (f, id) in board.files.iter().zip(ids) {
        let (Some(id), Content::Gerber(g)) = (id, &f.content) else {
            continue;
        };
        if !wanted(id, films) {
            continue;
        }
        let title = format!("{} {}", id.function, id.side);
        if let Some(prev) = out.iter().find(|s| s.title == title) {
            return Err(FilmsError::Input(format!(
                "two files claim the layer \"{title}\": {} and {}; say which one is meant in a job file ([[files]] name = \"…\", layer = \"ignore\")",
                prev.source, f.name
            )));
        }
        out.push(Selected {
            key: title.replace(' ', "-"),
            title,
            source: f.name.clone(),
            id: *id,
            image: &g.image,
            image_negative: g.image_negative,
        });
    }
    out.sort_by_key(|s| (side_order(s.id.side), function_order(s.id.function)));
    // Group the two copper films (and the two masks) so that each pair prints in one pass.
    if out.is_empty() {
        let found: Vec<String> = board
            .files
            .iter()
            .zip(ids)
            .filter_map(|(f, id)| id.map(|id| format!("{} ({id})", f.base_name)))
            .collect();
        return Err(FilmsError::Input(if found.is_empty() {
            no_layers_message(board)
        } else {
            format!(
                "none of the layers found is one umbra makes films of with this profile: {}",
                found.join(", ")
            )
        }));
    }
    Ok(out)
}

/// Why nothing could be identified as a layer, naming the files that were read.
fn no_layers_message(board: &Board) -> String {
    const SHOWN: usize = 8;
    let unknown: Vec<&str> = board
        .files
        .iter()
        .filter(|f| matches!(f.content, Content::Gerber(_)))
        .map(|f| f.name.as_str())
        .collect();
    if !unknown.is_empty() {
        let (which, are) = if unknown.len() == 1 {
            ("layer the Gerber file", "is")
        } else {
            ("layers the Gerber files", "are")
        };
        return format!(
            "umbra cannot tell which {which} {} {are}; name the layers in a job file (*{}: [[files]] name = \"…\", layer = \"copper top\")",
            list_of(&unknown, SHOWN),
            crate::job::JOB_FILE_SUFFIX
        );
    }
    let read: Vec<&str> = board.files.iter().map(|f| f.name.as_str()).collect();
    if read.is_empty() {
        return "no Gerber layers were found in the input (no files were read)".to_string();
    }
    format!(
        "no Gerber layers were found in the input; the files read are not Gerber data: {}",
        list_of(&read, SHOWN)
    )
}

/// "a, b, c and 4 more".
fn list_of(names: &[&str], shown: usize) -> String {
    let mut s = names
        .iter()
        .take(shown)
        .copied()
        .collect::<Vec<_>>()
        .join(", ");
    if names.len() > shown {
        s.push_str(&format!(" and {} more", names.len() - shown));
    }
    s
}

/// How far beyond the copper an outline layer's extents are believed, mm.
const OUTLINE_BEYOND_COPPER_MM: f64 = 5.0;

/// The board's extents: the outline's (but no more than a few mm beyond the copper: outline
/// layers sometimes carry notes and panel drawings beside the board), else the union of the
/// copper layers', else of all layers.
pub fn board_extents(board: &Board, ids: &[Option<LayerId>]) -> Bounds {
    let by = |pred: &dyn Fn(&LayerId) -> bool| {
        let mut b = Bounds::EMPTY;
        for (f, id) in board.files.iter().zip(ids) {
            if let (Some(id), Content::Gerber(g)) = (id, &f.content) {
                if pred(id) {
                    b.union(&g.image.bounds());
                }
            }
        }
        b
    };
    let outline = by(&|id| id.function == LayerFunction::Outline);
    let copper = by(&|id| id.function == LayerFunction::Copper);
    if !outline.is_empty() {
        if copper.is_empty() {
            return outline;
        }
        let near = copper.grown(OUTLINE_BEYOND_COPPER_MM);
        let clipped = Bounds {
            min_x: outline.min_x.max(near.min_x),
            min_y: outline.min_y.max(near.min_y),
            max_x: outline.max_x.min(near.max_x),
            max_y: outline.max_y.min(near.max_y),
        };
        if !clipped.is_empty() {
            return clipped;
        }
    }
    if !copper.is_empty() {
        return copper;
    }
    by(&|_| true)
}

/// The drill files of the board.
pub fn drill_files(board: &Board) -> Vec<&DrillFile> {
    board
        .files
        .iter()
        .filter_map(|f| match &f.content {
            Content::Drill(d) => Some(&**d),
            _ => None,
        })
        .collect()
}

fn face(side: Side) -> BoardFace {
    match side {
        Side::Bottom => BoardFace::Bottom,
        Side::Inner(_) => BoardFace::Inner,
        _ => BoardFace::Top,
    }
}

pub(crate) fn polarity_words(id: &LayerId, recipe: &FilmRecipe) -> String {
    let material = match id.function {
        LayerFunction::SolderMask => "mask openings",
        LayerFunction::Legend => "legend",
        LayerFunction::Paste => "paste openings",
        _ => "copper",
    };
    if recipe.black_is_material {
        format!("black = {material}")
    } else {
        format!("clear = {material}")
    }
}

/// Everything decided and drawn for one film.
#[derive(Debug)]
pub struct MadeFilm {
    pub key: String,
    pub title: String,
    pub source: String,
    pub id: LayerId,
    pub recipe: FilmRecipe,
    pub rendered: RenderedFilm,
    /// What the film's label says (its lines are `marks::label_lines(&label)`).
    pub label: LabelInfo,
}

/// One film's entry in the summary and the manifest.
#[derive(Debug, Clone, Serialize)]
pub struct FilmReport {
    pub key: String,
    pub title: String,
    pub source: String,
    pub side: String,
    pub polarity: String,
    pub mirrored: bool,
    pub edge_offset_requested_um: f64,
    pub edge_offset_realized_um: [f64; 2],
    pub edge_offset_realized_px: [i64; 2],
    pub scale: [f64; 2],
    pub dpi: [f64; 2],
    pub size_px: [usize; 2],
    pub size_mm: [f64; 2],
    /// Board mm → film pixels (px = a·x + b·y + c, py = d·x + e·y + f).
    pub board_to_film_px: Affine,
    pub map: DeviceMap,
    pub reasons: Vec<String>,
    pub placements: Vec<PlacementReport>,
    pub warnings: Vec<String>,
}

/// Where one copy or tile of a film went.
#[derive(Debug, Clone, Serialize)]
pub struct PlacementReport {
    /// 1-based sheet number.
    pub sheet: usize,
    pub copy: u32,
    /// (row, col, rows, cols), 1-based, when the film is tiled.
    pub tile: Option<[u32; 4]>,
    /// Lower-left corner of the piece on the sheet, mm from the sheet's lower-left corner.
    pub x_mm: f64,
    pub y_mm: f64,
    pub width_mm: f64,
    pub height_mm: f64,
    /// Board mm → sheet pixels (top-left origin) for this piece.
    pub board_to_sheet_px: Affine,
}

/// One output sheet.
#[derive(Debug, Clone, Serialize)]
pub struct SheetReport {
    pub number: usize,
    pub png: String,
    pub pdf_page: usize,
    pub size_mm: [f64; 2],
    pub size_px: [usize; 2],
}

/// What the job made and decided.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    pub board: String,
    pub date: String,
    pub board_extents_mm: Bounds,
    pub targets_mm: Option<[Point; 3]>,
    pub films: Vec<FilmReport>,
    pub sheets: Vec<SheetReport>,
    pub pdf: String,
    pub tooling_holes: Option<String>,
    pub warnings: Vec<String>,
    /// The exposure device the films were made for.
    pub device: crate::device::DeviceKind,
    /// The image files of an LCD screen or film service (empty for a printer's sheets).
    pub images: Vec<crate::device::DeviceImage>,
    /// The process check of the films and the proof picture (`proof.png`); for printer
    /// sheets only (`umbra check` checks any board at the printer's settings).
    pub check: Option<crate::check::CheckReport>,
}

/// Height reserved above every piece on a sheet for its caption, mm.
const CAPTION_MM: f64 = 3.5;
const CAPTION_CAP_MM: f64 = 1.6;
const CAPTION_PEN_MM: f64 = 0.16;

/// One film decided (recipe, label) but not yet rendered.
#[derive(Debug, Clone)]
pub struct PlannedFilm<'a> {
    pub selected: Selected<'a>,
    pub recipe: FilmRecipe,
    pub label: Vec<String>,
    /// What the label says (`label` is `marks::label_lines(&info)`).
    pub info: LabelInfo,
    pub label_mirrored: bool,
    /// The drill files whose holes are marked on this film (copper films only).
    pub drills: Vec<&'a DrillFile>,
}

/// Every film of a board, decided, with the frame they share.
#[derive(Debug, Clone)]
pub struct FilmPlan<'a> {
    pub films: Vec<PlannedFilm<'a>>,
    pub frame: BoardFrame,
    /// The profile with the job file's overrides applied.
    pub profile: Profile,
}

impl<'a> FilmPlan<'a> {
    /// What `render_film` needs for film `i`.
    pub fn job(&self, i: usize) -> FilmJob<'_> {
        let f = &self.films[i];
        FilmJob {
            image: f.selected.image,
            recipe: &f.recipe,
            drills: &f.drills,
            frame: &self.frame,
            label: f.label.clone(),
            label_mirrored: f.label_mirrored,
            face: Some(face(f.selected.id.side)),
            stack_targets: self.profile.films.copies > 1,
            opts: &self.profile.artwork,
        }
    }
}

/// Decides every film of the board (selection, recipes, labels, frame) without rendering.
pub fn plan_films<'a>(
    board: &'a Board,
    profile: &Profile,
    job: Option<&Job>,
    board_name: &str,
    date: &str,
) -> Result<FilmPlan<'a>, FilmsError> {
    let mut profile = profile.clone();
    if let Some(j) = job {
        if let Some(f) = &j.films {
            profile.films = f.clone();
        }
        if let Some(l) = &j.layers {
            profile.layers = l.clone();
        }
    }
    let ids = identities(board, job);
    let selected = select(board, &ids, &profile.films)?;
    let extents = board_extents(board, &ids);
    if extents.is_empty() {
        return Err(FilmsError::Input(
            "the layers contain no drawn objects, so there is no board to make films of".into(),
        ));
    }
    let drills = drill_files(board);
    let toward = profile.process.printed_side == crate::process::PrintedSide::TowardBoard;
    let mut films = Vec::new();
    for s in selected {
        let recipe = plan(&s.id, s.image_negative, &profile);
        let realized = compose::realized_for(&recipe);
        let info = LabelInfo {
            board: board_name.to_string(),
            layer: format!("{}", s.id.function),
            side: face(s.id.side),
            polarity: polarity_words(&s.id, &recipe),
            mirrored: recipe.mirror,
            printed_side_toward_board: toward,
            edge_offset_um_requested: recipe.edge_offset_um,
            edge_offset_um_realized: if realized.x_um.abs() >= realized.y_um.abs() {
                realized.x_um
            } else {
                realized.y_um
            },
            scale_x: recipe.scale_x,
            scale_y: recipe.scale_y,
            dpi_x: recipe.dpi_x,
            dpi_y: recipe.dpi_y,
            date: date.to_string(),
            copy: None,
            tile: None,
        };
        let label = marks::label_lines(&info);
        let label_mirrored = marks::label_mirrored_in_board(recipe.mirror, toward);
        let film_drills = if s.id.function == LayerFunction::Copper {
            drills.clone()
        } else {
            Vec::new()
        };
        films.push(PlannedFilm {
            selected: s,
            recipe,
            label,
            info,
            label_mirrored,
            drills: film_drills,
        });
    }
    let label_size = films
        .iter()
        .map(|p| marks::label_size_mm(&p.label, profile.artwork.label_cap_mm))
        .fold((0.0f64, 0.0f64), |a, b| (a.0.max(b.0), a.1.max(b.1)));
    let indicator_size = films
        .iter()
        .map(|p| {
            marks::side_indicator_size_mm(
                face(p.selected.id.side),
                profile.artwork.label_cap_mm * compose::INDICATOR_CAPS,
            )
        })
        .fold((0.0f64, 0.0f64), |a, b| (a.0.max(b.0), a.1.max(b.1)));
    let frame = BoardFrame::new(extents, label_size, indicator_size, &profile.artwork);
    Ok(FilmPlan {
        films,
        frame,
        profile,
    })
}

/// Decides and renders every film of the board.
pub fn make_films(
    board: &Board,
    profile: &Profile,
    job: Option<&Job>,
    board_name: &str,
    date: &str,
) -> Result<(Vec<MadeFilm>, BoardFrame, Vec<String>), FilmsError> {
    let plan = plan_films(board, profile, job, board_name, date)?;
    let mut warnings = Vec::new();
    let mut made = Vec::new();
    for (i, pf) in plan.films.iter().enumerate() {
        let s = &pf.selected;
        let map = compose::film_map(&plan.frame, &pf.recipe);
        if map.pixel_count() > plan.profile.input_limits.max_film_pixels {
            return Err(FilmsError::Layout(format!(
                "the {} film would be {} × {} pixels, over the limit; lower the resolution",
                s.title, map.width, map.height
            )));
        }
        let rendered =
            compose::render_film(&plan.job(i), plan.profile.drill_marks.min_annular_ring_mm);
        warnings.extend(
            rendered
                .warnings
                .iter()
                .map(|w| format!("{}: {w}", s.title)),
        );
        made.push(MadeFilm {
            key: s.key.clone(),
            title: s.title.clone(),
            source: s.source.clone(),
            id: s.id,
            recipe: pf.recipe.clone(),
            rendered,
            label: pf.info.clone(),
        });
    }
    Ok((made, plan.frame, warnings))
}

/// Lays the films out on sheets. Copper films form one group and mask films another, so
/// each pair is printed in one pass and shares the printer's scale error.
pub fn lay_out(films: &[MadeFilm], profile: &Profile) -> Result<Layout, FilmsError> {
    let requests: Vec<FilmRequest> = films
        .iter()
        .enumerate()
        .map(|(i, f)| FilmRequest {
            id: i,
            width_mm: f.rendered.bitmap.width() as f64 * 25.4 / f.recipe.dpi_x,
            height_mm: f.rendered.bitmap.height() as f64 * 25.4 / f.recipe.dpi_y,
            copies: profile.films.copies,
            group: Some(function_order(f.id.function)),
        })
        .collect();
    let mut spec = profile.sheet.clone();
    spec.gap_mm = spec.gap_mm.max(CAPTION_MM + 1.0);
    // Room above every piece for its caption (see CAPTION_MM), below the edge that is the top
    // of the page as laid out: the portrait top edge, or in landscape the portrait left or
    // right edge (drivers turn a landscape page either way; see sheet::Margins::for_orientation).
    // The orientation is therefore chosen here, by the rule of sheet::layout for `auto`:
    // fewer sheets, then fewer tiles, then portrait.
    let oriented = |landscape: bool| {
        let mut s = spec.clone();
        if landscape {
            s.orientation = Orientation::Landscape;
            s.margins.left_mm += CAPTION_MM;
            s.margins.right_mm += CAPTION_MM;
        } else {
            s.orientation = Orientation::Portrait;
            s.margins.top_mm += CAPTION_MM;
        }
        sheet::layout(&requests, &s)
    };
    let chosen = match spec.orientation {
        Orientation::Portrait => oriented(false),
        Orientation::Landscape => oriented(true),
        Orientation::Auto => match (oriented(false), oriented(true)) {
            (Ok(p), Ok(l)) => {
                let fewer = (l.sheets.len(), l.tile_count()) < (p.sheets.len(), p.tile_count());
                Ok(if fewer { l } else { p })
            }
            (Ok(p), Err(_)) => Ok(p),
            (Err(_), Ok(l)) => Ok(l),
            (Err(e), Err(_)) => Err(e),
        },
    };
    chosen.map_err(|e| FilmsError::Layout(e.to_string()))
}

/// ORs `n` bits of `src` starting at bit `sx` into `dst` starting at bit `dx`
/// (most significant bit first, as in raster::Bitmap).
fn or_bits(dst: &mut [u64], dx: usize, src: &[u64], sx: usize, n: usize) {
    let read = |pos: usize| -> u64 {
        let (w, o) = (pos / 64, pos % 64);
        let a = src.get(w).copied().unwrap_or(0);
        if o == 0 {
            a
        } else {
            (a << o) | (src.get(w + 1).copied().unwrap_or(0) >> (64 - o))
        }
    };
    let mut done = 0;
    while done < n {
        let take = (n - done).min(64);
        let mut v = read(sx + done);
        if take < 64 {
            v &= !(u64::MAX >> take);
        }
        let pos = dx + done;
        let (w, o) = (pos / 64, pos % 64);
        if let Some(d) = dst.get_mut(w) {
            *d |= v >> o;
        }
        if o > 0 {
            if let Some(d) = dst.get_mut(w + 1) {
                *d |= v << (64 - o);
            }
        }
        done += take;
    }
}

/// ORs the pixel block `(sx, sy, w, h)` of `src` into `dst` at (`dx`, `dy`), clipped to `dst`.
fn blit(dst: &mut Bitmap, dx: i64, dy: i64, src: &Bitmap, block: (usize, usize, usize, usize)) {
    let (sx, sy, w, h) = block;
    for r in 0..h {
        let ty = dy + r as i64;
        if ty < 0 || ty as usize >= dst.height() || sy + r >= src.height() {
            continue;
        }
        let (mut x0, mut s0, mut n) = (dx, sx, w.min(src.width().saturating_sub(sx)));
        if x0 < 0 {
            let cut = (-x0) as usize;
            if cut >= n {
                continue;
            }
            x0 = 0;
            s0 += cut;
            n -= cut;
        }
        let x0 = x0 as usize;
        if x0 >= dst.width() {
            continue;
        }
        let n = n.min(dst.width() - x0);
        let srow = src.row(sy + r).to_vec();
        or_bits(dst.row_mut(ty as usize), x0, &srow, s0, n);
    }
}

fn caption(film: &MadeFilm, copy: u32, copies: u32, tile: Option<&sheet::Tile>) -> String {
    let mut s = format!(
        "{} - {}",
        film.title,
        if film.recipe.mirror {
            "mirrored"
        } else {
            "as drawn"
        }
    );
    if copies > 1 {
        s.push_str(&format!(" - copy {}/{}", copy + 1, copies));
    }
    if let Some(t) = tile {
        s.push_str(&format!(
            " - tile row {} col {} of {}x{}",
            t.row + 1,
            t.col + 1,
            t.rows,
            t.cols
        ));
    }
    s
}

/// Where a piece goes on a sheet of `sheet_h` pixel rows at `dpi`: its top-left pixel on the
/// sheet (`left`, `top`) and the block `(sx, sy, w, h)` of the film's pixels it shows (the
/// whole film, or the tile's part of it). Shared by the raster sheets and the vector pages.
pub fn piece_pixels(
    p: &sheet::Placement,
    film_px: (usize, usize),
    dpi: (f64, f64),
    sheet_h: usize,
) -> (i64, i64, (usize, usize, usize, usize)) {
    let (dpi_x, dpi_y) = dpi;
    let (fw, fh) = film_px;
    // The piece's top-left pixel on the sheet (sheet y is up in mm, down in pixels).
    let left = (p.x_mm / 25.4 * dpi_x).round() as i64;
    let top = sheet_h as i64 - ((p.y_mm + p.height_mm) / 25.4 * dpi_y).round() as i64;
    let block = match &p.tile {
        None => (0, 0, fw, fh),
        Some(t) => {
            let r = t.source_rect;
            let x0 = (r.min_x / 25.4 * dpi_x).round().max(0.0) as usize;
            let x1 = ((r.max_x / 25.4 * dpi_x).round() as usize).min(fw);
            let y_top = (fh as f64 - r.max_y / 25.4 * dpi_y).round().max(0.0) as usize;
            let y_bot = ((fh as f64 - r.min_y / 25.4 * dpi_y).round() as usize).min(fh);
            (
                x0,
                y_top,
                x1.saturating_sub(x0),
                y_bot.saturating_sub(y_top),
            )
        }
    };
    (left, top, block)
}

/// The caption above a piece, as strokes in sheet mm (origin lower-left, y up).
pub fn caption_shapes(
    film: &MadeFilm,
    p: &sheet::Placement,
    copies: u32,
) -> Vec<crate::image::Shape> {
    let text = caption(film, p.copy, copies, p.tile.as_ref());
    crate::film::font::text_shapes(
        &text,
        // Half a pen in from the piece's left edge: a round pen centred on the piece's
        // edge would reach into the unprintable margin when the piece touches it.
        Point::new(p.x_mm + CAPTION_PEN_MM / 2.0, p.y_mm + p.height_mm + 1.0),
        CAPTION_CAP_MM,
        CAPTION_PEN_MM,
        false,
        0.0,
    )
}

/// A sheet bitmap with its films, and the reports of the pieces on it.
pub struct RenderedSheet {
    pub bitmap: Bitmap,
    pub dpi: (f64, f64),
    pub size_mm: (f64, f64),
    pub pieces: Vec<(usize, PlacementReport)>,
}

/// Composes one sheet at the printer's resolution.
pub fn compose_sheet(
    number: usize,
    plan: &sheet::SheetPlan,
    films: &[MadeFilm],
    profile: &Profile,
) -> RenderedSheet {
    let (dpi_x, dpi_y) = (profile.dpi_x(), profile.dpi_y());
    let w = (plan.width_mm / 25.4 * dpi_x).round() as usize;
    let h = (plan.height_mm / 25.4 * dpi_y).round() as usize;
    let mut bitmap = Bitmap::new(w, h);
    let mut captions = Vec::new();
    let mut pieces = Vec::new();
    for p in &plan.placements {
        let film = &films[p.film];
        let fb = &film.rendered.bitmap;
        let (left, top, (sx, sy, cw, ch)) =
            piece_pixels(p, (fb.width(), fb.height()), (dpi_x, dpi_y), h);
        blit(&mut bitmap, left, top, fb, (sx, sy, cw, ch));
        let a = film.rendered.map.affine();
        let board_to_sheet_px = Affine {
            c: a.c + left as f64 - sx as f64,
            f: a.f + top as f64 - sy as f64,
            ..a
        };
        captions.extend(caption_shapes(film, p, profile.films.copies));
        pieces.push((
            p.film,
            PlacementReport {
                sheet: number,
                copy: p.copy + 1,
                tile: p
                    .tile
                    .as_ref()
                    .map(|t| [t.row + 1, t.col + 1, t.rows, t.cols]),
                x_mm: p.x_mm,
                y_mm: p.y_mm,
                width_mm: p.width_mm,
                height_mm: p.height_mm,
                board_to_sheet_px,
            },
        ));
    }
    if !captions.is_empty() {
        let map = DeviceMap::new(Point::new(0.0, 0.0), w, h, dpi_x, dpi_y);
        let objs: Vec<crate::image::Object> = captions
            .into_iter()
            .map(|shape| crate::image::Object {
                polarity: crate::image::Polarity::Dark,
                shape,
            })
            .collect();
        let cap = render(&objs, &map);
        blit(&mut bitmap, 0, 0, &cap, (0, 0, w, h));
    }
    RenderedSheet {
        bitmap,
        dpi: (dpi_x, dpi_y),
        size_mm: (plan.width_mm, plan.height_mm),
        pieces,
    }
}

/// A folder being written: everything goes to a temporary sibling first, which replaces the
/// destination only when complete, so a failed run leaves nothing half-written.
pub struct StagedDir {
    pub dest: PathBuf,
    pub temp: PathBuf,
    done: bool,
}

impl StagedDir {
    /// Refuses an existing destination unless `force`.
    pub fn new(dest: &Path, force: bool) -> Result<StagedDir, FilmsError> {
        if dest.exists() && !force {
            return Err(FilmsError::Output(format!(
                "{} already exists; choose another --out folder or add --force to replace it",
                dest.display()
            )));
        }
        if dest.exists() && !dest.is_dir() {
            return Err(FilmsError::Output(format!(
                "{} exists and is not a folder",
                dest.display()
            )));
        }
        let parent = dest
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        std::fs::create_dir_all(parent)
            .map_err(|e| FilmsError::Output(format!("{}: {e}", parent.display())))?;
        let name = dest
            .file_name()
            .map(|n| n.to_string_lossy().to_string())
            .unwrap_or_else(|| "films".into());
        let temp = parent.join(format!(".{name}.partial-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&temp);
        std::fs::create_dir(&temp)
            .map_err(|e| FilmsError::Output(format!("{}: {e}", temp.display())))?;
        Ok(StagedDir {
            dest: dest.to_path_buf(),
            temp,
            done: false,
        })
    }

    pub fn path(&self, file: &str) -> PathBuf {
        self.temp.join(file)
    }

    /// Moves the finished folder into place (replacing an old one).
    pub fn commit(mut self) -> Result<(), FilmsError> {
        let err = |p: &Path, e: std::io::Error| FilmsError::Output(format!("{}: {e}", p.display()));
        if self.dest.exists() {
            // A name of this run's own: a fixed name could belong to an earlier, interrupted
            // run (or to the user), and renaming onto a non-empty folder fails.
            let mut old_name = self.temp.as_os_str().to_owned();
            old_name.push(".old");
            let old = PathBuf::from(old_name);
            std::fs::rename(&self.dest, &old).map_err(|e| err(&self.dest, e))?;
            std::fs::rename(&self.temp, &self.dest).map_err(|e| err(&self.dest, e))?;
            let _ = std::fs::remove_dir_all(&old);
        } else {
            std::fs::rename(&self.temp, &self.dest).map_err(|e| err(&self.dest, e))?;
        }
        self.done = true;
        Ok(())
    }
}

impl Drop for StagedDir {
    fn drop(&mut self) {
        if !self.done {
            let _ = std::fs::remove_dir_all(&self.temp);
        }
    }
}

fn report_of(f: &MadeFilm) -> FilmReport {
    let r = &f.rendered;
    FilmReport {
        key: f.key.clone(),
        title: f.title.clone(),
        source: f.source.clone(),
        side: format!("{}", f.id.side),
        polarity: polarity_words(&f.id, &f.recipe),
        mirrored: f.recipe.mirror,
        edge_offset_requested_um: f.recipe.edge_offset_um,
        edge_offset_realized_um: [r.realized.x_um, r.realized.y_um],
        edge_offset_realized_px: [r.realized.x_px, r.realized.y_px],
        scale: [f.recipe.scale_x, f.recipe.scale_y],
        dpi: [f.recipe.dpi_x, f.recipe.dpi_y],
        size_px: [r.bitmap.width(), r.bitmap.height()],
        size_mm: [
            r.bitmap.width() as f64 * 25.4 / f.recipe.dpi_x,
            r.bitmap.height() as f64 * 25.4 / f.recipe.dpi_y,
        ],
        board_to_film_px: r.map.affine(),
        map: r.map,
        reasons: f.recipe.reasons.clone(),
        placements: Vec::new(),
        warnings: r.warnings.clone(),
    }
}

/// Options of one `films` run.
#[derive(Debug, Clone)]
pub struct RunOptions {
    pub out: PathBuf,
    pub force: bool,
    pub board_name: String,
    pub date: String,
    /// Also write vector films (films-vector.pdf and one SVG per film).
    pub vector: bool,
}

/// The whole job: films, layout, sheets, files. Returns the summary.
pub fn run(
    board: &Board,
    profile: &Profile,
    job: Option<&Job>,
    opts: &RunOptions,
    progress: &dyn Fn(&str),
) -> Result<Summary, FilmsError> {
    if profile.device.kind != crate::device::DeviceKind::Printer {
        return crate::device::run(board, profile, job, opts, progress);
    }
    let staged = StagedDir::new(&opts.out, opts.force)?;
    progress("rendering films");
    let (films, frame, warnings) = make_films(board, profile, job, &opts.board_name, &opts.date)?;
    // The process check and the proof picture run beside the sheets and the PDF, which are
    // mostly single-threaded compression.
    std::thread::scope(|scope| {
        let checking = scope.spawn(|| {
            let mut check = crate::check::check_films(&films, board, &frame.board, &profile.limits);
            crate::proof::write_board_proof(
                &staged.path("proof.png"),
                "proof.png",
                &opts.board_name,
                &films,
                board,
                &frame,
                profile.artwork.target_size_mm,
                &mut check,
            )
            .map(|()| check)
            .map_err(|e| FilmsError::Output(e.to_string()))
        });
        let written = write_sheets(
            board,
            &films,
            &frame,
            profile,
            &staged,
            opts.vector,
            progress,
        );
        let check = checking
            .join()
            .map_err(|_| FilmsError::Output("the process check failed unexpectedly".into()))??;
        Ok((written?, check))
    })
    .and_then(|(written, check)| finish(board, opts, staged, &frame, written, warnings, check))
}

/// What [`write_sheets`] wrote.
struct SheetsWritten {
    reports: Vec<FilmReport>,
    sheets: Vec<SheetReport>,
    tooling: Option<String>,
}

/// Lays out the films and writes the sheets (PNG), the PDF and the tooling-hole file.
fn write_sheets(
    board: &Board,
    films: &[MadeFilm],
    frame: &BoardFrame,
    profile: &Profile,
    staged: &StagedDir,
    vector: bool,
    progress: &dyn Fn(&str),
) -> Result<SheetsWritten, FilmsError> {
    let layout = lay_out(films, profile)?;
    let mut reports: Vec<FilmReport> = films.iter().map(report_of).collect();
    let mut sheets = Vec::new();
    let mut pdf_pages_bitmaps = Vec::new();
    for (i, plan) in layout.sheets.iter().enumerate() {
        progress(&format!(
            "composing sheet {} of {}",
            i + 1,
            layout.sheets.len()
        ));
        let rs = compose_sheet(i + 1, plan, films, profile);
        let png = format!("sheet-{:02}.png", i + 1);
        crate::output::png::write_png(&staged.path(&png), &rs.bitmap, rs.dpi.0, rs.dpi.1, true)
            .map_err(|e| FilmsError::Output(e.to_string()))?;
        for (film, pr) in &rs.pieces {
            reports[*film].placements.push(pr.clone());
        }
        sheets.push(SheetReport {
            number: i + 1,
            png,
            pdf_page: i + 1,
            size_mm: [rs.size_mm.0, rs.size_mm.1],
            size_px: [rs.bitmap.width(), rs.bitmap.height()],
        });
        pdf_pages_bitmaps.push(rs);
    }
    progress("writing PDF");
    let pages: Vec<PdfPage<'_>> = pdf_pages_bitmaps
        .iter()
        .map(|rs| {
            let size = PageSize::from_mm(rs.size_mm.0, rs.size_mm.1);
            let mut page = PdfPage::new(size);
            let img = PlacedImage::at_resolution(&rs.bitmap, true, 0.0, 0.0, rs.dpi.0, rs.dpi.1);
            // The bitmap's top-left pixel is the page's top-left corner.
            let y = size.height_pt - img.height_pt;
            page.images.push(PlacedImage { y_pt: y, ..img });
            page
        })
        .collect();
    crate::output::pdf::write_pdf(&staged.path("films.pdf"), &pages)
        .map_err(|e| FilmsError::Output(e.to_string()))?;
    drop(pages);
    drop(pdf_pages_bitmaps);
    if vector {
        progress("composing vector films");
        crate::vector::write_vector_outputs(staged, board, films, frame, &layout, profile)
            .map_err(FilmsError::Output)?;
    }
    let mut tooling = None;
    if profile.films.tooling_holes {
        if let Some(t) = &frame.targets {
            let text = marks::tooling_drill_file(t, profile.films.tooling_hole_mm);
            let name = "tooling-holes.xln".to_string();
            crate::output::write_atomically(&staged.path(&name), |w| {
                use std::io::Write;
                w.write_all(text.as_bytes())
                    .map_err(|e| crate::output::OutputError::Io {
                        path: staged.path(&name),
                        source: e,
                    })
            })
            .map_err(|e| FilmsError::Output(e.to_string()))?;
            tooling = Some(name);
        }
    }
    Ok(SheetsWritten {
        reports,
        sheets,
        tooling,
    })
}

/// Writes the manifest and moves the finished folder into place.
fn finish(
    board: &Board,
    opts: &RunOptions,
    staged: StagedDir,
    frame: &BoardFrame,
    written: SheetsWritten,
    mut warnings: Vec<String>,
    check: crate::check::CheckReport,
) -> Result<Summary, FilmsError> {
    for w in &board.warnings {
        warnings.push(w.to_string());
    }
    // The readers' warnings: all of them when few, else a sample and a pointer to inspect.
    let reader: Vec<String> = board
        .files
        .iter()
        .flat_map(|f| match &f.content {
            Content::Gerber(g) => g.warnings.iter().map(|w| w.to_string()).collect(),
            Content::Drill(d) => d.warnings.iter().map(|w| w.to_string()).collect(),
            _ => Vec::new(),
        })
        .collect();
    const SHOWN: usize = 8;
    if reader.len() > SHOWN {
        warnings.extend(reader.iter().take(SHOWN - 1).cloned());
        warnings.push(format!(
            "… and {} more reader warnings; `umbra inspect` lists them all",
            reader.len() - (SHOWN - 1)
        ));
    } else {
        warnings.extend(reader);
    }
    let summary = Summary {
        board: opts.board_name.clone(),
        date: opts.date.clone(),
        board_extents_mm: frame.board,
        targets_mm: frame.targets,
        films: written.reports,
        sheets: written.sheets,
        pdf: "films.pdf".into(),
        tooling_holes: written.tooling,
        warnings,
        device: crate::device::DeviceKind::Printer,
        images: Vec::new(),
        check: Some(check),
    };
    let manifest =
        serde_json::to_string_pretty(&summary).map_err(|e| FilmsError::Output(e.to_string()))?;
    crate::output::write_atomically(&staged.path("manifest.json"), |w| {
        use std::io::Write;
        w.write_all(manifest.as_bytes())
            .map_err(|e| crate::output::OutputError::Io {
                path: staged.path("manifest.json"),
                source: e,
            })
    })
    .map_err(|e| FilmsError::Output(e.to_string()))?;
    staged.commit()?;
    Ok(summary)
}

/// The summary as a table for the terminal.
pub fn summary_text(s: &Summary, out: &Path) -> String {
    let mut rows: Vec<Vec<String>> = vec![vec![
        "film".into(),
        "source".into(),
        "polarity".into(),
        "mirrored".into(),
        "edge offset (req → real)".into(),
        "scale x/y".into(),
        "sheet: position mm".into(),
    ]];
    for f in &s.films {
        let short = f
            .source
            .rsplit(['/', '\\', ':'])
            .next()
            .unwrap_or(&f.source);
        let pos: Vec<String> = f
            .placements
            .iter()
            .map(|p| format!("{}: {:.0},{:.0}", p.sheet, p.x_mm, p.y_mm))
            .collect();
        rows.push(vec![
            f.title.clone(),
            short.to_string(),
            f.polarity.clone(),
            if f.mirrored { "yes" } else { "no" }.into(),
            format!(
                "{:+.1} → {:+.1} µm ({} px)",
                f.edge_offset_requested_um,
                f.edge_offset_realized_um[0],
                f.edge_offset_realized_px[0]
            ),
            format!("{:.4}/{:.4}", f.scale[0], f.scale[1]),
            pos.join("; "),
        ]);
    }
    let mut widths = vec![0usize; rows[0].len()];
    for r in &rows {
        for (w, c) in widths.iter_mut().zip(r) {
            *w = (*w).max(c.chars().count());
        }
    }
    let mut out_s = format!(
        "board: {}   extents {:.2} x {:.2} mm   {} film(s) on {}\n\n",
        s.board,
        s.board_extents_mm.width(),
        s.board_extents_mm.height(),
        s.films.len(),
        match s.device {
            crate::device::DeviceKind::Printer => format!("{} sheet(s)", s.sheets.len()),
            d => format!("{} image(s) for the {}", s.images.len(), d.name()),
        }
    );
    for r in &rows {
        let mut line = String::new();
        for (c, w) in r.iter().zip(&widths) {
            let pad = w - c.chars().count();
            line.push_str(c);
            line.push_str(&" ".repeat(pad + 2));
        }
        out_s.push_str(line.trim_end());
        out_s.push('\n');
    }
    if s.device != crate::device::DeviceKind::Printer {
        out_s.push_str(&crate::device::written_note(s, out));
    } else {
        out_s.push_str(&format!(
            "\nwritten to {}: {} (print at actual size / 100 %, no fit-to-page), {} PNG sheet(s), manifest.json{}\n",
            out.display(),
            s.pdf,
            s.sheets.len(),
            s.tooling_holes
                .as_ref()
                .map(|t| format!(", {t}"))
                .unwrap_or_default()
        ));
    }
    if let Some(check) = &s.check {
        out_s.push('\n');
        out_s.push_str(&crate::check::check_text(check));
    }
    let n: usize = s.warnings.len();
    if n > 0 {
        out_s.push_str(&format!("\n{n} warning(s):\n"));
        for w in &s.warnings {
            out_s.push_str(&format!("  {w}\n"));
        }
    }
    out_s.push_str(SAFETY_NOTE);
    out_s
}

/// Printed after every film run.
pub const SAFETY_NOTE: &str = "\nSafety: UV light harms eyes and skin (keep the exposure box closed); exposure boxes carry mains voltage; \
etchants are corrosive and must be disposed of under local rules; drilling board material makes fibreglass dust \
(drill wet or with extraction, wear a mask). Follow local codes and licensed practice.\n";
