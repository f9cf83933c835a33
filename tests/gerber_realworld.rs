//! Every Gerber file of the real-world corpus (`../shared/realworld`, 21 boards from 12
//! design programs) must read without error. Which files are Gerber comes from the corpus'
//! own `manifest.json` (`"kind": "gerber"`), written independently of this reader.
//!
//! Skipped when the corpus is absent, except under `CI=true`, where its absence fails.

use std::path::{Path, PathBuf};
use umbra::gerber;
use umbra::limits::Limits;

fn corpus() -> Option<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if dir.join("manifest.json").is_file() {
        return Some(dir);
    }
    if std::env::var("CI").as_deref() == Ok("true") {
        panic!(
            "the real-world corpus {} is missing (required when CI=true)",
            dir.display()
        );
    }
    eprintln!("skipped: real-world corpus not found at {}", dir.display());
    None
}

struct Entry {
    path: PathBuf,
    uses_macros: bool,
    flashes: Option<u64>,
    apertures: Option<u64>,
}

/// The Gerber files listed in the manifest.
fn gerber_files(dir: &Path) -> Vec<Entry> {
    let text = std::fs::read_to_string(dir.join("manifest.json")).expect("manifest readable");
    let m: serde_json::Value = serde_json::from_str(&text).expect("manifest is JSON");
    let mut out = Vec::new();
    for board in m["boards"].as_array().expect("boards") {
        let folder = board["folder"].as_str().expect("folder");
        for f in board["files"].as_array().expect("files") {
            if f["kind"] != "gerber" {
                continue;
            }
            let counts: Vec<&str> = f["feature_counts"]
                .as_array()
                .map(|a| a.iter().filter_map(|v| v.as_str()).collect())
                .unwrap_or_default();
            out.push(Entry {
                path: dir.join(folder).join(f["name"].as_str().expect("name")),
                uses_macros: counts.iter().any(|c| c.starts_with("aperture-macros")),
                flashes: f["flashes_D03"].as_u64(),
                apertures: f["apertures"].as_u64(),
            });
        }
    }
    out
}

fn read(path: &Path) -> Result<gerber::GerberFile, String> {
    let bytes = std::fs::read(path).map_err(|e| e.to_string())?;
    let text = String::from_utf8_lossy(&bytes);
    let name = path.file_name().unwrap().to_string_lossy();
    gerber::read(&text, &name, &Limits::default()).map_err(|e| e.to_string())
}

fn check(only_without_macros: bool) {
    let Some(dir) = corpus() else { return };
    let files = gerber_files(&dir);
    assert!(
        files.len() >= 150,
        "manifest lists {} Gerber files",
        files.len()
    );
    let mut failures = Vec::new();
    let mut checked = 0;
    for e in files
        .iter()
        .filter(|e| !(only_without_macros && e.uses_macros))
    {
        checked += 1;
        match read(&e.path) {
            Ok(g) => {
                assert!(
                    !g.image.objects.is_empty()
                        || g.image.stats.apertures == 0
                        || e.flashes == Some(0),
                    "{}: no objects",
                    e.path.display()
                );
                // The manifest counts `D03` by regular expression; every one outside a `G04`
                // comment is a flash (ours also counts `D3` short forms and modal repeats, so
                // ours is >=). The regular expression also matched comments such as
                // "G04 Draw part D3*" (board 17), so those lines are taken off.
                if let Some(n) = e.flashes {
                    let text =
                        String::from_utf8_lossy(&std::fs::read(&e.path).unwrap()).into_owned();
                    let in_comments = text
                        .lines()
                        .filter(|l| l.trim_start().starts_with("G04") && l.contains("D3"))
                        .count() as u64;
                    assert!(
                        g.image.stats.flashes as u64 >= n.saturating_sub(in_comments),
                        "{}: {} flashes, manifest {}",
                        e.path.display(),
                        g.image.stats.flashes,
                        n
                    );
                }
                // The manifest counts `%ADD` definitions; the corpus has no block apertures,
                // so every definition is one of ours.
                if let Some(n) = e.apertures {
                    assert_eq!(
                        g.image.stats.apertures as u64,
                        n,
                        "{}: aperture count",
                        e.path.display()
                    );
                }
            }
            Err(msg) => failures.push(msg),
        }
    }
    assert!(
        failures.is_empty(),
        "{} of {checked} files failed:\n{}",
        failures.len(),
        failures.join("\n")
    );
}

#[test]
fn realworld_gerbers_without_macros_read() {
    check(true);
}

#[test]
fn realworld_gerbers_all_read() {
    check(false);
}

#[test]
fn realworld_outline_has_the_stated_board_size() {
    // The corpus README describes board 10 as "Tiny (26 x 23 mm)"; its Edge.Cuts outline,
    // drawn with a thin pen, must span that to within the rounding of the description.
    let Some(dir) = corpus() else { return };
    let g = read(&dir.join("10-usb-pd-power-tap-2layer/power-pcb-Edge_Cuts.gm1")).expect("reads");
    let b = g.image.bounds();
    assert!((b.width() - 26.0).abs() < 0.6, "width {}", b.width());
    assert!((b.height() - 23.0).abs() < 0.6, "height {}", b.height());
}
