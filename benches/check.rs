//! Process-check benchmark: how much the check and the proof picture add to `umbra films` on
//! the synthetic bench board at 1200 dpi.
//!
//! Run with `cargo bench --bench check`. Prints the best of three runs of the whole films job
//! (which includes the check), of the same job without check and proof (films, layout, sheets,
//! PDF, as `films::run` does them), and of the check and the proof alone. The overhead is the
//! job's time over the reference's; the target is at most 50 %.

use std::time::{Duration, Instant};
use umbra::process::Profile;

fn best<T>(runs: usize, mut f: impl FnMut() -> T) -> (Duration, T) {
    let mut best = Duration::MAX;
    let mut out = None;
    for _ in 0..runs {
        let t = Instant::now();
        let v = f();
        best = best.min(t.elapsed());
        out = Some(v);
    }
    (best, out.unwrap())
}

fn main() {
    let dir = tempfile::tempdir().unwrap();
    let src = dir.path().join("bench");
    std::fs::create_dir(&src).unwrap();
    for (name, text) in &umbra::synth::bench_board(1).files {
        std::fs::write(src.join(name), text).unwrap();
    }
    let limits = umbra::limits::Limits::default();
    let board = umbra::load::load_paths(&[src], &limits).unwrap();
    let profile = Profile::default();
    println!("bench board at {} dpi", profile.printer.dpi);

    let mut k = 0;
    let (t_job, summary) = best(3, || {
        k += 1;
        let opts = umbra::films::RunOptions {
            out: dir.path().join(format!("out{k}")),
            force: true,
            board_name: "bench".into(),
            vector: false,
            date: "2026-01-01".into(),
        };
        umbra::films::run(&board, &profile, None, &opts, &|_| {}).unwrap()
    });
    // The same job without the check and the proof: films, layout, sheets (PNG) and PDF, as
    // films::run does them.
    let mut k2 = 0;
    let (t_reference, _) = best(3, || {
        k2 += 1;
        let out = dir.path().join(format!("ref{k2}"));
        std::fs::create_dir_all(&out).unwrap();
        let (films, _, _) =
            umbra::films::make_films(&board, &profile, None, "bench", "2026-01-01").unwrap();
        let layout = umbra::films::lay_out(&films, &profile).unwrap();
        let mut pages = Vec::new();
        for (i, plan) in layout.sheets.iter().enumerate() {
            let rs = umbra::films::compose_sheet(i + 1, plan, &films, &profile);
            umbra::output::png::write_png(
                &out.join(format!("sheet-{i}.png")),
                &rs.bitmap,
                rs.dpi.0,
                rs.dpi.1,
                true,
            )
            .unwrap();
            pages.push(rs);
        }
        let pdf: Vec<umbra::output::pdf::PdfPage<'_>> = pages
            .iter()
            .map(|rs| {
                let size = umbra::output::pdf::PageSize::from_mm(rs.size_mm.0, rs.size_mm.1);
                let mut page = umbra::output::pdf::PdfPage::new(size);
                page.images
                    .push(umbra::output::pdf::PlacedImage::at_resolution(
                        &rs.bitmap, true, 0.0, 0.0, rs.dpi.0, rs.dpi.1,
                    ));
                page
            })
            .collect();
        umbra::output::pdf::write_pdf(&out.join("films.pdf"), &pdf).unwrap();
    });
    let (films, frame, _) =
        umbra::films::make_films(&board, &profile, None, "bench", "2026-01-01").unwrap();
    let (t_check, mut report) = best(3, || {
        umbra::check::check_films(&films, &board, &frame.board, &profile.limits)
    });
    let proof = dir.path().join("proof.png");
    let (t_proof, _) = best(3, || {
        umbra::proof::write_board_proof(
            &proof,
            "proof.png",
            "bench",
            &films,
            &board,
            &frame,
            profile.artwork.target_size_mm,
            &mut report,
        )
        .unwrap()
    });
    let ms = |d: Duration| d.as_secs_f64() * 1e3;
    println!("films job (with check and proof): {:8.1} ms", ms(t_job));
    println!(
        "same job without them:            {:8.1} ms",
        ms(t_reference)
    );
    println!("  check alone:                    {:8.1} ms", ms(t_check));
    println!("  proof alone:                    {:8.1} ms", ms(t_proof));
    println!(
        "overhead: {:.0} % (the check runs beside the sheets and the PDF); target <= 50 %",
        100.0 * (t_job.as_secs_f64() / t_reference.as_secs_f64() - 1.0)
    );
    println!(
        "check and proof alone: {:.0} % of the job without them",
        100.0 * (t_check + t_proof).as_secs_f64() / t_reference.as_secs_f64()
    );
    let check = summary.check.as_ref().expect("printer runs are checked");
    println!("findings: {}", check.total_findings());
    for f in &check.films {
        println!(
            "  {:20} {:5} findings  copper {:?} mm²  narrowest {:?} / gap {:?}",
            f.layer,
            f.findings,
            f.copper_area_mm2.map(|a| a.round()),
            f.smallest_width_mm,
            f.smallest_gap_mm
        );
    }
}
