//! Shared helpers of the vector tests: small films without targets or label.
#![allow(dead_code)]

use umbra::film::compose::{ArtworkOptions, BoardFrame, FilmJob};
use umbra::image::{Bounds, LayerImage};
use umbra::process::{DrillMarkStyle, FilmRecipe};

/// A recipe at `dpi` with the given polarity and offset, no mirror, no drill marks.
pub fn recipe(
    dpi: f64,
    dark_is_material: bool,
    black_is_material: bool,
    offset_um: f64,
) -> FilmRecipe {
    FilmRecipe {
        dark_is_material,
        black_is_material,
        mirror: false,
        scale_x: 1.0,
        scale_y: 1.0,
        dpi_x: dpi,
        dpi_y: dpi,
        edge_offset_um: offset_um,
        drill_marks: DrillMarkStyle::None,
        pilot_diameter_mm: 0.4,
        reasons: Vec::new(),
    }
}

/// Artwork off: the film is the board plus the border.
pub fn bare_artwork() -> ArtworkOptions {
    ArtworkOptions {
        registration: false,
        label: false,
        frame: false,
        border_mm: 1.0,
        ..ArtworkOptions::default()
    }
}

pub fn frame(board: Bounds, opts: &ArtworkOptions) -> BoardFrame {
    BoardFrame::new(board, (0.0, 0.0), (0.0, 0.0), opts)
}

pub fn job<'a>(
    image: &'a LayerImage,
    recipe: &'a FilmRecipe,
    frame: &'a BoardFrame,
    opts: &'a ArtworkOptions,
) -> FilmJob<'a> {
    FilmJob {
        image,
        recipe,
        drills: &[],
        frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts,
    }
}

pub fn bounds(x0: f64, y0: f64, x1: f64, y1: f64) -> Bounds {
    Bounds {
        min_x: x0,
        min_y: y0,
        max_x: x1,
        max_y: y1,
    }
}
