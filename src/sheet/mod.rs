//! Sheets: paper sizes, the printable area, and where each film goes on which sheet.
//!
//! Pure geometry in millimetres; nothing here draws. The layout rules are written down in
//! `docs/sheets.md`.
//!
//! Coordinates: a sheet's origin is its lower-left corner with y up, like PDF user space
//! (ISO 32000-1 §8.3.2.3). A film's own coordinates ("film-local") have their origin at the
//! film's lower-left corner, also y up.

mod pack;
mod size;
mod tile;

pub use pack::{layout, layout_with_mark_bands, MAX_PIECES};
pub use size::{iso_216, mm_to_pt, SheetSize, SheetSizeError, MAX_SHEET_SIDE_MM, MM_PER_INCH};
pub use tile::{split_into_tiles, tile_count, tile_marks, Edge, OverlapEnd, TileMark};

use crate::image::Bounds;
use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// The most sheets one layout may produce unless the spec says otherwise. A job needing more
/// is almost certainly a unit mistake (a board in mils read as mm) and would waste a ream.
pub const DEFAULT_MAX_SHEETS: u32 = 500;

/// Which way up the sheet is used.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum Orientation {
    /// Short side horizontal.
    Portrait,
    /// Long side horizontal.
    Landscape,
    /// Whichever needs fewer sheets (then fewer tiles; portrait on a tie).
    #[default]
    Auto,
}

impl fmt::Display for Orientation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Orientation::Portrait => "portrait",
            Orientation::Landscape => "landscape",
            Orientation::Auto => "auto",
        })
    }
}

impl FromStr for Orientation {
    type Err = String;
    fn from_str(text: &str) -> Result<Orientation, String> {
        match text.trim().to_ascii_lowercase().as_str() {
            "portrait" => Ok(Orientation::Portrait),
            "landscape" => Ok(Orientation::Landscape),
            "auto" => Ok(Orientation::Auto),
            _ => Err(format!(
                "\"{}\" is not an orientation; use portrait, landscape or auto.",
                text.trim()
            )),
        }
    }
}

/// The strips along the paper edges the printer cannot print on, in mm.
///
/// They are measured on the sheet held in portrait (short edges at top and bottom), the way
/// the paper comes out of the printer. See [`Margins::for_orientation`] for landscape.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Margins {
    pub top_mm: f64,
    pub right_mm: f64,
    pub bottom_mm: f64,
    pub left_mm: f64,
}

impl Default for Margins {
    /// 5 mm on every edge: common practice for office laser printers (from memory; many
    /// drivers report 4.2–6.35 mm).
    fn default() -> Self {
        Margins::uniform(5.0)
    }
}

impl Margins {
    pub const fn uniform(mm: f64) -> Margins {
        Margins {
            top_mm: mm,
            right_mm: mm,
            bottom_mm: mm,
            left_mm: mm,
        }
    }

    /// The margins in the frame of a sheet used in `landscape` or portrait.
    ///
    /// A landscape page reaches the printer turned a quarter turn, and drivers differ in which
    /// way they turn it. So that films stay printable either way, each landscape edge takes
    /// the larger of the two portrait edges that may end up there: top and bottom get
    /// max(left, right), left and right get max(top, bottom).
    pub fn for_orientation(&self, landscape: bool) -> Margins {
        if !landscape {
            return *self;
        }
        let across = self.left_mm.max(self.right_mm);
        let along = self.top_mm.max(self.bottom_mm);
        Margins {
            top_mm: across,
            bottom_mm: across,
            left_mm: along,
            right_mm: along,
        }
    }

    /// The printable rectangle of a `width_mm` × `height_mm` sheet (origin lower-left, y up).
    pub fn printable(&self, width_mm: f64, height_mm: f64) -> Bounds {
        Bounds {
            min_x: self.left_mm,
            min_y: self.bottom_mm,
            max_x: width_mm - self.right_mm,
            max_y: height_mm - self.top_mm,
        }
    }
}

/// How films are put on sheets.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct SheetSpec {
    pub size: SheetSize,
    pub orientation: Orientation,
    /// The printer's unprintable edges.
    pub margins: Margins,
    /// Clear space between neighbouring films, so each can be cut out (default 5 mm, common
    /// practice: room for a scissor cut).
    pub gap_mm: f64,
    /// How far neighbouring tiles of a film too big for the sheet overlap, so they can be
    /// aligned and taped (default 10 mm, from memory).
    pub tile_overlap_mm: f64,
    /// A layout needing more sheets than this is refused.
    pub max_sheets: u32,
}

impl Default for SheetSpec {
    fn default() -> Self {
        SheetSpec {
            size: SheetSize::a4(),
            orientation: Orientation::Auto,
            margins: Margins::default(),
            gap_mm: 5.0,
            tile_overlap_mm: 10.0,
            max_sheets: DEFAULT_MAX_SHEETS,
        }
    }
}

/// One film to be placed: its size in mm and how many copies are wanted.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FilmRequest {
    /// The caller's identifier, echoed in each [`Placement`]; must be unique.
    pub id: usize,
    pub width_mm: f64,
    pub height_mm: f64,
    /// How many copies; 0 places none.
    pub copies: u32,
    /// Films of one group (e.g. top and bottom copper) go on the same sheet when they fit:
    /// printed in the same pass, they share the printer's scale error.
    pub group: Option<u32>,
}

/// Which part of a film too big for the sheet one piece shows.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tile {
    /// Row of this tile, 0-based, counted from the top of the film (reading order).
    pub row: u32,
    /// Column of this tile, 0-based, counted from the left of the film.
    pub col: u32,
    pub rows: u32,
    pub cols: u32,
    /// The part of the film this tile shows, film-local mm (origin lower-left, y up).
    pub source_rect: Bounds,
}

/// Room beside a piece's film block, mm, reserved for a tile's alignment marks.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize)]
pub struct Bands {
    pub left: f64,
    pub right: f64,
    pub top: f64,
    pub bottom: f64,
}

impl Tile {
    /// The mark bands of this tile when each band is `band_mm` wide.
    ///
    /// Where two tiles overlap side by side (several columns), the marks of that overlap must
    /// sit at film coordinates both tiles show and outside both film blocks: above and below
    /// the overlap strip. So tiles of a film with several columns get bands on their top and
    /// bottom edges, and tiles of a film with several rows get bands on their left and right
    /// edges. An untiled film (1 × 1) gets none.
    pub fn bands(&self, band_mm: f64) -> Bands {
        let across = if self.cols > 1 { band_mm } else { 0.0 };
        let along = if self.rows > 1 { band_mm } else { 0.0 };
        Bands {
            left: along,
            right: along,
            top: across,
            bottom: across,
        }
    }
}

/// One film (or one tile of it) on a sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Placement {
    /// The [`FilmRequest::id`].
    pub film: usize,
    /// Which copy, 0-based.
    pub copy: u32,
    /// Lower-left corner of the film (or tile) on the sheet, mm, sheet origin lower-left, y up.
    pub x_mm: f64,
    pub y_mm: f64,
    pub width_mm: f64,
    pub height_mm: f64,
    /// Set when the film was too big for the printable area and this is one piece of it.
    pub tile: Option<Tile>,
}

impl Placement {
    /// The rectangle the placement covers on the sheet.
    pub fn rect(&self) -> Bounds {
        Bounds {
            min_x: self.x_mm,
            min_y: self.y_mm,
            max_x: self.x_mm + self.width_mm,
            max_y: self.y_mm + self.height_mm,
        }
    }

    /// The mark bands beside this piece (none for a whole film).
    pub fn bands(&self, band_mm: f64) -> Bands {
        self.tile.map(|t| t.bands(band_mm)).unwrap_or_default()
    }

    /// The rectangle the placement covers on the sheet together with its mark bands.
    pub fn reserved_rect(&self, band_mm: f64) -> Bounds {
        let b = self.bands(band_mm);
        let r = self.rect();
        Bounds {
            min_x: r.min_x - b.left,
            min_y: r.min_y - b.bottom,
            max_x: r.max_x + b.right,
            max_y: r.max_y + b.top,
        }
    }
}

/// One sheet of the layout.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SheetPlan {
    /// Sheet size as used (after orientation), mm.
    pub width_mm: f64,
    pub height_mm: f64,
    /// Where films may go: the sheet minus the printer's margins.
    pub printable: Bounds,
    /// In placement order: shelves top to bottom, left to right within a shelf.
    pub placements: Vec<Placement>,
}

/// The whole layout.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Layout {
    /// The orientation used: `Portrait` or `Landscape`, never `Auto`.
    pub orientation: Orientation,
    pub sheets: Vec<SheetPlan>,
}

impl Layout {
    /// How many placements are tiles of a film too big for the sheet.
    pub fn tile_count(&self) -> usize {
        self.sheets
            .iter()
            .flat_map(|s| &s.placements)
            .filter(|p| p.tile.is_some())
            .count()
    }
}

/// Why no layout could be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LayoutError {
    #[error(
        "Film {id} is {width_mm} × {height_mm} mm; a film must be wider and taller than zero."
    )]
    BadFilmSize {
        id: usize,
        width_mm: f64,
        height_mm: f64,
    },
    #[error("Two films have the same id {0}; each film needs its own id.")]
    DuplicateFilm(usize),
    #[error("{0}")]
    BadSpec(String),
    #[error(
        "Film {id} ({width_mm} × {height_mm} mm) would be cut into {tiles} tiles per copy on \
         {sheet}, more than the limit of {limit}; check the film's units or use a larger sheet."
    )]
    TooManyTiles {
        id: usize,
        width_mm: f64,
        height_mm: f64,
        tiles: f64,
        sheet: String,
        limit: u32,
    },
    #[error(
        "The films make {pieces} pieces to place (copies and tiles), more than the limit of \
         {limit}; check the number of copies."
    )]
    TooManyPieces { pieces: u64, limit: u64 },
    #[error(
        "The films need more than {limit} sheets of {sheet} ({pieces} pieces to place); check \
         the number of copies and the films' units, or raise the sheet limit."
    )]
    TooManySheets {
        limit: u32,
        sheet: String,
        pieces: u64,
    },
}
