//! The optional job file (TOML) that travels with a board: its name, which file is which
//! layer, which films to make, and per-layer overrides of the profile's decisions.
//!
//! ```toml
//! board = "Wren soil-moisture node rev B"
//! maker_lab = "Larkspur Community Workshop"
//!
//! [[files]]
//! name = "wren-node.top-copper.gbr"
//! layer = "copper top"
//!
//! [films]          # same keys as the profile's [films]; replaces it for this board
//! legend = true
//!
//! [layers.copper]  # same keys as the profile's [layers.*]
//! extra_um = 10
//! ```

use crate::layers::{IdSource, LayerFunction, LayerId, Side};
use crate::process::{FilmsSection, LayerOverrides, ProfileError};
use serde::Deserialize;

/// One file named in the job file.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobFileEntry {
    pub name: String,
    /// "copper top", "copper bottom", "copper inner 1", "solder mask top", "legend bottom",
    /// "paste top", "outline", "drill", or "ignore".
    pub layer: String,
}

/// A board's job file.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Job {
    pub board: Option<String>,
    pub maker_lab: Option<String>,
    /// Informational: the board's size as designed.
    pub size_mm: Option<[f64; 2]>,
    /// Informational: how many copper layers the board has.
    pub copper_layers: Option<u32>,
    pub files: Vec<JobFileEntry>,
    pub films: Option<FilmsSection>,
    pub layers: Option<LayerOverrides>,
}

/// The file name umbra looks for next to a board's files.
pub const JOB_FILE_SUFFIX: &str = ".umbra-job.toml";

impl Job {
    pub fn from_toml(text: &str, file: &str) -> Result<Job, ProfileError> {
        let job: Job = toml::from_str(text).map_err(|e| ProfileError {
            file: file.to_string(),
            pos: e.span().map(|s| crate::diag::Pos::of_offset(text, s.start)),
            message: e.message().trim().to_string(),
        })?;
        for f in &job.files {
            if f.layer.trim() != "ignore" && parse_layer(&f.layer).is_none() {
                return Err(ProfileError {
                    file: file.to_string(),
                    pos: text
                        .find(&format!("\"{}\"", f.layer))
                        .map(|o| crate::diag::Pos::of_offset(text, o)),
                    message: format!(
                        "\"{}\" is not a layer name; use e.g. \"copper top\", \"copper bottom\", \"solder mask top\", \"legend top\", \"paste bottom\", \"outline\", \"drill\" or \"ignore\"",
                        f.layer
                    ),
                });
            }
        }
        Ok(job)
    }

    /// The identity the job file gives `base_name`: `Some(None)` for "ignore".
    pub fn layer_of(&self, base_name: &str) -> Option<Option<LayerId>> {
        self.files
            .iter()
            .find(|f| f.name == base_name)
            .map(|f| parse_layer(&f.layer))
    }
}

/// Parses a layer name as the job file writes it.
pub fn parse_layer(text: &str) -> Option<LayerId> {
    let t = text.trim().to_ascii_lowercase();
    let words: Vec<&str> = t.split_whitespace().collect();
    let side = |w: Option<&&str>| -> Option<Side> {
        match w.copied() {
            Some("top") => Some(Side::Top),
            Some("bottom") | Some("bot") => Some(Side::Bottom),
            _ => None,
        }
    };
    let id = |f, s| Some(LayerId::new(f, s, IdSource::JobFile));
    match words.as_slice() {
        ["copper", "inner", n] => id(LayerFunction::Copper, Side::Inner(n.parse().ok()?)),
        ["copper", rest @ ..] => id(LayerFunction::Copper, side(rest.first())?),
        ["solder", "mask", rest @ ..] | ["mask", rest @ ..] | ["soldermask", rest @ ..] => {
            id(LayerFunction::SolderMask, side(rest.first())?)
        }
        ["legend", rest @ ..] | ["silkscreen", rest @ ..] => {
            id(LayerFunction::Legend, side(rest.first())?)
        }
        ["paste", rest @ ..] => id(LayerFunction::Paste, side(rest.first())?),
        ["outline"] | ["profile"] => id(LayerFunction::Outline, Side::Both),
        ["drill", ..] => id(LayerFunction::Drill, Side::Both),
        _ => None,
    }
}

/// Reads the inputs of a board and its job file: `job_path` when given, else a
/// `*.umbra-job.toml` among the inputs. An empty input is an error. Messages are for the user.
pub fn collect_board_inputs(
    paths: &[std::path::PathBuf],
    job_path: Option<&std::path::Path>,
    limits: &crate::limits::Limits,
) -> Result<(Vec<crate::load::InputFile>, Option<Job>), String> {
    let inputs = crate::load::collect_inputs(paths, limits).map_err(|e| e.to_string())?;
    if inputs.is_empty() {
        return Err(format!(
            "no files found in {}",
            paths
                .iter()
                .map(|p| p.display().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    let job = match job_path {
        Some(p) => {
            let text = std::fs::read_to_string(p).map_err(|e| format!("{}: {e}", p.display()))?;
            Some(Job::from_toml(&text, &p.display().to_string()).map_err(|e| e.to_string())?)
        }
        None => match inputs.iter().find(|f| f.name.ends_with(JOB_FILE_SUFFIX)) {
            Some(f) => Some(
                Job::from_toml(&String::from_utf8_lossy(&f.bytes), &f.name)
                    .map_err(|e| e.to_string())?,
            ),
            None => None,
        },
    };
    Ok((inputs, job))
}
