//! Banded 1-bit TIFF benchmark: the top copper film of the synthetic bench board
//! (`umbra::synth::bench_board(1)`, 100 × 160 mm, ~50,000 objects) at 10160 dpi — a
//! 40,000 × 64,000 pixel film, 320 MB at one bit per pixel — written as a PackBits TIFF.
//!
//! Run with `cargo bench --bench tiff`. Prints wall time, file size and the process's peak
//! resident memory (VmHWM from /proc/self/status, Linux). The target is a peak of at most
//! 64 MB plus one bit per pixel of the film; banding keeps it far below that.
//!
//! Optional arguments: a resolution in dpi (default 10160) and `--artwork` to keep the
//! targets and label (the default film is the board alone, 100 × 160 mm).

use std::time::Instant;
use umbra::load::{load_board, InputFile};
use umbra::output::tiff::TiffCompression;

/// The process's peak resident set size in kB (Linux), if known.
fn peak_rss_kb() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let dpi: f64 = args.iter().find_map(|a| a.parse().ok()).unwrap_or(10_160.0);
    let artwork = args.iter().any(|a| a == "--artwork");

    let bench = umbra::synth::bench_board(1);
    let inputs: Vec<InputFile> = bench
        .files
        .iter()
        .map(|(name, text)| InputFile {
            name: name.clone(),
            bytes: text.as_bytes().to_vec(),
        })
        .collect();
    drop(bench);
    let limits = umbra::limits::Limits::default();
    let board = load_board(&inputs, &limits).expect("bench board loads");
    drop(inputs);

    let mut profile = umbra::process::Profile::default();
    profile.device.kind = umbra::device::DeviceKind::FilmService;
    profile.device.film_service.dpi = dpi;
    profile.films.mask = false;
    if !artwork {
        profile.artwork.registration = false;
        profile.artwork.label = false;
        profile.artwork.border_mm = 0.0;
    }
    let profile = umbra::device::profile_for_device(&profile);
    let plan = umbra::films::plan_films(&board, &profile, None, "bench", "2026-01-01")
        .expect("films planned");
    let i = plan
        .films
        .iter()
        .position(|f| f.selected.key == "copper-top")
        .expect("top copper film");
    let job = plan.job(i);
    let film = umbra::film::compose::film_map(&plan.frame, &plan.films[i].recipe);
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("copper-top.tif");
    let rss_before = peak_rss_kb();

    let t = Instant::now();
    let band_rows =
        umbra::device::service::band_rows_for(film.width, umbra::device::service::BAND_BYTES);
    umbra::device::service::write_film_tiff(&path, &job, TiffCompression::PackBits, band_rows)
        .expect("TIFF written");
    let secs = t.elapsed().as_secs_f64();

    let bytes = std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0);
    let one_bit_mb = film.pixel_count() as f64 / 8.0 / 1e6;
    println!(
        "top copper at {dpi} dpi: {} × {} px ({:.1} × {:.1} mm), {band_rows} rows per band",
        film.width,
        film.height,
        film.width as f64 * 25.4 / dpi,
        film.height as f64 * 25.4 / dpi
    );
    println!("  wall time        {secs:.2} s");
    println!("  TIFF size        {:.1} MB (PackBits)", bytes as f64 / 1e6);
    println!("  1 bit per pixel  {one_bit_mb:.1} MB");
    match (rss_before, peak_rss_kb()) {
        (Some(b), Some(a)) => {
            let peak = a as f64 / 1000.0;
            println!(
                "  peak memory      {peak:.1} MB (VmHWM; {:.1} MB before rendering)",
                b as f64 / 1000.0
            );
            println!(
                "  budget           {:.1} MB (64 MB + 1 bit per pixel): {}",
                64.0 + one_bit_mb,
                if peak <= 64.0 + one_bit_mb {
                    "met"
                } else {
                    "EXCEEDED"
                }
            );
        }
        _ => println!("  peak memory      unknown (no /proc/self/status)"),
    }
}
