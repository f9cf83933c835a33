//! Visual check of the stroke font and marks (run by hand, writes PNGs to the temp folder):
//! `cargo test --test film_marks_preview -- --ignored`. Nothing is asserted beyond writing the
//! files; the pictures are for a person's eyes.

mod film_marks_support;

use film_marks_support::rasterize;
use umbra::film::{font, marks};
use umbra::image::{Bounds, Point, Shape};

fn write(name: &str, shapes: &[Shape], dpi: f64) {
    let path = std::env::temp_dir().join(name);
    rasterize(shapes, dpi, 1.0).write_png(&path);
    eprintln!("wrote {}", path.display());
}

#[test]
#[ignore = "writes preview images for a person to look at"]
fn preview_font_and_marks() {
    let rows = [
        "ABCDEFGHIJKLM",
        "NOPQRSTUVWXYZ",
        "abcdefghijklm",
        "nopqrstuvwxyz",
        "0123456789 O0 Il1",
        " .,:;-+_/\\()[]#%°µ×='\"!?<>&*|",
        "edge offset +10.0 µm asked",
    ];
    let mut big = Vec::new();
    let mut small = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        big.extend(font::text_shapes(
            r,
            Point::new(0.0, -(i as f64) * 16.0),
            10.0,
            1.3,
            false,
            0.0,
        ));
        small.extend(font::text_shapes(
            r,
            Point::new(0.0, -(i as f64) * 3.2),
            2.0,
            0.26,
            false,
            0.0,
        ));
    }
    write("umbra_font_big.png", &big, 100.0);
    write("umbra_font_2mm_600dpi.png", &small, 600.0);

    let board = Bounds {
        min_x: 0.0,
        min_y: 0.0,
        max_x: 40.0,
        max_y: 25.0,
    };
    let mut film = marks::frame_shapes(board, 0.2);
    for c in marks::registration_targets(board, 3.0, 6.0) {
        film.extend(marks::target_shapes(c, 6.0, 0.2));
    }
    film.extend(marks::stack_target_shapes(Point::new(20.0, 12.5), 6.0, 0.2));
    film.extend(marks::corner_marks(board, 3.0, 0.2));
    film.extend(marks::side_indicator_shapes(
        marks::BoardFace::Top,
        Point::new(2.0, 2.0),
        3.0,
        false,
    ));
    let lines = vec!["row 1 / col 2".to_string(), "of 2 × 3 tiles".to_string()];
    film.extend(marks::label_shapes(
        &lines,
        Point::new(2.0, 15.0),
        1.5,
        true,
    ));
    write("umbra_marks.png", &film, 300.0);

    let info = marks::LabelInfo {
        board: "Larkspur plant-sensor rev B".into(),
        layer: "copper bottom".into(),
        side: marks::BoardFace::Bottom,
        polarity: "black = copper".into(),
        mirrored: false,
        printed_side_toward_board: true,
        edge_offset_um_requested: 10.0,
        edge_offset_um_realized: 0.0,
        scale_x: 1.005,
        scale_y: 0.998,
        dpi_x: 600.0,
        dpi_y: 600.0,
        date: "2025-03-14".into(),
        copy: Some((1, 2)),
        tile: None,
    };
    let lines = marks::label_lines(&info);
    let mut label = marks::label_shapes(&lines, Point::new(0.0, 0.0), 2.0, false);
    label.extend(marks::label_shapes(
        &lines,
        Point::new(0.0, -26.0),
        2.0,
        info.mirrored_in_board(),
    ));
    label.extend(marks::side_indicator_shapes(
        marks::BoardFace::Bottom,
        Point::new(0.0, -34.0),
        4.0,
        true,
    ));
    write("umbra_label_600dpi.png", &label, 600.0);
}
