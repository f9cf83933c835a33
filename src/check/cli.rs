//! `umbra check`: renders the films as `umbra films` would (without sheets), checks them,
//! draws the proof picture and prints the table.

use crate::load;
use crate::process::Profile;
use clap::{Args, ValueEnum};
use std::path::PathBuf;
use std::process::ExitCode;

/// What `--deny` turns into a failing exit code.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Deny {
    /// Any finding.
    Warnings,
}

#[derive(Args, Debug)]
pub struct CheckArgs {
    /// The board's Gerber and drill files, a folder, or a .zip archive
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// Process profile (TOML) with the printer, the compensation and the [limits]
    #[arg(long)]
    pub profile: Option<PathBuf>,
    /// Job file (TOML). Default: a `*.umbra-job.toml` among the inputs
    #[arg(long)]
    pub job: Option<PathBuf>,
    /// Print the report as JSON
    #[arg(long)]
    pub json: bool,
    /// Exit with status 1 when there are findings
    #[arg(long, value_enum)]
    pub deny: Option<Deny>,
    /// Where to write the proof picture (replaced if it exists)
    #[arg(long, default_value = "proof.png")]
    pub proof: PathBuf,
    /// Do not write the proof picture
    #[arg(long)]
    pub no_proof: bool,
    /// Board name for the proof's title (default: from the job file, else the input folder's
    /// or archive's name, or the part the Gerber and drill files' names share)
    #[arg(long)]
    pub board_name: Option<String>,
}

/// Runs `umbra check`. Errors are messages for the user.
pub fn run(a: CheckArgs) -> Result<ExitCode, String> {
    let profile = Profile::from_path(a.profile.as_deref())?;
    let limits = &profile.input_limits;
    profile.limits.validate()?;
    let (inputs, job) = crate::job::collect_board_inputs(&a.inputs, a.job.as_deref(), limits)?;
    let board = load::load_board(&inputs, limits).map_err(|e| e.to_string())?;
    let board_name = a
        .board_name
        .clone()
        .or_else(|| job.as_ref().and_then(|j| j.board.clone()))
        .or_else(|| board.job_name.clone())
        .unwrap_or_else(|| board.default_name(&a.inputs));
    let (films, frame, _warnings) =
        crate::films::make_films(&board, &profile, job.as_ref(), &board_name, "")
            .map_err(|e| e.to_string())?;
    let report = if a.no_proof {
        super::check_films(&films, &board, &frame.board, &profile.limits)
    } else {
        let name = a.proof.display().to_string();
        crate::proof::check_with_proof(
            &a.proof,
            &name,
            &board_name,
            &films,
            &board,
            &frame,
            profile.artwork.target_size_mm,
            &profile.limits,
        )
        .map_err(|e| e.to_string())?
    };
    if a.json {
        println!(
            "{}",
            serde_json::to_string_pretty(&report).map_err(|e| e.to_string())?
        );
    } else {
        print!("{}", super::check_text(&report));
    }
    if a.deny == Some(Deny::Warnings) && report.total_findings() > 0 {
        return Ok(ExitCode::from(1));
    }
    Ok(ExitCode::SUCCESS)
}
