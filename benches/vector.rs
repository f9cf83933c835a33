//! Vector composition benchmark on the deterministic synthetic bench board
//! (`umbra::synth::bench_board(1)`, ~50,000 objects per copper layer over 100 × 160 mm).
//!
//! Run with `cargo bench --bench vector`. Prints, best of a few runs, the time to compose
//! the top copper film as polygons (flatten, booleans in order, drill marks, artwork,
//! polarity, edge offset) without and with a 50 µm edge offset, the vertex count and the
//! black area (to compare results across changes).
//! Target: at most 1 s (docs/vector.md).

use std::time::Instant;
use umbra::films::make_films;
use umbra::limits::Limits;
use umbra::load::load_paths;
use umbra::process::Profile;
use umbra::vector::page::vector_film_for;
use umbra::vector::VectorOptions;

/// Runs per setting; the best is printed (the machine is shared, so the spread is load).
const RUNS: usize = 5;

fn main() {
    let dir = tempfile::tempdir().expect("temporary folder");
    for (name, text) in umbra::synth::bench_board(1).files {
        std::fs::write(dir.path().join(name), text).expect("write bench file");
    }
    let board = load_paths(&[dir.path().to_path_buf()], &Limits::default()).expect("load");
    for undercut in [0.0, 50.0] {
        let mut profile = Profile::default();
        profile.process.undercut_um = undercut;
        let (films, frame, _) =
            make_films(&board, &profile, None, "bench", "2026-01-01").expect("films");
        let top = films
            .iter()
            .find(|f| f.key == "copper-top")
            .expect("top copper");
        let mut best = f64::INFINITY;
        let mut vertices = 0;
        let mut area = 0.0;
        for _ in 0..RUNS {
            let t = Instant::now();
            let vf = vector_film_for(&board, top, &frame, &profile, &VectorOptions::default())
                .expect("vector film");
            best = best.min(t.elapsed().as_secs_f64());
            vertices = vf.black.iter().flatten().map(|r| r.len()).sum::<usize>();
            area = umbra::vector::region_area(&vf.black);
        }
        // The raster film of the same recipe, for comparison: black pixels × pixel area.
        let pixel_mm2 = (25.4 / top.recipe.dpi_x) * (25.4 / top.recipe.dpi_y);
        let raster_area = top.rendered.bitmap.count_ones() as f64 * pixel_mm2;
        println!(
            "vector compose, top copper, edge offset {:+.1} µm: {:.3} s (best of {}), {} vertices, \
             black area {:.4} mm² \
             (raster film: {:.4} mm²)",
            top.recipe.edge_offset_um, best, RUNS, vertices, area, raster_area
        );
    }
}
