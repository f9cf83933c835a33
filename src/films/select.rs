//! Which films a board's files give: layer identities, the selection, the board's extents.

use super::FilmsError;
use crate::excellon::DrillFile;
use crate::image::{Bounds, LayerImage};
use crate::job::Job;
use crate::layers::{LayerFunction, LayerId, Side};
use crate::load::{Board, Content};
use crate::process::FilmsSection;

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

pub(crate) fn function_order(f: LayerFunction) -> u32 {
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
