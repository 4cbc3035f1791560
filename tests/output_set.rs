//! Result directories as one unit: after a kill at any point the directory holds one complete
//! set (every file matching its manifest), leftovers of killed runs are removed by the next run,
//! a second writer is refused while the lock is held (or waits with `--wait`), foreign files
//! and unsafe `--out` targets are refused with exit 2.

mod common;

use common::{l_section_with_max_area, tmp, write, xsheat};
use sha2::{Digest, Sha256};
use std::collections::BTreeSet;
use std::ffi::OsStr;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn names(dir: &Path) -> BTreeSet<String> {
    fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect()
}

fn hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Asserts that `dir` holds exactly the files `manifest` (summary.json or manifest.json) lists
/// plus the manifest itself, each with the listed size and SHA-256; returns the manifest text.
fn assert_complete_set(dir: &Path, manifest: &str) -> String {
    let text = fs::read_to_string(dir.join(manifest)).unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let files = v["files"].as_array().expect("a files array");
    let mut want = BTreeSet::from([manifest.to_string()]);
    for f in files {
        let path = f["path"].as_str().unwrap();
        let bytes = fs::read(dir.join(path)).unwrap_or_else(|e| panic!("{path}: {e}"));
        assert_eq!(f["bytes"].as_u64().unwrap(), bytes.len() as u64, "{path}");
        assert_eq!(f["sha256"].as_str().unwrap(), hex(&bytes), "{path}");
        want.insert(path.to_string());
    }
    assert_eq!(names(dir), want, "{}", dir.display());
    text
}

fn bin() -> PathBuf {
    assert_cmd::cargo::cargo_bin("xsheat")
}

fn solve_cmd(model: &Path, out: &Path) -> Command {
    let mut c = Command::new(bin());
    c.args([
        OsStr::new("--quiet"),
        OsStr::new("solve"),
        model.as_os_str(),
    ])
    .args([OsStr::new("--out"), out.as_os_str()])
    .stdout(Stdio::null())
    .stderr(Stdio::null());
    c
}

#[test]
fn a_killed_solve_leaves_one_complete_set_and_the_next_run_cleans_up() {
    let scratch = tmp();
    let d = scratch.path();
    // Two models whose files differ, so a mixture of two sets would not match either manifest.
    let models = [
        write(d, "a.toml", &l_section_with_max_area(8e-5)),
        write(d, "b.toml", &l_section_with_max_area(7e-5)),
    ];
    let out = d.join("out");
    // One complete run first; its duration spreads the kill points over a run (the schedule is
    // fixed as fractions of it; no assertion depends on time).
    let start = Instant::now();
    assert!(solve_cmd(&models[0], &out).status().unwrap().success());
    let run = start.elapsed();
    assert_complete_set(&out, "summary.json");
    for i in 0..10u32 {
        let model = &models[(i % 2) as usize];
        let mut child = solve_cmd(model, &out).spawn().unwrap();
        std::thread::sleep(run.mul_f64(0.1 + 0.1 * f64::from(i)));
        let _ = child.kill(); // SIGKILL
        let _ = child.wait();
        assert_complete_set(&out, "summary.json");
        for n in names(&out) {
            assert!(
                !n.starts_with('.'),
                "kill {i}: {n} inside the result directory"
            );
        }
    }
    // The next run succeeds (leftovers never count as foreign results) and removes them.
    assert!(solve_cmd(&models[1], &out).status().unwrap().success());
    assert_complete_set(&out, "summary.json");
    let left: Vec<String> = names(d)
        .into_iter()
        .filter(|n| n.contains("stage") || n.contains(".tmp"))
        .collect();
    assert!(left.is_empty(), "{left:?}");
    assert_eq!(
        names(d),
        BTreeSet::from(["a.toml", "b.toml", "out", ".out.xsheat-lock"].map(String::from))
    );
}

/// True when /proc/locks shows a process waiting for the lock on the file with inode `ino`.
fn someone_waits(ino: u64) -> bool {
    let tag = format!(":{ino} ");
    fs::read_to_string("/proc/locks")
        .is_ok_and(|t| t.lines().any(|l| l.contains("->") && l.contains(&tag)))
}

#[cfg(target_os = "linux")]
#[test]
fn a_second_writer_is_refused_while_the_lock_is_held_or_waits() {
    let scratch = tmp();
    let d = scratch.path();
    let model = write(d, "m.toml", &l_section_with_max_area(1e-3));
    let out = d.join("out");
    // Hold the lock the way xsheat does: flock on .DIRNAME.xsheat-lock holding the PID.
    let lock = fs::File::create(d.join(".out.xsheat-lock")).unwrap();
    lock.try_lock().unwrap();
    fs::write(d.join(".out.xsheat-lock"), "4242\n").unwrap();
    let o = xsheat([
        OsStr::new("solve"),
        model.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 1, "{}", o.stderr);
    assert!(
        o.stderr.contains("is being written by process 4242"),
        "{}",
        o.stderr
    );
    assert!(!out.exists());

    // With --wait the run blocks on the lock (seen in /proc/locks), then finishes.
    let mut child = solve_cmd(&model, &out);
    child.arg("--wait");
    let mut child = child.spawn().unwrap();
    let deadline = Instant::now() + Duration::from_secs(120);
    let ino = std::os::unix::fs::MetadataExt::ino(&lock.metadata().unwrap());
    while !someone_waits(ino) && child.try_wait().unwrap().is_none() && Instant::now() < deadline {
        std::thread::sleep(Duration::from_millis(20));
    }
    assert!(someone_waits(ino), "--wait did not wait for the lock");
    assert!(child.try_wait().unwrap().is_none(), "--wait did not wait");
    assert!(!out.exists());
    drop(lock);
    assert!(child.wait().unwrap().success());
    assert_complete_set(&out, "summary.json");
}

#[test]
fn foreign_files_are_refused_by_name_and_earlier_sets_are_replaced() {
    let scratch = tmp();
    let d = scratch.path();
    let model = write(d, "m.toml", &l_section_with_max_area(1e-3));
    let out = d.join("out");
    let solve = |out: &Path| {
        xsheat([
            OsStr::new("solve"),
            model.as_os_str(),
            OsStr::new("--out"),
            out.as_os_str(),
        ])
    };
    assert_eq!(solve(&out).code, 0);
    assert_complete_set(&out, "summary.json");
    // A rerun replaces the earlier set.
    assert_eq!(solve(&out).code, 0);
    fs::write(out.join("b-notes.txt"), "mine").unwrap();
    fs::write(out.join("a-notes.txt"), "mine").unwrap();
    let before = fs::read(out.join("summary.json")).unwrap();
    let o = solve(&out);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(
        o.stderr.contains("a-notes.txt"),
        "first foreign file: {}",
        o.stderr
    );
    assert_eq!(fs::read(out.join("summary.json")).unwrap(), before);
    // Another command's set replaces a solve set as a whole, with a manifest.json.
    fs::remove_file(out.join("a-notes.txt")).unwrap();
    fs::remove_file(out.join("b-notes.txt")).unwrap();
    let grid = write(d, "grid.csv", "x,y,temperature\n0.1,0.1,10\n0.2,0.3,12\n");
    let o = xsheat([
        OsStr::new("compare"),
        model.as_os_str(),
        OsStr::new("--grid-file"),
        grid.as_os_str(),
        OsStr::new("--out"),
        out.as_os_str(),
    ]);
    assert_eq!(o.code, 0, "{}", o.stderr);
    let text = assert_complete_set(&out, "manifest.json");
    assert!(text.contains("\"schema\": \"xsheat.manifest/1\""), "{text}");
    assert_eq!(
        names(&out),
        BTreeSet::from(["compare.csv", "manifest.json"].map(String::from))
    );
}

#[test]
fn out_in_the_working_directory_uses_the_fallback_and_stays_a_set() {
    let scratch = tmp();
    let d = scratch.path();
    let model = write(d, "m.toml", &l_section_with_max_area(1e-3));
    let out = d.join("out");
    fs::create_dir(&out).unwrap();
    for _ in 0..2 {
        let o = Command::new(bin())
            .current_dir(&out)
            .args([OsStr::new("solve"), model.as_os_str()])
            .args(["--out", "."])
            .output()
            .unwrap();
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert_complete_set(&out, "summary.json");
    }
}

#[cfg(unix)]
#[test]
fn unsafe_out_targets_are_refused() {
    let scratch = tmp();
    let d = scratch.path();
    let model = write(d, "m.toml", &l_section_with_max_area(1e-3));
    let original = fs::read(&model).unwrap();
    let fifo = d.join("fifo.vtu");
    assert!(
        Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .unwrap()
            .success()
    );
    let sock = d.join("sock.vtu");
    let _listener = std::os::unix::net::UnixListener::bind(&sock).unwrap();
    let dir = d.join("dir.vtu");
    fs::create_dir(&dir).unwrap();
    let slash = format!("{}/new/", d.display());
    let m = model.to_str().unwrap();
    let d_str = d.to_str().unwrap();
    let fifo_s = fifo.to_str().unwrap();
    let sock_s = sock.to_str().unwrap();
    let dir_s = dir.to_str().unwrap();
    let model_file_dir = format!("{d_str}/m.toml");
    let cases: [(&str, &[&str], &str); 8] = [
        ("fifo", &["mesh", m, "--out", fifo_s], "FIFO"),
        ("socket", &["mesh", m, "--out", sock_s], "socket"),
        ("device", &["mesh", m, "--out", "/dev/null"], "device"),
        ("directory", &["mesh", m, "--out", dir_s], "directory"),
        ("slash", &["mesh", m, "--out", &slash], "ends in '/'"),
        ("model", &["mesh", m, "--out", m], "is the input"),
        (
            "solve-contains",
            &["solve", m, "--out", d_str],
            "contains the input",
        ),
        (
            "solve-is-model",
            &["solve", m, "--out", &model_file_dir],
            "not a directory",
        ),
    ];
    for (case, args, why) in cases {
        let o = xsheat(args);
        assert_eq!(o.code, 2, "{case}: {}", o.stderr);
        assert!(o.stderr.contains(why), "{case}: {}", o.stderr);
    }
    use std::os::unix::fs::FileTypeExt;
    assert!(fs::symlink_metadata(&fifo).unwrap().file_type().is_fifo());
    assert!(fs::symlink_metadata(&sock).unwrap().file_type().is_socket());
    assert!(fs::symlink_metadata(&dir).unwrap().is_dir());
    assert!(!d.join("new").exists());
    assert_eq!(fs::read(&model).unwrap(), original);
}
