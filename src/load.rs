//! Loading a board: files, folders and .zip archives in; identified, parsed layers out.
//!
//! Identity comes from X2 attributes first, then the file-name conventions of the trade,
//! then content hints; a job file (`.gbrjob`) overrides names it lists.

use crate::diag::{InputError, Warning};
use crate::excellon::{self, DrillFile};
use crate::gerber::{self, GerberFile};
use crate::layers::{self, LayerId};
use crate::limits::Limits;
use std::io::Read;
use std::path::{Path, PathBuf};

/// Raw bytes of one input file, with the name used in messages.
#[derive(Debug, Clone)]
pub struct InputFile {
    /// As the user would recognise it: `folder/top.gbr` or `board.zip:gerbers/top.gbr`.
    pub name: String,
    pub bytes: Vec<u8>,
}

impl InputFile {
    /// The last component of the name, without folders or archive prefix.
    pub fn base_name(&self) -> &str {
        let after_zip = self.name.rsplit(':').next().unwrap_or(&self.name);
        after_zip.rsplit(['/', '\\']).next().unwrap_or(after_zip)
    }
}

/// Why loading failed before any file could be read as Gerber or drill data.
#[derive(Debug, thiserror::Error)]
pub enum LoadError {
    #[error("{path}: {source}")]
    Io {
        path: String,
        source: std::io::Error,
    },
    #[error("{path}: not a readable .zip archive: {message}")]
    Zip { path: String, message: String },
    #[error("{path}: the file is {size} bytes, over the limit of {limit} bytes")]
    TooLarge { path: String, size: u64, limit: u64 },
    #[error("{0}")]
    Input(#[from] InputError),
    #[error("{0}")]
    Other(String),
}

fn io_err(path: &Path, source: std::io::Error) -> LoadError {
    LoadError::Io {
        path: path.display().to_string(),
        source,
    }
}

/// Reads every file named by `paths`: plain files, folders (recursively, sorted by name) and
/// `.zip` archives (every entry).
pub fn collect_inputs(paths: &[PathBuf], limits: &Limits) -> Result<Vec<InputFile>, LoadError> {
    let mut out = Vec::new();
    for p in paths {
        let meta = std::fs::metadata(p).map_err(|e| io_err(p, e))?;
        if meta.is_dir() {
            let mut files = Vec::new();
            walk(p, &mut files)?;
            files.sort();
            for f in files {
                read_path(&f, limits, &mut out)?;
            }
        } else {
            read_path(p, limits, &mut out)?;
        }
    }
    Ok(out)
}

fn walk(dir: &Path, out: &mut Vec<PathBuf>) -> Result<(), LoadError> {
    for entry in std::fs::read_dir(dir).map_err(|e| io_err(dir, e))? {
        let entry = entry.map_err(|e| io_err(dir, e))?;
        let path = entry.path();
        let name = entry.file_name();
        if name.to_string_lossy().starts_with('.') {
            continue; // hidden files and our own temporaries
        }
        let ft = entry.file_type().map_err(|e| io_err(&path, e))?;
        if ft.is_dir() {
            walk(&path, out)?;
        } else if ft.is_file() {
            out.push(path);
        }
    }
    Ok(())
}

fn read_path(path: &Path, limits: &Limits, out: &mut Vec<InputFile>) -> Result<(), LoadError> {
    let size = std::fs::metadata(path).map_err(|e| io_err(path, e))?.len();
    if size > limits.max_file_bytes {
        return Err(LoadError::TooLarge {
            path: path.display().to_string(),
            size,
            limit: limits.max_file_bytes,
        });
    }
    let bytes = std::fs::read(path).map_err(|e| io_err(path, e))?;
    let name = path.display().to_string();
    if bytes.starts_with(b"PK\x03\x04") || bytes.starts_with(b"PK\x05\x06") {
        read_zip(&name, bytes, limits, out)
    } else {
        out.push(InputFile { name, bytes });
        Ok(())
    }
}

fn read_zip(
    name: &str,
    bytes: Vec<u8>,
    limits: &Limits,
    out: &mut Vec<InputFile>,
) -> Result<(), LoadError> {
    let zip_err = |e: zip::result::ZipError| LoadError::Zip {
        path: name.to_string(),
        message: e.to_string(),
    };
    let mut archive = zip::ZipArchive::new(std::io::Cursor::new(bytes)).map_err(zip_err)?;
    let mut entries = Vec::new();
    for i in 0..archive.len() {
        let mut f = archive.by_index(i).map_err(zip_err)?;
        if f.is_dir() {
            continue;
        }
        let entry_name = f.name().map_err(zip_err)?.to_string();
        if entry_name.starts_with("__MACOSX/")
            || entry_name
                .rsplit('/')
                .next()
                .is_some_and(|b| b.starts_with('.'))
        {
            continue;
        }
        if f.size() > limits.max_file_bytes {
            return Err(LoadError::TooLarge {
                path: format!("{name}:{entry_name}"),
                size: f.size(),
                limit: limits.max_file_bytes,
            });
        }
        let mut data = Vec::with_capacity(f.size() as usize);
        // Read at most one byte past the limit: the declared size may lie.
        (&mut f)
            .take(limits.max_file_bytes + 1)
            .read_to_end(&mut data)
            .map_err(|e| LoadError::Zip {
                path: format!("{name}:{entry_name}"),
                message: e.to_string(),
            })?;
        if data.len() as u64 > limits.max_file_bytes {
            return Err(LoadError::TooLarge {
                path: format!("{name}:{entry_name}"),
                size: data.len() as u64,
                limit: limits.max_file_bytes,
            });
        }
        entries.push(InputFile {
            name: format!("{name}:{entry_name}"),
            bytes: data,
        });
    }
    entries.sort_by(|a, b| a.name.cmp(&b.name));
    out.extend(entries);
    Ok(())
}

/// What a file turned out to be.
#[derive(Debug, Clone)]
pub enum Content {
    Gerber(Box<GerberFile>),
    Drill(Box<DrillFile>),
    /// A Gerber X2 job file (JSON).
    Job,
    /// Not fabrication data (licence, readme, report); kept so `inspect` can list it.
    Other {
        why: String,
    },
}

/// One input file after reading.
#[derive(Debug, Clone)]
pub struct LoadedFile {
    pub name: String,
    pub base_name: String,
    pub bytes: usize,
    pub id: Option<LayerId>,
    pub content: Content,
}

/// Everything read from the user's inputs.
#[derive(Debug, Clone, Default)]
pub struct Board {
    pub files: Vec<LoadedFile>,
    /// Board-level warnings (job file, duplicates); per-file warnings live in the files.
    pub warnings: Vec<Warning>,
    /// The board's name from the job file, if any.
    pub job_name: Option<String>,
}

impl Board {
    /// A name for a board whose job file gives none, from what the user passed: a single
    /// folder, archive or file gives its own name; several files give the part their names
    /// share (`wren-node.top.gbr`, `wren-node.bottom.gbr` → `wren-node`), counting only the
    /// files read as Gerber or drill files (a licence or a note beside them says nothing of
    /// the board), else the first file's name.
    pub fn default_name(&self, inputs: &[PathBuf]) -> String {
        let stem = |p: &Path| p.file_stem().map(|s| s.to_string_lossy().to_string());
        if let [one] = inputs {
            return stem(one).unwrap_or_else(|| "board".into());
        }
        let fabrication: Vec<String> = self
            .files
            .iter()
            .filter(|f| matches!(f.content, Content::Gerber(_) | Content::Drill(_)))
            .filter_map(|f| stem(Path::new(&f.base_name)))
            .collect();
        let shared = fabrication.split_first().map(|(first, rest)| {
            let mut prefix: Vec<char> = first.chars().collect();
            for other in rest {
                let same = prefix
                    .iter()
                    .zip(other.chars())
                    .take_while(|(a, b)| **a == *b)
                    .count();
                prefix.truncate(same);
            }
            let prefix: String = prefix.into_iter().collect();
            prefix.trim_end_matches(['-', '_', '.', ' ']).to_string()
        });
        match shared {
            Some(name) if name.chars().count() >= 3 => name,
            _ => fabrication
                .first()
                .cloned()
                .or_else(|| inputs.first().and_then(|p| stem(p)))
                .unwrap_or_else(|| "board".into()),
        }
    }
}

/// The kind of a file judged from its first bytes.
fn sniff(text: &str) -> Sniffed {
    let head: &str = &text[..text.len().min(8192)];
    let trimmed = head.trim_start_matches('\u{feff}').trim_start();
    if trimmed.starts_with('{') && head.contains("\"Header\"") {
        return Sniffed::Job;
    }
    if excellon::looks_like_drill(text) {
        return Sniffed::Drill;
    }
    // Gerber data starts with a command: an extended command (%), a G/D/M code, a
    // coordinate, or a stray `*`. Prose that merely mentions Gerber commands does not.
    let first = trimmed.chars().next().unwrap_or(' ');
    if !matches!(
        first.to_ascii_uppercase(),
        '%' | 'G' | 'D' | 'M' | 'X' | 'Y' | 'I' | 'J' | '*'
    ) {
        return Sniffed::Other;
    }
    if head.contains("%FS") || head.contains("%MO") || head.contains("%AD") || head.contains("%ADD")
    {
        return Sniffed::Gerber;
    }
    // Old files may put every parameter after some comments; look further for the
    // signatures of Gerber data: D-code selections and D01/D02/D03 operations.
    if head.contains("G04")
        && (head.contains("D02*") || head.contains("D03*") || head.contains("D2*"))
    {
        return Sniffed::Gerber;
    }
    Sniffed::Other
}

enum Sniffed {
    Gerber,
    Drill,
    Job,
    Other,
}

/// Reads and identifies every input. A file that is Gerber or drill data but fails to parse
/// is an error (it would silently drop a layer otherwise).
pub fn load_board(inputs: &[InputFile], limits: &Limits) -> Result<Board, LoadError> {
    let mut board = Board::default();
    let mut job_ids: Vec<(String, LayerId)> = Vec::new();
    // Parse in parallel: files are independent.
    use rayon::prelude::*;
    // Drill-format information files (e.g. an Allegro `nc_param.txt`, an EAGLE `.dri`) tell
    // how to read drill files that state no format; they apply to drill files beside them.
    let hints: Vec<(&str, excellon::FormatHint)> = inputs
        .iter()
        .filter(|f| !f.bytes.contains(&0))
        .filter_map(|f| {
            let text = String::from_utf8_lossy(&f.bytes);
            match sniff(&text) {
                Sniffed::Other => {
                    excellon::FormatHint::from_info_file(&text).map(|h| (folder_of(&f.name), h))
                }
                _ => None,
            }
        })
        .collect();
    let parsed: Vec<Result<LoadedFile, LoadError>> = inputs
        .par_iter()
        .map(|f| {
            let hint = hints
                .iter()
                .find(|(folder, _)| *folder == folder_of(&f.name))
                .map(|(_, h)| h);
            load_one(f, hint, limits)
        })
        .collect();
    let mut job_names: Vec<String> = Vec::new();
    for (res, input) in parsed.into_iter().zip(inputs) {
        let lf = res?;
        if let Content::Job = lf.content {
            let text = String::from_utf8_lossy(&input.bytes);
            match layers::parse_job_file(&text) {
                Ok(job) => {
                    if let Some(p) = job.project.clone() {
                        if !job_names.contains(&p) {
                            job_names.push(p);
                        }
                    }
                    job_ids.extend(job.files);
                }
                Err(msg) => board.warnings.push(Warning::new(
                    &input.name,
                    None,
                    format!("the job file could not be read and was ignored: {msg}"),
                )),
            }
        }
        board.files.push(lf);
    }
    // Job files naming different boards: the input is probably more than one board, and no
    // one name is right for all of them.
    match job_names.len() {
        0 => {}
        1 => board.job_name = job_names.pop(),
        _ => board.warnings.push(Warning::new(
            "job files",
            None,
            format!(
                "the job files name different boards ({}); is the input more than one \
                 board? No board name was taken from them",
                job_names.join(", ")
            ),
        )),
    }
    // The job file names files by their path as written by the EDA program; match on the
    // base name.
    for (path, id) in job_ids {
        let base = path.rsplit(['/', '\\']).next().unwrap_or(&path).to_string();
        if let Some(f) = board.files.iter_mut().find(|f| f.base_name == base) {
            f.id = Some(id);
        }
    }
    Ok(board)
}

/// The folder part of an input's name (what precedes the last separator).
fn folder_of(name: &str) -> &str {
    name.rfind(['/', '\\']).map(|i| &name[..i]).unwrap_or("")
}

fn load_one(
    input: &InputFile,
    hint: Option<&excellon::FormatHint>,
    limits: &Limits,
) -> Result<LoadedFile, LoadError> {
    let text = String::from_utf8_lossy(&input.bytes);
    let base_name = input.base_name().to_string();
    let mut lf = LoadedFile {
        name: input.name.clone(),
        base_name: base_name.clone(),
        bytes: input.bytes.len(),
        id: None,
        content: Content::Other {
            why: "not Gerber or drill data".into(),
        },
    };
    if input.bytes.contains(&0) {
        lf.content = Content::Other {
            why: "binary file".into(),
        };
        return Ok(lf);
    }
    match sniff(&text) {
        Sniffed::Job => lf.content = Content::Job,
        Sniffed::Drill => {
            let d = match hint {
                Some(h) => excellon::read_with_format_hint(&text, &input.name, limits, h)?,
                None => excellon::read(&text, &input.name, limits)?,
            };
            let named = layers::identify(&base_name, &Default::default(), &text)
                .filter(|id| id.function == layers::LayerFunction::Drill);
            lf.id = Some(named.unwrap_or_else(|| {
                LayerId::new(
                    layers::LayerFunction::Drill,
                    layers::Side::Both,
                    layers::IdSource::Content,
                )
                .with_plated(d.plated)
            }));
            lf.content = Content::Drill(Box::new(d));
        }
        Sniffed::Gerber => {
            let g = gerber::read(&text, &input.name, limits)?;
            lf.id = layers::identify(&base_name, &g.attributes, &text);
            lf.content = Content::Gerber(Box::new(g));
        }
        Sniffed::Other => {}
    }
    Ok(lf)
}

/// Convenience: collect and load in one call.
pub fn load_paths(paths: &[PathBuf], limits: &Limits) -> Result<Board, LoadError> {
    let inputs = collect_inputs(paths, limits)?;
    if inputs.is_empty() {
        return Err(LoadError::Other(format!(
            "no files found in {}",
            paths
                .iter()
                .map(|p| p.display().to_string())
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    load_board(&inputs, limits)
}
