//! Layer identity: what a fabrication file is (copper, solder mask, legend, paste, outline,
//! drill, …) and which side of the board it belongs to.
//!
//! The film rules (TRADE.md) depend on the function and side of each layer: mirroring,
//! polarity and edge offset all change with them, so a wrong guess spoils a film. Sources of
//! identity, strongest first:
//! 1. X2 file attributes (`.FileFunction`, `.FilePolarity`), Gerber Layer Format
//!    Specification rev 2024.05, §5.6.3 and §5.6.4 — [`from_attributes`];
//! 2. the file-name conventions of the trade — [`from_file_name`] (in `layers/names.rs`);
//! 3. weak hints in the content (`%LN`/`%IN` names, `G04` layer comments, an Excellon
//!    header) — [`from_content`];
//! 4. a Gerber job file (`.gbrjob`), applied by the caller — [`read_job_file`].
//!
//! [`identify`] applies 1–3 in that order.

use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt;

mod names;

pub use names::{from_content, from_file_name, is_not_a_layer};

/// What a layer is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LayerFunction {
    Copper,
    SolderMask,
    /// Silkscreen / component marking.
    Legend,
    /// Solder paste (stencil).
    Paste,
    /// The board edge (Gerber "Profile"), also called outline, edge cuts or contour.
    Outline,
    /// Drilled or milled holes (an Excellon file, or a Gerber drill layer).
    Drill,
    /// A drawing of the holes with symbols (Gerber "Drillmap").
    DrillMap,
    /// An assembly drawing.
    Assembly,
    /// Fabrication or dimension drawings, keep-outs and other mechanical layers.
    Mechanical,
    /// Anything else (glue, carbon mask, via fill, V-cut, documentation …).
    Other,
}

/// Which side of the board a layer belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Side {
    Top,
    Bottom,
    /// The n-th inner copper layer counted from the top (1-based), i.e. copper layer n + 1.
    Inner(u32),
    /// The whole board: through holes and the board outline.
    Both,
    /// Drawings and other layers that belong to no side.
    NotApplicable,
}

/// Where an identity came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum IdSource {
    /// X2 file attributes in the file itself.
    Attribute,
    /// File-name conventions.
    FileName,
    /// Hints in the file content.
    Content,
    /// A Gerber job file (`.gbrjob`).
    JobFile,
}

/// `.FilePolarity` (Gerber spec 2024.05 §5.6.4): whether the dark parts of the image show
/// where material is present (Positive) or absent (Negative; solder masks are usually written
/// this way, the image showing the openings).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FilePolarity {
    Positive,
    Negative,
}

/// The identity of one fabrication file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
pub struct LayerId {
    pub function: LayerFunction,
    pub side: Side,
    /// Copper layer number counted from the top (1 = top), when known.
    pub copper_layer: Option<u32>,
    /// For drill layers and profiles: plated (true), non-plated (false) or unknown/mixed.
    pub plated: Option<bool>,
    /// `.FilePolarity`, when the file states it.
    pub polarity: Option<FilePolarity>,
    pub source: IdSource,
}

impl LayerId {
    /// An identity with no copper number, plating or polarity.
    pub fn new(function: LayerFunction, side: Side, source: IdSource) -> LayerId {
        let copper_layer = match (function, side) {
            (LayerFunction::Copper, Side::Top) => Some(1),
            (LayerFunction::Copper, Side::Inner(n)) => Some(n + 1),
            _ => None,
        };
        LayerId {
            function,
            side,
            copper_layer,
            plated: None,
            polarity: None,
            source,
        }
    }

    pub fn with_plated(mut self, plated: Option<bool>) -> LayerId {
        self.plated = plated;
        self
    }

    pub fn with_polarity(mut self, polarity: Option<FilePolarity>) -> LayerId {
        self.polarity = polarity;
        self
    }

    /// The description with its source, e.g. "solder mask top (from X2 attributes)".
    pub fn describe(&self) -> String {
        format!("{} ({})", self, self.source)
    }
}

impl fmt::Display for LayerFunction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            LayerFunction::Copper => "copper",
            LayerFunction::SolderMask => "solder mask",
            LayerFunction::Legend => "legend",
            LayerFunction::Paste => "paste",
            LayerFunction::Outline => "outline",
            LayerFunction::Drill => "drill",
            LayerFunction::DrillMap => "drill map",
            LayerFunction::Assembly => "assembly",
            LayerFunction::Mechanical => "mechanical",
            LayerFunction::Other => "other",
        })
    }
}

impl fmt::Display for Side {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Side::Top => f.write_str("top"),
            Side::Bottom => f.write_str("bottom"),
            Side::Inner(n) => write!(f, "inner {n}"),
            Side::Both => f.write_str("both sides"),
            Side::NotApplicable => f.write_str("no side"),
        }
    }
}

impl fmt::Display for IdSource {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            IdSource::Attribute => "from X2 attributes",
            IdSource::FileName => "from the file name",
            IdSource::Content => "from hints in the content",
            IdSource::JobFile => "from the job file",
        })
    }
}

/// "copper top", "copper inner 2", "solder mask bottom", "outline", "drill plated".
impl fmt::Display for LayerId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.function)?;
        match self.side {
            Side::Both | Side::NotApplicable => {}
            side => write!(f, " {side}")?,
        }
        match (self.function, self.plated) {
            (LayerFunction::Drill | LayerFunction::Outline, Some(true)) => f.write_str(" plated"),
            (LayerFunction::Drill | LayerFunction::Outline, Some(false)) => {
                f.write_str(" non-plated")
            }
            _ => Ok(()),
        }
    }
}

/// Looks an attribute up by name, with or without the leading dot.
fn attribute<'a>(attrs: &'a BTreeMap<String, Vec<String>>, name: &str) -> Option<&'a [String]> {
    attrs
        .get(name)
        .or_else(|| attrs.get(&format!(".{name}")))
        .map(|v| v.as_slice())
}

/// `.FilePolarity` from the attributes (Gerber spec 2024.05 §5.6.4).
pub fn polarity_from_attributes(attrs: &BTreeMap<String, Vec<String>>) -> Option<FilePolarity> {
    let v = attribute(attrs, "FilePolarity")?;
    match v.first()?.trim().to_ascii_lowercase().as_str() {
        "positive" => Some(FilePolarity::Positive),
        "negative" => Some(FilePolarity::Negative),
        _ => None,
    }
}

/// The identity stated by X2 file attributes: `.FileFunction` and `.FilePolarity`
/// (Gerber spec 2024.05 §5.6.3, §5.6.4). `attrs` maps attribute names (with or without the
/// leading dot) to their comma-separated values.
pub fn from_attributes(attrs: &BTreeMap<String, Vec<String>>) -> Option<LayerId> {
    let values = attribute(attrs, "FileFunction")?;
    let id = from_file_function(values, IdSource::Attribute)?;
    Some(id.with_polarity(polarity_from_attributes(attrs)))
}

fn position_side(v: Option<&String>) -> Option<Side> {
    match v?.trim().to_ascii_lowercase().as_str() {
        "top" => Some(Side::Top),
        "bot" | "bottom" => Some(Side::Bottom),
        _ => None,
    }
}

/// Parses the values of a `.FileFunction` attribute (Gerber spec 2024.05 §5.6.3), e.g.
/// `["Copper", "L2", "Inr", "Plane"]`. Names are compared without regard to case because
/// job files of some writers spell them `SolderMask`/`SolderPaste`.
pub fn from_file_function(values: &[String], source: IdSource) -> Option<LayerId> {
    use LayerFunction as F;
    let kind = values.first()?.trim().to_ascii_lowercase();
    let side_or_none = position_side(values.get(1)).unwrap_or(Side::NotApplicable);
    let id = match kind.as_str() {
        // Copper,L<p>,(Top|Inr|Bot)[,<type>]
        "copper" => {
            let layer: Option<u32> = values
                .get(1)
                .and_then(|l| l.trim().trim_start_matches(['L', 'l']).parse().ok())
                .filter(|&n| n >= 1);
            let side = match values.get(2).map(|s| s.trim().to_ascii_lowercase()) {
                Some(s) if s == "top" => Side::Top,
                Some(s) if s == "bot" || s == "bottom" => Side::Bottom,
                Some(s) if s == "inr" => Side::Inner(layer?.checked_sub(1).filter(|&n| n >= 1)?),
                // No position given: L1 is the top by definition (§5.6.3), others unknown.
                _ if layer == Some(1) => Side::Top,
                _ => return None,
            };
            let mut id = LayerId::new(F::Copper, side, source);
            id.copper_layer = layer.or(id.copper_layer);
            id
        }
        // Plated,i,j,(PTH|Blind|Buried)[,<label>] and NonPlated,… (§5.6.3 drill and rout).
        "plated" => LayerId::new(F::Drill, Side::Both, source).with_plated(Some(true)),
        "nonplated" => LayerId::new(F::Drill, Side::Both, source).with_plated(Some(false)),
        // Not in the spec; written by some programs for one file holding both kinds.
        "mixedplating" => LayerId::new(F::Drill, Side::Both, source),
        // Profile,(P|NP); some writers omit the plating field.
        "profile" => {
            let plated = match values.get(1).map(|s| s.trim().to_ascii_uppercase()) {
                Some(s) if s == "P" => Some(true),
                Some(s) if s == "NP" => Some(false),
                _ => None,
            };
            LayerId::new(F::Outline, Side::Both, source).with_plated(plated)
        }
        "soldermask" => LayerId::new(F::SolderMask, position_side(values.get(1))?, source),
        "legend" => LayerId::new(F::Legend, position_side(values.get(1))?, source),
        "paste" | "solderpaste" => LayerId::new(F::Paste, position_side(values.get(1))?, source),
        "drillmap" => LayerId::new(F::DrillMap, Side::NotApplicable, source),
        "assemblydrawing" => LayerId::new(F::Assembly, side_or_none, source),
        "fabricationdrawing" | "arraydrawing" | "vcutmap" | "otherdrawing" | "keepout"
        | "drawing" => LayerId::new(F::Mechanical, side_or_none, source),
        "component" => LayerId::new(
            F::Other,
            position_side(values.get(2)).unwrap_or(Side::NotApplicable),
            source,
        ),
        "glue" | "carbonmask" | "goldmask" | "heatsinkmask" | "peelablemask" | "silvermask"
        | "tinmask" | "depthrout" | "vcut" | "viafill" | "pads" | "other" => {
            LayerId::new(F::Other, side_or_none, source)
        }
        _ => return None,
    };
    Some(id)
}

/// Collects the file attributes a file states, without parsing the rest of it:
/// `%TF.<name>,<values>*%` (Gerber spec 2024.05 §5.2), the same inside `G04 #@! TF.…*`
/// comments (written by programs before X2 was common, the form the spec suggests for
/// compatibility), and `; #@! TF.…` comment lines in Excellon files.
/// Names are stored without the leading dot; later values replace earlier ones.
pub fn scan_file_attributes(text: &str) -> BTreeMap<String, Vec<String>> {
    let mut attrs = BTreeMap::new();
    for line in text.split(['\n', '\r']) {
        let line = line.trim();
        if let Some(rest) = line
            .strip_prefix(';')
            .map(str::trim_start)
            .and_then(|r| r.strip_prefix("#@!"))
        {
            if let Some(body) = rest.trim_start().strip_prefix("TF.") {
                insert_attribute(&mut attrs, body.trim_end_matches('*'));
            }
            continue;
        }
        if let Some(rest) = line.strip_prefix("G04") {
            if let Some(body) = rest.trim_start().strip_prefix("#@!") {
                if let Some(body) = body.trim_start().strip_prefix("TF.") {
                    insert_attribute(&mut attrs, body.split('*').next().unwrap_or(""));
                }
            }
            continue;
        }
        // Several extended commands may share a line: %TF.A,1*%%TF.B,2*%.
        let mut rest = line;
        while let Some(i) = rest.find("%TF.") {
            let body = &rest[i + 4..];
            let end = body.find('*').unwrap_or(body.len());
            insert_attribute(&mut attrs, &body[..end]);
            rest = &body[end..];
        }
    }
    attrs
}

fn insert_attribute(attrs: &mut BTreeMap<String, Vec<String>>, body: &str) {
    let mut parts = body.split(',');
    let name = parts.next().unwrap_or("").trim();
    if name.is_empty() {
        return;
    }
    attrs.insert(
        name.to_string(),
        parts.map(|s| s.trim().to_string()).collect(),
    );
}

/// The identity of a file: X2 attributes first, then the file name, then hints in the
/// content. `attrs` are the file attributes the reader found; when empty, they are scanned
/// from `content` (Excellon files carry them in comments the drill reader does not keep).
/// The polarity attribute is kept even when only the name or content gives the function.
/// Files that are clearly not layers (licences, read-me files, CAM reports, job files) give
/// `None`.
pub fn identify(
    name: &str,
    attrs: &BTreeMap<String, Vec<String>>,
    content: &str,
) -> Option<LayerId> {
    if is_not_a_layer(name) {
        return None;
    }
    let scanned;
    let attrs = if attrs.is_empty() {
        scanned = scan_file_attributes(content);
        &scanned
    } else {
        attrs
    };
    if let Some(id) = from_attributes(attrs) {
        return Some(id);
    }
    let id = from_file_name(name).or_else(|| from_content(content))?;
    Some(match id.polarity {
        Some(_) => id,
        None => id.with_polarity(polarity_from_attributes(attrs)),
    })
}

/// What a Gerber job file (`.gbrjob`, the JSON job format Ucamco publishes beside the layer
/// format) says about the board and its files.
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
pub struct JobFile {
    /// `GeneralSpecs.ProjectId.Name` (or `Overall.Name.ProjectId` of older writers).
    pub project: Option<String>,
    /// `GeneralSpecs.Size` in millimetres.
    pub size_mm: Option<(f64, f64)>,
    /// `GeneralSpecs.LayerNumber`: the number of copper layers.
    pub copper_layers: Option<u32>,
    /// `FilesAttributes`: each file's path and identity.
    pub files: Vec<(String, LayerId)>,
}

/// Parses a Gerber job file. Entries whose function is unknown are skipped.
pub fn parse_job_file(json_text: &str) -> Result<JobFile, serde_json::Error> {
    let v: serde_json::Value = serde_json::from_str(json_text)?;
    let specs = v.get("GeneralSpecs").or_else(|| v.get("Overall"));
    let project = specs
        .and_then(|s| {
            s.pointer("/ProjectId/Name")
                .or_else(|| s.pointer("/Name/ProjectId"))
        })
        .and_then(|n| n.as_str())
        .map(str::to_string);
    let size_mm = specs.and_then(|s| {
        let size = s.get("Size")?;
        Some((size.get("X")?.as_f64()?, size.get("Y")?.as_f64()?))
    });
    let copper_layers = specs
        .and_then(|s| s.get("LayerNumber"))
        .and_then(|n| n.as_u64())
        .and_then(|n| u32::try_from(n).ok());
    let mut files = Vec::new();
    if let Some(list) = v.get("FilesAttributes").and_then(|f| f.as_array()) {
        for entry in list {
            let Some(path) = entry.get("Path").and_then(|p| p.as_str()) else {
                continue;
            };
            let Some(function) = entry.get("FileFunction").and_then(|p| p.as_str()) else {
                continue;
            };
            let values: Vec<String> = function.split(',').map(|s| s.trim().to_string()).collect();
            let Some(mut id) = from_file_function(&values, IdSource::JobFile) else {
                continue;
            };
            id.polarity = match entry.get("FilePolarity").and_then(|p| p.as_str()) {
                Some(p) if p.eq_ignore_ascii_case("positive") => Some(FilePolarity::Positive),
                Some(p) if p.eq_ignore_ascii_case("negative") => Some(FilePolarity::Negative),
                _ => None,
            };
            files.push((path.to_string(), id));
        }
    }
    Ok(JobFile {
        project,
        size_mm,
        copper_layers,
        files,
    })
}

/// The file list of a Gerber job file: `(path, identity)` per entry of `FilesAttributes`.
/// A job file that is not valid JSON gives an empty list (use [`parse_job_file`] to see why).
pub fn read_job_file(json_text: &str) -> Vec<(String, LayerId)> {
    parse_job_file(json_text)
        .map(|j| j.files)
        .unwrap_or_default()
}
