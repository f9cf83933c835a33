//! Writers: PNG (1-bit with pHYs), PDF (exact page size). Every file is written atomically:
//! to a temporary file in the destination folder, then renamed over the destination, so a
//! failed write never leaves a partial file. Whether an existing file may be replaced is the
//! caller's decision (`--force`); these writers replace.

mod atomic;
pub mod pdf;
pub mod png;
pub mod tiff;

pub use atomic::write_atomically;

use std::path::PathBuf;

/// A failure writing an output file.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    #[error("could not write {path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("could not encode {path} as PNG: {message}")]
    Png { path: PathBuf, message: String },
    #[error("cannot write {path}: {message}")]
    Invalid { path: PathBuf, message: String },
}
