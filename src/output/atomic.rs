//! Atomic file writes: temporary file in the same folder (so the rename cannot cross file
//! systems), flushed and synced, then renamed over the destination.

use super::OutputError;
use std::fs::{self, File, OpenOptions};
use std::io::{self, BufWriter};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Writes `path` by calling `fill` on a buffered temporary file next to it, then renaming.
/// On any error the temporary file is removed and `path` is left as it was.
pub fn write_atomically<F>(path: &Path, fill: F) -> Result<(), OutputError>
where
    F: FnOnce(&mut BufWriter<File>) -> Result<(), OutputError>,
{
    let io_err = |source: io::Error| OutputError::Io {
        path: path.to_path_buf(),
        source,
    };
    let (tmp, file) = create_temp(path).map_err(io_err)?;
    let result = (|| {
        let mut w = BufWriter::with_capacity(1 << 16, file);
        fill(&mut w)?;
        let file = w.into_inner().map_err(|e| io_err(e.into_error()))?;
        file.sync_all().map_err(io_err)?;
        drop(file);
        fs::rename(&tmp, path).map_err(io_err)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

/// A new, uniquely named file in the destination's folder.
fn create_temp(path: &Path) -> io::Result<(PathBuf, File)> {
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    // Names are unique per process and call; the bound only guards against a folder full of
    // stale temporaries with colliding names.
    for _ in 0..1000 {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let tmp = dir.join(format!(".{name}.{}.{n}.tmp", std::process::id()));
        match OpenOptions::new().write(true).create_new(true).open(&tmp) {
            Ok(f) => return Ok((tmp, f)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
    Err(io::Error::new(
        io::ErrorKind::AlreadyExists,
        "no free temporary file name next to the output",
    ))
}
