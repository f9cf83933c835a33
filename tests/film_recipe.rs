//! Every row of the film-rule tables (docs/film-rules.md, the same tables as the trade rules)
//! checked against `process::plan`, and where the table speaks of black and clear, also on a
//! film rendered by `compose::render_film` (bit 1 = black).
//!
//! Sources: docs/film-rules.md (mirroring, polarity, edge offset, worked example); the Gerber
//! Layer Format Specification rev 2024.05 §5.6.4 (`.FilePolarity`) and §8.1 (`%IPNEG*%`);
//! analytic disc areas (π r², and the Minkowski sum of two discs is the disc of the summed
//! radii, π (r + d)²).

use std::f64::consts::PI;
use umbra::film::compose::{self, ArtworkOptions, BoardFrame, FilmJob, RenderedFilm};
use umbra::image::{LayerImage, Point, Polarity, Shape};
use umbra::layers::{FilePolarity, IdSource, LayerFunction, LayerId, Side};
use umbra::limits::Limits;
use umbra::process::{plan, FilmRecipe, PrintedSide, Profile, Resist, DEFAULT_PROFILE_TOML};

fn id(function: LayerFunction, side: Side) -> LayerId {
    LayerId::new(function, side, IdSource::Attribute)
}

fn profile(resist: Resist, printed_side: PrintedSide) -> Profile {
    let mut p = Profile::default();
    p.process.resist = resist;
    p.process.printed_side = printed_side;
    p
}

// ---------------------------------------------------------------------------------------
// Mirroring (docs/film-rules.md, "Mirroring")
// ---------------------------------------------------------------------------------------

#[test]
fn mirroring_table_four_rows_and_inner_layers_like_top() {
    use PrintedSide::{AwayFromBoard, TowardBoard};
    // (side, printed side, mirrored) — the four rows of the table, plus inner layers and the
    // outline, which the table files with "top".
    let rows = [
        (Side::Top, TowardBoard, true),
        (Side::Top, AwayFromBoard, false),
        (Side::Bottom, TowardBoard, false),
        (Side::Bottom, AwayFromBoard, true),
        (Side::Inner(1), TowardBoard, true),
        (Side::Inner(2), AwayFromBoard, false),
    ];
    for (side, printed, mirrored) in rows {
        for function in [
            LayerFunction::Copper,
            LayerFunction::SolderMask,
            LayerFunction::Legend,
            LayerFunction::Paste,
        ] {
            if matches!(side, Side::Inner(_)) && function != LayerFunction::Copper {
                continue;
            }
            let r = plan(
                &id(function, side),
                false,
                &profile(Resist::Positive, printed),
            );
            assert_eq!(r.mirror, mirrored, "{function} {side:?} {printed:?}");
        }
    }
    // The outline (side Both) is drawn like the top (docs/film-rules.md: "top (and inner,
    // outline)").
    let r = plan(
        &id(LayerFunction::Outline, Side::Both),
        false,
        &Profile::default(),
    );
    assert!(r.mirror);
}

#[test]
fn mirror_override_replaces_the_table() {
    // "lets the job file override any of them" (docs/film-rules.md, introduction).
    let mut p = Profile::default();
    p.layers.copper.mirror = Some(false);
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert!(!r.mirror, "override as drawn");
    // Only copper is overridden: the top mask keeps the table's answer.
    let r = plan(&id(LayerFunction::SolderMask, Side::Top), false, &p);
    assert!(r.mirror);
}

// ---------------------------------------------------------------------------------------
// Polarity (docs/film-rules.md, "Polarity"), on the recipe and on a rendered film
// ---------------------------------------------------------------------------------------

/// A 1 mm disc at the origin rendered as one film: no targets, no label, 1 mm border.
/// The board is the disc's bounding box.
fn disc_film(recipe: &FilmRecipe, diameter: f64) -> RenderedFilm {
    let mut image = LayerImage::default();
    image.push(
        Polarity::Dark,
        Shape::Disc {
            center: Point::new(0.0, 0.0),
            diameter,
        },
    );
    let opts = ArtworkOptions {
        registration: false,
        label: false,
        border_mm: 1.0,
        ..Default::default()
    };
    let frame = BoardFrame::new(image.bounds(), (0.0, 0.0), (0.0, 0.0), &opts);
    let job = FilmJob {
        image: &image,
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

/// Whether the film is black at board point `p` (bit 1 = black, see RenderedFilm).
fn black_at(film: &RenderedFilm, p: Point) -> bool {
    let (x, y) = film.map.to_px(p);
    film.bitmap.get(x.floor() as usize, y.floor() as usize)
}

/// The layer's material at a board point inside the board but outside the 1 mm disc
/// (the corner region of its bounding box, 0.64 mm from the centre).
const OUTSIDE_DISC: Point = Point::new(0.45, 0.45);

struct PolarityRow {
    what: &'static str,
    function: LayerFunction,
    resist: Resist,
    file_polarity: Option<FilePolarity>,
    image_negative: bool,
    /// Expected: the image's dark objects stand for material.
    dark_is_material: bool,
    /// Expected: film black where the material is.
    black_is_material: bool,
}

#[test]
fn polarity_table_on_recipe_and_on_rendered_disc() {
    use FilePolarity::{Negative, Positive};
    use LayerFunction::{Copper, Legend, Paste, SolderMask};
    let row = |what, function, resist, file_polarity, image_negative, dark, black| PolarityRow {
        what,
        function,
        resist,
        file_polarity,
        image_negative,
        dark_is_material: dark,
        black_is_material: black,
    };
    let rows = [
        // Table rows (docs/film-rules.md "Polarity").
        row(
            "copper, positive resist: black = copper",
            Copper,
            Resist::Positive,
            None,
            false,
            true,
            true,
        ),
        row(
            "copper, negative resist: clear = copper",
            Copper,
            Resist::Negative,
            None,
            false,
            true,
            false,
        ),
        row(
            "mask: openings black",
            SolderMask,
            Resist::Positive,
            None,
            false,
            true,
            true,
        ),
        row(
            "mask under negative resist is unchanged (mask ink is its own resist)",
            SolderMask,
            Resist::Negative,
            None,
            false,
            true,
            true,
        ),
        row(
            "legend: legend clear",
            Legend,
            Resist::Positive,
            None,
            false,
            true,
            false,
        ),
        row(
            "paste as copper, positive",
            Paste,
            Resist::Positive,
            None,
            false,
            true,
            true,
        ),
        row(
            "paste as copper, negative",
            Paste,
            Resist::Negative,
            None,
            false,
            true,
            false,
        ),
        // Gerber's own polarity folded in first: `.FilePolarity` (spec 2024.05 §5.6.4) ...
        row(
            "copper .FilePolarity,Positive",
            Copper,
            Resist::Positive,
            Some(Positive),
            false,
            true,
            true,
        ),
        row(
            "copper .FilePolarity,Negative: dark = no copper",
            Copper,
            Resist::Positive,
            Some(Negative),
            false,
            false,
            true,
        ),
        row(
            "copper .FilePolarity,Negative, negative resist",
            Copper,
            Resist::Negative,
            Some(Negative),
            false,
            false,
            false,
        ),
        // ... masks are usually written Negative: the image shows the openings (§5.6.3).
        row(
            "mask .FilePolarity,Negative shows openings",
            SolderMask,
            Resist::Positive,
            Some(Negative),
            false,
            true,
            true,
        ),
        row(
            "mask .FilePolarity,Positive shows mask",
            SolderMask,
            Resist::Positive,
            Some(Positive),
            false,
            false,
            true,
        ),
        // ... and the deprecated %IPNEG*% (spec §8.1) inverts the whole image.
        row(
            "copper %IPNEG",
            Copper,
            Resist::Positive,
            None,
            true,
            false,
            true,
        ),
        row(
            "copper %IPNEG and .FilePolarity,Negative cancel",
            Copper,
            Resist::Positive,
            Some(Negative),
            true,
            true,
            true,
        ),
        row(
            "mask %IPNEG",
            SolderMask,
            Resist::Positive,
            None,
            true,
            false,
            true,
        ),
    ];
    for r in rows {
        let lid = id(r.function, Side::Top).with_polarity(r.file_polarity);
        let recipe = plan(
            &lid,
            r.image_negative,
            &profile(r.resist, PrintedSide::TowardBoard),
        );
        assert_eq!(
            recipe.dark_is_material, r.dark_is_material,
            "{}: dark",
            r.what
        );
        assert_eq!(
            recipe.black_is_material, r.black_is_material,
            "{}: black",
            r.what
        );
        // On the film: the disc is drawn dark. It is material when dark is material; the
        // film is black there when black is material (bit 1 = black).
        let film = disc_film(&recipe, 1.0);
        let disc_is_material = r.dark_is_material;
        let centre_black = disc_is_material == r.black_is_material;
        assert_eq!(
            black_at(&film, Point::new(0.0, 0.0)),
            centre_black,
            "{}: centre of the disc",
            r.what
        );
        // Inside the board but off the disc the opposite holds.
        assert_eq!(
            black_at(&film, OUTSIDE_DISC),
            !centre_black,
            "{}: beside the disc",
            r.what
        );
    }
}

#[test]
fn file_polarity_and_ipneg_are_read_from_gerber_text() {
    // The inputs of the folding above, as the reader finds them in a file: `%TF.FilePolarity`
    // (spec 2024.05 §5.6.4) and `%IPNEG*%` (§8.1, deprecated, read with a warning).
    let negative = "%TF.FileFunction,Copper,L1,Top*%\n%TF.FilePolarity,Negative*%\n\
                    %FSLAX26Y26*%\n%MOMM*%\n%ADD10C,1*%\nD10*\nX0Y0D03*\nM02*\n";
    let g = umbra::gerber::read(negative, "neg.gbr", &Limits::default()).unwrap();
    let lid = umbra::layers::identify("neg.gbr", &g.attributes, negative).unwrap();
    assert_eq!(lid.polarity, Some(FilePolarity::Negative));
    assert!(!g.image_negative);
    assert!(!plan(&lid, g.image_negative, &Profile::default()).dark_is_material);

    let ipneg = "%FSLAX26Y26*%\n%MOMM*%\n%IPNEG*%\n%ADD10C,1*%\nD10*\nX0Y0D03*\nM02*\n";
    let g = umbra::gerber::read(ipneg, "ipneg.gbr", &Limits::default()).unwrap();
    assert!(g.image_negative);
    assert!(!g.warnings.is_empty(), "IPNEG is deprecated: warned (§8.1)");
    let lid = id(LayerFunction::Copper, Side::Top);
    assert!(!plan(&lid, g.image_negative, &Profile::default()).dark_is_material);
}

#[test]
fn black_is_material_override_replaces_the_table() {
    let mut p = Profile::default();
    p.layers.legend.black_is_material = Some(true);
    let r = plan(&id(LayerFunction::Legend, Side::Top), false, &p);
    assert!(r.black_is_material);
    assert!(black_at(&disc_film(&r, 1.0), Point::new(0.0, 0.0)));
}

// ---------------------------------------------------------------------------------------
// Edge offset (docs/film-rules.md, "Edge offset")
// ---------------------------------------------------------------------------------------

#[test]
fn edge_offset_formula_with_sign_rules() {
    // black_offset = exposure_spread − toner_spread + s × undercut + s′ × extra,
    // s = +1 positive copper, −1 negative copper, 0 mask/legend;
    // s′ = +1 when black is the material, −1 when black is the background.
    let (exposure, toner, undercut) = (12.0, 25.0, 35.0);
    let (x_cu, x_mask, x_legend, x_paste) = (7.0, 3.0, 5.0, 11.0);
    let mut p = Profile::default();
    p.process.exposure_spread_um = exposure;
    p.printer.toner_spread_um = toner;
    p.process.undercut_um = undercut;
    p.layers.copper.extra_um = x_cu;
    p.layers.mask.extra_um = x_mask;
    p.layers.legend.extra_um = x_legend;
    p.layers.paste.extra_um = x_paste;
    let base = exposure - toner;
    let cases = [
        // (function, resist, s, s', extra)
        (LayerFunction::Copper, Resist::Positive, 1.0, 1.0, x_cu),
        (LayerFunction::Copper, Resist::Negative, -1.0, -1.0, x_cu),
        (LayerFunction::Paste, Resist::Positive, 1.0, 1.0, x_paste),
        (LayerFunction::Paste, Resist::Negative, -1.0, -1.0, x_paste),
        // Mask: black = openings = material → s′ = +1; the resist setting does not matter.
        (
            LayerFunction::SolderMask,
            Resist::Positive,
            0.0,
            1.0,
            x_mask,
        ),
        (
            LayerFunction::SolderMask,
            Resist::Negative,
            0.0,
            1.0,
            x_mask,
        ),
        // Legend: black = background → s′ = −1.
        (LayerFunction::Legend, Resist::Positive, 0.0, -1.0, x_legend),
    ];
    for (function, resist, s, s2, extra) in cases {
        p.process.resist = resist;
        let r = plan(&id(function, Side::Bottom), false, &p);
        let want = base + s * undercut + s2 * extra;
        assert!(
            (r.edge_offset_um - want).abs() < 1e-9,
            "{function} {resist:?}: {} vs {want}",
            r.edge_offset_um
        );
    }
    // s follows black, not the resist name: a negative-resist copper film forced black =
    // copper is a positive copper film (s = +1, s′ = +1).
    p.process.resist = Resist::Negative;
    p.layers.copper.black_is_material = Some(true);
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert!((r.edge_offset_um - (base + undercut + x_cu)).abs() < 1e-9);
    // An explicit edge offset replaces the computed one.
    p.layers.copper.edge_offset_um = Some(-4.0);
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert_eq!(r.edge_offset_um, -4.0);
}

#[test]
fn worked_example_ten_microns_at_1200_dpi_realizes_zero_with_a_warning() {
    // docs/film-rules.md worked example: positive resist, 1200 dpi (21.2 µm/pixel), toner
    // 25 µm, undercut 35 µm, exposure 0 → black +10 µm → realized 0 px (+0 µm), warned as
    // below half a pixel.
    let mut p = Profile::default();
    p.printer.dpi = 1200.0;
    p.printer.toner_spread_um = 25.0;
    p.process.undercut_um = 35.0;
    p.process.exposure_spread_um = 0.0;
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert!((r.edge_offset_um - 10.0).abs() < 1e-9);
    let realized = compose::realized_for(&r);
    assert_eq!((realized.x_px, realized.y_px), (0, 0));
    assert_eq!((realized.x_um, realized.y_um), (0.0, 0.0));
    let film = disc_film(&r, 1.0);
    assert!(
        film.warnings.iter().any(|w| w.contains("half a pixel")),
        "{:?}",
        film.warnings
    );
    // Half a pixel at 1200 dpi is 10.58 µm, so 11 µm rounds to one pixel (no warning).
    p.process.undercut_um = 36.0;
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert_eq!(compose::realized_for(&r).x_px, 1);
    assert!(disc_film(&r, 1.0).warnings.is_empty());
}

/// Pixel area in mm² at `dpi`.
fn pixel_area_mm2(dpi: f64) -> f64 {
    (25.4 / dpi).powi(2)
}

/// The discrete disc of radius exactly 2 px that the morphology uses for a 2 px offset: the
/// pixel offsets (i, j) with i² + j² ≤ 4 (raster::morphology docs). Its convex hull is the
/// diamond |i| + |j| ≤ 2: perimeter 8√2 px, area 8 px².
const DIAMOND_PERIMETER_PX: f64 = 8.0 * std::f64::consts::SQRT_2;
const DIAMOND_AREA_PX: f64 = 8.0;

#[test]
fn realized_offset_grows_black_on_both_polarities() {
    // A 1 mm disc at 1200 dpi with a black offset of +2 px (= 2 × 25.4/1200 mm), requested
    // through exposure spread (light creeping under black shrinks the *effective* black, so
    // the film's black is grown to compensate — on either polarity).
    let dpi = 1200.0;
    let pitch = 25.4 / dpi;
    let d_mm = 2.0 * pitch;
    let r_mm = 0.5;
    let px_area = pixel_area_mm2(dpi);
    // One ring of edge pixels: the bound for pixel-centre sampling of a disc's area.
    let ring = |radius: f64| 2.0 * PI * radius * pitch / px_area;
    // Steiner's formula for the Minkowski sum of a disc of radius r and a convex set K:
    // area = π r² + r · perimeter(K) + area(K). With K the disc of radius d this is π (r + d)²;
    // with the discrete 2 px disc it is the growth the film can realize.
    let steiner_growth =
        (r_mm * DIAMOND_PERIMETER_PX * pitch + DIAMOND_AREA_PX * px_area) / px_area;
    let mut p = Profile::default();
    p.process.exposure_spread_um = d_mm * 1000.0;

    // Positive copper: the black disc grows to about π (r + d)².
    p.process.resist = Resist::Positive;
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    let film = disc_film(&r, 2.0 * r_mm);
    assert_eq!((film.realized.x_px, film.realized.y_px), (2, 2));
    let plain = disc_film(
        &FilmRecipe {
            edge_offset_um: 0.0,
            ..r.clone()
        },
        2.0 * r_mm,
    );
    let grown = film.bitmap.count_ones() as f64;
    let before = plain.bitmap.count_ones() as f64;
    let want_grown = PI * (r_mm + d_mm).powi(2) / px_area;
    let want_before = PI * r_mm.powi(2) / px_area;
    assert!(
        (before - want_before).abs() < ring(r_mm),
        "{before} vs {want_before}"
    );
    assert!(
        (grown - want_grown).abs() < ring(r_mm + d_mm),
        "{grown} vs {want_grown}"
    );
    // The growth itself, sharper: Steiner's formula with the discrete disc (≈ 275 px; the
    // continuous disc would give π((r+d)² − r²) ≈ 309 px, because the 2 px disc reaches
    // only √2 px along the diagonals).
    let growth = grown - before;
    assert!(
        (growth - steiner_growth).abs() < 0.03 * steiner_growth,
        "growth {growth} vs {steiner_growth}"
    );
    assert!(growth > 0.0);

    // Negative copper: black is the background; it grows into the clear copper disc, which
    // shrinks to about π (r − d)² (the inner parallel set: area ≈ π r² − r · perimeter(K)
    // + area(K), by the same formula).
    p.process.resist = Resist::Negative;
    let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
    assert!(!r.black_is_material);
    assert!(r.edge_offset_um > 0.0);
    let film = disc_film(&r, 2.0 * r_mm);
    let total = (film.bitmap.width() * film.bitmap.height()) as f64;
    let clear = total - film.bitmap.count_ones() as f64;
    let want_clear = PI * (r_mm - d_mm).powi(2) / px_area;
    assert!(
        (clear - want_clear).abs() < ring(r_mm),
        "{clear} vs {want_clear}"
    );
    let plain = disc_film(
        &FilmRecipe {
            edge_offset_um: 0.0,
            ..r.clone()
        },
        2.0 * r_mm,
    );
    let clear_before = total - plain.bitmap.count_ones() as f64;
    let shrink = clear_before - clear;
    let want_shrink = (r_mm * DIAMOND_PERIMETER_PX * pitch - DIAMOND_AREA_PX * px_area) / px_area;
    assert!(
        (shrink - want_shrink).abs() < 0.05 * want_shrink,
        "shrink {shrink} vs {want_shrink}"
    );
}

#[test]
fn undercut_always_grows_copper_on_the_film() {
    // s = +1 on a positive copper film, −1 on a negative one: either way the copper drawn on
    // the film grows by the undercut, so the etched copper comes out at its drawn size.
    let dpi = 1200.0;
    let d_mm = 2.0 * 25.4 / dpi;
    let mut p = Profile::default();
    p.process.undercut_um = d_mm * 1000.0;
    let centre_px = |film: &RenderedFilm, copper_black: bool| {
        // Copper pixels on this film.
        let ones = film.bitmap.count_ones() as f64;
        let total = (film.bitmap.width() * film.bitmap.height()) as f64;
        if copper_black {
            ones
        } else {
            total - ones
        }
    };
    let want = PI * (0.5 + d_mm).powi(2) / pixel_area_mm2(dpi);
    let ring = 2.0 * PI * 0.55 * (25.4 / dpi) / pixel_area_mm2(dpi);
    for resist in [Resist::Positive, Resist::Negative] {
        p.process.resist = resist;
        let r = plan(&id(LayerFunction::Copper, Side::Top), false, &p);
        let copper = centre_px(&disc_film(&r, 1.0), r.black_is_material);
        assert!(
            (copper - want).abs() < ring,
            "{resist:?}: {copper} vs {want}"
        );
    }
}

// ---------------------------------------------------------------------------------------
// Profile TOML
// ---------------------------------------------------------------------------------------

#[test]
fn documented_defaults_equal_the_built_in_defaults() {
    // The file `umbra profile init` writes says "the values shown are the defaults".
    let parsed = Profile::from_toml(DEFAULT_PROFILE_TOML, "default-profile.toml").unwrap();
    assert_eq!(parsed, Profile::default());
    // And it states the defaults the tables rely on.
    assert_eq!(parsed.process.resist, Resist::Positive);
    assert_eq!(parsed.process.printed_side, PrintedSide::TowardBoard);
    // Pilot dot 0.4 mm (docs/film-rules.md "Drill-centre marks", common practice).
    assert_eq!(parsed.drill_marks.pilot_diameter_mm, 0.4);
}

#[test]
fn unknown_key_is_an_error_naming_key_file_line_and_column() {
    let text = "[printer]\ndpi = 600\ntoner_spred_um = 20\n";
    let e = Profile::from_toml(text, "my-process.toml").unwrap_err();
    let msg = e.to_string();
    assert!(msg.contains("toner_spred_um"), "{msg}");
    assert!(msg.starts_with("my-process.toml:3:1:"), "{msg}");
    assert_eq!(e.pos.map(|p| (p.line, p.column)), Some((3, 1)));
    // An unknown section, too.
    let e = Profile::from_toml("[printr]\ndpi = 600\n", "p.toml").unwrap_err();
    assert!(e.to_string().contains("printr"), "{e}");
    assert_eq!(e.pos.map(|p| p.line), Some(1));
}

#[test]
fn negative_dpi_is_a_clear_error() {
    let e = Profile::from_toml("[printer]\ndpi = -600\n", "p.toml").unwrap_err();
    let msg = e.to_string();
    assert!(msg.starts_with("p.toml"), "{msg}");
    assert!(msg.contains("printer.dpi") && msg.contains("-600"), "{msg}");
    assert!(msg.contains("dots per inch"), "{msg}");
    let e = Profile::from_toml("[printer]\ndpi = 600\ndpi_y = 0\n", "p.toml").unwrap_err();
    assert!(e.to_string().contains("printer.dpi_y"), "{e}");
}
