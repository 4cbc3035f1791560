//! The layout rules of the contributor guide, checked on the sources: data flows one way through
//! the stages (a module imports only the modules before it in `ORDER`), and no source file grows
//! past the size limit.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

/// Top-level modules of the library in pipeline order. A module may use `crate::X` only for an
/// `X` earlier in this list (unit-test code excepted).
const ORDER: [&str; 16] = [
    "alloc", "error", "text", "progress", "geom", "model", "geometry", "mesh", "fem", "solve",
    "post", "grid", "run", "study", "output", "report",
];

/// Largest source file, lines (unit tests included).
const MAX_FILE_LINES: usize = 900;

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("read src") {
        let path = entry.expect("dir entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level module a file under src/ belongs to (`None` for lib.rs and main.rs).
fn module_of(src: &Path, file: &Path) -> Option<String> {
    let rel = file.strip_prefix(src).ok()?;
    let first = rel.components().next()?.as_os_str().to_str()?.to_string();
    let name = first.strip_suffix(".rs").unwrap_or(&first).to_string();
    (name != "lib" && name != "main").then_some(name)
}

/// Library code of a file, comments removed: a `#[cfg(test)]` item that is a declaration (`mod tests;`, a `#[path]`
/// line) is dropped; an inline `#[cfg(test)]` block ends the library code (this crate keeps inline
/// test modules at the end of a file).
fn library_code(text: &str) -> String {
    let mut code = String::new();
    let mut lines = text.lines();
    while let Some(line) = lines.next() {
        if line.trim() != "#[cfg(test)]" {
            // Comments (docs included) may name any module; only code counts.
            code.push_str(line.split("//").next().unwrap_or(""));
            code.push('\n');
            continue;
        }
        let item = lines.find(|l| !l.trim().starts_with("#[") && !l.trim().is_empty());
        if item.is_none_or(|l| !l.trim_end().ends_with(';')) {
            break;
        }
    }
    code
}

/// `crate::X` paths used in the library code of a file (whole test files have none).
fn crate_uses(file: &Path, text: &str) -> BTreeSet<String> {
    let name = file.file_name().and_then(|n| n.to_str()).unwrap_or("");
    if name.ends_with("tests.rs") || name == "testutil.rs" {
        return BTreeSet::new();
    }
    let code = library_code(text);
    let mut found = BTreeSet::new();
    let mut rest = code.as_str();
    while let Some(i) = rest.find("crate::") {
        rest = &rest[i + "crate::".len()..];
        let ident: String = rest
            .chars()
            .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
            .collect();
        found.insert(ident);
    }
    found
}

#[test]
fn stages_import_only_earlier_stages_and_files_stay_small() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    files.sort();
    let rank = |m: &str| ORDER.iter().position(|&o| o == m);
    let mut problems = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).expect("read a source file");
        let lines = text.lines().count();
        if lines > MAX_FILE_LINES {
            problems.push(format!("{}: {lines} lines", file.display()));
        }
        let Some(module) = module_of(&src, file) else {
            continue;
        };
        let Some(own) = rank(&module) else {
            problems.push(format!(
                "{}: module {module} missing from ORDER",
                file.display()
            ));
            continue;
        };
        for used in crate_uses(file, &text) {
            if let Some(r) = rank(&used)
                && r > own
            {
                problems.push(format!(
                    "{}: {module} uses crate::{used}, a later stage",
                    file.display()
                ));
            }
        }
    }
    assert!(
        problems.is_empty(),
        "layout rules broken:\n{}",
        problems.join("\n")
    );
}

#[test]
fn every_top_level_module_is_in_the_order() {
    let lib = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("src/lib.rs"))
        .expect("read lib.rs");
    let declared: BTreeSet<&str> = lib
        .lines()
        .filter_map(|l| l.trim().strip_prefix("pub mod "))
        .map(|l| l.trim_end_matches(';'))
        .collect();
    let ordered: BTreeSet<&str> = ORDER.into_iter().collect();
    assert_eq!(declared, ordered);
}
