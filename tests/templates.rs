//! `xsheat new --template NAME`: every starter model is written, solves as written with every
//! self-check passing and no warning, and `new` never replaces a file.

mod common;

use common::{tmp, xsheat};

#[test]
fn every_template_solves_as_written_without_warnings() {
    for (name, _, text) in xsheat::model::templates::TEMPLATES {
        let d = tmp();
        let model = d.path().join(format!("{name}.toml"));
        let o = xsheat([
            "new".as_ref(),
            "--template".as_ref(),
            name.as_ref(),
            "--out".as_ref(),
            model.as_os_str(),
        ]);
        assert_eq!(o.code, 0, "{name}: {}", o.stderr);
        assert_eq!(std::fs::read_to_string(&model).unwrap(), text);
        let stdout = xsheat(["new", "--template", name]);
        assert_eq!(stdout.code, 0);
        assert_eq!(stdout.stdout, text, "{name}: stdout is the template");
        let out = d.path().join("out");
        let o = xsheat([
            "solve".as_ref(),
            model.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
        ]);
        assert_eq!(o.code, 0, "{name}: {}", o.stderr);
        let s: serde_json::Value =
            serde_json::from_slice(&std::fs::read(out.join("summary.json")).unwrap()).unwrap();
        for c in s["checks"].as_array().unwrap() {
            assert_eq!(c["passed"], true, "{name}: {c}");
        }
        assert_eq!(
            s["warnings"].as_array().unwrap().len(),
            0,
            "{name}: {}",
            s["warnings"]
        );
        assert!(
            text.contains("invented numbers"),
            "{name}: says its numbers are invented"
        );
    }
}

#[test]
fn new_refuses_an_existing_file_and_an_unknown_template() {
    let d = tmp();
    let existing = common::write(d.path(), "mine.toml", "title = \"mine\"\n");
    let o = xsheat([
        "new".as_ref(),
        "--template".as_ref(),
        "wall".as_ref(),
        "--out".as_ref(),
        existing.as_os_str(),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
    assert!(o.stderr.contains("exists"), "{}", o.stderr);
    assert_eq!(
        std::fs::read_to_string(&existing).unwrap(),
        "title = \"mine\"\n"
    );
    let target = d.path().join("x.toml");
    let o = xsheat([
        "new".as_ref(),
        "--template".as_ref(),
        "unknown-shape".as_ref(),
        "--out".as_ref(),
        target.as_os_str(),
    ]);
    assert_eq!(o.code, 2);
    assert!(
        o.stderr.contains("--template") && o.stderr.contains("wall"),
        "{}",
        o.stderr
    );
    assert!(!target.exists());
    let dir_target = d.path().join("sub/");
    std::fs::create_dir(&dir_target).unwrap();
    let o = xsheat([
        "new".as_ref(),
        "--template".as_ref(),
        "pipes".as_ref(),
        "--out".as_ref(),
        dir_target.as_os_str(),
    ]);
    assert_eq!(o.code, 2, "{}", o.stderr);
}
