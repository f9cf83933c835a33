//! The graphics state machine (spec 2024.05 §2.3, §4): commands in, objects out.
//!
//! This file holds the state and the command dispatch; drawing operations (strokes, arcs,
//! flashes, regions) are in `draw.rs`, the object sinks (image, block apertures,
//! step-and-repeat) in `sink.rs`.
//!
//! # Choices where the spec leaves room (documented in docs/gerber-support.md)
//! - Coordinate data without D01/D02/D03 reuses the previous operation (deprecated modal
//!   form, warned once).
//! - D01 before any G01/G02/G03: linear, warned once (the old default).
//! - An arc before any G74/G75: read as single quadrant (the RS-274X default), but when no
//!   single-quadrant centre gives an arc of at most 90°, as multi quadrant; warned once.
//! - `%IPNEG*%` is recorded in [`GerberFile::image_negative`] with a warning; the objects
//!   are kept as written and the film planner inverts the image.
//!
//! [`GerberFile::image_negative`]: super::GerberFile::image_negative

use super::aperture::Aperture;
use super::command::{
    AttributeKind, Command, CommandKind, FormatSpec, Interpolation, Operation, QuadrantMode,
    RawNumber, ZeroOmission,
};
use super::geometry::ImageTransform;
use super::macros::MacroDef;
use super::sink::Sinks;
use super::{GerberFile, Units};
use crate::diag::{InputError, Pos, Warning};
use crate::image::{LayerImage, Point, Polarity};
use crate::limits::Limits;
use std::collections::{BTreeMap, HashMap, HashSet};
use std::hash::{BuildHasherDefault, Hasher};

/// Hashes aperture numbers with the splitmix64 finalizer: a bijection whose every output bit
/// depends on every input bit, so codes chosen to share low bits still spread over the
/// table (no quadratic probing on hostile files), at a fraction of SipHash's cost (SipHash
/// took 3 % of reading time).
#[derive(Default)]
pub(super) struct CodeHasher(u64);

impl Hasher for CodeHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0 ^ b as u64).wrapping_mul(0x100_0000_01b3);
        }
    }
    fn write_u32(&mut self, v: u32) {
        let mut z = (v as u64).wrapping_add(0x9E37_79B9_7F4A_7C15);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        self.0 = z ^ (z >> 31);
    }
}

/// An open region (G36 … G37).
#[derive(Debug, Default)]
pub(super) struct RegionState {
    /// The contour being built (mm), with its start in file units and its position.
    pub contour: Option<crate::image::Contour>,
    pub start_file: Point,
    pub start_pos: Pos,
}

pub(super) struct Interpreter<'f> {
    pub file: &'f str,
    pub limits: &'f Limits,
    pub warnings: Vec<Warning>,
    warned: HashSet<&'static str>,

    pub format: Option<FormatSpec>,
    pub units: Option<Units>,
    pub incremental: bool,
    pub interpolation: Option<Interpolation>,
    pub quadrant: Option<QuadrantMode>,
    pub last_op: Option<Operation>,
    /// Current point in file units, before the image transform; `None` until set.
    pub current: Option<Point>,
    pub aperture: Option<u32>,
    pub apertures: HashMap<u32, Aperture, BuildHasherDefault<CodeHasher>>,
    macros: HashMap<String, MacroDef>,

    pub polarity: Polarity,
    pub mirror: (bool, bool),
    pub rotation_deg: f64,
    pub scale: f64,
    pub image_transform: ImageTransform,
    pub region: Option<RegionState>,
    pub sinks: Sinks,

    pub attributes: BTreeMap<String, Vec<String>>,
    pub image_name: Option<String>,
    pub layer_names: Vec<String>,
    pub image_negative: bool,
    ended: bool,
}

const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

impl<'f> Interpreter<'f> {
    pub fn new(file: &'f str, limits: &'f Limits) -> Interpreter<'f> {
        Interpreter {
            file,
            limits,
            warnings: Vec::new(),
            warned: HashSet::new(),
            format: None,
            units: None,
            incremental: false,
            interpolation: None,
            quadrant: None,
            last_op: None,
            current: None,
            aperture: None,
            apertures: HashMap::default(),
            macros: HashMap::new(),
            polarity: Polarity::Dark,
            mirror: (false, false),
            rotation_deg: 0.0,
            scale: 1.0,
            image_transform: ImageTransform::default(),
            region: None,
            sinks: Sinks::new(),
            attributes: BTreeMap::new(),
            image_name: None,
            layer_names: Vec::new(),
            image_negative: false,
            ended: false,
        }
    }

    pub fn error(&self, pos: Pos, msg: impl Into<String>) -> InputError {
        InputError::new(self.file, pos, msg)
    }

    pub fn warn(&mut self, pos: Pos, msg: impl Into<String>) {
        self.warnings.push(Warning::new(self.file, Some(pos), msg));
    }

    /// Warns once per file for `key`; later occurrences are counted silently.
    pub fn warn_once(&mut self, key: &'static str, pos: Pos, msg: impl Into<String>) {
        if self.warned.insert(key) {
            let mut m: String = msg.into();
            m.push_str(" (reported once per file)");
            self.warn(pos, m);
        }
    }

    /// Whether M02 was seen.
    pub fn ended(&self) -> bool {
        self.ended
    }

    pub fn execute(&mut self, cmd: Command<'_>) -> Result<(), InputError> {
        let pos = cmd.pos;
        match cmd.kind {
            CommandKind::Operation { x, y, i, j, op } => self.operation(pos, x, y, i, j, op)?,
            CommandKind::SelectAperture(code) => {
                if !self.apertures.contains_key(&code) {
                    return Err(self.error(
                        pos,
                        format!(
                            "aperture D{code} is selected but was never defined with %ADD{code}…*%"
                        ),
                    ));
                }
                self.aperture = Some(code);
            }
            CommandKind::Interpolation(m) => self.interpolation = Some(m),
            CommandKind::Quadrant(q) => {
                if q == QuadrantMode::Single {
                    self.warn_once(
                        "G74",
                        pos,
                        "G74 (single quadrant arcs) is deprecated (spec §8.3); supported",
                    );
                }
                self.quadrant = Some(q)
            }
            CommandKind::RegionStart => {
                if self.region.is_some() {
                    return Err(self.error(
                        pos,
                        "G36 inside a region: the previous G36 was not ended by G37",
                    ));
                }
                self.region = Some(RegionState::default());
            }
            CommandKind::RegionEnd => {
                let Some(mut region) = self.region.take() else {
                    return Err(self.error(pos, "G37 without a matching G36"));
                };
                self.close_contour(&mut region, pos)?;
            }
            CommandKind::Comment(_) => {}
            CommandKind::DeprecatedUnits(u) => {
                self.warn_once(
                    "G70",
                    pos,
                    "G70/G71 are deprecated (spec §8.2); use %MO — units taken from them",
                );
                self.set_units(u, pos);
            }
            CommandKind::DeprecatedNotation { incremental } => {
                if incremental {
                    self.warn_once(
                        "G91",
                        pos,
                        "G91 (incremental coordinates) is deprecated (spec §8.2); supported",
                    );
                }
                self.incremental = incremental;
            }
            CommandKind::EndOfFile => {
                self.ended = true;
            }
            CommandKind::OptionalStop => {}
            CommandKind::IgnoredGCode(code) => {
                self.warn(pos, format!("G{code:02} is not a Gerber code; ignored"));
            }
            CommandKind::Format(f) => {
                if f.incremental {
                    self.warn_once(
                        "FSI",
                        pos,
                        "incremental notation (%FS…I…) is deprecated (spec §8.2); supported",
                    );
                }
                if f.x.decimal > 9 || f.y.decimal > 9 {
                    return Err(self.error(pos, "%FS: at most 9 decimal digits"));
                }
                self.incremental = f.incremental;
                self.format = Some(f);
            }
            CommandKind::Mode(u) => self.set_units(u, pos),
            CommandKind::ApertureDefine {
                code,
                template,
                params,
            } => self.define_aperture(code, template, &params, pos)?,
            CommandKind::MacroDefine { name, blocks } => {
                let refs: Vec<(&str, Pos)> = blocks.iter().map(|(t, p)| (t.as_ref(), *p)).collect();
                let def = MacroDef::parse(name, &refs, self.file)?;
                if self.macros.insert(name.to_string(), def).is_some() {
                    self.warn(
                        pos,
                        format!(
                            "aperture macro {name} is defined again; the new definition is used"
                        ),
                    );
                }
            }
            CommandKind::LoadPolarity(p) => self.polarity = p,
            CommandKind::LoadMirroring { x, y } => self.mirror = (x, y),
            CommandKind::LoadRotation(r) => self.rotation_deg = r,
            CommandKind::LoadScaling(s) => self.scale = s,
            CommandKind::StepRepeatOpen { nx, ny, dx, dy } => {
                self.step_repeat_open(pos, nx, ny, dx, dy)?
            }
            CommandKind::StepRepeatClose => self.step_repeat_close(pos)?,
            CommandKind::BlockOpen(code) => self.block_open(pos, code)?,
            CommandKind::BlockClose => self.block_close(pos)?,
            CommandKind::Attribute { kind, name, values } => {
                if kind == AttributeKind::File {
                    let key = name.strip_prefix('.').unwrap_or(name).to_string();
                    self.attributes
                        .insert(key, values.iter().map(|v| v.trim().to_string()).collect());
                }
            }
            CommandKind::ImagePolarity { negative } => {
                self.warn_once("IP", pos, "%IP is deprecated (spec §8.1)");
                if negative {
                    self.image_negative = true;
                    self.warn(
                        pos,
                        "%IPNEG: the file asks for a negative image; it is recorded and the film planner inverts the image",
                    );
                }
            }
            CommandKind::ImageName(n) => {
                self.warn_once("IN", pos, "%IN is deprecated (spec §8.1); the name is kept");
                self.image_name = Some(n.to_string());
            }
            CommandKind::LayerName(n) => {
                self.warn_once("LN", pos, "%LN is deprecated (spec §8.1); the name is kept");
                self.layer_names.push(n.to_string());
            }
            CommandKind::MirrorImage { a, b } => {
                self.deprecated_transform(pos, "MI");
                self.image_transform.mirror_a = a;
                self.image_transform.mirror_b = b;
            }
            CommandKind::ScaleFactor { a, b } => {
                self.deprecated_transform(pos, "SF");
                self.image_transform.scale_a = a;
                self.image_transform.scale_b = b;
            }
            CommandKind::Offset { a, b } => {
                self.deprecated_transform(pos, "OF");
                self.image_transform.offset_a = a;
                self.image_transform.offset_b = b;
            }
            CommandKind::ImageRotation(d) => {
                self.deprecated_transform(pos, "IR");
                self.image_transform.rotation_deg = d;
            }
            CommandKind::AxisSelect { swapped } => {
                self.deprecated_transform(pos, "AS");
                self.image_transform.swap_axes = swapped;
            }
            CommandKind::IgnoredExtended(_) => {}
        }
        Ok(())
    }

    fn deprecated_transform(&mut self, pos: Pos, _which: &'static str) {
        self.warn_once(
            "image-transform",
            pos,
            "deprecated image commands (MI, SF, OF, IR, AS; spec §8.1) are applied in the order MI, SF, OF, IR, AS",
        );
    }

    fn set_units(&mut self, u: Units, pos: Pos) {
        if let Some(old) = self.units {
            if old != u && self.sinks.total_objects() > 0 {
                self.warn(pos, "the units change after objects were drawn; later coordinates use the new units");
            }
        }
        self.units = Some(u);
    }

    fn define_aperture(
        &mut self,
        code: u32,
        template: &str,
        params: &[f64],
        pos: Pos,
    ) -> Result<(), InputError> {
        let aperture = match Aperture::standard(
            template,
            params,
            code,
            self.file,
            pos,
            &mut self.warnings,
        )? {
            Some(a) => a,
            None => {
                let Some(def) = self.macros.get(template) else {
                    return Err(self.error(
                        pos,
                        format!("aperture D{code} uses macro '{template}', which is not defined (define it with %AM{template}*…% first)"),
                    ));
                };
                let shape =
                    def.instantiate(params, self.file, pos, self.limits, &mut self.warnings)?;
                Aperture::Macro {
                    name: template.to_string(),
                    shape,
                }
            }
        };
        self.insert_aperture(code, aperture, pos);
        Ok(())
    }

    pub fn insert_aperture(&mut self, code: u32, aperture: Aperture, pos: Pos) {
        self.sinks.stats.apertures += 1;
        if self.apertures.insert(code, aperture).is_some() {
            self.warn(
                pos,
                format!(
                    "aperture D{code} is defined again; the new definition is used from here on"
                ),
            );
        }
    }

    /// File units → millimetres factor; an error if no units were given.
    pub fn unit_factor(&self, pos: Pos) -> Result<f64, InputError> {
        match self.units {
            Some(Units::Millimetres) => Ok(1.0),
            Some(Units::Inches) => Ok(25.4),
            None => Err(self.error(
                pos,
                "the units are not known: %MOMM*% or %MOIN*% must come before the first coordinate",
            )),
        }
    }

    /// A point in file units → board millimetres.
    pub fn to_mm(&self, p: Point, k: f64) -> Point {
        if self.image_transform.is_identity() {
            Point::new(p.x * k, p.y * k)
        } else {
            let q = self.image_transform.point(p.x, p.y);
            Point::new(q.x * k, q.y * k)
        }
    }

    fn decode(&self, n: RawNumber, f: &FormatSpec, x_axis: bool) -> f64 {
        match n {
            RawNumber::Decimal(v) => v,
            RawNumber::Digits { value, count } => {
                let axis = if x_axis { f.x } else { f.y };
                // Leading omission: the last `decimal` digits are the fraction. Trailing
                // omission: the digits are left aligned in integer+decimal places (§4.2.2).
                let exp = match f.zero_omission {
                    Some(ZeroOmission::Trailing) => axis.integer as i32 - count as i32,
                    _ => -(axis.decimal as i32),
                };
                let v = value as f64;
                if exp >= 0 {
                    v * POW10[(exp as usize).min(22)]
                } else {
                    v / POW10[((-exp) as usize).min(22)]
                }
            }
        }
    }

    fn operation(
        &mut self,
        pos: Pos,
        x: Option<RawNumber>,
        y: Option<RawNumber>,
        i: Option<RawNumber>,
        j: Option<RawNumber>,
        op: Option<Operation>,
    ) -> Result<(), InputError> {
        let op = match op {
            Some(op) => op,
            None => {
                let Some(last) = self.last_op else {
                    return Err(self.error(
                        pos,
                        "coordinates without an operation code (D01, D02 or D03), and no earlier operation to repeat",
                    ));
                };
                self.warn_once(
                    "modal-op",
                    pos,
                    "coordinates without D01/D02/D03 are deprecated (spec §8.2); the previous operation is repeated",
                );
                last
            }
        };
        self.last_op = Some(op);
        let has_coords = x.is_some() || y.is_some() || i.is_some() || j.is_some();
        let target = if has_coords {
            let Some(f) = self.format else {
                return Err(self.error(
                    pos,
                    "coordinates before the format statement: %FSLAX…Y…*% must come before the first coordinate",
                ));
            };
            let cur = self.current.unwrap_or_default();
            let dx = x.map(|n| self.decode(n, &f, true));
            let dy = y.map(|n| self.decode(n, &f, false));
            let p = if self.incremental {
                Point::new(cur.x + dx.unwrap_or(0.0), cur.y + dy.unwrap_or(0.0))
            } else {
                Point::new(dx.unwrap_or(cur.x), dy.unwrap_or(cur.y))
            };
            let offset = (
                i.map(|n| self.decode(n, &f, true)).unwrap_or(0.0),
                j.map(|n| self.decode(n, &f, false)).unwrap_or(0.0),
            );
            if (x.is_some() || y.is_some())
                && self.current.is_none()
                && (x.is_none() || y.is_none())
            {
                self.warn_once(
                    "first-point",
                    pos,
                    "the first coordinate gives only one axis; the other starts at 0",
                );
            }
            (p, offset)
        } else {
            let Some(cur) = self.current else {
                if op == Operation::Move {
                    return Ok(());
                }
                return Err(self.error(
                    pos,
                    "an operation without coordinates before any point was set",
                ));
            };
            (cur, (0.0, 0.0))
        };
        let (to, offset) = target;
        match op {
            Operation::Move => self.move_to(pos, to)?,
            Operation::Interpolate => {
                self.interpolate(pos, to, offset, i.is_some() || j.is_some())?
            }
            Operation::Flash => self.flash(pos, to)?,
        }
        self.current = Some(to);
        Ok(())
    }

    fn move_to(&mut self, pos: Pos, _to: Point) -> Result<(), InputError> {
        if let Some(mut region) = self.region.take() {
            // D02 in a region closes the current contour and starts a new one (§4.10.3).
            self.close_contour(&mut region, pos)?;
            self.region = Some(region);
        }
        Ok(())
    }

    /// Finishes reading: checks for open constructs and returns the file.
    pub fn finish(mut self, end_pos: Pos) -> Result<GerberFile, InputError> {
        if let Some(mut region) = self.region.take() {
            self.warn(
                end_pos,
                "the file ends inside a region (G36 without G37); the region is closed",
            );
            self.close_contour(&mut region, end_pos)?;
        }
        self.sinks.finish(self.file, end_pos, &mut self.warnings)?;
        if !self.ended {
            self.warn(
                end_pos,
                "the file has no M02 end command; it may be truncated",
            );
        }
        let mut image = LayerImage {
            objects: self.sinks.take_image(),
            stats: self.sinks.stats.clone(),
        };
        image.stats.clear_objects = image
            .objects
            .iter()
            .filter(|o| o.polarity == Polarity::Clear)
            .count();
        Ok(GerberFile {
            image,
            units: self.units,
            attributes: self.attributes,
            image_name: self.image_name,
            layer_names: self.layer_names,
            image_negative: self.image_negative,
            warnings: self.warnings,
        })
    }
}
