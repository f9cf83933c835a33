//! Every drill file of the real-world corpus (`../shared/realworld`, relative to the crate)
//! reads without error, in mm, inside its board.
//!
//! Check values come from outside the reader: the corpus manifest (which file is a drill
//! file), the CAM programs' own counts (EAGLE `.dri` "Total number of drills", Allegro
//! "Quantity =" comments), board outlines (extents measured once from each outline Gerber
//! with a throwaway script, grown by 1 mm), and coordinates worked by hand from the file
//! text with the Excellon zero rules (IPC-NC-349 / Excellon format description, from memory).
//! The corpus is skipped when absent, except under CI=true, where its absence fails.

use std::path::{Path, PathBuf};
use umbra::excellon::{self, DrillFile, FormatHint};
use umbra::image::{Bounds, Point};
use umbra::limits::Limits;

fn corpus() -> Option<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if dir.is_dir() {
        return Some(dir);
    }
    if std::env::var("CI").as_deref() == Ok("true") {
        panic!(
            "the real-world corpus {} is missing under CI",
            dir.display()
        );
    }
    eprintln!("skipping: {} not found", dir.display());
    None
}

fn text_of(path: &Path) -> String {
    String::from_utf8_lossy(&std::fs::read(path).unwrap()).into_owned()
}

fn read(root: &Path, rel: &str) -> DrillFile {
    let text = text_of(&root.join(rel));
    excellon::read(&text, rel, &Limits::default()).unwrap_or_else(|e| panic!("{e}"))
}

/// (folder, file kind) of every file the manifest lists.
fn manifest_files(root: &Path) -> Vec<(String, String, String)> {
    let m: serde_json::Value = serde_json::from_str(&text_of(&root.join("manifest.json"))).unwrap();
    let mut out = Vec::new();
    for b in m["boards"].as_array().unwrap() {
        let folder = b["folder"].as_str().unwrap();
        for f in b["files"].as_array().unwrap() {
            out.push((
                folder.to_string(),
                f["name"].as_str().unwrap().to_string(),
                f["kind"].as_str().unwrap().to_string(),
            ));
        }
    }
    out
}

fn drill_files(root: &Path) -> Vec<String> {
    manifest_files(root)
        .into_iter()
        .filter(|(_, _, k)| k == "excellon")
        .map(|(d, n, _)| format!("{d}/{n}"))
        .collect()
}

fn extents(d: &DrillFile) -> Bounds {
    let mut b = Bounds::EMPTY;
    for h in &d.holes {
        b.add_point(h.at);
    }
    for s in &d.slots {
        for &p in &s.path {
            b.add_point(p);
        }
    }
    b
}

fn near(p: Point, x: f64, y: f64) -> bool {
    (p.x - x).abs() < 1e-6 && (p.y - y).abs() < 1e-6
}

#[test]
fn detection_matches_the_manifest_for_every_file() {
    let Some(root) = corpus() else { return };
    let mut checked = 0;
    for (dir, name, kind) in manifest_files(&root) {
        let text = text_of(&root.join(&dir).join(&name));
        let drill = excellon::looks_like_drill(&text);
        // Drill files are drill files; Gerbers, job files, CAM info files, readmes and
        // licences are not.
        assert_eq!(drill, kind == "excellon", "{dir}/{name} ({kind})");
        checked += 1;
    }
    assert!(checked > 150, "only {checked} files in the manifest");
}

#[test]
fn every_drill_file_reads_and_is_plausible() {
    let Some(root) = corpus() else { return };
    let files = drill_files(&root);
    assert_eq!(files.len(), 25, "the manifest lists 25 drill files");
    for rel in files {
        let d = read(&root, &rel);
        assert!(
            !d.holes.is_empty() || !d.slots.is_empty(),
            "{rel}: nothing read"
        );
        let b = extents(&d);
        assert!(b.width() < 1000.0 && b.height() < 1000.0, "{rel}: {b:?}");
        for t in &d.tools {
            // Board 08's NPTH file defines an 18 mm cut-out ("T2C18.000" in the file).
            let big_ok = rel.starts_with("08-") && t.diameter_mm == 18.0;
            assert!(
                (0.05..=10.0).contains(&t.diameter_mm) || big_ok,
                "{rel}: T{} = {} mm",
                t.number,
                t.diameter_mm
            );
        }
        for s in &d.slots {
            assert!(s.path.len() >= 2 && s.tool < d.tools.len());
        }
        assert!(d.holes.iter().all(|h| h.tool < d.tools.len()));
        // No errors were needed, and the only warnings are about the unstated format.
        for w in &d.warnings {
            assert!(
                w.message.contains("number format"),
                "{rel}: unexpected warning {w}"
            );
        }
    }
}

/// Board outline extents in mm (min x, min y, max x, max y) measured once from each board's
/// outline Gerber (profile/edge/dimension layer) and grown by 1 mm.
const OUTLINES: &[(&str, [f64; 4])] = &[
    ("01-", [-1.0, -1.0, 28.3, 33.1]),
    ("02-", [-1.0, -1.0, 60.5, 77.4]),
    ("03-", [-1.0, -1.0, 979.6, 29.7]),
    ("04-", [-1.0, -1.0, 43.1, 55.1]),
    ("05-", [-1.0, -1.0, 47.9, 62.5]),
    ("06-", [-46.8, -40.4, 1.0, 1.0]),
    ("07-", [-1.0, -130.3, 121.4, 1.0]),
    ("08-", [-1.0, -101.6, 230.2, 1.0]),
    ("09-", [-1.0, -1.0, 32.0, 51.0]),
    ("11-", [-1.0, -1.0, 40.0, 60.0]),
    ("12-", [-39.2, -16.5, 1.0, 17.5]),
    ("13-", [-1.0, -1.0, 123.4, 102.6]),
    ("14-", [-1.0, -1.0, 93.1, 107.0]),
    ("15-", [-1.0, -1.0, 101.0, 101.0]),
    ("16-", [-1.0, -4.0, 121.8, 90.8]),
    ("18-", [-1.0, -1.0, 91.7, 61.0]),
    // Board 19's outline is `%FSAX35Y35*MOIN*%`: 0..3.80 in = 96.6 mm.
    ("19-", [-1.0, -1.0, 97.6, 97.8]),
    ("20-", [-1.0, -1.0, 211.1, 244.9]),
    ("21-", [-28.5, -3.0, 71.0, 107.6]),
];

#[test]
fn holes_lie_inside_the_board_outline_extents() {
    let Some(root) = corpus() else { return };
    for rel in drill_files(&root) {
        let (_, o) = OUTLINES
            .iter()
            .find(|(p, _)| rel.starts_with(p))
            .unwrap_or_else(|| panic!("no outline for {rel}"));
        let outline = Bounds {
            min_x: o[0],
            min_y: o[1],
            max_x: o[2],
            max_y: o[3],
        };
        let b = extents(&read(&root, &rel));
        assert!(
            outline.contains(&b),
            "{rel}: holes {b:?} outside outline {outline:?}"
        );
    }
}

#[test]
fn hole_counts_match_the_cam_programs_own_counts() {
    let Some(root) = corpus() else { return };
    // EAGLE drill station info files: "Total number of drills: N".
    for (drill, info) in [
        (
            "02-temp-humidity-sensor-2layer/emonTH V2.0.2.drills.xln",
            "02-temp-humidity-sensor-2layer/emonTH V2.0.2.drills.dri",
        ),
        (
            "03-organ-pedal-sensor-strip-970mm/pedalier.drd",
            "03-organ-pedal-sensor-strip-970mm/pedalier.dri",
        ),
    ] {
        let info = text_of(&root.join(info));
        let total: usize = info
            .lines()
            .find_map(|l| l.trim().strip_prefix("Total number of drills:"))
            .unwrap()
            .trim()
            .parse()
            .unwrap();
        assert_eq!(read(&root, drill).holes.len(), total, "{drill}");
    }
    // Allegro: ";T01 Holesize … Quantity = N" comments, which the reader does not count.
    for drill in [
        "19-smart-planter-driver-2layer/VitaBoard-1-2.drl",
        "20-micromouse-shield-2layer/MICROMOUSE_SHIELD-1-2.drl",
    ] {
        let text = text_of(&root.join(drill));
        let total: usize = text
            .lines()
            .filter_map(|l| l.split("Quantity =").nth(1))
            .map(|q| q.trim().parse::<usize>().unwrap())
            .sum();
        assert_eq!(read(&root, drill).holes.len(), total, "{drill}");
    }
}

#[test]
fn known_coordinates_worked_by_hand() {
    let Some(root) = corpus() else { return };
    // Board 06: the drill file is INCH decimal while its Gerbers are mm; output is mm.
    // First T1 hole "X-1.575Y-0.2" = (-1.575 × 25.4, -0.2 × 25.4) = (-40.005, -5.08) mm;
    // T1C0.0157 = 0.39878 mm.
    let d = read(&root, "06-keyboard-converter-v2-2layer/at2xt.drl");
    assert!(d.inches);
    assert!(near(d.holes[0].at, -40.005, -5.08), "{:?}", d.holes[0]);
    assert!((d.tools[0].diameter_mm - 0.39878).abs() < 1e-9);
    assert_eq!(d.plated, None); // TF.FileFunction,MixedPlating
    assert_eq!(d.tools[0].plated, Some(true));

    // Board 14: INCH,LZ with ;FILE_FORMAT=2:4, "X0302Y0301" = (3.02, 3.01) in
    // = (76.708, 76.454) mm; "X028Y03795" = (2.8, 3.795) in = (71.12, 96.393) mm.
    let d = read(&root, "14-retro-chip-adapter-2layer/PCB1.TXT");
    assert!(near(d.holes[1].at, 76.708, 76.454), "{:?}", d.holes[1]);
    assert!(d.holes.iter().any(|h| near(h.at, 71.12, 96.393)));

    // Board 01: METRIC,TZ,000.000: "X10416Y2386" = (10.416, 2.386) mm.
    let d = read(&root, "01-gps-logger-2layer/drills.xln");
    assert!(near(d.holes[0].at, 10.416, 2.386));

    // Board 02: M72 without format: TZ 2.4, "X4219Y8553" = (0.4219, 0.8553) in.
    let d = read(
        &root,
        "02-temp-humidity-sensor-2layer/emonTH V2.0.2.drills.xln",
    );
    assert!(near(d.holes[0].at, 10.71626, 21.72462));

    // Board 04: "X+008074Y+007523" = (0.8074, 0.7523) in = (20.50796, 19.10842) mm.
    let d = read(&root, "04-nixie-hv-supply-2layer/Through.drl");
    assert!(near(d.holes[0].at, 20.50796, 19.10842));

    // Board 11: METRIC,LZ,000.000: "X026416Y047498" = (26.416, 47.498) mm.
    let d = read(&root, "11-rtc-breakout-2layer/Gerber_Drill_PTH.DRL");
    assert!(near(d.holes[0].at, 26.416, 47.498));
    assert_eq!(d.plated, Some(true)); // ;TYPE=PLATED

    // Board 13: METRIC,LZ with ;FILE_FORMAT=4:4: "X0002667Y0011303" = (2.667, 11.303) mm;
    // "X004318" after "X0040132Y0053594" keeps Y: (43.18, 53.594).
    let d = read(&root, "13-pump-controller-4layer/PCB-RoundHoles.TXT");
    assert!(near(d.holes[0].at, 2.667, 11.303));
    assert!(near(d.holes[6].at, 43.18, 53.594), "{:?}", d.holes[6]);
    // T10/T11 follow ";TYPE=NON_PLATED".
    let t10 = d.tools.iter().find(|t| t.number == 10).unwrap();
    assert_eq!(t10.plated, Some(false));
    let s = read(&root, "13-pump-controller-4layer/PCB-SlotHoles.TXT");
    assert_eq!(s.slots.len(), 3);
    assert!(near(s.slots[0].path[0], 89.452, 91.588) && near(s.slots[0].path[1], 89.452, 90.388));

    // Board 18: tools from T100; "X028325Y021625" = (2.8325, 2.1625) in.
    let d = read(
        &root,
        "18-esp32-wordclock-carrier-2layer/Nano_ESP32-PCB_V04_drill.txt",
    );
    assert_eq!(d.tools[d.holes[0].tool].number, 100);
    assert!(near(d.holes[0].at, 71.9455, 54.9275));

    // Board 19: Allegro 3.5 inch (nc_param.txt); "X00262000Y00319000" then "R03X00023000":
    // three more holes at x = 2.85, 3.08, 3.31 in, y = 3.19 in.
    let d = read(&root, "19-smart-planter-driver-2layer/VitaBoard-1-2.drl");
    assert!(near(d.holes[0].at, 30.226, 14.732)); // (1.19, 0.58) in
    let i = d
        .holes
        .iter()
        .position(|h| near(h.at, 2.62 * 25.4, 3.19 * 25.4))
        .unwrap();
    for (k, x) in [2.85, 3.08, 3.31].iter().enumerate() {
        assert!(
            near(d.holes[i + 1 + k].at, x * 25.4, 3.19 * 25.4),
            "{:?}",
            d.holes[i + 1 + k]
        );
    }
    assert_eq!(d.tools.last().unwrap().plated, Some(false)); // ";T12 … NON_PLATED"

    // Board 20: metric 3.5: "X19354800Y17751400" then "R02Y00200000".
    let d = read(
        &root,
        "20-micromouse-shield-2layer/MICROMOUSE_SHIELD-1-2.drl",
    );
    assert!(near(d.holes[0].at, 193.548, 177.514));
    assert!(near(d.holes[2].at, 193.548, 181.514));

    // Board 09: routed slot "G00X23.25Y11.5 M15 G01X26.25Y11.5 M16" with T5 (1.000 mm).
    let d = read(&root, "09-riscv-retro-computer-2layer/RVPC_Rev_B-PTH.drl");
    let s = &d.slots[0];
    assert_eq!(
        s.path,
        vec![Point::new(23.25, 11.5), Point::new(26.25, 11.5)]
    );
    assert_eq!(d.tools[s.tool].diameter_mm, 1.0);

    // Board 07: "X113.447Y-91.65G85X114.047Y-91.65" with T4 (0.600 mm).
    let d = read(
        &root,
        "07-esp32-ethernet-gateway-2layer/ESP32-GATEWAY_Rev_A-PTH.drl",
    );
    assert_eq!(d.slots.len(), 4);
    assert_eq!(
        d.slots[0].path,
        vec![Point::new(113.447, -91.65), Point::new(114.047, -91.65)]
    );
    assert_eq!(d.tools[d.slots[0].tool].diameter_mm, 0.6);

    // Board 21: tools defined T3, T2, T1 (descending); the first hole uses T3 = 0.300 mm.
    let d = read(&root, "21-fridge-buzzer-panel-2up/fridge-buzzer-panel.txt");
    assert_eq!(d.tools[d.holes[0].tool].diameter_mm, 0.3);
    assert_eq!(
        d.tools.iter().map(|t| t.number).collect::<Vec<_>>(),
        vec![3, 2, 1]
    );
}

#[test]
fn board_19_reads_the_same_with_its_nc_parameter_file() {
    let Some(root) = corpus() else { return };
    let dir = root.join("19-smart-planter-driver-2layer");
    let hint = FormatHint::from_info_file(&text_of(&dir.join("nc_param.txt"))).unwrap();
    assert_eq!(
        (hint.integer_digits, hint.decimal_digits),
        (Some(3), Some(5))
    );
    let text = text_of(&dir.join("VitaBoard-1-2.drl"));
    let with =
        excellon::read_with_format_hint(&text, "VitaBoard-1-2.drl", &Limits::default(), &hint)
            .unwrap();
    let without = read(&root, "19-smart-planter-driver-2layer/VitaBoard-1-2.drl");
    assert_eq!(with.holes, without.holes);
    // The parameter file states what the drill file leaves open, so no format warning.
    assert!(with.warnings.is_empty(), "{:?}", with.warnings);
    assert_eq!(without.warnings.len(), 1);
}
