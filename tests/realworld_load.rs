//! Every real-world board in ../shared/realworld (21 sets written by 12 EDA programs) must load
//! with no error, and its layers must have sane extents: the board outline's extents contain the
//! copper's (Gerber spec 2024.05 §6.3: all layers share one coordinate system, same offset, 1:1).

use std::path::PathBuf;
use umbra::layers::LayerFunction;
use umbra::load::{load_paths, Content};

fn corpus() -> Option<PathBuf> {
    let p = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/realworld");
    if p.is_dir() {
        Some(p)
    } else if std::env::var("CI").as_deref() == Ok("true") {
        panic!("the real-world corpus ../shared/realworld is missing under CI");
    } else {
        eprintln!("skipping: ../shared/realworld is absent");
        None
    }
}

fn boards(root: &PathBuf) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(root)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.is_dir())
        .collect();
    v.sort();
    v
}

#[test]
fn every_real_board_loads_with_sane_extents() {
    let Some(root) = corpus() else { return };
    let boards = boards(&root);
    // The corpus README lists 21 boards.
    assert_eq!(boards.len(), 21, "the corpus README lists 21 boards");
    let mut failures = Vec::new();
    for b in &boards {
        let board = match load_paths(std::slice::from_ref(b), &Default::default()) {
            Ok(board) => board,
            Err(e) => {
                failures.push(format!("{}: {e}", b.display()));
                continue;
            }
        };
        let mut outline = umbra::image::Bounds::EMPTY;
        let mut copper = umbra::image::Bounds::EMPTY;
        let mut n_copper = 0;
        for f in &board.files {
            let (Some(id), Content::Gerber(g)) = (&f.id, &f.content) else {
                continue;
            };
            match id.function {
                LayerFunction::Outline => outline.union(&g.image.bounds()),
                LayerFunction::Copper => {
                    n_copper += 1;
                    copper.union(&g.image.bounds())
                }
                _ => {}
            }
        }
        let name = b.file_name().unwrap().to_string_lossy().to_string();
        if n_copper == 0 {
            failures.push(format!("{name}: no copper layer identified"));
            continue;
        }
        // Boards are between a few mm and about a metre (board 03 is 970 mm long).
        if !(copper.width() > 2.0
            && copper.width() < 1100.0
            && copper.height() > 2.0
            && copper.height() < 1100.0)
        {
            failures.push(format!("{name}: implausible copper extents {copper:?}"));
        }
        // The copper must lie on the board: the two boxes overlap by at least 80 % of the
        // smaller one. (Some programs put notes beside the board on copper or outline layers,
        // so either box may be the larger, but a unit or offset error would miss the board.)
        if !outline.is_empty() {
            let ix = (outline.max_x.min(copper.max_x) - outline.min_x.max(copper.min_x)).max(0.0);
            let iy = (outline.max_y.min(copper.max_y) - outline.min_y.max(copper.min_y)).max(0.0);
            let smaller =
                (outline.width() * outline.height()).min(copper.width() * copper.height());
            let covered = ix * iy / smaller;
            if covered < 0.8 {
                failures.push(format!(
                    "{name}: copper extents {copper:?} overlap the outline by only {:.0} % of the smaller box {outline:?}",
                    covered * 100.0
                ));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
