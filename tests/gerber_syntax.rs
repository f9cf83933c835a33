//! Syntax and file-level commands: coordinate formats (Gerber spec 2024.05 §4.2), units,
//! attributes (§5), deprecated forms (§8) and the leniency real files need. Expected
//! values are the spec's coordinate rules applied by hand.

mod gerber_util;
use gerber_util::*;
use umbra::gerber::Units;
use umbra::image::{Point, Shape};

fn first_center(text: &str) -> Point {
    let g = read_ok(text);
    match g.image.objects[0].shape {
        Shape::Disc { center, .. } => center,
        ref s => panic!("{s:?}"),
    }
}

#[test]
fn leading_and_trailing_zero_omission() {
    // Format 2.4: leading omission "15" = 0.0015; trailing omission "15" = 15.0000
    // (digits left aligned in 6 places, §4.2.2 and its deprecated T variant).
    let lead = first_center("%FSLAX24Y24*%%MOMM*%%ADD10C,1*%D10*X15Y-15D03*M02*");
    assert!(close(lead.x, 0.0015) && close(lead.y, -0.0015));
    let trail = first_center("%FSTAX24Y24*%%MOMM*%%ADD10C,1*%D10*X15Y-15D03*M02*");
    assert!(close(trail.x, 15.0) && close(trail.y, -15.0));
    // Leading zeros written although L says they are omitted (one CAD program does this).
    let both = first_center("%FSLAX24Y24*%%MOMM*%%ADD10C,1*%D10*X000150Y+000150D03*M02*");
    assert!(close(both.x, 0.015) && close(both.y, 0.015));
}

#[test]
fn format_without_zero_letter_and_several_commands_in_one_group() {
    // `%FSAX35Y35*MOIN*%`: no L/T letter (warned, leading assumed), two commands, one group.
    let g = read_ok("%FSAX35Y35*MOIN*%%ADD10C,.01*%D10*X00100000Y00200000D03*M02*");
    assert_eq!(g.units, Some(Units::Inches));
    assert!(warned(&g, "no zero omission letter"));
    let Shape::Disc { center, .. } = g.image.objects[0].shape else {
        panic!()
    };
    assert!(close(center.x, 25.4) && close(center.y, 50.8));
}

#[test]
fn incremental_coordinates() {
    // Deprecated incremental notation (§8.2): each coordinate adds to the previous point.
    let g = read_ok("%FSLIX24Y24*%%MOMM*%%ADD10C,1*%D10*X10000Y10000D03*X10000D03*Y-5000D03*M02*");
    let xs: Vec<Point> = g
        .image
        .objects
        .iter()
        .map(|o| match o.shape {
            Shape::Disc { center, .. } => center,
            _ => panic!(),
        })
        .collect();
    assert_eq!(
        xs,
        vec![
            Point::new(1.0, 1.0),
            Point::new(2.0, 1.0),
            Point::new(2.0, 0.5)
        ]
    );
    assert!(warned(&g, "incremental"));
}

#[test]
fn decimal_point_coordinates_are_read_with_a_warning() {
    let c = first_center("%FSLAX24Y24*%%MOMM*%%ADD10C,1*%D10*X1.5Y-2.25D03*M02*");
    assert_eq!(c, Point::new(1.5, -2.25));
}

#[test]
fn deprecated_units_codes() {
    let g = read_ok("%FSLAX24Y24*%G70*%ADD10C,1*%D10*X10000Y0D03*M02*");
    assert_eq!(g.units, Some(Units::Inches));
    assert!(warned(&g, "G70/G71"));
    let g = read_ok("%FSLAX24Y24*%G71*%ADD10C,1*%D10*X10000Y0D03*M02*");
    assert_eq!(g.units, Some(Units::Millimetres));
}

#[test]
fn line_endings_case_and_short_codes_do_not_change_the_image() {
    let canonical = "%FSLAX24Y24*%\n%MOMM*%\n%ADD10C,1*%\nD10*\nG01*\nX0Y0D02*\nX10000Y0D01*\nX20000Y0D03*\nM02*\n";
    let reference = read_ok(canonical).image.dump();
    let variants = [
        canonical.replace('\n', "\r\n"),
        canonical.replace('\n', "\r"),
        // Mixed CR and CRLF, as one CAD program writes.
        canonical.replacen('\n', "\r", 3).replace('\n', "\r\n"),
        // Several commands per line, lower case, short D codes, G54 prefix, G1.
        "%FSLAX24Y24*%%MOMM*%%ADD10C,1*%\ng54d10*g1*x0y0d2*X10000Y0D1*\nX20000Y0D3*M02*"
            .to_string(),
        // Everything on one line, no line breaks at all.
        canonical.replace('\n', ""),
        // The combined form G01X…D01 and G55 before a flash.
        "%FSLAX24Y24*%%MOMM*%%ADD10C,1*%G54D10*X0Y0D02*G01X10000Y0D01*G55X20000Y0D03*M02*"
            .to_string(),
    ];
    for v in &variants {
        assert_eq!(read_ok(v).image.dump(), reference, "variant {v:?}");
    }
}

#[test]
fn errors_point_at_the_right_place_with_mixed_line_endings() {
    // The bad word is on line 4 (counting a bare CR as a line break, like an editor).
    let e = read_err("%FSLAX24Y24*%\r%MOMM*%\r\n%ADD10C,1*%\nD10*X1Y1D01*Z9*");
    assert!(e.starts_with("test.gbr:4:13:"), "{e}");
}

#[test]
fn file_attributes_in_both_forms() {
    // Spec §5.2 (%TF) and §5.1 (the same attribute in a `G04 #@!` standard comment).
    let g = read_ok(
        "G04 #@! TF.FileFunction,Copper,L1,Top*\n%TF.FilePolarity,Negative*%\n%TA.AperFunction,SMDPad,CuDef*%\n%TO.N,GND*%\n%TD*%\n%FSLAX24Y24*%%MOMM*%M02*",
    );
    assert_eq!(g.attributes["FileFunction"], vec!["Copper", "L1", "Top"]);
    assert_eq!(g.attributes["FilePolarity"], vec!["Negative"]);
    assert_eq!(g.attributes.len(), 2); // TA/TO/TD are not file attributes
    assert!(g.warnings.is_empty(), "{:?}", g.warnings);
}

#[test]
fn image_and_layer_names() {
    let g = read_ok("%INboard_top*%%LN bottom copper *%%FSLAX24Y24*%%MOMM*%M02*");
    assert_eq!(g.image_name.as_deref(), Some("board_top"));
    assert_eq!(g.layer_names, vec!["bottom copper".to_string()]);
    assert!(warned(&g, "%LN is deprecated"));
}

#[test]
fn end_of_file_handling() {
    let g = read_ok("%FSLAX24Y24*%%MOMM*%");
    assert!(warned(&g, "no M02"));
    let g = read_ok("%FSLAX24Y24*%%MOMM*%M02*X1Y1D03*");
    assert!(warned(&g, "after M02"));
    assert!(g.image.objects.is_empty());
    // M00 (deprecated program stop) ends the file too; M01 does nothing.
    let g = read_ok("%FSLAX24Y24*%%MOMM*%M01*M00*");
    assert!(!warned(&g, "no M02"));
}

#[test]
fn unknown_codes() {
    let g = read_ok("%FSLAX24Y24*%%MOMM*%G05*%KO*%M02*");
    assert!(warned(&g, "G05"));
    assert!(warned(&g, "unknown extended command"));
    let e = read_err("%FSLAX24Y24*%%MOMM*%G11*");
    assert!(e.contains("G11") && e.contains("not supported"), "{e}");
    let e = read_err("%FSLAX24Y24*%%MOMM*%M30*");
    assert!(e.contains("M30"), "{e}");
}

#[test]
fn coordinates_need_format_and_units() {
    let e = read_err("%MOMM*%%ADD10C,1*%D10*\nX1Y1D03*");
    assert!(e.starts_with("test.gbr:2:1:") && e.contains("%FS"), "{e}");
    let e = read_err("%FSLAX24Y24*%%ADD10C,1*%D10*\nX1Y1D03*");
    assert!(e.starts_with("test.gbr:2:1:") && e.contains("%MO"), "{e}");
    // Apertures may come before %FS (two CAD programs write them so).
    let g = read_ok("%MOIN*%%ADD10C,0.1*%%FSLAX24Y24*%D10*X10000Y0D03*M02*");
    assert_eq!(g.image.objects.len(), 1);
}
