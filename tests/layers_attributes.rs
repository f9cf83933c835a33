//! Layer identity from X2 attributes, written by an independent Gerber writer (gerber-types
//! 0.7), from job files, and from file-name conventions not in the real-world corpus.

use gerber_types::{
    Command, ExtendedPosition, FileAttribute, FileFunction, FilePolarity as GtPolarity, GerberCode,
    NonPlatedDrill, PlatedDrill, Position, Profile,
};
use std::collections::BTreeMap;
use umbra::layers::{self, FilePolarity, IdSource, LayerFunction as F, LayerId, Side};

/// The text gerber-types writes for one file attribute, e.g. "%TF.FileFunction,Copper,L1,Top*%".
fn written(attr: FileAttribute) -> String {
    let mut out = Vec::new();
    Command::from(attr).serialize(&mut out).unwrap();
    String::from_utf8(out).unwrap()
}

fn identify_written(function: FileFunction, polarity: Option<GtPolarity>) -> Option<LayerId> {
    let mut text = written(FileAttribute::FileFunction(function));
    if let Some(p) = polarity {
        text.push_str(&written(FileAttribute::FilePolarity(p)));
    }
    let attrs = layers::scan_file_attributes(&text);
    layers::from_attributes(&attrs)
}

/// A file function and what it means: function, side, copper layer number, plating.
type Case = (FileFunction, F, Side, Option<u32>, Option<bool>);

#[test]
fn file_functions_written_by_gerber_types_are_understood() {
    // Each case: a .FileFunction value of the Gerber spec rev 2024.05 §5.6.3 and its meaning.
    let cases: Vec<Case> = vec![
        (
            FileFunction::Copper {
                layer: 1,
                pos: ExtendedPosition::Top,
                copper_type: None,
            },
            F::Copper,
            Side::Top,
            Some(1),
            None,
        ),
        // "Inr" with L3: the second inner layer, copper layer 3.
        (
            FileFunction::Copper {
                layer: 3,
                pos: ExtendedPosition::Inner,
                copper_type: Some(gerber_types::CopperType::Plane),
            },
            F::Copper,
            Side::Inner(2),
            Some(3),
            None,
        ),
        (
            FileFunction::Copper {
                layer: 4,
                pos: ExtendedPosition::Bottom,
                copper_type: None,
            },
            F::Copper,
            Side::Bottom,
            Some(4),
            None,
        ),
        (
            FileFunction::SolderMask {
                pos: Position::Top,
                index: None,
            },
            F::SolderMask,
            Side::Top,
            None,
            None,
        ),
        (
            FileFunction::Legend {
                pos: Position::Bottom,
                index: Some(1),
            },
            F::Legend,
            Side::Bottom,
            None,
            None,
        ),
        (
            FileFunction::Paste(Position::Top),
            F::Paste,
            Side::Top,
            None,
            None,
        ),
        (
            FileFunction::Profile(Some(Profile::NonPlated)),
            F::Outline,
            Side::Both,
            None,
            Some(false),
        ),
        (
            FileFunction::Profile(Some(Profile::Plated)),
            F::Outline,
            Side::Both,
            None,
            Some(true),
        ),
        (
            FileFunction::Profile(None),
            F::Outline,
            Side::Both,
            None,
            None,
        ),
        (
            FileFunction::Plated {
                from_layer: 1,
                to_layer: 2,
                drill: PlatedDrill::PlatedThroughHole,
                label: None,
            },
            F::Drill,
            Side::Both,
            None,
            Some(true),
        ),
        (
            FileFunction::NonPlated {
                from_layer: 1,
                to_layer: 4,
                drill: NonPlatedDrill::NonPlatedThroughHole,
                label: None,
            },
            F::Drill,
            Side::Both,
            None,
            Some(false),
        ),
        (
            FileFunction::DrillMap,
            F::DrillMap,
            Side::NotApplicable,
            None,
            None,
        ),
        (
            FileFunction::AssemblyDrawing(Position::Bottom),
            F::Assembly,
            Side::Bottom,
            None,
            None,
        ),
        (
            FileFunction::FabricationDrawing,
            F::Mechanical,
            Side::NotApplicable,
            None,
            None,
        ),
        (
            FileFunction::Glue(Position::Top),
            F::Other,
            Side::Top,
            None,
            None,
        ),
    ];
    for (function, f, side, copper, plated) in cases {
        let text = written(FileAttribute::FileFunction(function.clone()));
        let id = identify_written(function, None).unwrap_or_else(|| panic!("{text}"));
        assert_eq!((id.function, id.side), (f, side), "{text}");
        assert_eq!(id.copper_layer, copper, "{text}");
        assert_eq!(id.plated, plated, "{text}");
        assert_eq!(id.source, IdSource::Attribute);
    }
}

#[test]
fn file_polarity_written_by_gerber_types_is_kept() {
    // §5.6.4: .FilePolarity,Negative — masks are commonly written so (common practice).
    let id = identify_written(
        FileFunction::SolderMask {
            pos: Position::Bottom,
            index: None,
        },
        Some(GtPolarity::Negative),
    )
    .unwrap();
    assert_eq!(id.polarity, Some(FilePolarity::Negative));
    let id = identify_written(
        FileFunction::Paste(Position::Top),
        Some(GtPolarity::Positive),
    )
    .unwrap();
    assert_eq!(id.polarity, Some(FilePolarity::Positive));
}

#[test]
fn attribute_comments_and_drill_comments_are_scanned() {
    // The G04 #@! form (used before X2 was common) and the Excellon comment form.
    let g04 = "G04 #@! TF.FileFunction,Copper,L2,Bot,Mixed*\nG04 #@! TF.FilePolarity,Positive*\n";
    let attrs = layers::scan_file_attributes(g04);
    assert_eq!(attrs["FileFunction"], ["Copper", "L2", "Bot", "Mixed"]);
    let drill = "M48\n; #@! TF.FileFunction,NonPlated,1,2,NPTH\nMETRIC\n";
    let id = layers::identify("x.drl", &BTreeMap::new(), drill).unwrap();
    assert_eq!(
        (id.function, id.plated, id.source),
        (F::Drill, Some(false), IdSource::Attribute)
    );
    // Two commands on one line.
    let attrs = layers::scan_file_attributes("%TF.Part,Single*%%TF.FileFunction,Legend,Top*%");
    assert_eq!(attrs["Part"], ["Single"]);
    assert_eq!(attrs["FileFunction"], ["Legend", "Top"]);
}

#[test]
fn invalid_attribute_values_give_nothing() {
    let mut attrs = BTreeMap::new();
    attrs.insert(
        "FileFunction".to_string(),
        vec!["Soldermask".to_string(), "Middle".to_string()],
    );
    assert_eq!(layers::from_attributes(&attrs), None);
    attrs.insert(
        "FileFunction".to_string(),
        vec!["Copper".to_string(), "L1".to_string(), "Inr".to_string()],
    );
    // L1 is the top layer by definition, never inner (§5.6.3).
    assert_eq!(layers::from_attributes(&attrs), None);
    attrs.insert("FileFunction".to_string(), vec!["Nonsense".to_string()]);
    assert_eq!(layers::from_attributes(&attrs), None);
    assert_eq!(layers::from_attributes(&BTreeMap::new()), None);
}

#[test]
fn job_file_entries_are_read() {
    let json = r#"{
      "GeneralSpecs": {"ProjectId": {"Name": "Wren"}, "Size": {"X": 50.0, "Y": 40.0}, "LayerNumber": 4},
      "FilesAttributes": [
        {"Path": "a.gbr", "FileFunction": "Copper,L2,Inr", "FilePolarity": "Negative"},
        {"Path": "b.gbr", "FileFunction": "Profile,NP"},
        {"Path": "c.gbr", "FileFunction": "Unheard,Of"},
        {"FileFunction": "Legend,Top"}
      ]}"#;
    let job = layers::parse_job_file(json).unwrap();
    assert_eq!(job.project.as_deref(), Some("Wren"));
    assert_eq!(job.size_mm, Some((50.0, 40.0)));
    assert_eq!(job.copper_layers, Some(4));
    assert_eq!(
        job.files.len(),
        2,
        "unknown functions and entries without a path are skipped"
    );
    let (path, id) = &job.files[0];
    assert_eq!(path, "a.gbr");
    assert_eq!(
        (id.function, id.side, id.copper_layer),
        (F::Copper, Side::Inner(1), Some(2))
    );
    assert_eq!(
        (id.polarity, id.source),
        (Some(FilePolarity::Negative), IdSource::JobFile)
    );
    assert!(layers::read_job_file("{ not json").is_empty());
    assert!(layers::parse_job_file("{ not json").is_err());
}

fn by_name(name: &str) -> Option<(F, Side)> {
    layers::from_file_name(name).map(|id| (id.function, id.side))
}

#[test]
fn other_naming_conventions() {
    // Conventions of the trade not present in the corpus (common practice).
    let cases: &[(&str, Option<(F, Side)>)] = &[
        ("board.GTL", Some((F::Copper, Side::Top))),
        ("board.G3", Some((F::Copper, Side::Inner(3)))),
        ("board.GM1", Some((F::Outline, Side::Both))),
        ("board.GM13", Some((F::Mechanical, Side::NotApplicable))),
        ("board.plc", Some((F::Legend, Side::Top))),
        ("board.pls", Some((F::Legend, Side::Bottom))),
        ("board.crc", Some((F::Paste, Side::Top))),
        ("board.ly2", Some((F::Copper, Side::Inner(1)))),
        ("board-In2_Cu.gbr", Some((F::Copper, Side::Inner(2)))),
        ("board-In1.Cu.gbr", Some((F::Copper, Side::Inner(1)))),
        ("board-B.Paste.gbr", Some((F::Paste, Side::Bottom))),
        ("board.smt", Some((F::SolderMask, Side::Top))),
        ("board.ssb", Some((F::Legend, Side::Bottom))),
        ("board.spb", Some((F::Paste, Side::Bottom))),
        ("board.bot", Some((F::Copper, Side::Bottom))),
        ("board_copperBottom.gbl", Some((F::Copper, Side::Bottom))),
        ("board_silkTop.gto", Some((F::Legend, Side::Top))),
        ("board_maskTop.gts", Some((F::SolderMask, Side::Top))),
        ("copper_top.gbr", Some((F::Copper, Side::Top))),
        ("soldermask_top.gbr", Some((F::SolderMask, Side::Top))),
        ("silkscreen_bottom.gbr", Some((F::Legend, Side::Bottom))),
        ("TopMask.gbr", Some((F::SolderMask, Side::Top))),
        ("BottomSilk.gbr", Some((F::Legend, Side::Bottom))),
        ("TopPaste.gbr", Some((F::Paste, Side::Top))),
        ("Outline.gbr", Some((F::Outline, Side::Both))),
        ("board.outline.gbr", Some((F::Outline, Side::Both))),
        ("board-NPTH.drl", Some((F::Drill, Side::Both))),
        ("silkscreen.gbr", None), // no side: do not guess
        ("copper.gbr", None),
        ("notes.txt", None),
        ("board.zip", None),
        ("", None),
        ("....", None),
    ];
    for (name, expected) in cases {
        assert_eq!(by_name(name), *expected, "{name}");
    }
}

#[test]
fn the_demo_board_names_are_recognised() {
    // Our own naming for the demo board (examples/wren-node/).
    let cases: &[(&str, Option<(F, Side)>)] = &[
        ("wren-node.top-copper.gbr", Some((F::Copper, Side::Top))),
        (
            "wren-node.bottom-copper.gbr",
            Some((F::Copper, Side::Bottom)),
        ),
        ("wren-node.top-mask.gbr", Some((F::SolderMask, Side::Top))),
        (
            "wren-node.bottom-mask.gbr",
            Some((F::SolderMask, Side::Bottom)),
        ),
        ("wren-node.top-legend.gbr", Some((F::Legend, Side::Top))),
        ("wren-node.outline.gbr", Some((F::Outline, Side::Both))),
        ("wren-node.drill.xln", Some((F::Drill, Side::Both))),
        ("wren-node.umbra-job.toml", None),
    ];
    for (name, expected) in cases {
        assert_eq!(by_name(name), *expected, "{name}");
    }
}

#[test]
fn display_reads_like_words() {
    let id = LayerId::new(F::Copper, Side::Inner(2), IdSource::FileName);
    assert_eq!(id.to_string(), "copper inner 2");
    assert_eq!(id.copper_layer, Some(3));
    let id = LayerId::new(F::SolderMask, Side::Bottom, IdSource::Attribute);
    assert_eq!(id.describe(), "solder mask bottom (from X2 attributes)");
    let id = LayerId::new(F::Drill, Side::Both, IdSource::FileName).with_plated(Some(false));
    assert_eq!(id.to_string(), "drill non-plated");
    let json =
        serde_json::to_string(&LayerId::new(F::Copper, Side::Top, IdSource::JobFile)).unwrap();
    assert!(
        json.contains("\"function\":\"copper\"") && json.contains("\"side\":\"top\""),
        "{json}"
    );
}

#[test]
fn odd_input_never_panics() {
    for s in [
        "",
        ".",
        "a.",
        ".gtl",
        "Ünïcödé—名前.gbr",
        "x/y\\z.GBL",
        "%LN",
        "%IN*%",
        "G04 Layer:*",
        "\u{0}",
    ] {
        let _ = layers::from_file_name(s);
        let _ = layers::from_content(s);
        let _ = layers::scan_file_attributes(s);
        let _ = layers::identify(s, &BTreeMap::new(), s);
    }
    // Glued words that split two ways ("soldermask" = "solder" + "mask") must not make the
    // name parser take exponential time on a long hostile name.
    let hostile = format!("{}x.gbr", "soldermask".repeat(500));
    let started = std::time::Instant::now();
    assert_eq!(layers::from_file_name(&hostile), None);
    assert!(
        started.elapsed().as_secs() < 2,
        "slow on {} bytes",
        hostile.len()
    );
    // A long multi-byte content is cut at a character boundary.
    let long = "é".repeat(40_000);
    assert_eq!(layers::from_content(&long), None);
}

#[test]
fn job_files_naming_different_boards_give_no_board_name_and_a_warning() {
    // Gerber job files (Gerber Layer Format Specification rev 2024.05, "Gerber Job Format":
    // GeneralSpecs.ProjectId.Name names the project). One name is taken; two different names
    // mean two boards were given together, and neither name is right for both.
    let job = |name: &str| {
        format!(
            r#"{{"Header": {{"GenerationSoftware": {{"Vendor": "Larkspur"}}}},
                "GeneralSpecs": {{"ProjectId": {{"Name": "{name}"}}}}, "FilesAttributes": []}}"#
        )
    };
    let gerber = "%FSLAX26Y26*%%MOMM*%%ADD10C,0.5*%D10*X0Y0D03*M02*\n";
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("a.gbrjob"), job("Wren")).unwrap();
    std::fs::write(dir.path().join("wren-F_Cu.gbr"), gerber).unwrap();
    let board = umbra::load::load_paths(&[dir.path().to_path_buf()], &Default::default()).unwrap();
    assert_eq!(board.job_name.as_deref(), Some("Wren"));
    assert!(board.warnings.is_empty(), "{:?}", board.warnings);

    std::fs::write(dir.path().join("b.gbrjob"), job("Finch")).unwrap();
    let board = umbra::load::load_paths(&[dir.path().to_path_buf()], &Default::default()).unwrap();
    assert_eq!(board.job_name, None);
    let w: Vec<String> = board.warnings.iter().map(|w| w.to_string()).collect();
    assert!(
        w.iter().any(|w| w.contains("Wren") && w.contains("Finch")),
        "{w:?}"
    );

    // The same name twice is one board.
    std::fs::write(dir.path().join("b.gbrjob"), job("Wren")).unwrap();
    let board = umbra::load::load_paths(&[dir.path().to_path_buf()], &Default::default()).unwrap();
    assert_eq!(board.job_name.as_deref(), Some("Wren"));
}
