//! Shared helpers of the check tests: render one synthetic copper layer through the real film
//! composition and check it.
#![allow(dead_code)]

use umbra::check::{check_film, FilmCheck, FilmInput, Finding, FindingKind, ProcessLimits};
use umbra::excellon::DrillFile;
use umbra::film::compose::{
    film_map, render_film_on, ArtworkOptions, BoardFrame, FilmJob, RenderedFilm,
};
use umbra::image::{Bounds, Contour, LayerImage, Point, Polarity, Shape};
use umbra::layers::LayerFunction;
use umbra::process::{DrillMarkStyle, FilmRecipe};

pub fn p(x: f64, y: f64) -> Point {
    Point::new(x, y)
}

pub fn rect(cx: f64, cy: f64, w: f64, h: f64) -> Shape {
    let (a, b) = (w / 2.0, h / 2.0);
    Shape::Polygon(Contour::from_points(&[
        p(cx - a, cy - b),
        p(cx + a, cy - b),
        p(cx + a, cy + b),
        p(cx - a, cy + b),
    ]))
}

pub fn track(a: Point, b: Point, width: f64) -> Shape {
    Shape::Stroke {
        start: a,
        end: b,
        arc: None,
        width,
    }
}

pub fn disc(c: Point, d: f64) -> Shape {
    Shape::Disc {
        center: c,
        diameter: d,
    }
}

pub fn image(shapes: Vec<Shape>) -> LayerImage {
    let mut img = LayerImage::default();
    for s in shapes {
        img.push(Polarity::Dark, s);
    }
    img
}

/// A drill file with one tool of `diameter` and holes at `at`, read by umbra's reader.
pub fn drills(diameter: f64, at: &[Point]) -> DrillFile {
    let mut w = umbra::synth::gerber_writer::DrillWriter::new(&["check test"]);
    w.tool(1, diameter, None);
    for a in at {
        w.hole(1, *a);
    }
    umbra::excellon::read(&w.finish(), "test.xln", &umbra::limits::Limits::default()).unwrap()
}

pub fn recipe(dpi: f64, marks: DrillMarkStyle, mirror: bool, offset_um: f64) -> FilmRecipe {
    FilmRecipe {
        dark_is_material: true,
        black_is_material: true,
        mirror,
        scale_x: 1.0,
        scale_y: 1.0,
        dpi_x: dpi,
        dpi_y: dpi,
        edge_offset_um: offset_um,
        drill_marks: marks,
        pilot_diameter_mm: 0.4,
        reasons: Vec::new(),
    }
}

pub struct Checked {
    pub film: RenderedFilm,
    pub board: Bounds,
    pub check: FilmCheck,
    pub findings: Vec<Finding>,
}

/// Renders `img` as a copper film over the board `board` (no targets, no label) and checks it.
pub fn check_copper(
    img: &LayerImage,
    drill: Option<&DrillFile>,
    board: Bounds,
    recipe: &FilmRecipe,
    limits: &ProcessLimits,
) -> Checked {
    let opts = ArtworkOptions {
        registration: false,
        label: false,
        ..Default::default()
    };
    let frame = BoardFrame::new(board, (0.0, 0.0), (0.0, 0.0), &opts);
    let dr: Vec<&DrillFile> = drill.into_iter().collect();
    let job = FilmJob {
        image: img,
        recipe,
        drills: &dr,
        frame: &frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts: &opts,
    };
    // As the films job renders it (no ring check in the render: the check measures rings).
    let film = render_film_on(&job, film_map(&frame, recipe), None);
    let input = FilmInput {
        key: "copper-top",
        title: "copper top",
        function: LayerFunction::Copper,
        film: &film.bitmap,
        map: &film.map,
        recipe,
        image: Some(img),
        drills: &dr,
    };
    let (check, findings) = check_film(&input, &board, limits);
    Checked {
        film,
        board,
        check,
        findings,
    }
}

pub fn board(w: f64, h: f64) -> Bounds {
    Bounds {
        min_x: 0.0,
        min_y: 0.0,
        max_x: w,
        max_y: h,
    }
}

pub fn of_kind(f: &[Finding], kind: FindingKind) -> Vec<&Finding> {
    f.iter().filter(|x| x.kind == kind).collect()
}

/// Pixel pitch in mm at `dpi`.
pub fn pixel_mm(dpi: f64) -> f64 {
    25.4 / dpi
}
