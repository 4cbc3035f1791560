//! Writing files safely: [`OutputSet`] (all-or-nothing result sets) and [`write_file_atomic`].

use crate::error::{Error, Result};
use std::collections::BTreeSet;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use tempfile::NamedTempFile;

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
    /// An empty set.
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

    /// Number of files in the set.
    pub fn len(&self) -> usize {
        self.files.len()
    }

    /// True when the set holds no file.
    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// Writes every file into `dir` (created if missing) and returns the paths written, in the
    /// order added.
    ///
    /// Each file is first written to a fresh temporary `.NAME.XXXXXX.tmp` in `dir` (a name
    /// the `tempfile` crate picks) and flushed to
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

/// A temporary in `dir` for `name`, named `.NAME.XXXXXX.tmp`, created fresh (never
/// following or clobbering something already there) with the permissions an ordinary new file
/// gets (0o666 less the umask on Unix). It is removed when dropped unless persisted.
fn new_temporary(dir: &Path, name: &str) -> std::io::Result<NamedTempFile> {
    let prefix = format!(".{name}.");
    let mut b = tempfile::Builder::new();
    b.prefix(&prefix).suffix(".tmp");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        b.permissions(fs::Permissions::from_mode(0o666));
    }
    b.tempfile_in(dir)
}

/// Step 1: every name is a plain file name, none repeated; nothing is touched yet.
fn check_names(dir: &Path, files: &[(&str, &[u8])]) -> Result<()> {
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
    Ok(())
}

/// Step 3: targets must be absent or replaceable (not directories).
fn check_targets(targets: &[PathBuf]) -> Result<()> {
    for t in targets {
        if let Ok(meta) = fs::symlink_metadata(t)
            && meta.is_dir()
        {
            return Err(Error::run(format!(
                "cannot write {}: a directory of that name exists",
                t.display()
            )));
        }
    }
    Ok(())
}

/// Step 4: every temporary written and flushed to disk. On an error the temporaries made so
/// far are dropped, which removes them.
fn write_temporaries(
    dir: &Path,
    files: &[(&str, &[u8])],
    targets: &[PathBuf],
) -> Result<Vec<NamedTempFile>> {
    let mut temps = Vec::with_capacity(files.len());
    for ((name, bytes), target) in files.iter().zip(targets) {
        let written = new_temporary(dir, name).and_then(|mut f| {
            f.write_all(bytes)?;
            f.as_file().sync_all()?;
            Ok(f)
        });
        match written {
            Ok(f) => temps.push(f),
            Err(e) => {
                return Err(Error::run(format!(
                    "cannot write {} (temporary in {}): {e}; no output file was changed",
                    target.display(),
                    dir.display()
                )));
            }
        }
    }
    Ok(temps)
}

/// Step 5: rename every temporary over its target, in order. On a failure the remaining
/// temporaries are dropped (removed) and the error says which targets were already replaced.
fn persist_all(temps: Vec<NamedTempFile>, targets: &[PathBuf]) -> Result<()> {
    for (i, (tmp, target)) in temps.into_iter().zip(targets).enumerate() {
        if let Err(e) = tmp.persist(target) {
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
                "cannot move {} into place as {}: {}; {state}",
                e.file.path().display(),
                target.display(),
                e.error
            )));
        }
    }
    Ok(())
}

fn commit_files(dir: &Path, files: &[(&str, &[u8])]) -> Result<Vec<PathBuf>> {
    check_names(dir, files)?;
    // Step 2: the directory.
    fs::create_dir_all(dir).map_err(|e| {
        Error::run(format!(
            "cannot create output directory {}: {e}",
            dir.display()
        ))
    })?;
    let targets: Vec<PathBuf> = files.iter().map(|(n, _)| dir.join(n)).collect();
    check_targets(&targets)?;
    let temps = write_temporaries(dir, files, &targets)?;
    persist_all(temps, &targets)?;
    // Step 6: make the renames durable. Best effort: not every platform can open a directory.
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
    Ok(targets)
}
