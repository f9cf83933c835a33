//! The `umbra` command line: arguments → library calls → printing. No film logic lives here.

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;
use umbra::limits::Limits;

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
    /// Show what umbra understands of each input file: kind, layer, units, extents, counts
    Inspect {
        /// Gerber or drill files, folders, or .zip archives
        #[arg(required = true)]
        inputs: Vec<PathBuf>,
        /// Print the report as JSON
        #[arg(long)]
        json: bool,
        /// Print each Gerber file's normalized image as text (one object per line)
        #[arg(long)]
        dump: bool,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(msg) => {
            eprintln!("umbra: error: {msg}");
            ExitCode::from(2)
        }
    }
}

fn run(cli: Cli) -> Result<ExitCode, String> {
    let limits = Limits::default();
    match cli.command {
        Command::Inspect { inputs, json, dump } => {
            let board = umbra::load::load_paths(&inputs, &limits).map_err(|e| e.to_string())?;
            if dump {
                for f in &board.files {
                    if let umbra::load::Content::Gerber(g) = &f.content {
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
    }
}
