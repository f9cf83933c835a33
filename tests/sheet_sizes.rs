//! Sheet sizes, their names, their size in PDF points, and the printable area.

use umbra::sheet::{iso_216, Margins, Orientation, SheetSize, SheetSpec};

/// Equal within `tol`, with a readable failure.
fn close(actual: f64, expected: f64, tol: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tol,
        "{what}: got {actual}, expected {expected} (± {tol})"
    );
}

fn size(name: &str) -> SheetSize {
    name.parse()
        .unwrap_or_else(|e| panic!("{name} should parse: {e}"))
}

#[test]
fn iso_216_a_series_matches_published_table() {
    // The A-series table of ISO 216 (published values, from memory): width × height in mm,
    // portrait.
    let table = [
        ("A0", 841.0, 1189.0),
        ("A1", 594.0, 841.0),
        ("A2", 420.0, 594.0),
        ("A3", 297.0, 420.0),
        ("A4", 210.0, 297.0),
        ("A5", 148.0, 210.0),
        ("A6", 105.0, 148.0),
    ];
    for (name, w, h) in table {
        let s = size(name);
        assert_eq!((s.width_mm, s.height_mm), (w, h), "{name}");
        assert_eq!(s.name, name);
    }
}

#[test]
fn iso_216_b_series_matches_published_table() {
    // ISO 216 B-series table (from memory): B4 250 × 353 mm, B5 176 × 250 mm.
    assert_eq!(iso_216((1000, 1414), 4), (250, 353));
    let b5 = size("B5");
    assert_eq!((b5.width_mm, b5.height_mm), (176.0, 250.0));
    let b4 = size("b4");
    assert_eq!((b4.width_mm, b4.height_mm), (250.0, 353.0));
}

#[test]
fn iso_216_halving_rounds_down() {
    // ISO 216: A(n+1)'s long side is A(n)'s short side, its short side half of A(n)'s long
    // side rounded down: A4 297 / 2 = 148.5 → A5 148 (published A5: 148 × 210).
    assert_eq!(iso_216((841, 1189), 5), (148, 210));
    // A0 1189 / 2 = 594.5 → A1 594 (published A1: 594 × 841).
    assert_eq!(iso_216((841, 1189), 1), (594, 841));
}

#[test]
fn us_sizes_in_mm() {
    // ANSI/ASME Y14.1: Letter (size A) 8.5 × 11 in, Tabloid (size B) 11 × 17 in; Legal
    // 8.5 × 14 in (common US size, from memory);
    // 1 in = 25.4 mm exactly (international inch of 1959).
    for (name, w, h) in [
        ("Letter", 215.9, 279.4),
        ("Legal", 215.9, 355.6),
        ("Tabloid", 279.4, 431.8),
    ] {
        let s = size(name);
        close(s.width_mm, w, 1e-9, name);
        close(s.height_mm, h, 1e-9, name);
        assert_eq!(s.name, name);
    }
}

#[test]
fn sizes_in_pdf_points() {
    // PDF default user space unit = 1/72 in (ISO 32000-1 §8.3.2.1).
    // A4 = 210/25.4·72 × 297/25.4·72 = 595.2756 × 841.8898 pt (4 decimals).
    let a4 = size("A4");
    close(a4.width_pt(), 595.2756, 5e-5, "A4 width pt");
    close(a4.height_pt(), 841.8898, 5e-5, "A4 height pt");
    // Letter 8.5 × 11 in = 612 × 792 pt; Legal 8.5 × 14 in = 612 × 1008 pt.
    let letter = size("letter");
    close(letter.width_pt(), 612.0, 1e-9, "Letter width pt");
    close(letter.height_pt(), 792.0, 1e-9, "Letter height pt");
    let legal = size("legal");
    close(legal.width_pt(), 612.0, 1e-9, "Legal width pt");
    close(legal.height_pt(), 1008.0, 1e-9, "Legal height pt");
    // Tabloid 11 × 17 in = 792 × 1224 pt.
    let tabloid = size("tabloid");
    close(tabloid.width_pt(), 792.0, 1e-9, "Tabloid width pt");
    close(tabloid.height_pt(), 1224.0, 1e-9, "Tabloid height pt");
}

#[test]
fn names_parse_case_insensitively() {
    for (text, canonical) in [
        ("a4", "A4"),
        ("A4", "A4"),
        (" A3 ", "A3"),
        ("letter", "Letter"),
        ("LETTER", "Letter"),
        ("us-letter", "Letter"),
        ("US-Letter", "Letter"),
        ("legal", "Legal"),
        ("us-legal", "Legal"),
        ("Tabloid", "Tabloid"),
    ] {
        assert_eq!(size(text).name, canonical, "{text}");
    }
}

#[test]
fn custom_sizes_in_mm_and_inches() {
    let s = size("300x450mm");
    assert_eq!((s.width_mm, s.height_mm), (300.0, 450.0));
    assert_eq!(s.to_string(), "300x450mm");
    // 8.5 in × 25.4 = 215.9 mm, 11 in × 25.4 = 279.4 mm: the same paper as Letter.
    let s = size("8.5x11in");
    close(s.width_mm, 215.9, 1e-9, "8.5 in");
    close(s.height_mm, 279.4, 1e-9, "11 in");
    close(s.width_pt(), 612.0, 1e-9, "8.5 in in pt");
    let s = size("8.5 X 11 IN");
    assert_eq!(s.name, "8.5x11in");
    let s = size("210.5×297mm");
    assert_eq!((s.width_mm, s.height_mm), (210.5, 297.0));
    // Landscape order is kept as written; orientation decides later.
    let s = size("450x300mm");
    assert_eq!((s.width_mm, s.height_mm), (450.0, 300.0));
}

#[test]
fn bad_sizes_are_refused_with_a_sentence() {
    for text in [
        "",
        "A11",
        "C4",
        "foolscap",
        "8.5x11",
        "0x10mm",
        "-5x10mm",
        "10x10x10mm",
        "axbmm",
        "nanx10mm",
        "infx10mm",
        "20000x10mm",
    ] {
        let err = text
            .parse::<SheetSize>()
            .expect_err(&format!("{text:?} should be refused"));
        let message = err.to_string();
        assert!(
            message.ends_with('.') || message.ends_with('?'),
            "{text:?}: not a sentence: {message}"
        );
    }
    // The missing unit is named in the message.
    let message = "8.5x11".parse::<SheetSize>().unwrap_err().to_string();
    assert!(message.contains("no unit"), "{message}");
}

#[test]
fn names_round_trip() {
    let mut names: Vec<String> = (0..=10).map(|n| format!("A{n}")).collect();
    names.extend((0..=10).map(|n| format!("B{n}")));
    names.extend(
        [
            "Letter",
            "Legal",
            "Tabloid",
            "300x450mm",
            "8.5x11in",
            "0.5x0.25in",
        ]
        .map(String::from),
    );
    for name in names {
        let s = size(&name);
        assert_eq!(s.to_string(), name);
        assert_eq!(size(&s.to_string()), s);
    }
}

#[test]
fn serde_writes_sizes_as_strings() {
    #[derive(serde::Serialize, serde::Deserialize, PartialEq, Debug)]
    struct Profile {
        sheet: SheetSize,
    }
    let p: Profile = toml::from_str("sheet = \"us-letter\"").unwrap();
    assert_eq!(p.sheet, SheetSize::letter());
    assert_eq!(toml::to_string(&p).unwrap().trim(), "sheet = \"Letter\"");
    let p: Profile = toml::from_str("sheet = \"300x450mm\"").unwrap();
    assert_eq!(p.sheet.height_mm, 450.0);
    let err = toml::from_str::<Profile>("sheet = \"8.5x11\"").unwrap_err();
    assert!(err.to_string().contains("no unit"), "{err}");
    assert_eq!(serde_json::to_string(&SheetSize::a4()).unwrap(), "\"A4\"");
}

#[test]
fn sheet_spec_reads_from_toml_with_defaults() {
    let spec: SheetSpec = toml::from_str(
        "size = \"A3\"\norientation = \"landscape\"\ngap_mm = 3.0\n[margins]\ntop_mm = 8.0\n",
    )
    .unwrap();
    assert_eq!(spec.size.name, "A3");
    assert_eq!(spec.orientation, Orientation::Landscape);
    assert_eq!(spec.gap_mm, 3.0);
    assert_eq!(spec.tile_overlap_mm, 10.0);
    assert_eq!(spec.margins.top_mm, 8.0);
    assert_eq!(spec.margins.left_mm, 5.0);
    assert!(toml::from_str::<SheetSpec>("colour = \"red\"").is_err());
}

#[test]
fn orientation_names() {
    assert_eq!("Portrait".parse(), Ok(Orientation::Portrait));
    assert_eq!(" landscape".parse(), Ok(Orientation::Landscape));
    assert_eq!("AUTO".parse(), Ok(Orientation::Auto));
    assert!("sideways".parse::<Orientation>().is_err());
    assert_eq!(Orientation::Landscape.to_string(), "landscape");
}

#[test]
fn printable_area_of_a4() {
    // A4 210 × 297 mm (ISO 216) less 5 mm on each edge: 200 × 287 mm, from (5, 5).
    let p = Margins::default().printable(210.0, 297.0);
    assert_eq!(
        (p.min_x, p.min_y, p.max_x, p.max_y),
        (5.0, 5.0, 205.0, 292.0)
    );
    // Uneven margins: left 3, right 7, top 10, bottom 4 on 210 × 297.
    let m = Margins {
        top_mm: 10.0,
        right_mm: 7.0,
        bottom_mm: 4.0,
        left_mm: 3.0,
    };
    let p = m.printable(210.0, 297.0);
    assert_eq!(
        (p.min_x, p.min_y, p.max_x, p.max_y),
        (3.0, 4.0, 203.0, 287.0)
    );
    // Turned to landscape, each edge takes the larger of the two portrait edges that may
    // land there (drivers turn either way): top/bottom max(3, 7) = 7, left/right max(10, 4) = 10.
    let l = m.for_orientation(true);
    assert_eq!(
        (l.top_mm, l.right_mm, l.bottom_mm, l.left_mm),
        (7.0, 10.0, 7.0, 10.0)
    );
    assert_eq!(m.for_orientation(false), m);
}
