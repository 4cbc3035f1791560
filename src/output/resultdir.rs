//! A result directory (`--out DIR`) written as one unit.
//!
//! * DIR must be absent, empty, or an earlier xsheat result set whose manifest lists exactly
//!   the files there ([`ResultDir::check`]); anything else is refused naming the first foreign
//!   file, and so is a DIR that contains an input of the run.
//! * An advisory lock file `.DIRNAME.xsheat-lock` in DIR's parent ([`ResultDir::lock`]) holds
//!   the writer's process id; a second writer exits with "DIR is being written by process N",
//!   or waits.
//! * [`ResultDir::commit`] stages every file in `.DIRNAME.xsheat-stage-PID-N` beside DIR,
//!   flushes each file and the staging directory, then swaps staging and DIR in one step
//!   (`renameat2(RENAME_EXCHANGE)`; a plain rename when DIR does not exist yet), removes the
//!   old set and flushes the parent. Leftover staging directories of killed runs are removed
//!   first.
//! * Fallback where the swap is impossible (DIR is the working directory or one of its
//!   ancestors, a mount point, a file system without the exchange): files are staged in
//!   `DIR/.xsheat-stage-PID-N`, the old manifest is removed, the old files are replaced one by
//!   one and the new manifest is moved in last; only there can a kill leave a partial set.

use super::fs::{OutputSet, sync_dir};
use super::manifest::listed_files;
use crate::error::{Error, Result};
use std::collections::BTreeSet;
use std::fs;
use std::io::{Read, Seek, Write};
use std::path::{Path, PathBuf};

/// Name prefix of fallback staging directories inside DIR.
const INNER_STAGE: &str = ".xsheat-stage-";

/// A checked `--out DIR`, optionally locked; see the module documentation.
#[derive(Debug)]
pub struct ResultDir {
    given: PathBuf,
    dir: PathBuf,
    parent: PathBuf,
    name: String,
    lock: Option<fs::File>,
}

fn input(given: &Path, why: impl std::fmt::Display) -> Error {
    Error::input(format!("--out {}: {why}", given.display()))
}

fn run_err(what: impl std::fmt::Display, path: &Path, e: std::io::Error) -> Error {
    Error::run(format!("cannot {what} {}: {e}", path.display()))
}

impl ResultDir {
    /// Checks `dir` as the output directory of a run reading `inputs` (nothing is written):
    /// refuses (exit 2) a path that is not a directory, a DIR containing one of `inputs`
    /// (canonical paths), and a DIR holding a file that no xsheat manifest there lists.
    pub fn check(dir: &Path, inputs: &[&Path]) -> Result<Self> {
        let given = dir.to_path_buf();
        let abs = if dir.exists() {
            fs::canonicalize(dir).map_err(|e| input(dir, format!("cannot resolve: {e}")))?
        } else {
            std::path::absolute(dir).map_err(|e| input(dir, format!("cannot resolve: {e}")))?
        };
        let (Some(parent), Some(name)) = (abs.parent(), abs.file_name()) else {
            return Err(input(dir, "not usable as a result directory"));
        };
        let name = name
            .to_str()
            .filter(|n| *n != "..")
            .ok_or_else(|| input(dir, "the directory name must be valid UTF-8 and not '..'"))?
            .to_string();
        let d = Self {
            given,
            parent: parent.to_path_buf(),
            dir: abs.clone(),
            name,
            lock: None,
        };
        if let Ok(meta) = fs::symlink_metadata(&abs)
            && !meta.is_dir()
        {
            return Err(input(dir, "exists and is not a directory"));
        }
        for i in inputs {
            if let Ok(c) = fs::canonicalize(i)
                && c.starts_with(&abs)
            {
                return Err(input(
                    dir,
                    format!(
                        "contains the input {} of this run; choose another directory",
                        i.display()
                    ),
                ));
            }
        }
        d.check_foreign()?;
        Ok(d)
    }

    /// The path as given on the command line.
    pub fn path(&self) -> &Path {
        &self.given
    }

    /// The lock file `.DIRNAME.xsheat-lock` in DIR's parent.
    pub fn lock_path(&self) -> PathBuf {
        self.parent.join(format!(".{}.xsheat-lock", self.name))
    }

    /// Refuses the first entry of DIR (by relative path, depth first in name order) that its
    /// manifest does not list: a file not listed, or a directory no listed file lies in.
    fn check_foreign(&self) -> Result<()> {
        if !self.dir.is_dir() {
            return Ok(());
        }
        let listed = listed_files(&self.dir).unwrap_or_default();
        let dirs = super::fs::set_directories(listed.iter().map(String::as_str));
        if let Some(n) = first_foreign(&self.dir, "", &listed, &dirs) {
            return Err(input(
                &self.given,
                format!(
                    "{n} is not part of an earlier xsheat result set (the directory must be \
                     new, empty or hold exactly the files its manifest lists); remove it or \
                     choose another directory"
                ),
            ));
        }
        Ok(())
    }

    /// Takes the advisory lock (creating DIR's parent if missing) and writes this process's id
    /// into the lock file. If another process holds it: with `wait`, blocks until it is free;
    /// otherwise a run error "DIR is being written by process N".
    pub fn lock(&mut self, wait: bool) -> Result<()> {
        if self.lock.is_some() {
            return Ok(());
        }
        fs::create_dir_all(&self.parent)
            .map_err(|e| run_err("create output directory", &self.parent, e))?;
        let path = self.lock_path();
        let mut f = fs::OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(&path)
            .map_err(|e| run_err("open the lock file", &path, e))?;
        match f.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) if wait => {
                f.lock().map_err(|e| run_err("lock", &path, e))?;
            }
            Err(fs::TryLockError::WouldBlock) => {
                let mut pid = String::new();
                let _ = f.read_to_string(&mut pid);
                let pid = pid.trim();
                let pid = if pid.is_empty() { "(unknown)" } else { pid };
                return Err(Error::run(format!(
                    "{} is being written by process {pid} (lock file {}); wait for it to \
                     finish or pass --wait",
                    self.given.display(),
                    path.display()
                )));
            }
            Err(fs::TryLockError::Error(e)) => return Err(run_err("lock", &path, e)),
        }
        let pid = std::process::id();
        f.set_len(0)
            .and_then(|()| f.rewind())
            .and_then(|()| writeln!(f, "{pid}"))
            .map_err(|e| run_err("write the lock file", &path, e))?;
        self.lock = Some(f);
        Ok(())
    }

    /// Makes `set` the whole content of DIR in one step (taking the lock without waiting if
    /// not held) and returns the paths of the files, in order; see the module documentation.
    /// Refuses (exit 2) a DIR that gained a foreign file since [`check`](ResultDir::check).
    pub fn commit(&mut self, set: &OutputSet) -> Result<Vec<PathBuf>> {
        self.lock(false)?;
        let files = set.complete(&self.given)?;
        self.remove_leftovers();
        if let Ok(meta) = fs::symlink_metadata(&self.dir)
            && !meta.is_dir()
        {
            return Err(input(&self.given, "exists and is not a directory"));
        }
        self.check_foreign()?;
        let cwd = std::env::current_dir().ok();
        let holds_cwd = cwd.is_some_and(|c| c.starts_with(&self.dir));
        if !(self.dir.exists() && holds_cwd) {
            let stage = self.new_stage(&self.parent, &format!(".{}.xsheat-stage-", self.name))?;
            write_stage(&stage, &files)?;
            if self.switch(&stage)? {
                sync_dir(&self.parent);
                return Ok(self.paths(&files));
            }
            let _ = fs::remove_dir_all(&stage);
        }
        self.fallback(&files)?;
        Ok(self.paths(&files))
    }

    fn paths(&self, files: &[(String, Vec<u8>)]) -> Vec<PathBuf> {
        files.iter().map(|(n, _)| self.given.join(n)).collect()
    }

    /// Removes staging directories of earlier runs into DIR (killed before they finished).
    /// Called under the lock, so none of them belongs to a live run.
    fn remove_leftovers(&self) {
        let outer = format!(".{}.xsheat-stage-", self.name);
        for (dir, prefix) in [(&self.parent, outer.as_str()), (&self.dir, INNER_STAGE)] {
            let Ok(entries) = fs::read_dir(dir) else {
                continue;
            };
            for e in entries.filter_map(|e| e.ok()) {
                if e.file_name().to_string_lossy().starts_with(prefix) {
                    let p = e.path();
                    let _ = fs::remove_dir_all(&p).or_else(|_| fs::remove_file(&p));
                }
            }
        }
    }

    /// A fresh staging directory `PREFIX<pid>-<n>` in `within`, with DIR's permissions if DIR
    /// exists.
    fn new_stage(&self, within: &Path, prefix: &str) -> Result<PathBuf> {
        let pid = std::process::id();
        for n in 0..u32::MAX {
            let p = within.join(format!("{prefix}{pid}-{n}"));
            match fs::create_dir(&p) {
                Ok(()) => {
                    if let Ok(m) = fs::metadata(&self.dir) {
                        let _ = fs::set_permissions(&p, m.permissions());
                    }
                    return Ok(p);
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {}
                Err(e) => return Err(run_err("create the staging directory", &p, e)),
            }
        }
        Err(Error::run(format!(
            "cannot create a staging directory in {}: every name is taken",
            within.display()
        )))
    }

    /// Puts the staged set in place: a rename when DIR is absent, the exchange otherwise (then
    /// the old set, now at `stage`, is removed). False when the exchange is not available here.
    fn switch(&self, stage: &Path) -> Result<bool> {
        if !self.dir.exists() {
            fs::rename(stage, &self.dir)
                .map_err(|e| run_err("move the staged results into place as", &self.dir, e))?;
            return Ok(true);
        }
        exchange(stage, &self.dir)?.map_or(Ok(false), |()| {
            let _ = fs::remove_dir_all(stage);
            Ok(true)
        })
    }

    /// The documented fallback: stage inside DIR, remove the old manifest, replace the files,
    /// move the new manifest in last.
    pub(super) fn fallback(&self, files: &[(String, Vec<u8>)]) -> Result<()> {
        fs::create_dir_all(&self.dir).map_err(|e| run_err("create", &self.dir, e))?;
        let stage = self.new_stage(&self.dir, INNER_STAGE)?;
        write_stage(&stage, files)?;
        let old = listed_files(&self.dir).unwrap_or_default();
        let old_dirs = super::fs::set_directories(old.iter().map(String::as_str));
        let new_manifest = files.last().map(|(n, _)| n.as_str());
        let mut old: Vec<&String> = old.iter().collect();
        // The old manifest goes first: without it the directory is visibly not a set.
        old.sort_by_key(|n| !(n.as_str() == "manifest.json" || n.as_str() == "summary.json"));
        for n in old {
            let p = self.dir.join(n);
            if let Err(e) = fs::remove_file(&p)
                && e.kind() != std::io::ErrorKind::NotFound
            {
                return Err(run_err("remove the old result", &p, e));
            }
        }
        remove_empty_dirs(&self.dir, &old_dirs);
        create_set_dirs(&self.dir, files)
            .map_err(|e| run_err("create a directory in", &self.dir, e))?;
        let manifest_name = super::manifest::MANIFEST_FILE;
        let mut order: Vec<&(String, Vec<u8>)> = files.iter().collect();
        order.sort_by_key(|(n, _)| Some(n.as_str()) == new_manifest || n == manifest_name);
        for (n, _) in order {
            let to = self.dir.join(n);
            fs::rename(stage.join(n), &to).map_err(|e| run_err("move into place", &to, e))?;
        }
        sync_dir(&self.dir);
        let _ = fs::remove_dir_all(&stage);
        Ok(())
    }
}

/// The first entry below `dir` (shown as `prefix` + name) that is neither a file in `listed`
/// nor a directory in `dirs`; fallback staging directories at the top are skipped.
fn first_foreign(
    dir: &Path,
    prefix: &str,
    listed: &BTreeSet<String>,
    dirs: &BTreeSet<String>,
) -> Option<String> {
    let entries = fs::read_dir(dir).ok()?;
    let mut names: Vec<(String, bool, bool)> = entries
        .filter_map(|e| e.ok())
        .map(|e| {
            let t = e.file_type().ok();
            let name = format!("{prefix}{}", e.file_name().to_string_lossy());
            (
                name,
                t.is_some_and(|t| t.is_file()),
                t.is_some_and(|t| t.is_dir()),
            )
        })
        .filter(|(n, _, _)| !(prefix.is_empty() && n.starts_with(INNER_STAGE)))
        .collect();
    names.sort();
    for (n, file, is_dir) in names {
        if file && listed.contains(&n) {
            continue;
        }
        if is_dir && dirs.contains(&n) {
            if let Some(f) = first_foreign(
                &dir.join(&n[prefix.len()..]),
                &format!("{n}/"),
                listed,
                dirs,
            ) {
                return Some(f);
            }
            continue;
        }
        return Some(n);
    }
    None
}

/// Creates the directories of the set's nested paths inside `root` (parents first).
fn create_set_dirs(root: &Path, files: &[(String, Vec<u8>)]) -> std::io::Result<Vec<PathBuf>> {
    let dirs = super::fs::set_directories(files.iter().map(|(n, _)| n.as_str()));
    let mut made = Vec::new();
    for d in dirs {
        let p = root.join(&d);
        match fs::create_dir(&p) {
            Ok(()) => made.push(p),
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && p.is_dir() => {}
            Err(e) => return Err(e),
        }
    }
    Ok(made)
}

/// Writes every file into the staging directory, flushes each and every directory.
fn write_stage(stage: &Path, files: &[(String, Vec<u8>)]) -> Result<()> {
    let dirs = match create_set_dirs(stage, files) {
        Ok(d) => d,
        Err(e) => {
            let _ = fs::remove_dir_all(stage);
            return Err(Error::run(format!(
                "cannot create a directory in {}: {e}; the result directory was not changed",
                stage.display()
            )));
        }
    };
    for (name, bytes) in files {
        let p = stage.join(name);
        let done = fs::File::create_new(&p).and_then(|mut f| {
            f.write_all(bytes)?;
            f.sync_all()
        });
        if let Err(e) = done {
            let _ = fs::remove_dir_all(stage);
            return Err(Error::run(format!(
                "cannot write {} (staged in {}): {e}; the result directory was not changed",
                name,
                stage.display()
            )));
        }
    }
    for d in dirs.iter().rev() {
        sync_dir(d);
    }
    sync_dir(stage);
    Ok(())
}

/// Removes the directories `dirs` (relative to `root`) that are empty, children first.
fn remove_empty_dirs(root: &Path, dirs: &BTreeSet<String>) {
    for d in dirs.iter().rev() {
        let _ = fs::remove_dir(root.join(d));
    }
}

/// Swaps two directories in one step. `Ok(None)` when the platform or the file system offers
/// no exchange here (then the caller falls back).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> Result<Option<()>> {
    use rustix::fs::{CWD, RenameFlags, renameat_with};
    use rustix::io::Errno;
    match renameat_with(CWD, a, CWD, b, RenameFlags::EXCHANGE) {
        Ok(()) => Ok(Some(())),
        Err(Errno::INVAL | Errno::NOSYS | Errno::XDEV | Errno::OPNOTSUPP | Errno::BUSY) => Ok(None),
        Err(e) => Err(run_err(
            "swap the staged results with",
            b,
            std::io::Error::from(e),
        )),
    }
}

/// Swaps two directories in one step: not available on this platform (the caller falls back).
#[cfg(not(target_os = "linux"))]
fn exchange(_a: &Path, _b: &Path) -> Result<Option<()>> {
    Ok(None)
}
