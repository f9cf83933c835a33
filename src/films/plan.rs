//! Deciding every film (recipe, label, frame) and rendering them.

use super::select::{board_extents, drill_files, identities, select, Selected};
use super::FilmsError;
use crate::excellon::DrillFile;
use crate::film::compose::{self, BoardFrame, FilmJob, RenderedFilm};
use crate::film::marks::{self, BoardFace, LabelInfo};
use crate::job::Job;
use crate::layers::{LayerFunction, LayerId, Side};
use crate::load::Board;
use crate::process::{plan, FilmRecipe, Profile};

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
        // No ring check in the render: both callers run the process check, which measures
        // the rings on the finished film and is the one source of ring findings.
        let rendered = compose::render_film_on(&plan.job(i), map, None);
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
