//! Films for a masked LCD screen: one PNG per film, exactly the screen's pixel count, at its
//! pixel pitch (which may differ in x and y).
//!
//! # Geometry
//! The film is rendered straight onto the screen's grid (no resampling): the film's own
//! device map (`compose::film_map` at 25,400 / pitch dpi) is moved by a whole number of
//! pixels so that the board's centre lands on the screen's centre, or the film's top-left
//! corner at the configured offset. Everything is first laid out as the screen's *front view*
//! (the side its picture reads correctly from; pixel (0, 0) top-left); the image file is then
//! flipped to suit the corner at which the screen shows a file's first pixel
//! ([`super::Corner`]).
//!
//! # Mirror
//! A screen whose front faces the board acts like a film with its printed side toward the
//! board, so the film rules' mirror table applies unchanged; `mirrored_by_screen` makes it
//! act like a film printed side away (the mirror decision flips). See
//! [`super::profile_for_device`].
//!
//! # Light
//! On the film a set bit is black = opaque. A screen that passes light where the image is
//! white must therefore show opaque pixels black (the usual PNG convention, greyscale 0); a
//! screen that passes light where the image is black gets the inverted image.

use super::{film_report, Corner, DeviceImage, LcdScreen, Placement, Transmits};
use crate::film::compose::{self, BoardFrame};
use crate::films::{FilmPlan, FilmReport, FilmsError, StagedDir};
use crate::image::Point;
use crate::process::FilmRecipe;
use crate::raster::{Affine, Bitmap, DeviceMap};

/// Where one film lands on the screen.
#[derive(Debug, Clone, PartialEq)]
pub struct ScreenPlacement {
    /// The film's own pixel grid (what its size and board mapping are in the report).
    pub film: DeviceMap,
    /// Board mm → screen pixels, front view.
    pub screen: DeviceMap,
    /// The film's top-left pixel on the screen, front view.
    pub offset_px: (usize, usize),
    /// Why the board is not centred, when it is not.
    pub note: Option<String>,
}

fn fits_message(
    title: &str,
    film: &DeviceMap,
    frame: &BoardFrame,
    screen: &LcdScreen,
    what: &str,
) -> String {
    let (sw, sh) = screen.size_mm();
    let (fw, fh) = (
        film.width as f64 * screen.pitch_x_um / 1000.0,
        film.height as f64 * screen.pitch_y_um / 1000.0,
    );
    let (bw, bh) = (frame.board.width(), frame.board.height());
    let hint = if bw > sw || bh > sh {
        if bh <= sw && bw <= sh {
            "; the board itself is larger than the screen, though it would fit turned by 90° (rotate it in your EDA program; umbra does not rotate boards)"
        } else {
            "; the board itself is larger than the screen"
        }
    } else {
        "; the board alone would fit: turn off the label ([artwork] label = false) or the registration targets ([artwork] registration = false), or make [artwork] border_mm smaller"
    };
    format!(
        "the {title} film is {fw:.1} × {fh:.1} mm ({} × {} pixels: the board, {bw:.1} × {bh:.1} mm, with targets, label and border) but {} has an active area of {sw:.1} × {sh:.1} mm ({} × {} pixels of {} × {} µm); {what}{hint}",
        film.width,
        film.height,
        screen.called(),
        screen.pixels_x,
        screen.pixels_y,
        screen.pitch_x_um,
        screen.pitch_y_um,
    )
}

/// Places one film on the screen, or says why it does not fit.
pub fn place(
    title: &str,
    frame: &BoardFrame,
    recipe: &FilmRecipe,
    screen: &LcdScreen,
) -> Result<ScreenPlacement, String> {
    let film = compose::film_map(frame, recipe);
    let (w, h) = (screen.pixels_x as usize, screen.pixels_y as usize);
    if film.width > w || film.height > h {
        return Err(fits_message(title, &film, frame, screen, "it does not fit"));
    }
    let (room_x, room_y) = (w - film.width, h - film.height);
    let mut note = None;
    let (ox, oy) = match screen.placement {
        Placement::Centre => {
            let centre = Point::new(
                (frame.board.min_x + frame.board.max_x) / 2.0,
                (frame.board.min_y + frame.board.max_y) / 2.0,
            );
            let (bx, by) = film.to_px(centre);
            let want_x = (w as f64 / 2.0 - bx).round();
            let want_y = (h as f64 / 2.0 - by).round();
            let ox = want_x.clamp(0.0, room_x as f64);
            let oy = want_y.clamp(0.0, room_y as f64);
            if ox != want_x || oy != want_y {
                let dx = (ox - want_x) * screen.pitch_x_um / 1000.0;
                let dy = (oy - want_y) * screen.pitch_y_um / 1000.0;
                let mut moves = Vec::new();
                if dx != 0.0 {
                    let dir = if dx > 0.0 { "right" } else { "left" };
                    moves.push(format!("{:.1} mm {dir}", dx.abs()));
                }
                if dy != 0.0 {
                    let dir = if dy > 0.0 { "down" } else { "up" };
                    moves.push(format!("{:.1} mm {dir}", dy.abs()));
                }
                note = Some(format!(
                    "board moved {} from the screen's centre (front view) so that the targets and label stay on the screen",
                    moves.join(" and ")
                ));
            }
            (ox as usize, oy as usize)
        }
        Placement::Offset => {
            let [mx, my] = screen.offset_mm.unwrap_or([0.0, 0.0]);
            let ox = (mx * 1000.0 / screen.pitch_x_um).round();
            let oy = (my * 1000.0 / screen.pitch_y_um).round();
            if ox > room_x as f64 || oy > room_y as f64 {
                return Err(fits_message(
                    title,
                    &film,
                    frame,
                    screen,
                    &format!(
                        "at offset_mm = [{mx}, {my}] it reaches past the screen's {} edge (the largest offset that fits is [{:.2}, {:.2}] mm)",
                        if ox > room_x as f64 { "right" } else { "bottom" },
                        room_x as f64 * screen.pitch_x_um / 1000.0,
                        room_y as f64 * screen.pitch_y_um / 1000.0
                    ),
                ));
            }
            (ox as usize, oy as usize)
        }
    };
    // The screen map puts film pixel (i, j) on screen pixel (ox + i, oy + j); from the
    // DeviceMap formula (raster/device.rs): unmirrored px = (x − origin.x)·sx, mirrored
    // px = width − (x − origin.x)·sx, py = height − (y − origin.y)·sy.
    let (sx, sy) = (film.px_per_mm_x(), film.px_per_mm_y());
    let left_gap = if film.mirror { room_x - ox } else { ox };
    let screen_map = DeviceMap {
        origin: Point::new(
            film.origin.x - left_gap as f64 / sx,
            film.origin.y - (room_y - oy) as f64 / sy,
        ),
        width: w,
        height: h,
        ..film
    };
    Ok(ScreenPlacement {
        film,
        screen: screen_map,
        offset_px: (ox, oy),
        note,
    })
}

/// The bitmap flipped top to bottom.
fn flipped_y(b: &Bitmap) -> Bitmap {
    let mut out = Bitmap::new(b.width(), b.height());
    let h = b.height();
    for y in 0..h {
        out.row_mut(h - 1 - y).copy_from_slice(b.row(y));
    }
    out
}

/// The front view as the image file the screen needs (see [`Corner`]), and the matching
/// board → file-pixel affine.
pub fn to_file_order(front: Bitmap, map: &DeviceMap, origin: Corner) -> (Bitmap, Affine) {
    let (flip_x, flip_y) = origin.flips();
    let mut a = map.affine();
    let mut b = front;
    if flip_x {
        b = b.mirrored_x();
        // Continuous x → width − x (pixel i ↔ width − 1 − i).
        a.a = -a.a;
        a.b = -a.b;
        a.c = map.width as f64 - a.c;
    }
    if flip_y {
        b = flipped_y(&b);
        a.d = -a.d;
        a.e = -a.e;
        a.f = map.height as f64 - a.f;
    }
    (b, a)
}

/// Renders and writes every film of the plan for `screen`; one PNG per film.
pub fn write_films(
    plan: &FilmPlan<'_>,
    screen: &LcdScreen,
    staged: &StagedDir,
    progress: &dyn Fn(&str),
) -> Result<Vec<(FilmReport, DeviceImage)>, FilmsError> {
    let mut out = Vec::new();
    // Check every film before rendering any: the user hears about the fit at once.
    let mut placements = Vec::new();
    for pf in &plan.films {
        placements.push(
            place(&pf.selected.title, &plan.frame, &pf.recipe, screen)
                .map_err(FilmsError::Layout)?,
        );
    }
    for (i, (pf, placed)) in plan.films.iter().zip(placements).enumerate() {
        progress(&format!("rendering {} for the screen", pf.selected.title));
        let rendered = compose::render_film_on(
            &plan.job(i),
            placed.screen,
            Some(plan.profile.drill_marks.min_annular_ring_mm),
        );
        let (bitmap, affine) = to_file_order(rendered.bitmap, &placed.screen, screen.origin);
        let file = format!("{}.png", pf.selected.key);
        // PNG greyscale 0 is black; set bits are opaque film.
        let opaque_black = screen.transmits_where == Transmits::White;
        crate::output::png::write_png(
            &staged.path(&file),
            &bitmap,
            screen.dpi_x(),
            screen.dpi_y(),
            opaque_black,
        )
        .map_err(|e| FilmsError::Output(e.to_string()))?;
        let mut report = film_report(pf, &placed.film, rendered.warnings);
        report.reasons.push(format!(
            "LCD screen: {}; its picture {} the board",
            screen.called(),
            if screen.mirrored_by_screen {
                "reaches the board mirrored (mirrored_by_screen), like a film printed side away from"
            } else {
                "faces the board, like a film printed side toward"
            }
        ));
        let (fx, fy) = screen.origin.flips();
        if fx || fy {
            report.reasons.push(format!(
                "screen shows a file's first pixel at its {} corner: image file flipped {}",
                screen.origin.name(),
                match (fx, fy) {
                    (true, true) => "both ways (turned 180°)",
                    (true, false) => "left-right",
                    _ => "top-bottom",
                }
            ));
        }
        report.reasons.push(format!(
            "film's top-left corner at screen pixel ({}, {}) seen from the screen's front",
            placed.offset_px.0, placed.offset_px.1
        ));
        report.reasons.extend(placed.note);
        out.push((
            report,
            DeviceImage {
                film: pf.selected.key.clone(),
                file,
                size_px: [bitmap.width(), bitmap.height()],
                dpi: [screen.dpi_x(), screen.dpi_y()],
                board_to_image_px: affine,
                pixels: if opaque_black {
                    "black = opaque (the screen passes light where the image is white)".into()
                } else {
                    "white = opaque (the screen passes light where the image is black)".into()
                },
            },
        ));
    }
    Ok(out)
}
