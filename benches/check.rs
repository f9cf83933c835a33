//! Process-check benchmark: how much the check and the proof picture add to `umbra films` on
//! the synthetic bench board at 1200 dpi.
//!
//! Run with `cargo bench --bench check`. Prints the best of five runs of the whole films job
//! (which includes the check) and of the same job without check and proof (films, layout,
//! sheets, PDF, as `films::run` does them), run in turn, and the best of three of the films
//! rendered and of the check and the proof alone. The overhead is the job's time over the reference's; the target is at most 50 %.

#[path = "support/mod.rs"]
mod support;

use support::{best_in_turn, best_s, load_average};
use umbra::process::Profile;

fn main() {
    // As the `umbra` command does (src/main.rs).
    umbra::memory::keep_freed_memory();
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

    // The job and the same job without check and proof, in turn, five times each.
    let mut k = 0;
    let job = || {
        k += 1;
        let opts = umbra::films::RunOptions {
            out: dir.path().join(format!("out{k}")),
            force: true,
            board_name: "bench".into(),
            vector: false,
            date: "2026-01-01".into(),
        };
        umbra::films::run(&board, &profile, None, &opts, &|_| {}).unwrap()
    };
    // The same job without the check and the proof: films, layout, sheets (PNG) and PDF, as
    // films::run does them (no manifest or output folder: if anything, the reference is
    // the shorter).
    let mut k2 = 0;
    let reference = || {
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
    };
    let ((t_job, c_job, summary), (t_reference, c_reference, ())) = best_in_turn(5, job, reference);
    let (t_plain, c_plain, (films, frame, _)) = best_s(3, || {
        umbra::films::make_films(&board, &profile, None, "bench", "2026-01-01").unwrap()
    });
    let (t_check, c_check, mut report) = best_s(3, || {
        umbra::check::check_films(&films, &board, &frame.board, &profile.limits)
    });
    let proof = dir.path().join("proof.png");
    // The proof's picture (drawn beside the check in the job) and its findings (after it).
    let base = || {
        umbra::proof::board_proof_base(
            "bench",
            &films,
            &board,
            &frame,
            profile.artwork.target_size_mm,
            profile.limits.proof_px_per_mm,
        )
    };
    let (t_base, c_base, _) = best_s(3, base);
    let (t_finish, c_finish, _) = best_s(3, || {
        umbra::proof::write_finished_proof(&proof, "proof.png", base(), &mut report).unwrap()
    });
    let ms = |wall: f64, cpu: f64| format!("{:7.1} ms [CPU {:6.1} ms]", wall * 1e3, cpu * 1e3);
    println!("load average {}", load_average());
    println!("films job (with check and proof): {}", ms(t_job, c_job));
    println!(
        "same job without them:            {}",
        ms(t_reference, c_reference)
    );
    println!("  films rendered:                 {}", ms(t_plain, c_plain));
    println!("  check alone:                    {}", ms(t_check, c_check));
    println!("  proof's picture alone:          {}", ms(t_base, c_base));
    println!(
        "  the whole proof:                {}",
        ms(t_finish, c_finish)
    );
    println!(
        "overhead: {:.0} % wall [CPU {:.0} %] (the check runs beside the sheets and the PDF); \
         target <= 50 %",
        100.0 * (t_job / t_reference - 1.0),
        100.0 * (c_job / c_reference - 1.0)
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
