//! report.html: written by every solve, listed in the manifest, well-formed polyglot XHTML
//! (read back by an XML parser), self-contained (no script, no URL but the namespaces), with
//! every table the page promises, numbers equal to summary.json's, and the same bytes whatever
//! the thread count.

mod common;

use std::collections::BTreeSet;
use std::path::Path;

fn read(dir: &Path, name: &str) -> String {
    std::fs::read_to_string(dir.join(name)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

/// All text of an element and its descendants.
fn text_of(n: roxmltree::Node) -> String {
    n.descendants()
        .filter(|d| d.is_text())
        .filter_map(|d| d.text())
        .collect()
}

fn section<'a, 'i>(doc: &'a roxmltree::Document<'i>, id: &str) -> roxmltree::Node<'a, 'i> {
    doc.descendants()
        .find(|n| n.has_tag_name("section") && n.attribute("id") == Some(id))
        .unwrap_or_else(|| panic!("no section {id}"))
}

#[test]
fn report_page_is_wellformed_self_contained_and_complete() {
    let model =
        std::fs::read_to_string(common::repo_file("geometry/wall-junction.toml")).expect("demo");
    let (run, _dir, out) = common::solve_text(&model, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let html = read(&out, "report.html");
    assert!(html.starts_with("<!DOCTYPE html>\n"));
    let doc = roxmltree::Document::parse_with_options(
        &html,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..Default::default()
        },
    )
    .expect("report.html is well-formed XML");
    let root = doc.root_element();
    assert_eq!(root.tag_name().name(), "html");
    assert_eq!(
        root.tag_name().namespace(),
        Some("http://www.w3.org/1999/xhtml")
    );
    // Self-contained: no script, no external resource, no URL but XML namespaces.
    for n in doc.descendants().filter(|n| n.is_element()) {
        let name = n.tag_name().name();
        assert!(
            !["script", "link", "img", "iframe", "object", "embed"].contains(&name),
            "element {name}"
        );
        for a in n.attributes() {
            let ns_decl = a.name() == "xmlns" || a.name().starts_with("xmlns:");
            assert!(
                ns_decl || !a.value().contains("://"),
                "attribute {}={}",
                a.name(),
                a.value()
            );
            assert!(!a.name().starts_with("on"), "event handler {}", a.name());
        }
    }
    // In the text too: every "://" is the value of a namespace declaration.
    for (i, _) in html.match_indices("://") {
        let before = &html[..i];
        let quote = before.rfind('"').expect("inside an attribute value");
        let attribute = before[..quote].rsplit(' ').next().unwrap_or("");
        assert!(
            attribute.starts_with("xmlns") && &before[quote + 1..] == "http",
            "a URL outside a namespace declaration near byte {i}"
        );
    }
    let all = text_of(root);
    assert!(all.contains(xsheat::CAUTION), "the caution is on the page");
    assert!(all.contains("Floor slab on an insulated masonry wall (demo)"));

    // Every section the page promises, with its tables.
    for id in [
        "summary",
        "model",
        "flows",
        "coupling",
        "probes",
        "cases",
        "accuracy",
        "warnings",
        "conventions",
    ] {
        section(&doc, id);
    }
    let summary: serde_json::Value =
        serde_json::from_str(&read(&out, "summary.json")).expect("json");
    let model_text = text_of(section(&doc, "model"));
    for m in ["masonry", "insulation", "concrete"] {
        assert!(model_text.contains(m), "material {m}");
    }
    assert!(model_text.contains("h = 25 W/(m²·K), ambient -5 °C"));
    let flows = text_of(section(&doc, "flows"));
    for b in summary["boundaries"].as_array().expect("boundaries") {
        let name = b["name"].as_str().expect("name");
        assert!(flows.contains(name), "boundary {name}");
        let q = b["heat_flow_w_per_m"].as_f64().expect("flow");
        assert!(flows.contains(&format!("{q:.5}")), "flow of {name} {q:.5}");
    }
    assert!(flows.contains("through-slab"), "cut table");
    assert!(flows.contains("outline:1-2"), "item table");
    let coupling = text_of(section(&doc, "coupling"));
    let psi = summary["psi"][0]["psi_w_per_m_k"].as_f64().expect("psi");
    assert!(coupling.contains(&format!("{psi:.6}")), "ψ {psi:.6}");
    let l2d = summary["coupling_w_per_m_k"][0]["value"]
        .as_f64()
        .expect("l2d");
    assert!(coupling.contains(&format!("{l2d:.6}")));
    let f = summary["temperature_factors"][0]["f_rsi"]
        .as_f64()
        .expect("f_rsi");
    assert!(coupling.contains(&format!("{f:.4}")));
    let probes = text_of(section(&doc, "probes"));
    assert!(probes.contains("corner-below-slab"));
    let cases = text_of(section(&doc, "cases"));
    for c in ["winter", "summer", "damp", "refactorised"] {
        assert!(cases.contains(c), "case {c}");
    }
    let accuracy = text_of(section(&doc, "accuracy"));
    for c in summary["checks"].as_array().expect("checks") {
        let name = c["name"].as_str().expect("name");
        assert!(accuracy.contains(name), "check {name}");
    }
    assert!(accuracy.contains("Zienkiewicz–Zhu"));
    // Every table row has as many cells as its header.
    for t in doc.descendants().filter(|n| n.has_tag_name("table")) {
        let rows: Vec<usize> = t
            .descendants()
            .filter(|n| n.has_tag_name("tr"))
            .map(|r| {
                r.children()
                    .filter(|c| c.has_tag_name("td") || c.has_tag_name("th"))
                    .count()
            })
            .collect();
        assert!(rows.len() >= 2, "a table with a header and rows");
        assert!(rows.iter().all(|&n| n == rows[0]), "ragged table {rows:?}");
    }
    // The page is in the manifest, and lists every file of the set.
    let listed: BTreeSet<&str> = summary["files"]
        .as_array()
        .expect("files")
        .iter()
        .map(|f| f["path"].as_str().expect("path"))
        .collect();
    assert!(listed.contains("report.html"));
    let files = text_of(section(&doc, "conventions"));
    for f in &listed {
        assert!(files.contains(f), "the page lists {f}");
    }
}

#[test]
fn markup_in_names_and_title_is_escaped() {
    let model = common::L_SECTION.replacen(
        "title = ",
        "title = \"<b>Wall & \\\"slab\\\"</b> <script>x</script>\"\n# title = ",
        1,
    );
    let (run, _dir, out) = common::solve_text(&model, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let html = read(&out, "report.html");
    let doc = roxmltree::Document::parse_with_options(
        &html,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..Default::default()
        },
    )
    .expect("well-formed");
    assert!(!doc.descendants().any(|n| n.has_tag_name("script")));
    assert!(!doc.descendants().any(|n| n.has_tag_name("b")));
    let h1 = doc
        .descendants()
        .find(|n| n.has_tag_name("h1"))
        .expect("h1");
    assert_eq!(text_of(h1), "<b>Wall & \"slab\"</b> <script>x</script>");
}

#[test]
fn report_page_is_the_same_whatever_the_thread_count() {
    let model =
        std::fs::read_to_string(common::repo_file("geometry/wall-junction.toml")).expect("demo");
    let (one, _d1, out1) = common::solve_text(&model, &["--threads", "1"]);
    let (two, _d2, out2) = common::solve_text(&model, &["--threads", "2"]);
    assert_eq!((one.code, two.code), (0, 0));
    assert_eq!(read(&out1, "report.html"), read(&out2, "report.html"));
}

#[test]
fn report_page_with_plot_holds_the_picture_and_stays_wellformed() {
    let model =
        std::fs::read_to_string(common::repo_file("geometry/wall-junction.toml")).expect("demo");
    let (run, _dir, out) = common::solve_text(&model, &["--plot", "--plot-size", "640x400"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let html = read(&out, "report.html");
    let doc = roxmltree::Document::parse_with_options(
        &html,
        roxmltree::ParsingOptions {
            allow_dtd: true,
            ..Default::default()
        },
    )
    .expect("report.html with the picture is well-formed XML");
    let picture = section(&doc, "picture");
    let svg = picture
        .descendants()
        .find(|n| n.has_tag_name("svg"))
        .expect("inline svg");
    assert_eq!(
        svg.tag_name().namespace(),
        Some("http://www.w3.org/2000/svg")
    );
    assert!(!html.contains("<script"));
    for (i, _) in html.match_indices("://") {
        let before = &html[..i];
        let quote = before.rfind('"').expect("inside an attribute value");
        let attribute = before[..quote].rsplit(' ').next().unwrap_or("");
        assert!(attribute.starts_with("xmlns"), "a URL near byte {i}");
    }
}
