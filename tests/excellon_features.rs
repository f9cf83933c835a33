//! Excellon reader features, one test per feature, with expected values worked by hand.
//!
//! Source of the format rules: IPC-NC-349 and the Excellon format description (from
//! memory; see docs/excellon-support.md). 1 in = 25.4 mm exactly (international inch).
//! Where a rule is only common practice of EDA writers, the test says so.

use umbra::excellon::{self, DrillFile, FormatHint, Units, Zeros};
use umbra::image::Point;
use umbra::limits::Limits;

fn read(text: &str) -> DrillFile {
    excellon::read(text, "test.drl", &Limits::default()).unwrap_or_else(|e| panic!("{e}"))
}

fn read_err(text: &str) -> String {
    match excellon::read(text, "test.drl", &Limits::default()) {
        Ok(d) => panic!("expected an error, got {} holes", d.holes.len()),
        Err(e) => e.to_string(),
    }
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() < 1e-9
}

fn assert_point(p: Point, x: f64, y: f64) {
    assert!(
        close(p.x, x) && close(p.y, y),
        "got ({}, {}), want ({x}, {y})",
        p.x,
        p.y
    );
}

fn holes(d: &DrillFile) -> Vec<Point> {
    d.holes.iter().map(|h| h.at).collect()
}

#[test]
fn metric_tz_with_format_aligns_digits_from_the_right() {
    // METRIC,TZ,000.000: trailing zeros kept, 3 decimals. X10416 = 10416 / 10^3 = 10.416 mm.
    let d = read("M48\nMETRIC,TZ,000.000\nT1C0.650\n%\nT1\nX10416Y2386\nM30\n");
    assert_point(d.holes[0].at, 10.416, 2.386);
    assert_eq!(d.units, Some(Units::Millimetres));
    assert!(!d.inches);
    assert!(d.warnings.is_empty(), "{:?}", d.warnings);
}

#[test]
fn inch_lz_aligns_digits_from_the_left() {
    // INCH,LZ with 2.4: leading zeros kept, so "0302" = 03.02 in = 3.02 × 25.4 = 76.708 mm;
    // "0301" = 3.01 in = 76.454 mm; "028" = 02.8 in = 71.12 mm.
    let d =
        read("M48\n;FILE_FORMAT=2:4\nINCH,LZ\nT1F00S00C0.0300\n%\nT01\nX0302Y0301\nX028\nM30\n");
    assert_point(d.holes[0].at, 76.708, 76.454);
    assert_point(d.holes[1].at, 71.12, 76.454);
    // T1F00S00C0.0300: feed and speed are ignored, C is the size: 0.03 in = 0.762 mm.
    assert!(close(d.tools[0].diameter_mm, 0.762));
    assert!(d.inches);
}

#[test]
fn inch_tz_aligns_digits_from_the_right() {
    // INCH,TZ with 2.4: "0302" = 302 / 10^4 = 0.0302 in = 0.76708 mm.
    let d = read("M48\nINCH,TZ,00.0000\nT1C0.0300\n%\nT1\nX0302Y10000\nM30\n");
    assert_point(d.holes[0].at, 0.76708, 25.4);
}

#[test]
fn decimal_point_overrides_zero_suppression_and_signs_are_read() {
    // With a decimal point the number is read as written, whatever LZ/TZ say.
    let d = read("M48\nMETRIC,LZ,000.000\nT1C1.0\n%\nT1\nX1.5Y-2.\nX+12Y-.25\nM30\n");
    assert_point(d.holes[0].at, 1.5, -2.0);
    // "+12" without a point under LZ 3.3 is left-aligned in 3 integer digits: "12" = 120
    // (12 / 10^(2 − 3)) = 120 mm.
    assert_point(d.holes[1].at, 120.0, -0.25);
}

#[test]
fn plus_signs_in_fixed_width_inch_coordinates() {
    // INCH, no zeros keyword, every number 6 digits with leading zeros: read as 2.4
    // (from memory: the inch default). +008074 = 00.8074 in = 20.50796 mm.
    let d = read("M48\nINCH\nT01C0.0118\n%\nT01\nX+008074Y-007523\nM30\n");
    assert_point(d.holes[0].at, 20.50796, -19.10842);
    // The format was not stated, so it was inferred with a warning.
    assert_eq!(d.warnings.len(), 1, "{:?}", d.warnings);
    let f = d.format.unwrap();
    assert_eq!((f.integer_digits, f.decimal_digits), (2, 4));
}

#[test]
fn unstated_format_with_suppressed_leading_zeros_reads_as_tz_2_4() {
    // M72 only; numbers vary in length and never start with 0: leading zeros suppressed,
    // digits align from the right with 4 decimals (inch default 2.4, from memory).
    // X4219 = 0.4219 in = 10.71626 mm; Y22355 = 2.2355 in = 56.7817 mm.
    let d = read("%\nM48\nM72\nT01C0.0197\n%\nT01\nX4219Y22355\nM30\n");
    assert_point(d.holes[0].at, 10.71626, 56.7817);
    assert_eq!(d.format.unwrap().zeros, Zeros::TrailingKept);
    assert!(close(d.tools[0].diameter_mm, 0.50038)); // 0.0197 × 25.4
}

#[test]
fn unstated_metric_fixed_width_eight_digits_reads_as_3_5() {
    // 8-digit metric numbers with leading zeros: 3 integer digits (metric default).
    // X19354800 = 193.54800 mm; R02Y00200000: two more holes 2.000 mm apart in Y.
    let d = read("M48\nMETRIC\nT01C.8001\n%\nG90\nT01\nX19354800Y17751400\nR02Y00200000\nM30\n");
    let h = holes(&d);
    assert_eq!(h.len(), 3);
    assert_point(h[0], 193.548, 177.514);
    assert_point(h[1], 193.548, 179.514);
    assert_point(h[2], 193.548, 181.514);
}

#[test]
fn format_hint_from_an_nc_parameter_file() {
    let info = "INTEGER-PLACES         3\nDECIMAL-PLACES         5\nOUTPUT-UNITS           ENGLISH\nSUPPRESS-LEAD-ZEROES   NO\nSUPPRESS-TRAIL-ZEROES  NO\n";
    let hint = FormatHint::from_info_file(info).unwrap();
    assert_eq!(hint.units, Some(Units::Inches));
    assert_eq!(
        (hint.integer_digits, hint.decimal_digits),
        (Some(3), Some(5))
    );
    assert_eq!(hint.zeros, Some(Zeros::LeadingKept));
    // With the hint, a file without INCH/METRIC is readable: "00119000" = 001.19 in
    // = 30.226 mm, and no format warning is given.
    let text = "M48\nT01C.013\n%\nT01\nX00119000Y00058000\nM30\n";
    let d = excellon::read_with_format_hint(text, "t.drl", &Limits::default(), &hint).unwrap();
    assert_point(d.holes[0].at, 30.226, 14.732);
    assert!(d.warnings.is_empty(), "{:?}", d.warnings);
    // Without it the units are unknown, which would be a guess: an error.
    assert!(read_err(text).contains("units"));
    // EAGLE's drill station info file states "coordinate format 2.4 inch".
    let dri = FormatHint::from_info_file(
        " Device            : Excellon drill station, coordinate format 2.4 inch\n",
    )
    .unwrap();
    assert_eq!(
        (dri.integer_digits, dri.decimal_digits, dri.units),
        (Some(2), Some(4), Some(Units::Inches))
    );
    assert!(FormatHint::from_info_file("nothing here").is_none());
}

#[test]
fn kicad_format_comment_states_units_and_zeros() {
    // ;FORMAT={3:3/ absolute / metric / suppress trailing zeros}: LZ 3.3 metric.
    // Left-aligned in 3 integer digits: "012" = 012 = 12 mm; "0015" = 001.5 = 1.5 mm.
    let d = read("M48\n;FORMAT={3:3/ absolute / metric / suppress trailing zeros}\nT1C0.8\n%\nT1\nX012Y0015\nM30\n");
    assert_point(d.holes[0].at, 12.0, 1.5);
}

#[test]
fn modal_coordinates_keep_the_missing_axis() {
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y2.0\nX3.0\nY4.0\nM30\n");
    let h = holes(&d);
    assert_point(h[0], 1.0, 2.0);
    assert_point(h[1], 3.0, 2.0);
    assert_point(h[2], 3.0, 4.0);
}

#[test]
fn repeat_code_steps_from_the_last_hole() {
    // R3X0.5: three more holes, each 0.5 further in X: 1.5, 2.0, 2.5.
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nR3X0.5\nX9.0\nM30\n");
    let h = holes(&d);
    assert_eq!(h.len(), 5);
    assert_point(h[3], 2.5, 1.0);
    // The position after the repeat is the last repeated hole; X9.0 keeps Y = 1.0.
    assert_point(h[4], 9.0, 1.0);
}

#[test]
fn incremental_mode_adds_to_the_last_position() {
    // G91: X1Y1 from the origin, then +1,+1 → (1,1), (2,2); G90 back to absolute.
    let d = read("M48\nMETRIC\nT1C1.0\n%\nG91\nT1\nX1.0Y1.0\nX1.0Y1.0\nG90\nX5.0Y5.0\nM30\n");
    let h = holes(&d);
    assert_point(h[1], 2.0, 2.0);
    assert_point(h[2], 5.0, 5.0);
    // ICI,ON in the header means the same.
    let d = read("M48\nICI,ON\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nX1.0\nM30\n");
    assert_point(d.holes[1].at, 2.0, 1.0);
}

#[test]
fn g85_slot_and_zero_length_slot() {
    let d = read("M48\nMETRIC\nT1C0.6\n%\nG05\nT1\nX1.0Y1.0G85X3.0Y1.0\nG05\nX5.0Y5.0\nX7.0Y7.0G85X7.0Y7.0\nM30\n");
    assert_eq!(d.slots.len(), 1);
    assert_eq!(
        d.slots[0].path,
        vec![Point::new(1.0, 1.0), Point::new(3.0, 1.0)]
    );
    // A zero-length slot is a plain hole of the tool.
    assert_eq!(holes(&d), vec![Point::new(5.0, 5.0), Point::new(7.0, 7.0)]);
    // G85 end with only X keeps the start's Y.
    let d = read("M48\nMETRIC\nT1C0.6\n%\nT1\nX1.0Y2.0G85X4.0\nM30\n");
    assert_eq!(
        d.slots[0].path,
        vec![Point::new(1.0, 2.0), Point::new(4.0, 2.0)]
    );
}

#[test]
fn routed_path_g00_m15_g01_m16() {
    // Modal coordinates inside the route: G01Y5 keeps X = 10.
    let d = read("M48\nMETRIC,LZ\n;FILE_FORMAT=4:4\nT03F00S00C0.8000\n%\nG90\nT03\nG00X0089452Y0091588\nM15\nG01Y0090388\nX0092552\nM16\nM17\nM30\n");
    assert_eq!(d.slots.len(), 1);
    let p = &d.slots[0].path;
    // LZ 4.4: "0089452" = 0089.452 = 89.452 mm; "0092552" = 92.552 mm.
    assert_eq!(p.len(), 3);
    assert_point(p[0], 89.452, 91.588);
    assert_point(p[1], 89.452, 90.388);
    assert_point(p[2], 92.552, 90.388);
    assert!(d.holes.is_empty());
}

#[test]
fn routed_arc_with_radius_is_flattened_within_one_micrometre() {
    // G03 (counter-clockwise) from (5,0) to (0,5) with A5: quarter circle about (0,0).
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nG00X5.0Y0.0\nM15\nG03X0.0Y5.0A5.0\nM16\nM30\n");
    let p = &d.slots[0].path;
    assert_point(p[0], 5.0, 0.0);
    assert_point(*p.last().unwrap(), 0.0, 5.0);
    // Chord count from the sagitta formula: a chord of angle θ is r(1 − cos(θ/2)) from the
    // arc, so θ = 2 acos(1 − 0.001/5) and n = ceil((π/2) / θ).
    let theta = 2.0 * (1.0 - 0.001_f64 / 5.0).acos();
    let n = ((std::f64::consts::FRAC_PI_2) / theta).ceil() as usize;
    assert_eq!(p.len(), n + 1);
    for w in p.windows(2) {
        assert!((w[1].dist(Point::new(0.0, 0.0)) - 5.0).abs() < 1e-9);
        // Counter-clockwise: the angle grows.
        assert!(w[1].y.atan2(w[1].x) > w[0].y.atan2(w[0].x));
        let mid = Point::new((w[0].x + w[1].x) / 2.0, (w[0].y + w[1].y) / 2.0);
        assert!(5.0 - mid.dist(Point::new(0.0, 0.0)) <= 0.001 + 1e-12);
    }
}

#[test]
fn routed_arc_with_centre_offsets() {
    // G02 (clockwise) from (0,0) to (10,0), centre at start + (I5, J0) = (5,0): with y up,
    // clockwise from the left end passes over the top, through (5,5).
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nG00X0.0Y0.0\nM15\nG02X10.0Y0.0I5.0J0.0\nM16\nM30\n");
    let p = &d.slots[0].path;
    let top = p.iter().map(|q| q.y).fold(f64::MIN, f64::max);
    assert!((top - 5.0).abs() < 0.001, "{top}");
    assert!(p.iter().all(|q| q.y >= -1e-9));
}

#[test]
fn plating_from_attributes_type_comments_and_notes() {
    let d = read("M48\n; #@! TF.FileFunction,MixedPlating,1,2\nMETRIC\n; #@! TA.AperFunction,Plated,PTH,ViaDrill\nT1C0.3\n; #@! TA.AperFunction,NonPlated,NPTH,ComponentDrill\nT2C3.0\n%\nT1\nX1.0Y1.0\nT2\nX2.0Y2.0\nM30\n");
    assert_eq!(d.tools[0].plated, Some(true));
    assert_eq!(d.tools[1].plated, Some(false));
    assert_eq!(d.plated, None); // mixed
    let d = read(
        ";TYPE=PLATED\nM48\nMETRIC,LZ\nT01C0.3\n;TYPE=NON_PLATED\nT02C1.1\n%\nT01\nX1.0Y1.0\nM30\n",
    );
    assert_eq!(
        (d.tools[0].plated, d.tools[1].plated),
        (Some(true), Some(false))
    );
    let d = read(
        "M48\n; #@! TF.FileFunction,NonPlated,1,2,NPTH\nMETRIC\nT1C2.7\n%\nT1\nX1.0Y1.0\nM30\n",
    );
    assert_eq!((d.plated, d.tools[0].plated), (Some(false), Some(false)));
    // Allegro states plating per tool in comments after the table.
    let d = read("M48\nINCH\nT01C.013\nT12C.12795\n;T01 Holesize 1. = 13.0 Tolerance = +0/-0 PLATED MILS Quantity = 1\n;T12 Holesize 12. = 127.95 Tolerance = +0/-0 NON_PLATED MILS Quantity = 1\n%\nT01\nX1.0Y1.0\nM30\n");
    assert_eq!(
        (d.tools[0].plated, d.tools[1].plated),
        (Some(true), Some(false))
    );
}

#[test]
fn tool_numbers_over_99_and_descending_tables() {
    let d = read("M48\nMETRIC,TZ\nT3C0.300\nT2C0.991\nT100C2.375\n%\nT100\nX1.0Y1.0\nT3\nX2.0Y2.0\nT2\nX3.0Y3.0\nT0\nM30\n");
    let dia: Vec<f64> = d
        .holes
        .iter()
        .map(|h| d.tools[h.tool].diameter_mm)
        .collect();
    assert_eq!(dia, vec![2.375, 0.3, 0.991]);
    assert_eq!(d.tools[d.holes[0].tool].number, 100);
}

#[test]
fn tool_with_offset_digits_falls_back_to_the_tool() {
    // T0101 = tool 01 with offset 01 (from memory); a warning says so.
    let d = read("M48\nMETRIC\nT01C0.8\n%\nT0101\nX1.0Y1.0\nM30\n");
    assert!(close(d.tools[d.holes[0].tool].diameter_mm, 0.8));
    assert!(d.warnings.iter().any(|w| w.message.contains("offset")));
}

#[test]
fn undefined_tool_and_unloaded_tool_are_errors_with_positions() {
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT2\nX1.0Y1.0\nM30\n");
    assert!(e.starts_with("test.drl:6:1:"), "{e}");
    assert!(e.contains("T02"), "{e}");
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nT0\nX2.0Y2.0\nM30\n");
    assert!(
        e.starts_with("test.drl:8:1:") && e.contains("no T code"),
        "{e}"
    );
}

#[test]
fn units_switch_with_m71_m72() {
    // M72 inch: T1C0.0394 = 1.00076 mm; after M71 (metric) coordinates are mm.
    let d = read("M48\nM72\nT1C0.0394\n%\nT1\nX1.0Y1.0\nM71\nX1.0Y1.0\nM30\n");
    assert!(close(d.tools[0].diameter_mm, 1.00076));
    assert_point(d.holes[0].at, 25.4, 25.4);
    assert_point(d.holes[1].at, 1.0, 1.0);
}

#[test]
fn lenient_on_case_line_ends_whitespace_and_harmless_codes() {
    let d = read("m48\r\nmetric , tz\rVER,1\nFMAT,2\nDETECT,ON\nATC,ON\r\nt1c1.0\n%\n g90 \nt1\n x1.0 y2.0 \nM06\nm30\n");
    assert_point(d.holes[0].at, 1.0, 2.0);
    assert!(d.warnings.is_empty(), "{:?}", d.warnings);
    // Unknown codes that cannot move holes: warnings, reading goes on.
    let d = read("M48\nMETRIC\nFOO,1\nT1C1.0\n%\nT1\nG99\nX1.0Y1.0\nM30\n");
    assert_eq!(d.holes.len(), 1);
    assert_eq!(d.warnings.len(), 2, "{:?}", d.warnings);
}

#[test]
fn missing_end_is_a_warning_and_text_after_end_is_ignored() {
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\n");
    assert!(d.warnings.iter().any(|w| w.message.contains("no end code")));
    let d = read("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nM30\nX2.0Y2.0\n");
    assert_eq!(d.holes.len(), 1);
    assert!(d
        .warnings
        .iter()
        .any(|w| w.message.contains("after the end")));
}

#[test]
fn geometry_changing_guesses_are_errors() {
    // Coordinates before units.
    let e = read_err("M48\nT1C1.0\n%\nT1\nX1.0Y1.0\nM30\n");
    assert!(e.starts_with("test.drl:5:1:") && e.contains("units"), "{e}");
    // A canned cycle umbra does not draw.
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0G84X2.0\nM30\n");
    assert!(e.contains("G84") && e.starts_with("test.drl:6:9:"), "{e}");
    // The first hole without Y.
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0\nM30\n");
    assert!(e.contains("Y is missing"), "{e}");
    // A bad number names its column.
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1..0\nM30\n");
    assert!(e.starts_with("test.drl:6:5:"), "{e}");
    // An arc radius too short for its chord.
    let e = read_err("M48\nMETRIC\nT1C1.0\n%\nT1\nG00X0.0Y0.0\nM15\nG02X10.0Y0.0A1.0\nM30\n");
    assert!(e.contains("radius"), "{e}");
}

#[test]
fn limits_cap_repeats_and_objects() {
    let limits = Limits {
        max_step_repeat: 10,
        ..Limits::default()
    };
    let text = "M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nR11X0.1\nM30\n";
    let e = excellon::read(text, "t.drl", &limits).unwrap_err();
    assert!(e.message.contains("max_step_repeat"), "{e}");
    let limits = Limits {
        max_objects: 3,
        ..Limits::default()
    };
    let text = "M48\nMETRIC\nT1C1.0\n%\nT1\nX1.0Y1.0\nX2.0\nX3.0\nX4.0\nM30\n";
    let e = excellon::read(text, "t.drl", &limits).unwrap_err();
    assert!(e.message.contains("max_objects") && e.pos.line == 9, "{e}");
}

#[test]
fn header_ends_with_m95_and_comments_come_before_m48() {
    let d = read("; made by the Larkspur Community Workshop\n%\nM48\nMETRIC\nT1C1.0\nM95\nT1\nX1.0Y1.0\nM30\n");
    assert_eq!(d.holes.len(), 1);
    assert!(d.warnings.is_empty(), "{:?}", d.warnings);
}

#[test]
fn detection_tells_drill_from_gerber() {
    assert!(excellon::looks_like_drill("M48\nINCH,LZ\nT1C0.03\n%\n"));
    assert!(excellon::looks_like_drill(
        ";TYPE=PLATED\n;Layer: PTH\nM48\nMETRIC,LZ,0000.00000\n"
    ));
    assert!(!excellon::looks_like_drill(
        "G04 Larkspur test*\n%FSLAX46Y46*%\n%MOMM*%\n%ADD10C,0.250000*%\nD10*\nX0Y0D03*\nM02*\n"
    ));
}
