//! The process profile (the user's printer, resist and etch, as TOML) and the decision tables
//! that turn a layer's function and side into a film recipe.
//!
//! The tables are the ones in `docs/film-rules.md` (mirroring, polarity, edge offset). Every
//! decision carries a reason in plain words so the summary can say why.

use crate::layers::{FilePolarity, LayerFunction, LayerId, Side};
use serde::{Deserialize, Serialize};

/// What the user's resist does where light falls on it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Resist {
    /// Light makes it soluble: the film is black where material stays (most pre-coated boards).
    Positive,
    /// Light hardens it (dry film): the film is clear where material stays.
    Negative,
}

/// Which face of the film carries the toner or emulsion during exposure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PrintedSide {
    /// Printed side against the resist: no film thickness for light to spread through.
    TowardBoard,
    AwayFromBoard,
}

/// How drill centres are marked on copper films.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DrillMarkStyle {
    /// A dot of `pilot_diameter_mm` at each hole centre.
    Pilot,
    /// The whole finished hole.
    Full,
    None,
}

/// The printer or other exposure device.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct PrinterSection {
    /// Resolution across the page (x), dots per inch.
    pub dpi: f64,
    /// Resolution along the page (y), if different from `dpi`.
    pub dpi_y: Option<f64>,
    /// Scale correction across the feed: nominal length ÷ measured length.
    pub scale_x: f64,
    /// Scale correction along the feed: nominal length ÷ measured length.
    pub scale_y: f64,
    /// How far a printed black edge grows (toner spread), µm per edge.
    pub toner_spread_um: f64,
}

impl Default for PrinterSection {
    fn default() -> Self {
        PrinterSection {
            dpi: 1200.0,
            dpi_y: None,
            scale_x: 1.0,
            scale_y: 1.0,
            toner_spread_um: 0.0,
        }
    }
}

/// The photoresist, exposure and etch.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct ProcessSection {
    pub resist: Resist,
    pub printed_side: PrintedSide,
    /// How far light creeps under a black edge during exposure, µm per edge.
    pub exposure_spread_um: f64,
    /// How far the etchant eats sideways under the resist edge, µm per edge.
    pub undercut_um: f64,
}

impl Default for ProcessSection {
    fn default() -> Self {
        ProcessSection {
            resist: Resist::Positive,
            printed_side: PrintedSide::TowardBoard,
            exposure_spread_um: 0.0,
            undercut_um: 0.0,
        }
    }
}

/// Drill-centre marks on copper films.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct DrillMarkSection {
    pub style: DrillMarkStyle,
    /// Diameter of the pilot dot; 0.4 mm is common practice for hand drilling.
    pub pilot_diameter_mm: f64,
    /// Smallest copper ring a mark may leave around its hole before umbra warns.
    pub min_annular_ring_mm: f64,
}

impl Default for DrillMarkSection {
    fn default() -> Self {
        DrillMarkSection {
            style: DrillMarkStyle::Pilot,
            pilot_diameter_mm: 0.4,
            min_annular_ring_mm: 0.15,
        }
    }
}

/// Per-layer overrides: any decision of the tables can be replaced here.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct LayerOverride {
    /// Extra edge offset in material terms (copper, mask opening, legend ink), µm per edge.
    pub extra_um: f64,
    /// Force the film black where the layer has material (true) or clear (false).
    pub black_is_material: Option<bool>,
    pub mirror: Option<bool>,
    /// Replace the computed black edge offset entirely, µm.
    pub edge_offset_um: Option<f64>,
    pub drill_marks: Option<DrillMarkStyle>,
}

/// Per-function overrides.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct LayerOverrides {
    pub copper: LayerOverride,
    pub mask: LayerOverride,
    pub legend: LayerOverride,
    pub paste: LayerOverride,
}

/// Which films to make and how many of each.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct FilmsSection {
    /// Copper of the top and bottom sides.
    pub copper: bool,
    /// Inner copper layers (rarely made at home).
    pub inner_copper: bool,
    pub mask: bool,
    pub legend: bool,
    pub paste: bool,
    /// Copies of each film; makers stack two films when toner alone is not opaque enough.
    pub copies: u32,
    /// Also write an Excellon file of tooling holes at the registration target centres.
    pub tooling_holes: bool,
    pub tooling_hole_mm: f64,
}

impl Default for FilmsSection {
    fn default() -> Self {
        FilmsSection {
            copper: true,
            inner_copper: false,
            mask: true,
            legend: false,
            paste: false,
            copies: 1,
            tooling_holes: false,
            tooling_hole_mm: 3.0,
        }
    }
}

/// The user's process profile (TOML).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct Profile {
    pub printer: PrinterSection,
    pub process: ProcessSection,
    pub drill_marks: DrillMarkSection,
    pub layers: LayerOverrides,
    pub films: FilmsSection,
    pub sheet: crate::sheet::SheetSpec,
    pub artwork: crate::film::compose::ArtworkOptions,
    /// Caps on the work one input may cause (file size, objects, step-repeat, nesting,
    /// pixels per film).
    pub input_limits: crate::limits::Limits,
    /// The exposure strip's range and the solved exposure time (`umbra calibrate`).
    pub exposure: crate::calibrate::ExposureSection,
    /// What exposes the films: printer, masked LCD screen or film service.
    pub device: crate::device::DeviceSection,
    /// What the process makes reliably: the limits of `umbra check`.
    pub limits: crate::check::ProcessLimits,
}

/// A profile that could not be used.
#[derive(Debug, thiserror::Error)]
#[error("{file}{}: {message}", .pos.map(|p| format!(":{p}")).unwrap_or_default())]
pub struct ProfileError {
    pub file: String,
    pub pos: Option<crate::diag::Pos>,
    pub message: String,
}

/// The fully commented default profile that `umbra profile init` writes.
pub const DEFAULT_PROFILE_TOML: &str = include_str!("default-profile.toml");

impl Profile {
    /// Parses and checks a profile. `file` names it in messages.
    pub fn from_toml(text: &str, file: &str) -> Result<Profile, ProfileError> {
        let p: Profile = toml::from_str(text).map_err(|e| ProfileError {
            file: file.to_string(),
            pos: e.span().map(|s| crate::diag::Pos::of_offset(text, s.start)),
            message: e.message().trim().to_string(),
        })?;
        p.validate().map_err(|message| ProfileError {
            file: file.to_string(),
            pos: None,
            message,
        })?;
        Ok(p)
    }

    /// Reads the profile at `path`, or the defaults when there is none. Messages are for the
    /// user.
    pub fn from_path(path: Option<&std::path::Path>) -> Result<Profile, String> {
        match path {
            None => Ok(Profile::default()),
            Some(p) => {
                let text =
                    std::fs::read_to_string(p).map_err(|e| format!("{}: {e}", p.display()))?;
                Profile::from_toml(&text, &p.display().to_string()).map_err(|e| e.to_string())
            }
        }
    }

    /// Checks value ranges that TOML types cannot express.
    pub fn validate(&self) -> Result<(), String> {
        let pr = &self.printer;
        let dpi_ok = |d: f64| d.is_finite() && (50.0..=25400.0).contains(&d);
        if !dpi_ok(pr.dpi) {
            return Err(format!(
                "printer.dpi = {} is not a usable resolution (50 to 25400 dots per inch)",
                pr.dpi
            ));
        }
        if let Some(d) = pr.dpi_y {
            if !dpi_ok(d) {
                return Err(format!(
                    "printer.dpi_y = {d} is not a usable resolution (50 to 25400 dots per inch)"
                ));
            }
        }
        for (k, v) in [
            ("printer.scale_x", pr.scale_x),
            ("printer.scale_y", pr.scale_y),
        ] {
            if !(v.is_finite() && (0.8..=1.25).contains(&v)) {
                return Err(format!(
                    "{k} = {v} is outside 0.8 to 1.25; a printer's scale error is a few percent at most"
                ));
            }
        }
        for (k, v) in [
            ("printer.toner_spread_um", pr.toner_spread_um),
            (
                "process.exposure_spread_um",
                self.process.exposure_spread_um,
            ),
            ("process.undercut_um", self.process.undercut_um),
        ] {
            if !(v.is_finite() && (0.0..=500.0).contains(&v)) {
                return Err(format!("{k} = {v} must be between 0 and 500 µm"));
            }
        }
        let dm = &self.drill_marks;
        if !(dm.pilot_diameter_mm.is_finite() && (0.05..=5.0).contains(&dm.pilot_diameter_mm)) {
            return Err(format!(
                "drill_marks.pilot_diameter_mm = {} must be between 0.05 and 5 mm",
                dm.pilot_diameter_mm
            ));
        }
        if !(dm.min_annular_ring_mm.is_finite() && dm.min_annular_ring_mm >= 0.0) {
            return Err("drill_marks.min_annular_ring_mm must be 0 or more".into());
        }
        if !(1..=20).contains(&self.films.copies) {
            return Err(format!(
                "films.copies = {} must be between 1 and 20",
                self.films.copies
            ));
        }
        if !(self.films.tooling_hole_mm.is_finite()
            && (0.5..=10.0).contains(&self.films.tooling_hole_mm))
        {
            return Err("films.tooling_hole_mm must be between 0.5 and 10 mm".into());
        }
        let a = &self.artwork;
        for (k, v, lo, hi) in [
            ("artwork.target_size_mm", a.target_size_mm, 1.0, 30.0),
            ("artwork.target_margin_mm", a.target_margin_mm, 0.5, 50.0),
            ("artwork.line_mm", a.line_mm, 0.05, 2.0),
            ("artwork.label_cap_mm", a.label_cap_mm, 0.5, 10.0),
            ("artwork.border_mm", a.border_mm, 0.0, 50.0),
        ] {
            if !(v.is_finite() && (lo..=hi).contains(&v)) {
                return Err(format!("{k} = {v} must be between {lo} and {hi}"));
            }
        }
        self.device.validate()?;
        self.limits.validate()
    }

    pub fn dpi_x(&self) -> f64 {
        self.printer.dpi
    }

    pub fn dpi_y(&self) -> f64 {
        self.printer.dpi_y.unwrap_or(self.printer.dpi)
    }

    fn layer_override(&self, f: LayerFunction) -> Option<&LayerOverride> {
        match f {
            LayerFunction::Copper => Some(&self.layers.copper),
            LayerFunction::SolderMask => Some(&self.layers.mask),
            LayerFunction::Legend => Some(&self.layers.legend),
            LayerFunction::Paste => Some(&self.layers.paste),
            _ => None,
        }
    }
}

/// The decisions for one film.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FilmRecipe {
    /// Whether the layer image's dark objects stand for material (copper, mask opening,
    /// legend ink) — false for a negative file (`.FilePolarity,Negative` copper, `%IPNEG*%`).
    pub dark_is_material: bool,
    /// Whether black stands for material (copper, mask opening, legend ink).
    pub black_is_material: bool,
    /// Flip left-right.
    pub mirror: bool,
    pub scale_x: f64,
    pub scale_y: f64,
    pub dpi_x: f64,
    pub dpi_y: f64,
    /// Requested offset of the film's black edges, µm per edge; positive grows black.
    pub edge_offset_um: f64,
    pub drill_marks: DrillMarkStyle,
    pub pilot_diameter_mm: f64,
    /// One line per decision: what and why.
    pub reasons: Vec<String>,
}

/// What a layer's dark objects stand for, before the film decides black and clear.
fn dark_is_material(id: &LayerId) -> bool {
    let file_polarity_negative = id.polarity.map(|p| p == FilePolarity::Negative);
    match id.function {
        // Mask files show openings (absence of mask) unless they say otherwise
        // (Gerber spec 2024.05 §5.6.3: masks usually `.FilePolarity,Negative`); for the film
        // "material" of a mask is the opening, so dark = material unless the file is Positive.
        LayerFunction::SolderMask => file_polarity_negative != Some(false),
        _ => file_polarity_negative != Some(true),
    }
}

/// Plans one film: the decision tables of docs/film-rules.md.
///
/// `id.polarity` is the file's `.FilePolarity`; `image_negative` whether it declared the
/// deprecated `%IPNEG*%`.
pub fn plan(id: &LayerId, image_negative: bool, profile: &Profile) -> FilmRecipe {
    let mut reasons = Vec::new();
    let ov = profile.layer_override(id.function);
    let is_copperlike = matches!(id.function, LayerFunction::Copper | LayerFunction::Paste);

    // Polarity: where is the film black?
    let black_is_material = match id.function {
        LayerFunction::Copper | LayerFunction::Paste => match profile.process.resist {
            Resist::Positive => {
                reasons.push("positive resist: film black where copper stays".into());
                true
            }
            Resist::Negative => {
                reasons.push("negative resist: film clear where copper stays".into());
                false
            }
        },
        LayerFunction::SolderMask => {
            reasons.push("photo-imageable mask ink cures under light: openings black".into());
            true
        }
        LayerFunction::Legend => {
            reasons.push("photo-imageable legend ink cures under light: legend clear".into());
            false
        }
        _ => {
            reasons.push("reference layer: drawn black".into());
            true
        }
    };
    let black_is_material = match ov.and_then(|o| o.black_is_material) {
        Some(v) => {
            reasons.push(format!(
                "profile override: black is {}",
                if v { "material" } else { "background" }
            ));
            v
        }
        None => black_is_material,
    };
    let dark_material = dark_is_material(id) != image_negative;

    // Mirroring: docs/film-rules.md, "Mirroring".
    let top_like = !matches!(id.side, Side::Bottom);
    let toward = profile.process.printed_side == PrintedSide::TowardBoard;
    let mut mirror = top_like == toward;
    reasons.push(format!(
        "{} layer, printed side {} the board: {}",
        if top_like { "top" } else { "bottom" },
        if toward { "toward" } else { "away from" },
        if mirror { "mirrored" } else { "as drawn" }
    ));
    if let Some(m) = ov.and_then(|o| o.mirror) {
        mirror = m;
        reasons.push(format!(
            "profile override: {}",
            if m { "mirrored" } else { "as drawn" }
        ));
    }

    // Edge offset: black_offset = exposure_spread − toner_spread + s·undercut (+ s'·extra).
    let s_undercut = if is_copperlike {
        if black_is_material {
            1.0
        } else {
            -1.0
        }
    } else {
        0.0
    };
    let s_extra = if black_is_material { 1.0 } else { -1.0 };
    let extra = ov.map(|o| o.extra_um).unwrap_or(0.0);
    let mut edge_offset_um = profile.process.exposure_spread_um - profile.printer.toner_spread_um
        + s_undercut * profile.process.undercut_um
        + s_extra * extra;
    reasons.push(format!(
        "edge offset {:+.1} µm = exposure spread {:.1} − toner spread {:.1}{}{}",
        edge_offset_um,
        profile.process.exposure_spread_um,
        profile.printer.toner_spread_um,
        if s_undercut != 0.0 {
            format!(
                " {} undercut {:.1}",
                if s_undercut > 0.0 { "+" } else { "−" },
                profile.process.undercut_um
            )
        } else {
            String::new()
        },
        if extra != 0.0 {
            format!(
                " {} extra {:.1}",
                if s_extra > 0.0 { "+" } else { "−" },
                extra
            )
        } else {
            String::new()
        }
    ));
    if let Some(v) = ov.and_then(|o| o.edge_offset_um) {
        edge_offset_um = v;
        reasons.push(format!("profile override: edge offset {v:+.1} µm"));
    }

    let drill_marks = if id.function == LayerFunction::Copper {
        ov.and_then(|o| o.drill_marks)
            .unwrap_or(profile.drill_marks.style)
    } else {
        DrillMarkStyle::None
    };

    FilmRecipe {
        dark_is_material: dark_material,
        black_is_material,
        mirror,
        scale_x: profile.printer.scale_x,
        scale_y: profile.printer.scale_y,
        dpi_x: profile.dpi_x(),
        dpi_y: profile.dpi_y(),
        edge_offset_um,
        drill_marks,
        pilot_diameter_mm: profile.drill_marks.pilot_diameter_mm,
        reasons,
    }
}
