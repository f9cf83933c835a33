//! The output folder, written whole or not at all.

use super::FilmsError;
use std::path::{Path, PathBuf};

/// A folder being written: everything goes to a temporary sibling first, which replaces the
/// destination only when complete, so a failed run leaves nothing half-written.
pub struct StagedDir {
    pub dest: PathBuf,
    pub temp: PathBuf,
    done: bool,
}

impl StagedDir {
    /// Refuses an existing destination unless `force`.
    pub fn new(dest: &Path, force: bool) -> Result<StagedDir, FilmsError> {
        if dest.exists() && !force {
            return Err(FilmsError::Output(format!(
                "{} already exists; choose another --out folder or add --force to replace it",
                dest.display()
            )));
        }
        if dest.exists() && !dest.is_dir() {
            return Err(FilmsError::Output(format!(
                "{} exists and is not a folder",
                dest.display()
            )));
        }
        let parent = dest
            .parent()
            .filter(|p| !p.as_os_str().is_empty())
            .unwrap_or(Path::new("."));
        std::fs::create_dir_all(parent)
            .map_err(|e| FilmsError::Output(format!("{}: {e}", parent.display())))?;
        let name = dest
            .file_name()
            .map(|n| n.to_string_lossy().to_string())
            .unwrap_or_else(|| "films".into());
        let temp = parent.join(format!(".{name}.partial-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&temp);
        std::fs::create_dir(&temp)
            .map_err(|e| FilmsError::Output(format!("{}: {e}", temp.display())))?;
        Ok(StagedDir {
            dest: dest.to_path_buf(),
            temp,
            done: false,
        })
    }

    pub fn path(&self, file: &str) -> PathBuf {
        self.temp.join(file)
    }

    /// Moves the finished folder into place (replacing an old one).
    pub fn commit(mut self) -> Result<(), FilmsError> {
        let err = |p: &Path, e: std::io::Error| FilmsError::Output(format!("{}: {e}", p.display()));
        if self.dest.exists() {
            // A name of this run's own: a fixed name could belong to an earlier, interrupted
            // run (or to the user), and renaming onto a non-empty folder fails.
            let mut old_name = self.temp.as_os_str().to_owned();
            old_name.push(".old");
            let old = PathBuf::from(old_name);
            std::fs::rename(&self.dest, &old).map_err(|e| err(&self.dest, e))?;
            std::fs::rename(&self.temp, &self.dest).map_err(|e| err(&self.dest, e))?;
            let _ = std::fs::remove_dir_all(&old);
        } else {
            std::fs::rename(&self.temp, &self.dest).map_err(|e| err(&self.dest, e))?;
        }
        self.done = true;
        Ok(())
    }
}

impl Drop for StagedDir {
    fn drop(&mut self) {
        if !self.done {
            let _ = std::fs::remove_dir_all(&self.temp);
        }
    }
}
