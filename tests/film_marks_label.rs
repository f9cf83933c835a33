//! The label, the side indicator, frame, cut marks and tile marks — above all which way the
//! label reads once the film has been mirrored on output and laid on the board.

use umbra::film::font::text_shapes;
use umbra::film::marks::{
    corner_marks, frame_shapes, label_lines, label_mirrored_in_board, label_shapes, label_size_mm,
    side_indicator_shapes, side_indicator_size_mm, BoardFace, LabelInfo,
};
use umbra::image::{Bounds, Point, Shape, Similarity};

fn info() -> LabelInfo {
    LabelInfo {
        board: "Larkspur plant-sensor rev B".into(),
        layer: "copper top".into(),
        side: BoardFace::Top,
        polarity: "black = copper".into(),
        mirrored: true,
        printed_side_toward_board: true,
        edge_offset_um_requested: 10.0,
        edge_offset_um_realized: 0.0,
        scale_x: 1.005,
        scale_y: 0.998,
        dpi_x: 1200.0,
        dpi_y: 600.0,
        date: "2025-03-14".into(),
        copy: Some((1, 2)),
        tile: Some((1, 2)),
    }
}

/// The film stage's output mirror (x → −x), applied as it will be: to the film's shapes in
/// board coordinates (docs/architecture.md, "plan … mirror").
fn output_mirror(shapes: &[Shape], film_mirrored: bool) -> Vec<Shape> {
    let t = Similarity {
        mirror_x: film_mirrored,
        ..Similarity::IDENTITY
    };
    shapes.iter().map(|s| s.transformed(&t)).collect()
}

fn mid_x(shapes: &[Shape]) -> f64 {
    let xs: Vec<f64> = shapes
        .iter()
        .flat_map(|s| match s {
            Shape::Stroke { start, end, .. } => vec![start.x, end.x],
            _ => vec![],
        })
        .collect();
    xs.iter().sum::<f64>() / xs.len() as f64
}

/// Whether a one-line label reading "Fab" reads normally in `shapes` (seen from the side the
/// coordinates are given in): the first glyph must be left of the rest, and the F's stem left of
/// its arms. Both must agree, or the picture is neither normal nor simply mirrored.
fn reads_normally(shapes: &[Shape]) -> bool {
    let f_strokes = text_shapes("F", Point::new(0.0, 0.0), 3.0, 0.3, false, 0.0).len();
    let (f, rest) = shapes.split_at(f_strokes);
    let first_glyph_left = mid_x(f) < mid_x(rest);
    let stem_x = f
        .iter()
        .find_map(|s| match s {
            Shape::Stroke { start, end, .. } if (start.x - end.x).abs() < 1e-9 => Some(start.x),
            _ => None,
        })
        .expect("F has a vertical stem");
    let stem_left = stem_x < mid_x(f);
    assert_eq!(
        first_glyph_left, stem_left,
        "text order and glyph shape disagree"
    );
    first_glyph_left
}

/// What a person sees: the printed side (printed side away from the board) or through the back
/// of the film (printed side toward the board), which mirrors the sheet once more.
fn as_seen_on_the_board(sheet: &[Shape], printed_side_toward_board: bool) -> Vec<Shape> {
    output_mirror(sheet, printed_side_toward_board)
}

#[test]
fn the_label_reads_correctly_when_the_film_is_placed_correctly() {
    // TRADE.md, "Labels": "The label reads correctly when the film is placed correctly (printed
    // side toward the board, viewed from the back of the film)". TRADE.md, "Mirroring": top
    // films are mirrored when the printed side goes toward the board, bottom films when it
    // goes away from it.
    let lines = vec!["Fab".to_string()];
    let cases = [
        // (layer, printed side toward board, film mirrored on output)
        ("top", true, true),
        ("bottom", true, false),
        ("top", false, false),
        ("bottom", false, true),
    ];
    for (layer, toward, film_mirrored) in cases {
        let mirrored = label_mirrored_in_board(film_mirrored, toward);
        let board = label_shapes(&lines, Point::new(5.0, 5.0), 3.0, mirrored);
        let sheet = output_mirror(&board, film_mirrored);
        // On the printed sheet, seen from its printed side, the label is mirrored exactly when
        // the printed side goes toward the board (it is then read through the film).
        assert_eq!(
            reads_normally(&sheet),
            !toward,
            "{layer} film, toward board = {toward}: sheet"
        );
        // Laid on the board as the process says, it reads normally.
        assert!(
            reads_normally(&as_seen_on_the_board(&sheet, toward)),
            "{layer} film, toward = {toward}"
        );
        // And the wrong way round it reads backwards: that is the point of the label.
        assert!(!reads_normally(&as_seen_on_the_board(&sheet, !toward)));
    }
    // With the default placement (printed side toward the board) the top film is the mirrored
    // one, and its label is composed unmirrored in board coordinates and comes out mirrored on
    // the sheet.
    assert!(!label_mirrored_in_board(true, true));
    let top_sheet = output_mirror(
        &label_shapes(&lines, Point::new(0.0, 0.0), 3.0, false),
        true,
    );
    assert!(!reads_normally(&top_sheet));
    let i = info();
    assert_eq!(
        i.mirrored_in_board(),
        label_mirrored_in_board(i.mirrored, i.printed_side_toward_board)
    );
}

#[test]
fn label_lines_say_everything_the_trade_rules_ask_for() {
    // TRADE.md, "Labels": board name, layer, side, polarity, mirrored or not, edge offset,
    // scale correction, resolution, date.
    let lines = label_lines(&info());
    let all = lines.join("\n");
    for needle in [
        "Larkspur plant-sensor rev B",
        "copper top, top side",
        "black = copper",
        "image mirrored, printed side toward board",
        "edge offset +10.0 µm requested, +0.0 µm realized",
        "scale x 1.0050 y 0.9980",
        "1200 × 600 dpi",
        "2025-03-14",
        "copy 1/2",
        "tile row 1 / col 2",
    ] {
        assert!(all.contains(needle), "label lacks {needle:?}:\n{all}");
    }
    let mut plain = info();
    plain.mirrored = false;
    plain.printed_side_toward_board = false;
    plain.side = BoardFace::Bottom;
    plain.dpi_y = 1200.0;
    plain.copy = None;
    plain.tile = None;
    plain.edge_offset_um_requested = -0.04;
    let all = label_lines(&plain).join("\n");
    assert!(all.contains("image as drawn, printed side away from board"));
    assert!(all.contains("bottom side") && all.contains("1200 dpi") && !all.contains("copy"));
    assert!(all.contains("+0.0 µm requested"), "no negative zero: {all}");
}

#[test]
fn label_block_stays_in_its_box_either_way() {
    let lines = label_lines(&info());
    let cap = 2.0;
    let (w, h) = label_size_mm(&lines, cap);
    let anchor = Point::new(-30.0, 12.0);
    let pen = 0.13 * cap;
    for mirrored in [false, true] {
        let shapes = label_shapes(&lines, anchor, cap, mirrored);
        assert!(!shapes.is_empty());
        let mut b = Bounds::EMPTY;
        for s in &shapes {
            b.union(&s.bounds());
        }
        let allowed = Bounds {
            min_x: anchor.x,
            min_y: anchor.y,
            max_x: anchor.x + w,
            max_y: anchor.y + h,
        }
        .grown(pen / 2.0 + 1e-9);
        assert!(
            allowed.contains(&b),
            "mirrored={mirrored}: {b:?} not in {allowed:?}"
        );
        // The block fills its box: the widest line touches both sides within a glyph's bearing.
        assert!(b.width() > 0.8 * w && b.height() > 0.8 * h);
    }
    // The two are reflections of each other about the box's vertical centre line.
    let centre = anchor.x + w / 2.0;
    let flip = Similarity {
        mirror_x: true,
        offset: Point::new(2.0 * centre, 0.0),
        ..Similarity::IDENTITY
    };
    let a = label_shapes(&lines, anchor, cap, false);
    let m = label_shapes(&lines, anchor, cap, true);
    assert_eq!(a.len(), m.len());
    for (x, y) in a.iter().zip(&m) {
        let (
            Shape::Stroke {
                start: s1, end: e1, ..
            },
            Shape::Stroke {
                start: s2, end: e2, ..
            },
        ) = (x.transformed(&flip), y)
        else {
            panic!("strokes expected");
        };
        // Lines are left-aligned as read, so only the widest line maps exactly; compare y and
        // stroke direction for all, x for none (alignment differs per line).
        assert!((s1.y - s2.y).abs() < 1e-9 && (e1.y - e2.y).abs() < 1e-9);
        assert!(((e1.x - s1.x) - (e2.x - s2.x)).abs() < 1e-9);
    }
}

#[test]
fn side_indicator_shows_a_reversed_f_when_flipped() {
    let cap = 5.0;
    let anchor = Point::new(0.0, 0.0);
    let (w, h) = side_indicator_size_mm(BoardFace::Bottom, cap);
    for mirrored in [false, true] {
        let shapes = side_indicator_shapes(BoardFace::Bottom, anchor, cap, mirrored);
        let mut b = Bounds::EMPTY;
        for s in &shapes {
            b.union(&s.bounds());
        }
        let pen = 0.13 * cap;
        let allowed = Bounds {
            min_x: 0.0,
            min_y: 0.0,
            max_x: w,
            max_y: h,
        }
        .grown(pen / 2.0 + 1e-9);
        assert!(allowed.contains(&b), "{b:?}");
        // The word comes first as read: unmirrored "BOT" starts at the left, mirrored at the
        // right; the F box is at the other end.
        let word_strokes = text_shapes("BOT", anchor, cap, pen, false, 0.0).len();
        let word_mid = mid_x(&shapes[..word_strokes]);
        assert_eq!(word_mid < w / 2.0, !mirrored);
    }
    assert!(side_indicator_shapes(BoardFace::Top, anchor, f64::NAN, false).is_empty());
}

#[test]
fn frame_and_cut_marks() {
    let b = Bounds {
        min_x: 0.0,
        min_y: 0.0,
        max_x: 80.0,
        max_y: 50.0,
    };
    let frame = frame_shapes(b, 0.2);
    assert_eq!(frame.len(), 4);
    let mut fb = Bounds::EMPTY;
    for s in &frame {
        fb.union(&s.bounds());
    }
    assert_eq!(fb, b.grown(0.1)); // pen centred on the edges
    let marks = corner_marks(b, 4.0, 0.3);
    assert_eq!(marks.len(), 8); // two arms per corner
    for s in &marks {
        let sb = s.bounds();
        // No ink inside the film area: each arm's box overlaps the film's interior in zero area.
        let overlap_w = (sb.max_x.min(b.max_x) - sb.min_x.max(b.min_x)).max(0.0);
        let overlap_h = (sb.max_y.min(b.max_y) - sb.min_y.max(b.min_y)).max(0.0);
        assert!(overlap_w * overlap_h < 1e-12, "{sb:?}");
        // And each arm touches an edge line of the film (its inner edge lies on it).
        let on_edge = [
            sb.min_x - b.max_x,
            b.min_x - sb.max_x,
            sb.min_y - b.max_y,
            b.min_y - sb.max_y,
        ]
        .iter()
        .any(|d| d.abs() < 1e-9);
        assert!(on_edge, "{sb:?}");
    }
}
