//! The `umbra calibrate` subcommands: arguments and what each run prints. The binary only
//! forwards to [`run`]; all calibration logic lives in the sibling modules.

use super::edit;
use super::sheet::{self, SheetOptions};
use super::solve::{self, DotsReading, Readings};
use crate::process::{Profile, DEFAULT_PROFILE_TOML};
use clap::{Args, Subcommand};
use std::path::{Path, PathBuf};

/// The profile file `calibrate solve` edits when none is named (the one `profile init` writes).
pub const DEFAULT_PROFILE_FILE: &str = "umbra-profile.toml";

#[derive(Subcommand, Debug)]
pub enum CalibrateCommand {
    /// Make the calibration sheet (PDF and PNG) at the profile's resolution, sheet and margins
    Sheet(SheetArgs),
    /// Turn your readings of the printed sheet into profile values and write them into the profile
    Solve(SolveArgs),
}

#[derive(Args, Debug)]
pub struct SheetArgs {
    /// Process profile (TOML); default: the built-in defaults
    #[arg(long)]
    pub profile: Option<PathBuf>,
    /// Output PDF; a PNG of the same name is written beside it
    #[arg(short = 'o', long, default_value = "calibration.pdf")]
    pub out: PathBuf,
    /// Replace existing output files
    #[arg(long)]
    pub force: bool,
    /// Date printed on the label, e.g. 2026-12-02 (default: today)
    #[arg(long)]
    pub date: Option<String>,
}

#[derive(Args, Debug)]
pub struct SolveArgs {
    /// The profile to update (TOML); created from the defaults if it does not exist yet
    #[arg(long, default_value = DEFAULT_PROFILE_FILE)]
    pub profile: PathBuf,
    /// Measured length of the X ruler (bottom) from 0 to its last number, mm
    #[arg(long, value_name = "MEASURED_MM")]
    pub ruler_x: Option<f64>,
    /// Measured length of the Y ruler (right edge) from 0 to its last number, mm
    #[arg(long, value_name = "MEASURED_MM")]
    pub ruler_y: Option<f64>,
    /// Nominal X ruler length, if the sheet was printed with another profile's sheet size
    #[arg(long, value_name = "MM")]
    pub nominal_x: Option<f64>,
    /// Nominal Y ruler length, as --nominal-x
    #[arg(long, value_name = "MM")]
    pub nominal_y: Option<f64>,
    /// Narrowest gap still open along its whole length, dots (one value, or X,Y)
    #[arg(long, value_name = "DOTS")]
    pub open_gap: Option<DotsReading>,
    /// Narrowest line printed solid and unbroken, dots (one value, or X,Y)
    #[arg(long, value_name = "DOTS")]
    pub true_line: Option<DotsReading>,
    /// The exposure strip segment that came out best
    #[arg(long, value_name = "N")]
    pub best_segment: Option<u32>,
    /// Show the results without changing the profile
    #[arg(long)]
    pub dry_run: bool,
}

/// Runs one calibrate subcommand; `today` is the date for labels when none is given.
pub fn run(cmd: CalibrateCommand, today: &str) -> Result<(), String> {
    match cmd {
        CalibrateCommand::Sheet(a) => run_sheet(a, today),
        CalibrateCommand::Solve(a) => run_solve(a),
    }
}

fn read_profile(path: &Path) -> Result<(String, Profile), String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let p = Profile::from_toml(&text, &path.display().to_string()).map_err(|e| e.to_string())?;
    Ok((text, p))
}

fn run_sheet(a: SheetArgs, today: &str) -> Result<(), String> {
    let profile = match &a.profile {
        Some(p) => read_profile(p)?.1,
        None => Profile::default(),
    };
    let ext = a
        .out
        .extension()
        .map(|e| e.to_string_lossy().to_ascii_lowercase());
    if ext.as_deref() != Some("pdf") {
        return Err(format!("{}: the output must end in .pdf", a.out.display()));
    }
    let png = a.out.with_extension("png");
    for p in [&a.out, &png] {
        if p.exists() && !a.force {
            return Err(format!(
                "{} already exists; add --force to replace it",
                p.display()
            ));
        }
    }
    let opts = SheetOptions {
        date: a.date.clone().unwrap_or_else(|| today.to_string()),
    };
    let plan = sheet::plan(&profile, &opts).map_err(|e| e.to_string())?;
    let bitmap = plan.render();
    let png = plan.write(&bitmap, &a.out).map_err(|e| e.to_string())?;
    println!(
        "wrote {} and {}: {} {} at {} × {} dpi, X ruler {:.0} mm, Y ruler {:.0} mm, exposure strip of {} segments",
        a.out.display(),
        png.display(),
        profile.sheet.size.name,
        if plan.landscape { "landscape" } else { "portrait" },
        plan.map.dpi_x,
        plan.map.dpi_y,
        plan.ruler_x.length_mm,
        plan.ruler_y.length_mm,
        plan.segments.len()
    );
    println!(
        "Print it at actual size (100 %, no fit to page), then follow the steps on the sheet."
    );
    Ok(())
}

fn run_solve(a: SolveArgs) -> Result<(), String> {
    let exists = a.profile.exists();
    let (text, profile) = if exists {
        read_profile(&a.profile).map_err(|e| format!("{e} (the profile was left as it is)"))?
    } else {
        let text = DEFAULT_PROFILE_TOML.to_string();
        let p = Profile::from_toml(&text, "default profile").map_err(|e| e.to_string())?;
        (text, p)
    };
    let readings = Readings {
        ruler_x_mm: a.ruler_x,
        ruler_y_mm: a.ruler_y,
        nominal_x_mm: a.nominal_x,
        nominal_y_mm: a.nominal_y,
        open_gap: a.open_gap,
        true_line: a.true_line,
        best_segment: a.best_segment,
    };
    let sol = solve::solve(&profile, &readings).map_err(|e| e.to_string())?;
    for line in &sol.derivation {
        println!("{line}");
    }
    for w in &sol.warnings {
        println!("warning: {w}");
    }
    let edits = sol.edits();
    if edits.is_empty() {
        println!("nothing to write into the profile");
        return Ok(());
    }
    let name = a.profile.display().to_string();
    let new_text = edit::set_values(&text, &name, &edits).map_err(|e| e.to_string())?;
    // The edited profile must still be a valid one carrying the new values.
    let check = Profile::from_toml(&new_text, &name).map_err(|e| {
        format!("the edited profile would not load ({e}); the profile was left as it is")
    })?;
    let now = |s: &str, k: &str| match (s, k) {
        ("printer", "scale_x") => Some(check.printer.scale_x),
        ("printer", "scale_y") => Some(check.printer.scale_y),
        ("printer", "toner_spread_um") => Some(check.printer.toner_spread_um),
        ("exposure", "time_s") => check.exposure.time_s,
        _ => None,
    };
    if let Some((s, k, _)) = edits.iter().find(|(s, k, v)| now(s, k) != Some(*v)) {
        return Err(format!(
            "{name}: {s}.{k} is set in more than one place, so umbra cannot change it safely; the profile was left as it is"
        ));
    }
    let changes: Vec<String> = edits
        .iter()
        .map(|(s, k, v)| format!("{s}.{k} = {v}"))
        .collect();
    if a.dry_run {
        println!("dry run: would set {} in {name}", changes.join(", "));
        return Ok(());
    }
    let backup = edit::write_with_backup(&a.profile, &new_text).map_err(|e| e.to_string())?;
    match backup {
        Some(b) => println!(
            "set {} in {name} (previous profile kept as {})",
            changes.join(", "),
            b.display()
        ),
        None => println!(
            "created {name} from the defaults with {}",
            changes.join(", ")
        ),
    }
    if !exists {
        println!("use it with --profile {name}");
    }
    Ok(())
}
