//! The stroke font: coverage, widths, mirroring, glyph boxes and legibility at small sizes.

mod film_marks_support;

use film_marks_support::rasterize;
use umbra::film::font::{self, text_shapes, text_width_mm, CAP_HEIGHT_UNITS, DESCENDER_UNITS};
use umbra::image::{Point, Shape};

/// The characters the task asks labels to be written with (task brief, "Stroke font").
const REQUIRED: &str = concat!(
    "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789",
    " .,:;-+_/\\()[]#%°µ×='\"!?<>&*"
);

fn segments(shapes: &[Shape]) -> Vec<(Point, Point, f64)> {
    shapes
        .iter()
        .map(|s| match s {
            Shape::Stroke {
                start,
                end,
                arc: None,
                width,
            } => (*start, *end, *width),
            other => panic!("text must be straight strokes, got {other:?}"),
        })
        .collect()
}

#[test]
fn every_required_character_has_its_own_glyph() {
    for c in REQUIRED.chars() {
        assert!(font::has_glyph(c), "no glyph for {c:?}");
        if c != ' ' {
            assert!(
                !text_shapes(&c.to_string(), Point::new(0.0, 0.0), 2.0, 0.2, false, 0.0).is_empty(),
                "{c:?}"
            );
        }
    }
    assert_eq!(font::LABEL_ALPHABET, REQUIRED);
    // Distinct glyphs for the look-alikes a label must not confuse (common practice in
    // technical lettering: slashed zero, serifed capital I).
    for (a, b) in [
        ('O', '0'),
        ('I', 'l'),
        ('l', '1'),
        ('I', '1'),
        ('S', '5'),
        ('B', '8'),
        ('Z', '2'),
    ] {
        assert_ne!(
            font::glyph(a),
            font::glyph(b),
            "{a:?} and {b:?} look the same"
        );
    }
}

#[test]
fn unknown_characters_are_drawn_as_a_visible_box() {
    let unknown = '\u{263A}';
    assert!(!font::has_glyph(unknown));
    let shapes = text_shapes(
        &unknown.to_string(),
        Point::new(0.0, 0.0),
        8.0,
        0.5,
        false,
        0.0,
    );
    assert!(shapes.len() >= 4, "a box needs at least four sides");
    // The box spans the full cap height (8 mm at cap height 8 mm).
    let top = segments(&shapes)
        .iter()
        .map(|s| s.0.y.max(s.1.y))
        .fold(f64::MIN, f64::max);
    assert!((top - 8.0).abs() < 1e-9);
    assert!(text_width_mm("\u{263A}", 8.0) > 0.0);
}

#[test]
fn text_width_is_additive_and_scales_with_cap_height() {
    let samples = [
        "copper top",
        "+10.0 µm",
        "r1c2",
        "Larkspur Community Workshop",
        "",
        "×°",
    ];
    for a in samples {
        for b in samples {
            let ab = format!("{a}{b}");
            let sum = text_width_mm(a, 2.5) + text_width_mm(b, 2.5);
            assert!(
                (text_width_mm(&ab, 2.5) - sum).abs() < 1e-9,
                "{a:?} + {b:?}"
            );
        }
        // Linear in the cap height (a similarity scales all lengths by the same factor).
        assert!((text_width_mm(a, 5.0) - 2.0 * text_width_mm(a, 2.5)).abs() < 1e-9);
    }
    assert_eq!(text_width_mm("abc", f64::NAN), 0.0);
    assert_eq!(text_width_mm("abc", -1.0), 0.0);
    assert!(text_shapes("abc", Point::new(0.0, 0.0), f64::INFINITY, 0.2, false, 0.0).is_empty());
}

#[test]
fn glyphs_stay_inside_their_box() {
    // Box: x from 0 to the advance, y from −descender to cap height, in font units (the font's
    // own promise in its # Guarantees section). At cap height 8 mm one unit is one millimetre.
    let cap = CAP_HEIGHT_UNITS;
    for c in REQUIRED.chars().chain(['\u{263A}']) {
        let advance = text_width_mm(&c.to_string(), cap);
        for (a, b, _) in segments(&text_shapes(
            &c.to_string(),
            Point::new(0.0, 0.0),
            cap,
            0.5,
            false,
            0.0,
        )) {
            for p in [a, b] {
                assert!(
                    p.x >= -1e-9 && p.x < advance,
                    "{c:?}: x {} outside 0..{advance}",
                    p.x
                );
                assert!(
                    p.y >= -DESCENDER_UNITS - 1e-9 && p.y <= cap + 1e-9,
                    "{c:?}: y {}",
                    p.y
                );
            }
        }
    }
}

#[test]
fn mirrored_text_is_the_reflection_about_its_origin() {
    let text = "Rev B, 12°";
    let o = Point::new(3.0, -7.0);
    for rotation in [0.0, 90.0, 33.0] {
        let plain = segments(&text_shapes(text, o, 2.0, 0.26, false, rotation));
        let mirrored = segments(&text_shapes(text, o, 2.0, 0.26, true, rotation));
        assert_eq!(plain.len(), mirrored.len());
        // Reflection across the line through o along the text's vertical (angle rotation+90°):
        // p' = o + R(θ) · diag(−1, 1) · R(−θ) · (p − o)  (reflection matrix, linear algebra).
        let (s, c) = rotation.to_radians().sin_cos();
        let reflect = |p: Point| {
            let (dx, dy) = (p.x - o.x, p.y - o.y);
            let (u, v) = (dx * c + dy * s, -dx * s + dy * c);
            let u = -u;
            Point::new(o.x + u * c - v * s, o.y + u * s + v * c)
        };
        for ((a, b, w), (ma, mb, mw)) in plain.iter().zip(&mirrored) {
            assert!(
                reflect(*a).dist(*ma) < 1e-9 && reflect(*b).dist(*mb) < 1e-9,
                "rotation {rotation}"
            );
            assert_eq!(w, mw);
        }
    }
    // And it runs the other way: the unrotated mirrored text lies left of its origin.
    let m = segments(&text_shapes("ABC", o, 2.0, 0.2, true, 0.0));
    assert!(m
        .iter()
        .all(|(a, b, _)| a.x <= o.x + 1e-9 && b.x <= o.x + 1e-9));
}

#[test]
fn counters_stay_open_at_2_mm_on_a_600_dpi_printer() {
    // Legibility at the smallest label size: 2 mm capitals, pen 0.13 of the cap height, at
    // 600 dpi (task brief). The number of enclosed light regions of each glyph is counted on
    // a naive pixel-centre raster; the expected counts are those of the letter shapes
    // themselves (topology of the alphabet, e.g. B has two counters).
    let expected = [
        ('A', 1),
        ('B', 2),
        ('D', 1),
        ('O', 1),
        ('P', 1),
        ('Q', 1),
        ('R', 1),
        ('a', 1),
        ('b', 1),
        ('d', 1),
        ('e', 1),
        ('g', 1),
        ('o', 1),
        ('p', 1),
        ('q', 1),
        ('0', 2),
        ('4', 1),
        ('6', 1),
        ('8', 2),
        ('9', 1),
        ('%', 2),
        ('#', 1),
        ('°', 1),
        ('C', 0),
        ('c', 0),
        ('s', 0),
        ('S', 0),
        ('3', 0),
        ('5', 0),
        ('2', 0),
        ('x', 0),
    ];
    for (c, holes) in expected {
        let shapes = text_shapes(&c.to_string(), Point::new(0.0, 0.0), 2.0, 0.26, false, 0.0);
        let bm = rasterize(&shapes, 600.0, 0.3);
        assert_eq!(bm.enclosed_light_regions(), holes, "{c:?}");
    }
    // Control: with a pen far too wide for the size the counters of B close, so the count
    // above really measures something.
    let fat = rasterize(
        &text_shapes("B", Point::new(0.0, 0.0), 2.0, 0.9, false, 0.0),
        600.0,
        0.3,
    );
    assert_ne!(fat.enclosed_light_regions(), 2);
}

#[test]
fn neighbouring_letters_do_not_touch_at_2_mm() {
    // Letters that touch read as one shape (common practice in lettering): for every pair of
    // letters and digits, the pair has as many separate dark marks as its two letters alone,
    // on a 600 dpi pixel-centre raster at 2 mm capitals.
    let alphabet: Vec<char> = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789"
        .chars()
        .collect();
    let draw = |t: &str| {
        rasterize(
            &text_shapes(t, Point::new(0.0, 0.0), 2.0, 0.26, false, 0.0),
            600.0,
            0.3,
        )
    };
    let alone: Vec<usize> = alphabet
        .iter()
        .map(|c| draw(&c.to_string()).dark_regions())
        .collect();
    let mut touching = Vec::new();
    for (i, a) in alphabet.iter().enumerate() {
        for (j, b) in alphabet.iter().enumerate() {
            let pair = format!("{a}{b}");
            if draw(&pair).dark_regions() != alone[i] + alone[j] {
                touching.push(pair);
            }
        }
    }
    assert!(touching.is_empty(), "letters touch in {touching:?}");
    // Control: with no advance between them ("rn" drawn on top of each other) they do touch.
    let mut overlapped = text_shapes("r", Point::new(0.0, 0.0), 2.0, 0.26, false, 0.0);
    overlapped.extend(text_shapes(
        "n",
        Point::new(0.5, 0.0),
        2.0,
        0.26,
        false,
        0.0,
    ));
    assert_eq!(rasterize(&overlapped, 600.0, 0.3).dark_regions(), 1);
}
