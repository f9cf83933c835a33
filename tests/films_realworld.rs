//! Every real-world board of ../shared/realworld (21 sets from many EDA programs) goes through
//! the whole films job in-process (films::run) at a small resolution: no error, at least one
//! copper film, files written, and registration targets no mirror or half-turn lays onto
//! themselves (TRADE.md "Registration for two-sided boards").

mod films_support;

use films_support::*;
use umbra::films::{run, RunOptions};
use umbra::process::Profile;

#[test]
fn every_real_board_makes_a_film_set() {
    let Some(root) = corpus() else { return };
    let boards = corpus_boards(&root);
    // The corpus README lists 21 boards.
    assert_eq!(boards.len(), 21);
    let profile = Profile::from_toml("[printer]\ndpi = 300\n", "test profile").unwrap();
    let dir = tempfile::tempdir().unwrap();
    let mut failures = Vec::new();
    for (i, b) in boards.iter().enumerate() {
        let name = b.file_name().unwrap().to_string_lossy().to_string();
        let board = match umbra::load::load_paths(std::slice::from_ref(b), &Default::default()) {
            Ok(board) => board,
            Err(e) => {
                failures.push(format!("{name}: loading: {e}"));
                continue;
            }
        };
        let out = dir.path().join(format!("out-{i:02}"));
        let opts = RunOptions {
            out: out.clone(),
            force: false,
            board_name: name.clone(),
            date: "2025-01-01".into(),
            vector: false,
        };
        let summary = match run(&board, &profile, None, &opts, &|_| {}) {
            Ok(s) => s,
            Err(e) => {
                failures.push(format!("{name}: {e}"));
                continue;
            }
        };
        let copper = summary
            .films
            .iter()
            .filter(|f| f.key.starts_with("copper-"))
            .count();
        if copper == 0 {
            failures.push(format!("{name}: no copper film"));
        }
        // A single-sided board has one copper film; every other board in the corpus two.
        let want = if name.contains("single-sided") { 1 } else { 2 };
        if copper != want {
            failures.push(format!("{name}: {copper} copper films, expected {want}"));
        }
        for f in &summary.films {
            if f.placements.is_empty() {
                failures.push(format!("{name}: {} was not placed on any sheet", f.key));
            }
        }
        for s in &summary.sheets {
            if !out.join(&s.png).is_file() {
                failures.push(format!("{name}: {} missing", s.png));
            }
        }
        if !out.join("films.pdf").is_file() || !out.join("manifest.json").is_file() {
            failures.push(format!("{name}: films.pdf or manifest.json missing"));
        }
        // Asymmetric targets (misfit measure: films_support::self_fit_misfit).
        let m = manifest(&out);
        let t = manifest_targets(&m);
        if t.len() != 3 {
            failures.push(format!("{name}: {} targets", t.len()));
            continue;
        }
        for (what, tf) in wrong_placements() {
            let misfit = self_fit_misfit(&t, tf);
            if misfit < 1.0 {
                failures.push(format!(
                    "{name}: targets {t:?} fit their {what} with {misfit:.3} mm misfit"
                ));
            }
        }
        // The targets lie outside the board (TRADE.md: "outside the board outline").
        let e = &m["board_extents_mm"];
        for &(x, y) in &t {
            let inside = x > f(&e["min_x"])
                && x < f(&e["max_x"])
                && y > f(&e["min_y"])
                && y < f(&e["max_y"]);
            if inside {
                failures.push(format!("{name}: target ({x}, {y}) lies on the board"));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}
