//! End-to-end film benchmark on the deterministic synthetic bench board
//! (`umbra::synth::bench_board(1)`: two layers, 100 × 160 mm, about 50,000 objects, ~2000
//! holes), written to a temporary folder and loaded the way the CLI loads a board.
//!
//! Run with `cargo bench --bench films`. Prints, each the best of a few runs:
//! - read + interpret of all files (time, MB/s);
//! - one film (top copper with drill-centre marks, as `umbra render --drill` makes it) at
//!   1200 dpi, rendered and written to PNG — target ≤ 0.5 s;
//! - the same at 2400 dpi — target ≤ 4 × the 1200 dpi time;
//! - the 1200 dpi film with a 2 px edge offset — target ≤ +30 %;
//! - peak memory (VmHWM) of a fresh process that loads the board and makes the 2400 dpi
//!   film — target ≤ 64 MB plus the 1-bit film;
//! - the whole `films::run` (2 copper + 2 mask films at 1200 dpi, PDF + PNG sheets +
//!   manifest) — target ≤ 1.5 s.
//!
//! The peak-memory figure runs in a child process (this executable, re-run with
//! `UMBRA_BENCH_PEAK=1`), because VmHWM only ever grows within one process.

#[path = "support/mod.rs"]
mod support;

use std::path::{Path, PathBuf};
use std::time::Instant;
use support::{best_s, cpu_s, load_average};
use umbra::film::compose::{self, ArtworkOptions, BoardFrame, FilmJob};
use umbra::films::{self, RunOptions};
use umbra::layers::{LayerFunction, Side};
use umbra::limits::Limits;
use umbra::load::{self, Board, Content};
use umbra::output::pdf::{PageSize, PdfPage, PlacedImage};
use umbra::process::{plan, Profile};

/// Peak resident set size of this process, MB, from /proc/self/status (Linux, proc(5):
/// "VmHWM: peak resident set size", in kB).
fn peak_mb() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kb: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

/// Writes the bench board's files into `dir`.
fn write_board(dir: &Path) -> (Vec<PathBuf>, usize) {
    let board = umbra::synth::bench_board(1);
    let mut paths = Vec::new();
    for (name, text) in &board.files {
        let p = dir.join(name);
        std::fs::write(&p, text).expect("write bench file");
        paths.push(p);
    }
    (paths, board.total_bytes())
}

/// One film of the top copper, with drill-centre marks, no targets or label (the
/// `umbra render --drill` path), rendered and written as PNG. Returns (width, height).
fn top_copper_film(board: &Board, dpi: f64, offset_um: f64, png: &Path) -> (usize, usize) {
    let (file, image) = board
        .files
        .iter()
        .find_map(|f| match (&f.id, &f.content) {
            (Some(id), Content::Gerber(g))
                if id.function == LayerFunction::Copper && id.side == Side::Top =>
            {
                Some((id, g))
            }
            _ => None,
        })
        .expect("top copper in the bench board");
    let mut profile = Profile::default();
    profile.printer.dpi = dpi;
    let mut recipe = plan(file, image.image_negative, &profile);
    recipe.edge_offset_um = offset_um;
    let drills = films::drill_files(board);
    let art = ArtworkOptions {
        registration: false,
        label: false,
        ..Default::default()
    };
    let frame = BoardFrame::new(image.image.bounds(), (0.0, 0.0), (0.0, 0.0), &art);
    let job = FilmJob {
        image: &image.image,
        recipe: &recipe,
        drills: &drills,
        frame: &frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts: &art,
    };
    let film = compose::render_film(&job, profile.drill_marks.min_annular_ring_mm);
    umbra::output::png::write_png(png, &film.bitmap, dpi, dpi, true).expect("png");
    (film.bitmap.width(), film.bitmap.height())
}

/// The child process of the peak-memory figure: load, one 2400 dpi film, print VmHWM.
fn peak_child(dir: &Path) {
    let (paths, _) = write_board(dir);
    let board = load::load_paths(&paths, &Limits::default()).expect("load");
    let loaded = peak_mb().unwrap_or(f64::NAN);
    let (w, h) = top_copper_film(&board, 2400.0, 0.0, &dir.join("peak.png"));
    println!(
        "{loaded:.1} {:.1} {:.1}",
        peak_mb().unwrap_or(f64::NAN),
        (w.div_ceil(64) * 8 * h) as f64 / (1024.0 * 1024.0)
    );
}

fn main() {
    // As the `umbra` command does (src/main.rs).
    umbra::memory::keep_freed_memory();
    let dir = tempfile::tempdir().expect("temp folder");
    if std::env::var_os("UMBRA_BENCH_PEAK").is_some() {
        peak_child(dir.path());
        return;
    }
    println!(
        "bench board: umbra::synth::bench_board(1), {} rayon threads, load average {}",
        rayon::current_num_threads(),
        load_average()
    );
    println!("times: wall of the fastest run [CPU time of that run, all threads]");
    let (paths, bytes) = write_board(dir.path());
    let limits = Limits::default();

    // Read + interpret (files from disk, parsed in parallel as the CLI does).
    let (t_read, c_read, board) = best_s(5, || load::load_paths(&paths, &limits).expect("load"));
    let objects: usize = board
        .files
        .iter()
        .map(|f| match &f.content {
            Content::Gerber(g) => g.image.objects.len(),
            _ => 0,
        })
        .sum();
    println!(
        "read + interpret: {:.1} MB, {objects} objects in {:.0} ms [{:.0}] = {:.0} MB/s",
        bytes as f64 / 1e6,
        t_read * 1e3,
        c_read * 1e3,
        bytes as f64 / 1e6 / t_read
    );

    let png = dir.path().join("film.png");
    let (t1200, c1200, (w, h)) = best_s(7, || top_copper_film(&board, 1200.0, 0.0, &png));
    println!(
        "top copper film 1200 dpi ({w} x {h} px), render + PNG: {:.0} ms [{:.0}] (target <= 500 ms)",
        t1200 * 1e3,
        c1200 * 1e3
    );
    let (t2400, c2400, (w, h)) = best_s(3, || top_copper_film(&board, 2400.0, 0.0, &png));
    println!(
        "top copper film 2400 dpi ({w} x {h} px), render + PNG: {:.0} ms [{:.0}] = {:.2} x the 1200 dpi time [CPU {:.2} x] (target <= 4)",
        t2400 * 1e3,
        c2400 * 1e3,
        t2400 / t1200,
        c2400 / c1200
    );
    let two_px = 2.0 * 25_400.0 / 1200.0;
    let (t_off, c_off, _) = best_s(7, || top_copper_film(&board, 1200.0, two_px, &png));
    println!(
        "top copper film 1200 dpi with +2 px edge offset: {:.0} ms [{:.0}] = {:+.0} % [CPU {:+.0} %] (target <= +30 %)",
        t_off * 1e3,
        c_off * 1e3,
        (t_off / t1200 - 1.0) * 100.0,
        (c_off / c1200 - 1.0) * 100.0
    );

    // Peak memory in a fresh process.
    let exe = std::env::current_exe().expect("own path");
    match std::process::Command::new(exe)
        .env("UMBRA_BENCH_PEAK", "1")
        .output()
    {
        Ok(out) if out.status.success() => {
            let text = String::from_utf8_lossy(&out.stdout);
            let v: Vec<f64> = text
                .split_whitespace()
                .filter_map(|t| t.parse().ok())
                .collect();
            if let [loaded, peak, film] = v[..] {
                println!(
                    "peak memory (VmHWM), load + 2400 dpi film + PNG: {peak:.0} MB (after loading {loaded:.0} MB; the 1-bit film is {film:.0} MB; target <= {:.0} MB)",
                    64.0 + film
                );
            } else {
                println!("peak memory: unexpected child output {text:?}");
            }
        }
        other => println!("peak memory: child process failed: {other:?}"),
    }

    // The whole films job at 1200 dpi.
    let profile = Profile::default();
    let mut n = 0;
    let (t_run, c_run, summary) = best_s(3, || {
        n += 1;
        let opts = RunOptions {
            out: dir.path().join(format!("films-{n}")),
            force: false,
            board_name: "bench".into(),
            date: "2026-01-01".into(),
            vector: false,
        };
        films::run(&board, &profile, None, &opts, &|_| {}).expect("films run")
    });
    println!(
        "films::run, {} films on {} sheets at 1200 dpi, PDF + PNG + manifest: {:.0} ms [{:.0}] (target <= 1500 ms)",
        summary.films.len(),
        summary.sheets.len(),
        t_run * 1e3,
        c_run * 1e3
    );
    run_breakdown(&board, &profile, dir.path());
}

/// Where the time of `films::run` goes: its stages timed one by one (one run).
fn run_breakdown(board: &Board, profile: &Profile, dir: &Path) {
    let stage = |name: &str, t: Instant, c: f64| {
        println!(
            "  {name}: {:.0} ms [{:.0}]",
            t.elapsed().as_secs_f64() * 1e3,
            (cpu_s() - c) * 1e3
        );
    };
    println!("films::run stages:");
    let (t, c) = (Instant::now(), cpu_s());
    let (made, _, _) =
        films::make_films(board, profile, None, "bench", "2026-01-01").expect("films");
    stage("plan + render 4 films", t, c);
    let (t, c) = (Instant::now(), cpu_s());
    let layout = films::lay_out(&made, profile).expect("layout");
    let sheets: Vec<_> = layout
        .sheets
        .iter()
        .enumerate()
        .map(|(i, plan)| films::compose_sheet(i + 1, plan, &made, profile))
        .collect();
    stage("layout + compose sheets", t, c);
    let (t, c) = (Instant::now(), cpu_s());
    for (i, s) in sheets.iter().enumerate() {
        let p = dir.join(format!("sheet-{i}.png"));
        umbra::output::png::write_png(&p, &s.bitmap, s.dpi.0, s.dpi.1, true).expect("png");
    }
    stage("PNG sheets", t, c);
    let (t, c) = (Instant::now(), cpu_s());
    let pages: Vec<PdfPage<'_>> = sheets
        .iter()
        .map(|s| {
            let size = PageSize::from_mm(s.size_mm.0, s.size_mm.1);
            let mut page = PdfPage::new(size);
            page.images.push(PlacedImage::at_resolution(
                &s.bitmap, true, 0.0, 0.0, s.dpi.0, s.dpi.1,
            ));
            page
        })
        .collect();
    let pdf = umbra::output::pdf::pdf_bytes(&pages).expect("pdf");
    stage(&format!("PDF ({} KiB)", pdf.len() / 1024), t, c);
}
