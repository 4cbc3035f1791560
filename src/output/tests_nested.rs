//! Unit tests of result sets with nested paths (`winter/summary.json`).

use super::*;
use crate::error::Error;
use std::fs;
use std::path::{Path, PathBuf};

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("xsheat-nested-{}-{name}", std::process::id()));
    let _ = fs::remove_dir_all(&d);
    d
}

/// Every file below `d` as a `/`-separated relative path, sorted.
fn tree(d: &Path) -> Vec<String> {
    fn walk(d: &Path, prefix: &str, out: &mut Vec<String>) {
        for e in fs::read_dir(d).unwrap() {
            let e = e.unwrap();
            let n = format!("{prefix}{}", e.file_name().to_string_lossy());
            if e.file_type().unwrap().is_dir() {
                walk(&e.path(), &format!("{n}/"), out);
                out.push(format!("{n}/"));
            } else {
                out.push(n);
            }
        }
    }
    let mut v = Vec::new();
    walk(d, "", &mut v);
    v.sort();
    v
}

fn nested_set(case: &str) -> OutputSet {
    let mut set = OutputSet::new();
    set.add("cases.csv", b"case\n".to_vec());
    set.add(format!("{case}/summary.json"), b"{}\n".to_vec());
    set.add(format!("{case}/deep/probes.csv"), b"p\n".to_vec());
    set
}

#[test]
fn nested_paths_are_written_listed_and_replaced_as_a_whole() {
    let dir = scratch("set").join("out");
    nested_set("winter").commit(&dir).unwrap();
    assert_eq!(
        tree(&dir),
        [
            "cases.csv",
            "manifest.json",
            "winter/",
            "winter/deep/",
            "winter/deep/probes.csv",
            "winter/summary.json"
        ]
    );
    let listed = listed_files(&dir).unwrap();
    assert!(listed.contains("winter/deep/probes.csv"), "{listed:?}");
    // The next set has another sub-directory: the old one is gone with the old set.
    nested_set("summer").commit(&dir).unwrap();
    assert_eq!(
        tree(&dir),
        [
            "cases.csv",
            "manifest.json",
            "summer/",
            "summer/deep/",
            "summer/deep/probes.csv",
            "summer/summary.json"
        ]
    );
    let _ = fs::remove_dir_all(scratch("set"));
}

#[test]
fn foreign_entries_in_sub_directories_are_refused_by_path() {
    let dir = scratch("foreign").join("out");
    nested_set("winter").commit(&dir).unwrap();
    fs::write(dir.join("winter/deep/notes.txt"), b"mine").unwrap();
    let e = nested_set("winter").commit(&dir).unwrap_err();
    assert!(matches!(e, Error::Input(_)), "{e}");
    assert!(e.message().contains("winter/deep/notes.txt"), "{e}");
    fs::remove_file(dir.join("winter/deep/notes.txt")).unwrap();
    // A directory no listed file lies in is foreign too.
    fs::create_dir(dir.join("spare")).unwrap();
    let e = nested_set("winter").commit(&dir).unwrap_err();
    assert!(e.message().contains("spare"), "{e}");
    let _ = fs::remove_dir_all(scratch("foreign"));
}

#[test]
fn bad_nested_paths_refuse_the_whole_set() {
    let dir = scratch("bad").join("out");
    for bad in [
        "a/../b.csv",
        "a//b.csv",
        "/a.csv",
        "a/",
        "./a.csv",
        "a\\b.csv",
    ] {
        let mut set = OutputSet::new();
        set.add("ok.csv", b"x".to_vec());
        set.add(bad, b"x".to_vec());
        assert!(set.commit(&dir).is_err(), "{bad} was accepted");
        assert!(!dir.exists(), "{bad}: something was written");
    }
    // A path used both as a file and as a directory.
    let mut set = OutputSet::new();
    set.add("a", b"x".to_vec());
    set.add("a/b.csv", b"x".to_vec());
    let e = set.commit(&dir).unwrap_err();
    assert!(
        e.message().contains("both as a file and as a directory"),
        "{e}"
    );
    assert!(!dir.exists());
    let _ = fs::remove_dir_all(scratch("bad"));
}

#[test]
fn the_fallback_replaces_nested_sets_too() {
    let dir = scratch("fallback").join("out");
    nested_set("winter").commit(&dir).unwrap();
    let mut d = ResultDir::check(&dir, &[]).unwrap();
    d.lock(false).unwrap();
    let files = nested_set("summer").complete(&dir).unwrap();
    d.fallback(&files).unwrap();
    assert_eq!(
        tree(&dir),
        [
            "cases.csv",
            "manifest.json",
            "summer/",
            "summer/deep/",
            "summer/deep/probes.csv",
            "summer/summary.json"
        ]
    );
    let _ = fs::remove_dir_all(scratch("fallback"));
}

#[test]
fn a_manifest_naming_paths_outside_the_directory_is_not_trusted() {
    let root = scratch("escape");
    let dir = root.join("out");
    nested_set("winter").commit(&dir).unwrap();
    let victim = root.join("victim.txt");
    fs::write(&victim, b"keep").unwrap();
    let m = r#"{"schema":"xsheat.manifest/1","files":[{"path":"../victim.txt","bytes":4,"sha256":""}]}"#;
    fs::write(dir.join("manifest.json"), m).unwrap();
    assert!(listed_files(&dir).is_none());
    let e = nested_set("winter").commit(&dir).unwrap_err();
    assert!(matches!(e, Error::Input(_)), "{e}");
    assert_eq!(fs::read(&victim).unwrap(), b"keep");
    let _ = fs::remove_dir_all(root);
}
