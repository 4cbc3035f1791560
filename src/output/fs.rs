//! Writing files safely: [`OutputSet`] (a result set, written as one unit by
//! [`ResultDir`](super::ResultDir)), [`write_file_atomic`] for single files and
//! [`check_out_file`] for the targets of single files.

use super::manifest::{MANIFEST_FILE, ManifestEntry, manifest_json};
use crate::error::{Error, Result};
use std::collections::BTreeSet;
use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use tempfile::NamedTempFile;

/// A set of files written together, all or nothing, with a manifest.
///
/// [`add`](OutputSet::add) collects files in memory; [`commit`](OutputSet::commit) (or
/// [`ResultDir::commit`](super::ResultDir::commit)) makes them the whole content of a
/// directory in one step. Every set carries a manifest listing the other files with their size
/// and SHA-256: a file added by [`add_manifest_file`](OutputSet::add_manifest_file) (solve's
/// summary.json, built from [`manifest`](OutputSet::manifest)), or else a `manifest.json`
/// added when the set is written.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct OutputSet {
    files: Vec<(String, Vec<u8>)>,
    own_manifest: bool,
}

impl OutputSet {
    /// An empty set.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a file: a plain file name, or a relative path of plain names joined by `/`
    /// (`winter/summary.json`), whose directories are created inside the set. Names are checked
    /// when the set is written, which refuses the whole set if one is invalid, repeated, or
    /// both a file and a directory of another path.
    pub fn add(&mut self, name: impl Into<String>, bytes: Vec<u8>) {
        self.files.push((name.into(), bytes));
    }

    /// Adds the file that carries the set's manifest (its `files` array must list every other
    /// file, as [`manifest`](OutputSet::manifest) gives them); no `manifest.json` is added then.
    pub fn add_manifest_file(&mut self, name: impl Into<String>, bytes: Vec<u8>) {
        self.own_manifest = true;
        self.add(name, bytes);
    }

    /// The manifest entries (path, size, SHA-256) of every file added so far, in order (the
    /// digests computed on the global pool).
    pub fn manifest(&self) -> Vec<ManifestEntry> {
        use rayon::prelude::*;
        self.files
            .par_iter()
            .map(|(n, b)| ManifestEntry::of(n, b))
            .collect()
    }

    /// File names in the order they were added.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.files.iter().map(|(n, _)| n.as_str())
    }

    /// Number of files in the set (without a `manifest.json` added when written).
    pub fn len(&self) -> usize {
        self.files.len()
    }

    /// True when the set holds no file.
    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// Every file as written: the files added, then `manifest.json` unless the set carries its
    /// own manifest. Names are checked: relative paths of plain names, none repeated, none
    /// also a directory of another path.
    pub(crate) fn complete(&self, dir: &Path) -> Result<Vec<(String, Vec<u8>)>> {
        let mut files = self.files.clone();
        if !self.own_manifest {
            files.push((MANIFEST_FILE.to_string(), manifest_json(&self.manifest())?));
        }
        let mut seen = BTreeSet::new();
        for (name, _) in &files {
            check_set_path(dir, name)?;
            if !seen.insert(name.as_str()) {
                return Err(Error::run(format!(
                    "cannot write {}: the file is listed twice in one output set",
                    dir.join(name).display()
                )));
            }
        }
        let dirs = set_directories(files.iter().map(|(n, _)| n.as_str()));
        if let Some((name, _)) = files.iter().find(|(n, _)| dirs.contains(n.as_str())) {
            return Err(Error::run(format!(
                "cannot write {}: the output set uses it both as a file and as a directory",
                dir.join(name).display()
            )));
        }
        Ok(files)
    }

    /// Makes this set the whole content of `dir` in one step and returns the paths written:
    /// [`ResultDir::check`](super::ResultDir::check) (no inputs to protect), then
    /// [`ResultDir::lock`](super::ResultDir::lock) without waiting, then
    /// [`ResultDir::commit`](super::ResultDir::commit).
    pub fn commit(&self, dir: impl AsRef<Path>) -> Result<Vec<PathBuf>> {
        let mut d = super::ResultDir::check(dir.as_ref(), &[])?;
        d.lock(false)?;
        d.commit(self)
    }
}

/// Checks a path of a result set: plain names (see [`check_file_name`]) joined by `/`.
pub(crate) fn check_set_path(dir: &Path, path: &str) -> Result<()> {
    let mut d = dir.to_path_buf();
    for part in path.split('/') {
        check_file_name(&d, part)?;
        d.push(part);
    }
    Ok(())
}

/// Every directory (relative path, e.g. `winter` and `variants/0001`) that the set paths
/// `paths` lie in, sorted, parents before their children.
pub(crate) fn set_directories<'a>(paths: impl IntoIterator<Item = &'a str>) -> BTreeSet<String> {
    let mut dirs = BTreeSet::new();
    for p in paths {
        let mut at = 0;
        while let Some(i) = p[at..].find('/') {
            dirs.insert(p[..at + i].to_string());
            at += i + 1;
        }
    }
    dirs
}

pub(crate) fn check_file_name(dir: &Path, name: &str) -> Result<()> {
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

/// Checks the target of a single output file (`mesh --out PATH`) and returns the path to write:
/// `path` itself, or the regular file a symbolic link at `path` points to. Refused (input error,
/// exit 2, saying why): a path ending in `/`, a directory, a device, a FIFO, a socket or any
/// other file that is not a regular file, a dangling link, and any of `inputs` (compared by
/// canonical path).
pub fn check_out_file(path: &Path, inputs: &[&Path]) -> Result<PathBuf> {
    let shown = path.display();
    let text = path.as_os_str().as_encoded_bytes();
    if text.is_empty() || text.ends_with(b"/") || path.file_name().is_none() {
        return Err(Error::input(format!(
            "--out {shown}: give a file name (the path ends in '/' or names no file)"
        )));
    }
    let Ok(meta) = fs::symlink_metadata(path) else {
        return Ok(path.to_path_buf());
    };
    let target = if meta.file_type().is_symlink() {
        fs::canonicalize(path).map_err(|e| {
            Error::input(format!(
                "--out {shown}: a symbolic link whose target cannot be used: {e}"
            ))
        })?
    } else {
        path.to_path_buf()
    };
    let meta = fs::metadata(&target)
        .map_err(|e| Error::input(format!("--out {shown}: cannot inspect the target: {e}")))?;
    if let Some(kind) = not_regular(&meta) {
        return Err(Error::input(format!(
            "--out {shown} is {kind}; only a regular file or a new path is written"
        )));
    }
    let canonical = fs::canonicalize(&target).unwrap_or(target.clone());
    for input in inputs {
        if fs::canonicalize(input).is_ok_and(|c| c == canonical) {
            return Err(Error::input(format!(
                "--out {shown} is the input {} of this run; choose another output file",
                input.display()
            )));
        }
    }
    Ok(target)
}

/// What a file that is not a regular file is, for messages.
fn not_regular(meta: &fs::Metadata) -> Option<&'static str> {
    let t = meta.file_type();
    if t.is_file() {
        return None;
    }
    if t.is_dir() {
        return Some("a directory");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_block_device() || t.is_char_device() {
            return Some("a device");
        }
        if t.is_fifo() {
            return Some("a FIFO (named pipe)");
        }
        if t.is_socket() {
            return Some("a socket");
        }
    }
    Some("not a regular file")
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
    check_file_name(dir, name)?;
    fs::create_dir_all(dir).map_err(|e| {
        Error::run(format!(
            "cannot create output directory {}: {e}",
            dir.display()
        ))
    })?;
    if fs::symlink_metadata(path).is_ok_and(|m| m.is_dir()) {
        return Err(Error::run(format!(
            "cannot write {}: a directory of that name exists",
            path.display()
        )));
    }
    let tmp = new_temporary(dir, name)
        .and_then(|mut f| {
            f.write_all(bytes)?;
            f.as_file().sync_all()?;
            Ok(f)
        })
        .map_err(|e| {
            Error::run(format!(
                "cannot write {} (temporary in {}): {e}; the file was not changed",
                path.display(),
                dir.display()
            ))
        })?;
    tmp.persist(path).map_err(|e| {
        Error::run(format!(
            "cannot move {} into place as {}: {}; the file was not changed",
            e.file.path().display(),
            path.display(),
            e.error
        ))
    })?;
    sync_dir(dir);
    Ok(())
}

/// Flushes a directory's entries to disk. Best effort: not every platform can open one.
pub(crate) fn sync_dir(dir: &Path) {
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
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
