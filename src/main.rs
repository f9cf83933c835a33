//! The `umbra` command line: arguments → library calls → printing. No film logic lives here.

use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;
use umbra::load::{self, Content};
use umbra::process::Profile;

#[derive(Parser, Debug)]
#[command(
    name = "umbra",
    version,
    about = "Turns PCB fabrication files (Gerber, Excellon) into print-ready photomask films",
    long_about = "umbra reads the Gerber and drill files your EDA program made for a board house \
                  and makes the films you need to expose photoresist at home or in the lab: true \
                  scale for your printer, mirrored so the printed side touches the resist, positive \
                  or negative for your resist, with edge compensation, registration targets and labels."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Make the film sheets of a board: PDF, one PNG per sheet, and a manifest
    Films(FilmsArgs),
    /// Render one layer as one film image (no marks, no sheet)
    Render(RenderArgs),
    /// Show what umbra understands of each input file: kind, layer, units, extents, counts
    Inspect {
        /// Gerber or drill files, folders, or .zip archives
        #[arg(required = true)]
        inputs: Vec<PathBuf>,
        /// Process profile (TOML); only its [input_limits] matter here
        #[arg(long)]
        profile: Option<PathBuf>,
        /// Print the report as JSON
        #[arg(long)]
        json: bool,
        /// Print each Gerber file's normalized image as text (one object per line)
        #[arg(long)]
        dump: bool,
    },
    /// Check the films against the process limits and draw a proof picture
    Check(umbra::check::cli::CheckArgs),
    /// Process profiles
    #[command(subcommand)]
    Profile(ProfileCommand),
    /// Calibrate printer and process: print a test sheet, then solve the profile from it
    #[command(subcommand)]
    Calibrate(umbra::calibrate::cli::CalibrateCommand),
}

#[derive(Subcommand, Debug)]
enum ProfileCommand {
    /// Write a fully commented default profile
    Init {
        /// Where to write it
        #[arg(default_value = "umbra-profile.toml")]
        file: PathBuf,
        /// Replace an existing file
        #[arg(long)]
        force: bool,
    },
}

#[derive(Args, Debug)]
struct FilmsArgs {
    /// The board's Gerber and drill files, a folder, or a .zip archive
    #[arg(required = true)]
    inputs: Vec<PathBuf>,
    /// Process profile (TOML); `umbra profile init` writes one with every setting explained
    #[arg(long)]
    profile: Option<PathBuf>,
    /// Job file (TOML): board name, which file is which layer, overrides. Default: a
    /// `*.umbra-job.toml` among the inputs
    #[arg(long)]
    job: Option<PathBuf>,
    /// Output folder
    #[arg(long, short = 'o', default_value = "films")]
    out: PathBuf,
    /// Replace the output folder if it exists
    #[arg(long)]
    force: bool,
    /// Print the summary as JSON
    #[arg(long)]
    json: bool,
    /// No progress display
    #[arg(long, short = 'q')]
    quiet: bool,
    /// Board name for labels (default: from the job file, else the input folder's or archive's
    /// name, or the part the Gerber and drill files' names share)
    #[arg(long)]
    board_name: Option<String>,
    /// Date printed on labels, e.g. 2026-12-02 (default: today)
    #[arg(long)]
    date: Option<String>,
    /// Exposure device, replacing the profile's [device] kind: printer (sheets), lcd (one PNG
    /// per film at the screen's pixel grid) or film-service (one 1-bit TIFF per film)
    #[arg(long, value_parser = ["printer", "lcd", "film-service"])]
    device: Option<String>,
    /// Also write vector films: films-vector.pdf (same sheets) and one SVG per film, with
    /// the edge offset applied exactly instead of in whole pixels
    #[arg(long)]
    vector: bool,
    /// Vector films: largest distance between a true arc and its chords, µm, replacing the
    /// profile's [device] vector_arc_tolerance_um (0 = 1/8 of a printer dot)
    #[arg(long)]
    arc_tolerance_um: Option<f64>,
}

#[derive(Args, Debug)]
struct RenderArgs {
    /// One Gerber file
    file: PathBuf,
    /// Drill files whose holes get drill-centre marks (copper layers)
    #[arg(long)]
    drill: Vec<PathBuf>,
    /// Output image: .png or .pdf
    #[arg(short = 'o', long)]
    out: PathBuf,
    /// Process profile (TOML) giving the defaults
    #[arg(long)]
    profile: Option<PathBuf>,
    /// Resolution in dots per inch (x, and y unless --dpi-y)
    #[arg(long)]
    dpi: Option<f64>,
    /// Resolution along y, for devices with non-square dots
    #[arg(long)]
    dpi_y: Option<f64>,
    /// Film black where the layer has material (copper, mask opening, legend ink)
    #[arg(long, conflicts_with = "negative")]
    positive: bool,
    /// Film clear where the layer has material
    #[arg(long)]
    negative: bool,
    /// Flip left-right
    #[arg(long, conflicts_with = "no_mirror")]
    mirror: bool,
    /// Do not flip
    #[arg(long)]
    no_mirror: bool,
    /// Black edge offset in µm per edge (positive grows black); replaces the profile's
    #[arg(long, allow_hyphen_values = true)]
    edge_offset_um: Option<f64>,
    /// The layer, when umbra cannot tell from the file: e.g. "copper top", "solder mask bottom"
    #[arg(long)]
    layer: Option<String>,
    /// Replace an existing output file
    #[arg(long)]
    force: bool,
}

fn main() -> ExitCode {
    umbra::memory::keep_freed_memory();
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(msg) => {
            eprintln!("umbra: error: {msg}");
            ExitCode::from(2)
        }
    }
}

/// Today's date (UTC) as YYYY-MM-DD, from the civil-from-days algorithm for the proleptic
/// Gregorian calendar.
fn today() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_secs())
        .unwrap_or(0) as i64;
    let z = secs.div_euclid(86_400) + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!("{y:04}-{m:02}-{d:02}")
}

fn run(cli: Cli) -> Result<ExitCode, String> {
    match cli.command {
        Command::Inspect {
            inputs,
            profile,
            json,
            dump,
        } => {
            let limits = Profile::from_path(profile.as_deref())?.input_limits;
            let board = load::load_paths(&inputs, &limits).map_err(|e| e.to_string())?;
            if dump {
                for f in &board.files {
                    if let Content::Gerber(g) = &f.content {
                        println!("# {}", f.name);
                        print!("{}", g.image.dump());
                    }
                }
                return Ok(ExitCode::SUCCESS);
            }
            let report = umbra::inspect::report(&board);
            if json {
                println!(
                    "{}",
                    serde_json::to_string_pretty(&report).map_err(|e| e.to_string())?
                );
            } else {
                print!("{}", umbra::inspect::to_text(&report));
            }
            Ok(ExitCode::SUCCESS)
        }
        Command::Films(a) => films(a),
        Command::Render(a) => render(a),
        Command::Calibrate(c) => {
            umbra::calibrate::cli::run(c, &today()).map(|()| ExitCode::SUCCESS)
        }
        Command::Check(a) => umbra::check::cli::run(a),
        Command::Profile(ProfileCommand::Init { file, force }) => {
            if file.exists() && !force {
                return Err(format!(
                    "{} already exists; add --force to replace it",
                    file.display()
                ));
            }
            let text = umbra::process::DEFAULT_PROFILE_TOML;
            umbra::output::write_atomically(&file, |w| {
                use std::io::Write;
                w.write_all(text.as_bytes())
                    .map_err(|e| umbra::output::OutputError::Io {
                        path: file.clone(),
                        source: e,
                    })
            })
            .map_err(|e| e.to_string())?;
            println!("wrote {}", file.display());
            Ok(ExitCode::SUCCESS)
        }
    }
}

fn films(a: FilmsArgs) -> Result<ExitCode, String> {
    let mut profile = Profile::from_path(a.profile.as_deref())?;
    if let Some(d) = &a.device {
        profile.device.kind = d.parse()?;
        profile.validate()?;
    }
    if let Some(t) = a.arc_tolerance_um {
        umbra::vector::validate_arc_tolerance_um(t, "--arc-tolerance-um")?;
        profile.device.vector_arc_tolerance_um = t;
    }
    let limits = &profile.input_limits;
    // Refuse an existing output folder before doing any work.
    if a.out.exists() && !a.force {
        return Err(format!(
            "{} already exists; choose another --out folder or add --force to replace it",
            a.out.display()
        ));
    }
    let (inputs, job) = umbra::job::collect_board_inputs(&a.inputs, a.job.as_deref(), limits)?;
    let show = !a.quiet && !a.json;
    let bar = indicatif::ProgressBar::new_spinner();
    if !show {
        bar.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    bar.enable_steady_tick(std::time::Duration::from_millis(120));
    bar.set_message("reading files");
    let board = load::load_board(&inputs, limits).map_err(|e| e.to_string())?;
    let board_name = a
        .board_name
        .clone()
        .or_else(|| job.as_ref().and_then(|j| j.board.clone()))
        .or_else(|| board.job_name.clone())
        .unwrap_or_else(|| board.default_name(&a.inputs));
    let opts = umbra::films::RunOptions {
        out: a.out.clone(),
        force: a.force,
        board_name,
        date: a.date.clone().unwrap_or_else(today),
        vector: a.vector,
    };
    let progress = |m: &str| bar.set_message(m.to_string());
    let summary = umbra::films::run(&board, &profile, job.as_ref(), &opts, &progress)
        .map_err(|e| e.to_string())?;
    bar.finish_and_clear();
    if a.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&summary).map_err(|e| e.to_string())?
        );
    } else {
        print!("{}", umbra::films::summary_text(&summary, &a.out));
    }
    Ok(ExitCode::SUCCESS)
}

fn render(a: RenderArgs) -> Result<ExitCode, String> {
    let mut profile = Profile::from_path(a.profile.as_deref())?;
    let limits = &profile.input_limits.clone();
    if let Some(d) = a.dpi {
        profile.printer.dpi = d;
    }
    if let Some(d) = a.dpi_y {
        profile.printer.dpi_y = Some(d);
    }
    profile.validate()?;
    let ext = a
        .out
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase())
        .unwrap_or_default();
    if ext != "png" && ext != "pdf" {
        return Err(format!(
            "{}: the output must end in .png or .pdf",
            a.out.display()
        ));
    }
    if a.out.exists() && !a.force {
        return Err(format!(
            "{} already exists; add --force to replace it",
            a.out.display()
        ));
    }
    let mut paths = vec![a.file.clone()];
    paths.extend(a.drill.iter().cloned());
    let board = load::load_paths(&paths, limits).map_err(|e| e.to_string())?;
    let first = &board.files[0];
    let Content::Gerber(g) = &first.content else {
        return Err(format!("{}: not a Gerber file", a.file.display()));
    };
    let id = match &a.layer {
        Some(l) => umbra::job::parse_layer(l).ok_or_else(|| {
            format!("\"{l}\" is not a layer name; use e.g. \"copper top\" or \"solder mask bottom\"")
        })?,
        None => first.id.ok_or_else(|| {
            format!(
                "{}: umbra cannot tell which layer this is; say it with --layer \"copper top\" (or bottom, solder mask, legend, paste)",
                a.file.display()
            )
        })?,
    };
    let mut recipe = umbra::process::plan(&id, g.image_negative, &profile);
    if a.positive || a.negative {
        recipe.black_is_material = a.positive;
    }
    if a.mirror || a.no_mirror {
        recipe.mirror = a.mirror;
    }
    if let Some(o) = a.edge_offset_um {
        recipe.edge_offset_um = o;
    }
    let drills = umbra::films::drill_files(&board);
    let art = umbra::film::compose::ArtworkOptions {
        registration: false,
        label: false,
        ..Default::default()
    };
    let frame =
        umbra::film::compose::BoardFrame::new(g.image.bounds(), (0.0, 0.0), (0.0, 0.0), &art);
    if frame.board.is_empty() {
        return Err(format!("{}: the layer draws nothing", a.file.display()));
    }
    let job = umbra::film::compose::FilmJob {
        image: &g.image,
        recipe: &recipe,
        drills: &drills,
        frame: &frame,
        label: Vec::new(),
        label_mirrored: false,
        face: None,
        stack_targets: false,
        opts: &art,
    };
    let film = umbra::film::compose::render_film(&job, profile.drill_marks.min_annular_ring_mm);
    match ext.as_str() {
        "png" => {
            umbra::output::png::write_png(&a.out, &film.bitmap, recipe.dpi_x, recipe.dpi_y, true)
                .map_err(|e| e.to_string())?
        }
        _ => {
            let img = umbra::output::pdf::PlacedImage::at_resolution(
                &film.bitmap,
                true,
                0.0,
                0.0,
                recipe.dpi_x,
                recipe.dpi_y,
            );
            let mut page = umbra::output::pdf::PdfPage::new(umbra::output::pdf::PageSize {
                width_pt: img.width_pt,
                height_pt: img.height_pt,
            });
            page.images.push(img);
            umbra::output::pdf::write_pdf(&a.out, &[page]).map_err(|e| e.to_string())?;
        }
    }
    let manifest = serde_json::json!({
        "source": first.name,
        "layer": id.to_string(),
        "recipe": recipe,
        "realized_offset": film.realized,
        "map": film.map,
        "board_to_film_px": film.map.affine(),
        "size_px": [film.bitmap.width(), film.bitmap.height()],
        "warnings": film.warnings,
    });
    let mpath = a.out.with_extension(format!("{ext}.json"));
    let text = serde_json::to_string_pretty(&manifest).map_err(|e| e.to_string())?;
    umbra::output::write_atomically(&mpath, |w| {
        use std::io::Write;
        w.write_all(text.as_bytes())
            .map_err(|e| umbra::output::OutputError::Io {
                path: mpath.clone(),
                source: e,
            })
    })
    .map_err(|e| e.to_string())?;
    println!(
        "{}: {} film, {} x {} px at {} x {} dpi, {}, {}, edge offset {:+.1} µm requested, {:+.1} µm realized",
        a.out.display(),
        id,
        film.bitmap.width(),
        film.bitmap.height(),
        recipe.dpi_x,
        recipe.dpi_y,
        if recipe.black_is_material { "black = material" } else { "clear = material" },
        if recipe.mirror { "mirrored" } else { "as drawn" },
        recipe.edge_offset_um,
        film.realized.x_um
    );
    for w in &film.warnings {
        eprintln!("warning: {w}");
    }
    for f in &board.files {
        if let Content::Gerber(g) = &f.content {
            for w in &g.warnings {
                eprintln!("{w}");
            }
        }
    }
    Ok(ExitCode::SUCCESS)
}
