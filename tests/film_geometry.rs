//! Analytic areas through the whole film path: Gerber text → `gerber::read` → film recipe →
//! `compose::render_film` (registration and label off) → black pixel count × pixel area.
//!
//! Tolerance: 0.5 % of the area, or one ring of edge pixels (perimeter × pixel pitch) when
//! that is larger — pixel-centre sampling can misjudge at most the pixels the outline
//! crosses. Each shape's formula is named beside it. (Parallel == serial rendering is tested
//! in the raster tests and not repeated here.)

use std::f64::consts::PI;
use umbra::film::compose::{self, ArtworkOptions, BoardFrame, FilmJob, RenderedFilm};
use umbra::gerber;
use umbra::image::LayerImage;
use umbra::layers::{IdSource, LayerFunction, LayerId, Side};
use umbra::limits::Limits;
use umbra::process::{plan, FilmRecipe, Profile};

/// Gerber header: mm, 4.6 absolute (spec 2024.05 §4.2.1, §4.2.2), dark polarity.
const HEAD: &str = "%FSLAX46Y46*%\n%MOMM*%\n%LPD*%\nG01*\n";

/// A coordinate in the 4.6 format.
fn c(mm: f64) -> String {
    format!("{}", (mm * 1e6).round() as i64)
}

fn read(body: &str) -> LayerImage {
    let text = format!("{HEAD}{body}M02*\n");
    let g = gerber::read(&text, "shape.gbr", &Limits::default())
        .unwrap_or_else(|e| panic!("{e}\n{text}"));
    g.image
}

/// A positive top-copper recipe at `dpi_x` × `dpi_y` (black = dark objects, mirrored).
fn recipe(dpi_x: f64, dpi_y: f64) -> FilmRecipe {
    let mut p = Profile::default();
    p.printer.dpi = dpi_x;
    p.printer.dpi_y = Some(dpi_y);
    let id = LayerId::new(LayerFunction::Copper, Side::Top, IdSource::Attribute);
    let r = plan(&id, false, &p);
    assert!(r.black_is_material && r.dark_is_material && r.edge_offset_um == 0.0);
    r
}

fn film(image: &LayerImage, recipe: &FilmRecipe) -> RenderedFilm {
    let opts = ArtworkOptions {
        registration: false,
        label: false,
        border_mm: 1.0,
        ..Default::default()
    };
    let frame = BoardFrame::new(image.bounds(), (0.0, 0.0), (0.0, 0.0), &opts);
    let job = FilmJob {
        image,
        recipe,
        drills: &[],
        frame: &frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts: &opts,
    };
    compose::render_film(&job, 0.15)
}

/// Checks the black area of `body` against `area` mm² (perimeter `perimeter` mm) at each
/// square resolution. Returns the relative errors.
fn check(name: &str, body: &str, area: f64, perimeter: f64) -> Vec<f64> {
    let image = read(body);
    let mut errors = Vec::new();
    for dpi in [600.0, 1200.0, 2400.0] {
        let f = film(&image, &recipe(dpi, dpi));
        let pitch = 25.4 / dpi;
        let measured = f.bitmap.count_ones() as f64 * pitch * pitch;
        let tol = (0.005 * area).max(perimeter * pitch);
        assert!(
            (measured - area).abs() <= tol,
            "{name} at {dpi} dpi: {measured:.5} mm² vs {area:.5} (tolerance {tol:.5})"
        );
        errors.push((measured - area) / area);
    }
    errors
}

#[test]
fn disc_of_10_mm() {
    // Flash of a 10 mm circle aperture (§4.4.2): π r².
    let r: f64 = 5.0;
    let errors = check(
        "disc",
        &format!("%ADD10C,10*%\nD10*\nX{}Y{}D03*\n", c(0.0), c(0.0)),
        PI * r * r,
        2.0 * PI * r,
    );
    // Far tighter than an edge ring for a smooth curve: counting pixel centres in a disc is
    // the Gauss circle problem, whose error grows only like r^(2/3) pixels (about 24 px at
    // 600 dpi, r = 118 px: 0.05 % of the area).
    for e in errors {
        assert!(e.abs() < 0.0005, "disc relative error {e}");
    }
}

#[test]
fn round_track_0_2_by_20_mm() {
    // A line drawn with a 0.2 mm circle (§4.7): a stadium, w·L + π w²/4.
    let (w, l) = (0.2, 20.0);
    check(
        "track",
        &format!(
            "%ADD10C,{w}*%\nD10*\nX{}Y{}D02*\nX{}Y{}D01*\n",
            c(0.0),
            c(0.0),
            c(l),
            c(0.0)
        ),
        w * l + PI * w * w / 4.0,
        2.0 * l + PI * w,
    );
}

#[test]
fn rectangle_aperture_stroke_at_an_angle() {
    // A 1 × 0.5 mm rectangle drawn from (0, 0) to (6, 8): L = 10 at direction (cos θ, sin θ)
    // = (0.6, 0.8). The image is the rectangle swept along the segment (§4.7: the convex
    // hull of the aperture at both ends), the Minkowski sum of the rectangle and the
    // segment, whose area is area(rectangle) + L × (width of the rectangle across the
    // segment) = w·h + L·(w·|sin θ| + h·|cos θ|) = 0.5 + 10·(0.8 + 0.3) = 11.5 mm².
    let (w, h): (f64, f64) = (1.0, 0.5);
    let (cos, sin, l): (f64, f64, f64) = (0.6, 0.8, 10.0);
    let area = w * h + l * (w * sin + h * cos);
    assert!((area - 11.5).abs() < 1e-12);
    // Perimeter of the hull: 2L plus the rectangle's perimeter.
    check(
        "rectangle stroke",
        &format!(
            "%ADD11R,{w}X{h}*%\nD11*\nX{}Y{}D02*\nX{}Y{}D01*\n",
            c(0.0),
            c(0.0),
            c(l * cos),
            c(l * sin)
        ),
        area,
        2.0 * l + 2.0 * (w + h),
    );
}

/// Area of the part of a disc of radius `rho` within the strip |y| < t (t ≤ rho): twice the
/// area under √(ρ² − y²) from 0 to t, = 2·(t·√(ρ² − t²) + ρ²·asin(t/ρ)).
fn strip_in_disc(rho: f64, t: f64) -> f64 {
    2.0 * (t * (rho * rho - t * t).sqrt() + rho * rho * (t / rho).asin())
}

#[test]
fn thermal_macro() {
    // Primitive 7 (§4.5.1, thermal): centre (0, 0), outer diameter 4, inner 2.5, gap 0.6,
    // turned 45°. Its area is the ring π(R² − r²) minus the four gaps, which are the ring's
    // parts inside the two perpendicular strips of width g through the centre:
    //   area = π(R² − r²) − 2·[S(R) − S(r)],   S(ρ) = 2·(t·√(ρ² − t²) + ρ²·asin(t/ρ)), t = g/2,
    // valid when the strips' common square (corner at t·√2 from the centre) lies inside the
    // hole, t·√2 < r. Rotation does not change the area.
    let (big_r, small_r, g): (f64, f64, f64) = (2.0, 1.25, 0.6);
    let t = g / 2.0;
    assert!(t * 2f64.sqrt() < small_r);
    let area = PI * (big_r * big_r - small_r * small_r)
        - 2.0 * (strip_in_disc(big_r, t) - strip_in_disc(small_r, t));
    // Cross-check with the rectangle estimate: four gaps of about g × (R − r).
    assert!(
        (area - (PI * (big_r * big_r - small_r * small_r) - 4.0 * g * (big_r - small_r))).abs()
            < 0.05
    );
    // Perimeter: the two circles less the gaps, plus eight straight gap sides.
    let perimeter = 2.0 * PI * (big_r + small_r) + 8.0 * (big_r - small_r);
    check(
        "thermal",
        &format!(
            "%AMTHERMAL*\n7,0,0,{},{},{g},45*%\n%ADD12THERMAL*%\nD12*\nX{}Y{}D03*\n",
            2.0 * big_r,
            2.0 * small_r,
            c(0.0),
            c(0.0)
        ),
        area,
        perimeter,
    );
}

#[test]
fn region_with_clear_cut_outs() {
    // A 20 × 10 mm region (G36/G37, §4.10), then under clear polarity (%LPC, §4.9.2) a
    // triangular region (2,2)-(8,2)-(5,7) (shoelace: ½·6·5 = 15 mm²) and a 3 mm flash
    // (π·1.5²): 200 − 15 − 2.25π.
    let pt = |x: f64, y: f64| format!("X{}Y{}", c(x), c(y));
    let body = format!(
        "%ADD10C,3*%\nG36*\n{}D02*\n{}D01*\n{}D01*\n{}D01*\n{}D01*\nG37*\n\
         %LPC*%\nG36*\n{}D02*\n{}D01*\n{}D01*\n{}D01*\nG37*\nD10*\n{}D03*\n",
        pt(0.0, 0.0),
        pt(20.0, 0.0),
        pt(20.0, 10.0),
        pt(0.0, 10.0),
        pt(0.0, 0.0),
        pt(2.0, 2.0),
        pt(8.0, 2.0),
        pt(5.0, 7.0),
        pt(2.0, 2.0),
        pt(14.0, 5.0),
    );
    let tri_side = (3.0f64 * 3.0 + 5.0 * 5.0).sqrt();
    check(
        "region",
        &body,
        200.0 - 15.0 - PI * 1.5 * 1.5,
        60.0 + (6.0 + 2.0 * tri_side) + PI * 3.0,
    );
}

#[test]
fn non_square_pixels_10_mm_square() {
    // 1200 × 600 dpi (masked LCD screens have rectangular pixels, TRADE.md): a 10 mm square
    // spans 10/25.4 × 1200 = 472.4 by 10/25.4 × 600 = 236.2 pixels → 472 × 236 (±1).
    let body = format!("%ADD13R,10X10*%\nD13*\nX{}Y{}D03*\n", c(5.0), c(5.0));
    let image = read(&body);
    let f = film(&image, &recipe(1200.0, 600.0));
    let b = &f.bitmap;
    let (mut x0, mut x1, mut y0, mut y1) = (usize::MAX, 0, usize::MAX, 0);
    for y in 0..b.height() {
        for x in 0..b.width() {
            if b.get(x, y) {
                x0 = x0.min(x);
                x1 = x1.max(x);
                y0 = y0.min(y);
                y1 = y1.max(y);
            }
        }
    }
    let (w, h) = (x1 + 1 - x0, y1 + 1 - y0);
    assert!((w as i64 - 472).abs() <= 1, "width {w}");
    assert!((h as i64 - 236).abs() <= 1, "height {h}");
    // Solid: every pixel of the bounding box is black.
    assert_eq!(b.count_ones(), (w * h) as u64);
    // And the film itself is 12 mm (10 + 2 × 1 mm border) at each axis' own pitch.
    let (fw, fh) = (
        b.width() as f64 * 25.4 / 1200.0,
        b.height() as f64 * 25.4 / 600.0,
    );
    assert!((fw - 12.0).abs() < 25.4 / 1200.0 + 1e-9, "{fw}");
    assert!((fh - 12.0).abs() < 25.4 / 600.0 + 1e-9, "{fh}");
}

#[test]
fn annular_ring_left_by_a_hole_is_measured_on_the_film() {
    // Two round pads, 1.2 and 2.0 mm, each around a 0.8 mm hole (Excellon, IPC-NC-349):
    // the copper ring left is (pad − hole)/2 = 0.2 and 0.6 mm (analytic). With a 0.25 mm
    // minimum only the first is reported; its ring is measured to the nearest pixel centre
    // off the copper, so it lies in [0.2, 0.2 + one pixel].
    let image = read(&format!(
        "%ADD10C,1.2*%\n%ADD11C,2*%\nD10*\nX{}Y{}D03*\nD11*\nX{}Y{}D03*\n",
        c(0.0),
        c(0.0),
        c(5.0),
        c(0.0)
    ));
    let drill = umbra::excellon::read(
        "M48\nMETRIC,TZ\nT1C0.800\n%\nG90\nG05\nT1\nX0.000Y0.000\nX5.000Y0.000\nM30\n",
        "holes.xln",
        &Limits::default(),
    )
    .unwrap();
    let drills = [&drill];
    let recipe = recipe(1200.0, 1200.0);
    let opts = ArtworkOptions {
        registration: false,
        label: false,
        border_mm: 1.0,
        ..Default::default()
    };
    let frame = BoardFrame::new(image.bounds(), (0.0, 0.0), (0.0, 0.0), &opts);
    let job = FilmJob {
        image: &image,
        recipe: &recipe,
        drills: &drills,
        frame: &frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts: &opts,
    };
    let pitch = 25.4 / 1200.0;
    let f = compose::render_film(&job, 0.25);
    assert_eq!(f.thin_rings.len(), 1, "{:?}", f.thin_rings);
    let (at, ring) = f.thin_rings[0];
    assert_eq!((at.x, at.y), (0.0, 0.0));
    assert!(ring >= 0.2 - 1e-9 && ring <= 0.2 + pitch, "ring {ring}");
    assert!(
        f.warnings.iter().any(|w| w.contains("annular ring")),
        "{:?}",
        f.warnings
    );
    // A 0.15 mm minimum is met by both.
    let f = compose::render_film(&job, 0.15);
    assert!(f.thin_rings.is_empty(), "{:?}", f.thin_rings);
}
