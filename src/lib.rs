//! umbra: PCB fabrication files (Gerber RS-274X/X2, Excellon) into print-ready photomask films.
//!
//! The pipeline (see `docs/architecture.md`): load → parse/interpret → plan → layout →
//! render → write. Each stage knows only its neighbours.

pub mod calibrate;
pub mod check;
pub mod device;
pub mod diag;
pub mod excellon;
pub mod film;
pub mod films;
pub mod gerber;
pub mod image;
pub mod inspect;
pub mod job;
pub mod layers;
pub mod limits;
pub mod load;
pub mod memory;
pub mod output;
pub mod process;
pub mod proof;
pub mod raster;
pub mod sheet;
pub mod synth;
pub mod vector;
