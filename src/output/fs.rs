//! Writing files safely: [`OutputSet`] (all-or-nothing result sets) and [`write_file_atomic`].

use crate::error::{Error, Result};
use std::collections::BTreeSet;
use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporaries of concurrent commits within one process.
pub(super) static COMMIT_COUNTER: AtomicU64 = AtomicU64::new(0);

/// A set of files written together, all or nothing.
///
/// [`add`](OutputSet::add) collects files in memory; [`commit`](OutputSet::commit) writes them
/// into a directory. Only the files in the set are created or replaced; nothing else in the
/// directory is touched.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct OutputSet {
    files: Vec<(String, Vec<u8>)>,
}

impl OutputSet {
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a file (a plain file name, no directory part). Names are checked by
    /// [`commit`](OutputSet::commit), which refuses the whole set if one is invalid or repeated.
    pub fn add(&mut self, name: impl Into<String>, bytes: Vec<u8>) {
        self.files.push((name.into(), bytes));
    }

    /// File names in the order they were added.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.files.iter().map(|(n, _)| n.as_str())
    }

    pub fn len(&self) -> usize {
        self.files.len()
    }

    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// Writes every file into `dir` (created if missing) and returns the paths written, in the
    /// order added.
    ///
    /// Each file is first written to a temporary `.NAME.tmp-<pid>-<n>` in `dir` and flushed to
    /// disk; only when all temporaries are complete are they renamed over their targets. On a
    /// failure before the renames, every temporary is removed and no target is created or
    /// changed. A rename can only fail in between if the file system changes under us (targets
    /// are checked beforehand); the error then says which files were already replaced.
    pub fn commit(&self, dir: impl AsRef<Path>) -> Result<Vec<PathBuf>> {
        let files: Vec<(&str, &[u8])> = self
            .files
            .iter()
            .map(|(n, b)| (n.as_str(), b.as_slice()))
            .collect();
        commit_files(dir.as_ref(), &files)
    }
}

/// Writes one file atomically: a temporary next to `path`, flushed, then renamed over `path`.
/// The parent directory is created if missing. On failure `path` is left as it was.
pub fn write_file_atomic(path: impl AsRef<Path>, bytes: &[u8]) -> Result<()> {
    let path = path.as_ref();
    let name = path.file_name().and_then(|n| n.to_str()).ok_or_else(|| {
        Error::run(format!(
            "cannot write {}: the path does not end in a valid file name",
            path.display()
        ))
    })?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    commit_files(dir, &[(name, bytes)]).map(|_| ())
}

fn check_file_name(dir: &Path, name: &str) -> Result<()> {
    let bad = name.is_empty()
        || name == "."
        || name == ".."
        || name.contains(['/', '\\', '\0'])
        || Path::new(name).file_name().and_then(|n| n.to_str()) != Some(name);
    if bad {
        return Err(Error::run(format!(
            "cannot write {:?} in {}: not a plain file name",
            name,
            dir.display()
        )));
    }
    Ok(())
}

fn remove_all(paths: &[PathBuf]) {
    for p in paths {
        // Best effort: the file was created by us; if it is already gone there is nothing to do.
        let _ = fs::remove_file(p);
    }
}

fn write_temporary(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    // create_new: never follow or clobber something that is already there.
    let mut f = OpenOptions::new().write(true).create_new(true).open(path)?;
    f.write_all(bytes)?;
    f.sync_all()
}

fn commit_files(dir: &Path, files: &[(&str, &[u8])]) -> Result<Vec<PathBuf>> {
    // 1. Check every name before touching the disk.
    let mut seen = BTreeSet::new();
    for (name, _) in files {
        check_file_name(dir, name)?;
        if !seen.insert(*name) {
            return Err(Error::run(format!(
                "cannot write {}: the file is listed twice in one output set",
                dir.join(name).display()
            )));
        }
    }

    // 2. The directory.
    fs::create_dir_all(dir).map_err(|e| {
        Error::run(format!(
            "cannot create output directory {}: {e}",
            dir.display()
        ))
    })?;

    // 3. Targets must be absent or replaceable (not directories).
    let targets: Vec<PathBuf> = files.iter().map(|(n, _)| dir.join(n)).collect();
    for t in &targets {
        if let Ok(meta) = fs::symlink_metadata(t)
            && meta.is_dir()
        {
            return Err(Error::run(format!(
                "cannot write {}: a directory of that name exists",
                t.display()
            )));
        }
    }

    // 4. Temporaries, each flushed to disk.
    let pid = std::process::id();
    let serial = COMMIT_COUNTER.fetch_add(1, Ordering::Relaxed);
    let mut temps: Vec<PathBuf> = Vec::with_capacity(files.len());
    for ((name, bytes), target) in files.iter().zip(&targets) {
        let tmp = dir.join(format!(".{name}.tmp-{pid}-{serial}"));
        if let Err(e) = write_temporary(&tmp, bytes) {
            // Only remove the temporary if we created it (AlreadyExists means someone else's).
            if e.kind() != std::io::ErrorKind::AlreadyExists {
                temps.push(tmp.clone());
            }
            remove_all(&temps);
            return Err(Error::run(format!(
                "cannot write {} (temporary {}): {e}; no output file was changed",
                target.display(),
                tmp.display()
            )));
        }
        temps.push(tmp);
    }

    // 5. Rename into place.
    for (i, (tmp, target)) in temps.iter().zip(&targets).enumerate() {
        if let Err(e) = fs::rename(tmp, target) {
            remove_all(&temps[i..]);
            let done: Vec<String> = targets[..i]
                .iter()
                .map(|t| t.display().to_string())
                .collect();
            let state = if done.is_empty() {
                "no output file was changed".to_string()
            } else {
                format!("already replaced: {}", done.join(", "))
            };
            return Err(Error::run(format!(
                "cannot move {} into place as {}: {e}; {state}",
                tmp.display(),
                target.display()
            )));
        }
    }

    // 6. Make the renames durable. Best effort: not every platform can open a directory.
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
    Ok(targets)
}
