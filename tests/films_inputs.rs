//! `umbra films` on unusual and bad inputs, run as the real binary in a fresh folder.
//!
//! Every refusal must say what is wrong and name the thing at fault, exit non-zero, and leave
//! no output behind: no output folder and no `.NAME.partial-*` staging folder next to it
//! (src/films/staged.rs StagedDir: a failed run leaves nothing half-written). A .zip archive of a
//! board is an ordinary input.

mod films_support;

use films_support::*;
use std::io::Write;
use std::path::Path;

/// Runs `umbra films … -o out` and checks a clean refusal whose message mentions every
/// string of `mentions`; returns the message.
fn refused(dir: &Path, args: &[&str], mentions: &[&str]) -> String {
    let mut all = vec!["films", "-q", "-o", "out"];
    all.extend_from_slice(args);
    let out = umbra(dir, &all);
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    assert!(!out.status.success(), "umbra {all:?} should fail");
    assert!(
        out.status.code().is_some_and(|c| c != 0),
        "a non-zero exit code"
    );
    assert!(stderr.starts_with("umbra: error: "), "stderr: {stderr}");
    for m in mentions {
        assert!(
            stderr.contains(m),
            "the message should mention {m:?}: {stderr}"
        );
    }
    assert!(
        !dir.join("out").exists(),
        "no output folder after a refusal"
    );
    assert!(
        names_starting(dir, ".out").is_empty(),
        "staging folders left behind: {:?}",
        names_starting(dir, ".out")
    );
    stderr
}

fn write_zip(path: &Path, entries: &[(String, Vec<u8>)]) {
    let file = std::fs::File::create(path).unwrap();
    let mut z = zip::ZipWriter::new(file);
    let opts = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated);
    for (name, bytes) in entries {
        z.start_file(name.as_str(), opts).unwrap();
        z.write_all(bytes).unwrap();
    }
    z.finish().unwrap();
}

fn demo_entries(prefix: &str) -> Vec<(String, Vec<u8>)> {
    let mut names: Vec<_> = std::fs::read_dir(demo_dir())
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    names.sort();
    names
        .iter()
        .map(|p| {
            (
                format!("{prefix}{}", p.file_name().unwrap().to_string_lossy()),
                std::fs::read(p).unwrap(),
            )
        })
        .collect()
}

fn copy_demo(to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(demo_dir()).unwrap() {
        let p = e.unwrap().path();
        std::fs::copy(&p, to.join(p.file_name().unwrap())).unwrap();
    }
}

#[test]
fn an_empty_folder_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("empty-board")).unwrap();
    refused(dir.path(), &["empty-board"], &["empty-board"]);
}

#[test]
fn a_zip_without_gerbers_is_refused_by_name() {
    let dir = tempfile::tempdir().unwrap();
    write_zip(
        &dir.path().join("no-gerbers.zip"),
        &[
            ("README.txt".into(), b"Board files will follow.\n".to_vec()),
            ("notes/bom.csv".into(), b"ref,value\nR1,10k\n".to_vec()),
        ],
    );
    refused(
        dir.path(),
        &["no-gerbers.zip"],
        &["no-gerbers.zip", "Gerber"],
    );
}

#[test]
fn two_files_claiming_one_layer_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let board = dir.path().join("board");
    copy_demo(&board);
    std::fs::copy(
        board.join("wren-node.top-copper.gbr"),
        board.join("spare-top-copper.gbr"),
    )
    .unwrap();
    // The error comes after the staging folder exists, so this also checks its removal.
    refused(
        dir.path(),
        &["board"],
        &[
            "copper top",
            "wren-node.top-copper.gbr",
            "spare-top-copper.gbr",
        ],
    );
}

#[test]
fn a_profile_with_an_unknown_key_is_refused_with_its_position() {
    let dir = tempfile::tempdir().unwrap();
    write_profile(
        dir.path(),
        "shop.toml",
        "[printer]\ndpi = 600\nresolutoin = 1200\n",
    );
    refused(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "--profile", "shop.toml"],
        // TOML line 3, column 1 (line:col, counted from 1).
        &["resolutoin", "shop.toml", ":3:1"],
    );
}

#[test]
fn a_profile_with_a_negative_resolution_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    write_profile(dir.path(), "shop.toml", "[printer]\ndpi = -600\n");
    refused(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "--profile", "shop.toml"],
        &["shop.toml", "dpi", "-600"],
    );
}

#[test]
fn an_existing_output_folder_is_kept_unless_forced() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    std::fs::create_dir(&out).unwrap();
    std::fs::write(out.join("keep.txt"), "earlier films").unwrap();
    let o = umbra(
        dir.path(),
        &["films", "-q", demo_dir().to_str().unwrap(), "-o", "out"],
    );
    assert!(!o.status.success());
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        stderr.contains("out") && stderr.contains("--force"),
        "{stderr}"
    );
    let left: Vec<String> = names_starting(&out, "");
    assert_eq!(left, vec!["keep.txt".to_string()], "contents untouched");
    assert_eq!(
        std::fs::read_to_string(out.join("keep.txt")).unwrap(),
        "earlier films"
    );
    assert!(names_starting(dir.path(), ".out").is_empty());

    // With --force the old folder is replaced as a whole.
    films_ok(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "-o", "out", "--force"],
    );
    assert!(!out.join("keep.txt").exists(), "the old folder is replaced");
    assert!(out.join("manifest.json").is_file() && out.join("films.pdf").is_file());
    assert!(
        names_starting(dir.path(), ".out").is_empty(),
        "no staging or old folder left"
    );
}

#[test]
fn a_zip_of_the_demo_board_makes_the_same_films_as_its_folder() {
    let dir = tempfile::tempdir().unwrap();
    write_zip(&dir.path().join("wren.zip"), &demo_entries("wren-node/"));
    films_ok(dir.path(), &["wren.zip", "-o", "from-zip"]);
    films_ok(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "-o", "from-folder"],
    );
    let m = manifest(&dir.path().join("from-zip"));
    // The job file inside the archive names the board and its layers.
    assert_eq!(m["board"], "Wren soil-moisture node rev B");
    let keys: Vec<&str> = m["films"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| f["key"].as_str().unwrap())
        .collect();
    assert_eq!(
        keys,
        [
            "copper-top",
            "solder-mask-top",
            "copper-bottom",
            "solder-mask-bottom"
        ]
    );
    for f in m["films"].as_array().unwrap() {
        assert!(
            f["source"].as_str().unwrap().starts_with("wren.zip:"),
            "{}",
            f["source"]
        );
    }
    // Same bytes in, same sheet out.
    let a = std::fs::read(dir.path().join("from-zip/sheet-01.png")).unwrap();
    let b = std::fs::read(dir.path().join("from-folder/sheet-01.png")).unwrap();
    assert!(a == b, "the archive and the folder give different sheets");
}

#[test]
fn a_gerber_of_unknown_layer_is_named_in_the_refusal() {
    // The demo's top copper without its X2 file attributes (Gerber spec 2024.05 §5.6: %TF…*%)
    // under a name that says nothing: umbra cannot know the layer and must not guess.
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(demo_dir().join("wren-node.top-copper.gbr")).unwrap();
    let plain: String = text
        .lines()
        .filter(|l| !l.starts_with("%TF"))
        .map(|l| format!("{l}\n"))
        .collect();
    std::fs::create_dir(dir.path().join("board")).unwrap();
    std::fs::write(dir.path().join("board/mystery.gbr"), plain).unwrap();
    refused(
        dir.path(),
        &["board"],
        &["mystery.gbr", "layer", "job file"],
    );
}

#[test]
fn force_replaces_the_output_despite_a_leftover_folder_of_an_earlier_run() {
    // An earlier run interrupted while replacing its output could leave a folder beside it;
    // --force must still work, and must not touch a folder it did not make.
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("out")).unwrap();
    std::fs::create_dir(dir.path().join(".out.old")).unwrap();
    std::fs::write(dir.path().join(".out.old/mine.txt"), "not umbra's").unwrap();
    films_ok(
        dir.path(),
        &[demo_dir().to_str().unwrap(), "-o", "out", "--force"],
    );
    assert!(dir.path().join("out/manifest.json").is_file());
    assert_eq!(
        std::fs::read_to_string(dir.path().join(".out.old/mine.txt")).unwrap(),
        "not umbra's"
    );
    assert_eq!(
        names_starting(dir.path(), ".out"),
        vec![".out.old".to_string()]
    );
}

#[test]
fn files_given_one_by_one_name_the_board_by_the_part_their_names_share() {
    // The demo's Gerber and drill files without its job file (which would name the board),
    // given one by one after a licence text: the board is named by what the fabrication
    // files' names share, not by the first file given (common practice: EDA programs name
    // every file of a board `BOARD.LAYER.EXT` or `BOARD-LAYER.EXT`).
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("LICENSE"),
        "Shared for the workshop's course.\n",
    )
    .unwrap();
    let mut args = vec!["LICENSE".to_string()];
    for e in std::fs::read_dir(demo_dir()).unwrap() {
        let p = e.unwrap().path();
        let name = p.file_name().unwrap().to_string_lossy().to_string();
        if name.ends_with(".gbr") || name.ends_with(".xln") {
            std::fs::copy(&p, dir.path().join(&name)).unwrap();
            args.push(name);
        }
    }
    args.sort();
    args.extend(["-o".into(), "out".into()]);
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    films_ok(dir.path(), &args);
    assert_eq!(manifest(&dir.path().join("out"))["board"], "wren-node");
}
