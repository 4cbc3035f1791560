//! `[drawing]` through the pipeline: DXF files written here (R12 ASCII by hand, R2000 by the
//! `dxf` crate), one made by a general-purpose DXF library (tests/fixtures/ezdxf-duct-bank.dxf)
//! and the demo (geometry/cable-tunnel.*), which gives the same mesh and temperatures as the
//! same rings typed inline; bad drawings stop with exit 2 naming the item.

mod common;

use common::{repo_file, tmp, write, xsheat};
use std::f64::consts::PI;
use xsheat::mesh::MeshOptions;
use xsheat::model::circle_segments;
use xsheat::{model, run};

/// One entity of a hand-written R12 drawing (coordinates in the drawing's unit).
enum E<'a> {
    Line(&'a str, [f64; 2], [f64; 2]),
    Arc(&'a str, [f64; 2], f64, f64, f64),
    Circle(&'a str, [f64; 2], f64),
    /// Closed POLYLINE; vertices (x, y, bulge).
    Poly(&'a str, Vec<(f64, f64, f64)>),
    Text(&'a str),
}

/// An R12 ASCII DXF (HEADER with $ACADVER `version`, ENTITIES) of `entities`, written group
/// code by group code as the DXF reference describes them.
fn r12(version: &str, entities: &[E]) -> String {
    let mut s = format!(
        "0\nSECTION\n2\nHEADER\n9\n$ACADVER\n1\n{version}\n0\nENDSEC\n0\nSECTION\n2\nENTITIES\n"
    );
    let xy = |s: &mut String, c: u32, p: [f64; 2]| {
        s.push_str(&format!(
            "{c}\n{}\n{}\n{}\n{}\n0.0\n",
            p[0],
            c + 10,
            p[1],
            c + 20
        ));
    };
    for e in entities {
        match e {
            E::Line(l, a, b) => {
                s.push_str(&format!("0\nLINE\n8\n{l}\n"));
                xy(&mut s, 10, *a);
                xy(&mut s, 11, *b);
            }
            E::Arc(l, c, r, a0, a1) => {
                s.push_str(&format!("0\nARC\n8\n{l}\n"));
                xy(&mut s, 10, *c);
                s.push_str(&format!("40\n{r}\n50\n{a0}\n51\n{a1}\n"));
            }
            E::Circle(l, c, r) => {
                s.push_str(&format!("0\nCIRCLE\n8\n{l}\n"));
                xy(&mut s, 10, *c);
                s.push_str(&format!("40\n{r}\n"));
            }
            E::Poly(l, v) => {
                s.push_str(&format!(
                    "0\nPOLYLINE\n8\n{l}\n66\n1\n10\n0.0\n20\n0.0\n30\n0.0\n70\n1\n"
                ));
                for (x, y, b) in v {
                    s.push_str(&format!("0\nVERTEX\n8\n{l}\n"));
                    xy(&mut s, 10, [*x, *y]);
                    s.push_str(&format!("42\n{b}\n"));
                }
                s.push_str(&format!("0\nSEQEND\n8\n{l}\n"));
            }
            E::Text(l) => {
                s.push_str(&format!("0\nTEXT\n8\n{l}\n"));
                xy(&mut s, 10, [0.0, 0.0]);
                s.push_str("40\n1.0\n1\nnote\n");
            }
        }
    }
    s.push_str("0\nENDSEC\n0\nEOF\n");
    s
}

/// Materials and boundaries of the small test models.
const TABLES: &str = r#"
[mesh]
max_area = 0.05
[materials.soil]
conductivity = 1.5
[materials.concrete]
conductivity = 2.0
[boundaries.top]
kind = "convection"
h = 10.0
ambient = -5.0
[boundaries.base]
kind = "fixed"
temperature = 10.0
[boundaries.duct]
kind = "fixed"
temperature = 30.0
"#;

/// Writes `drawing` as d.dxf and a model with `[drawing]` (+ `drawing_keys`) and [`TABLES`],
/// then prepares it (model and geometry stages).
fn prepare(drawing: &[u8], drawing_keys: &str) -> xsheat::Result<run::Prepared> {
    let d = tmp();
    std::fs::write(d.path().join("d.dxf"), drawing).expect("write");
    let m = write(
        d.path(),
        "m.toml",
        &format!("[drawing]\nfile = \"d.dxf\"\n{drawing_keys}{TABLES}"),
    );
    run::prepare(&m)
}

/// The section of [`prepare`].
fn load(drawing: &[u8], drawing_keys: &str) -> xsheat::Result<model::Section> {
    prepare(drawing, drawing_keys).map(|p| p.section)
}

/// The layers of the R12 test drawing.
const LAYERS: &str = r#"length_unit = "mm"
[drawing.layers]
GROUND = { material = "soil" }
BOX = { material = "concrete" }
DUCT = { hole = true, boundary = "duct" }
TOP = { boundary = "top" }
BASE = { boundary = "base" }
"#;

/// A soil block 4 m × 2 m (mm) as a chain of LINEs, a concrete box as a closed POLYLINE with a
/// semicircular top (bulge 1), a duct as a CIRCLE, boundary lines and a text.
fn section_r12(version: &str) -> String {
    r12(
        version,
        &[
            E::Line("GROUND", [0.0, 0.0], [4000.0, 0.0]),
            E::Line("GROUND", [4000.0, 2000.0], [4000.0, 0.0]),
            E::Line("GROUND", [4000.0, 2000.0], [0.0, 2000.0]),
            E::Line("GROUND", [0.0, 2000.0], [0.0, 0.0]),
            E::Poly(
                "BOX",
                vec![
                    (1500.0, 500.0, 0.0),
                    (2500.0, 500.0, 0.0),
                    (2500.0, 1000.0, 1.0),
                    (1500.0, 1000.0, 0.0),
                ],
            ),
            E::Circle("DUCT", [2000.0, 900.0], 200.0),
            E::Line("TOP", [0.0, 2000.0], [4000.0, 2000.0]),
            E::Line("BASE", [-10.0, 0.0], [4010.0, 0.0]),
            E::Text("NOTES"),
            E::Arc("SKETCH", [0.0, 0.0], 1.0, 0.0, 90.0),
        ],
    )
}

#[test]
fn r12_drawing_gives_rings_in_metres_with_names() {
    let s = load(section_r12("AC1009").as_bytes(), LAYERS).expect("loads");
    // The chain of LINEs is the largest ring: the outline, in metres.
    let mut pts = s.outline.points.clone();
    pts.sort_by(|a, b| a.partial_cmp(b).expect("finite"));
    assert_eq!(pts, vec![[0.0, 0.0], [0.0, 2.0], [4.0, 0.0], [4.0, 2.0]]);
    let name = |id: Option<usize>| id.map(|i| s.boundaries[i].name.as_str());
    for (i, b) in s.outline.edge_boundary.iter().enumerate() {
        let (p, q) = s.outline.segment(i);
        let expected = match (p[1], q[1]) {
            (0.0, 0.0) => Some("base"),
            (2.0, 2.0) => Some("top"),
            _ => None,
        };
        assert_eq!(name(*b), expected, "edge {i}");
    }
    // The box: the bulge-1 edge is a semicircle of radius 0.5 m about (2, 1), split by the
    // circle rule N = max(24, ⌈2πr/ℓ⌉), ℓ = (4·max_area/√3)^½ (README, "Circles"), half of it.
    let bx = &s.regions[0].ring;
    let n = circle_segments(0.5, 0.05, None);
    assert_eq!(bx.len(), 4 + n / 2 - 1);
    for p in &bx.points {
        if p[1] > 1.0 {
            let r = ((p[0] - 2.0).powi(2) + (p[1] - 1.0).powi(2)).sqrt();
            assert!((r - 0.5).abs() < 1e-12, "{p:?} off the arc");
        }
    }
    // The CIRCLE is a circle ring with its boundary.
    let c = s.holes[0].circle.expect("a circle");
    assert_eq!((c.center, c.radius), ([2.0, 0.9], 0.2));
    assert_eq!(name(s.holes[0].edge_boundary[0]), Some("duct"));
    // One warning for ignored entities, one for the layer not in the table.
    let w = s.warnings.join("\n");
    assert!(
        w.contains("1 entities ignored") && w.contains("1 TEXT/MTEXT"),
        "{w}"
    );
    assert!(
        w.contains("layer \"SKETCH\" is not in [drawing.layers]"),
        "{w}"
    );
    assert!(!w.contains("NOTES"), "{w}");
}

#[test]
fn r2000_drawing_written_by_the_dxf_crate() {
    use dxf::LwPolylineVertex;
    use dxf::entities::{Entity, EntityType, LwPolyline};
    let mut d = dxf::Drawing::new();
    d.header.version = dxf::enums::AcadVersion::R2000;
    let mut poly = |layer: &str, v: &[(f64, f64, f64)]| {
        let mut p = LwPolyline::default();
        p.set_is_closed(true);
        p.vertices = v
            .iter()
            .map(|&(x, y, bulge)| LwPolylineVertex {
                x,
                y,
                bulge,
                ..Default::default()
            })
            .collect();
        let mut e = Entity::new(EntityType::LwPolyline(p));
        e.common.layer = layer.to_string();
        d.add_entity(e);
    };
    // Metres; a 2 m × 1 m block with the box's right side bulging out (bulge 1 from the lower
    // right corner up: a semicircle to the right, counter-clockwise).
    poly(
        "G",
        &[
            (0.0, 0.0, 0.0),
            (2.0, 0.0, 0.0),
            (2.0, 1.0, 0.0),
            (0.0, 1.0, 0.0),
        ],
    );
    poly(
        "B",
        &[
            (0.5, 0.2, 0.0),
            (1.0, 0.2, 1.0),
            (1.0, 0.8, 0.0),
            (0.5, 0.8, 0.0),
        ],
    );
    let mut bytes = Vec::new();
    d.save(&mut bytes).expect("save");
    let s = load(
        &bytes,
        "default_boundary = \"base\"\n[drawing.layers]\nG = { material = \"soil\" }\nB = { material = \"concrete\" }\n",
    )
    .expect("loads");
    assert!(s.outline.edge_boundary.iter().all(|b| b.is_some()));
    let bx = &s.regions[0].ring;
    let right = bx.points.iter().map(|p| p[0]).fold(f64::MIN, f64::max);
    // The semicircle of radius 0.3 about (1.0, 0.5) reaches x = 1.3 at its middle chord point
    // when the chord count is even.
    let n = circle_segments(0.3, 0.05, None);
    assert!(right > 1.0 + 0.3 * (PI / n as f64).cos() - 1e-12, "{right}");
    assert!(right <= 1.3 + 1e-12);
}

#[test]
fn drawing_made_by_ezdxf() {
    // tests/fixtures/ezdxf-duct-bank.dxf was written once by hand with ezdxf 1.4.5 (Python,
    // from the package registry): ezdxf.new("R2000"), LWPOLYLINEs for the soil block and the
    // duct bank (top corners rounded by bulges tan(22.5°), r = 100 mm), a CIRCLE and a chain of
    // two ARCs for the conduits, a LINE on SURFACE, and a TEXT, a block reference and a LINE
    // on layers not mapped here. Units mm.
    let bytes = std::fs::read(repo_file("tests/fixtures/ezdxf-duct-bank.dxf")).expect("fixture");
    let layers = r#"length_unit = "mm"
[drawing.layers]
SOIL = { material = "soil" }
DUCTBANK = { material = "concrete" }
CONDUIT = { hole = true, boundary = "duct" }
SURFACE = { boundary = "top" }
"#;
    let p = prepare(&bytes, layers).expect("loads");
    let s = &p.section;
    assert_eq!(s.outline.len(), 4);
    assert_eq!(s.holes.len(), 2);
    assert_eq!(s.regions.len(), 1);
    // Area of the rounded duct bank: 1.0 × 0.6 m less two corners of (1 − π/4)·r², r = 0.1 m;
    // the chords cut off at most the sagitta along the two quarter arcs.
    let exact = 0.6 - 2.0 * (1.0 - PI / 4.0) * 0.01;
    let area = xsheat::geom::polygon_area(&s.regions[0].ring.points);
    assert!(
        area <= exact && exact - area < 2.0 * (PI / 2.0 * 0.1) * 0.1 * 0.02,
        "{area} vs {exact}"
    );
    // The chain of two ARCs closes into a ring of radius 0.08 m.
    let chained = s
        .holes
        .iter()
        .find(|h| h.circle.is_none())
        .expect("the arc chain");
    for p in &chained.points {
        let r = ((p[0] - 1.75).powi(2) + (p[1] - 0.9).powi(2)).sqrt();
        assert!((r - 0.08).abs() < 1e-12);
    }
    let w = s.warnings.join("\n");
    assert!(
        w.contains("entities ignored") && w.contains("INSERT (block)"),
        "{w}"
    );
    assert!(w.contains("layer \"DIMS\""), "{w}");
    // It meshes.
    let m = run::mesh(&p, &MeshOptions::default()).expect("meshes");
    assert!(m.triangles.len() > 100);
}

/// The demo's rings typed inline in metres. The tunnel air's arc (bulge 2 from (1.08, −5.81)
/// to (−1.08, −5.81): radius 1.35 m about (0, −5), turning 4·atan 2) is written as its chord
/// points by the circle rule of the README.
fn cable_tunnel_inline() -> String {
    let ell = (4.0 * 0.25 / 3f64.sqrt()).sqrt();
    let chords = |r: f64, sweep: f64| {
        let n = ((2.0 * PI * r / ell).ceil() as usize).max(24);
        (n as f64 * sweep / (2.0 * PI)).ceil() as usize
    };
    let arc = |c: [f64; 2], r: f64, a0: f64, sweep: f64| -> Vec<[f64; 2]> {
        let k = chords(r, sweep);
        (0..=k)
            .map(|j| {
                let a = a0 + sweep * j as f64 / k as f64;
                [c[0] + r * a.cos(), c[1] + r * a.sin()]
            })
            .collect()
    };
    let list = |pts: &[[f64; 2]]| {
        let v: Vec<String> = pts
            .iter()
            .map(|p| format!("[{:?}, {:?}]", p[0], p[1]))
            .collect();
        v.join(", ")
    };
    // The ARC from 0° to 180° (converted with to_radians as read), the bulge's arc from the
    // angle of its start vertex (1080, −5810) mm about the centre (0, −5000) mm.
    let mut grout = vec![[-2.2, -3.3], [2.2, -3.3]];
    grout.extend(arc([0.0, -2.7], 2.2, 0.0, 180f64.to_radians()));
    let sweep = 4.0 * 2f64.atan();
    // The arc's ends are the polyline's vertices themselves.
    let mut air = vec![[-1.08, -5.81], [1.08, -5.81]];
    let a = arc([0.0, -5.0], 1.35, (-810f64).atan2(1080.0), sweep);
    air.extend_from_slice(&a[1..a.len() - 1]);
    format!(
        r#"
[outline]
material = "soil"
points = [[-6.0, -10.0], [6.0, -10.0], [6.0, 0.0], [-6.0, 0.0]]
edges = ["deep-ground", "far-field", "ground-surface", "far-field"]
[[regions]]
material = "grout"
points = [{}]
[[regions]]
material = "concrete"
circle = {{ center = [0.0, -5.0], radius = 1.6 }}
[[regions]]
material = "cables"
points = [[-0.3, -6.1], [0.3, -6.1], [0.3, -5.9], [-0.3, -5.9]]
[[holes]]
points = [{}]
boundary = "tunnel-air"
"#,
        list(&grout),
        list(&air)
    )
}

#[test]
fn dxf_demo_equals_the_inline_model() {
    let demo = repo_file("geometry/cable-tunnel.toml");
    let text = std::fs::read_to_string(&demo).expect("demo");
    let start = text.find("[drawing]").expect("the demo names its drawing");
    let end = text.find("[mesh]").expect("mesh table");
    let inline_text = format!(
        "{}{}{}",
        &text[..start],
        cable_tunnel_inline(),
        &text[end..]
    );
    let o = MeshOptions::default();
    let a = run::solve(run::prepare(&demo).expect("demo prepares"), &o).expect("demo solves");
    let b = run::solve(
        run::prepare_model(model::parse(&inline_text).expect("parse")).expect("prepare"),
        &o,
    )
    .expect("inline solves");
    let (sa, sb) = (a.section(), b.section());
    for (ra, rb) in std::iter::once((&sa.outline, &sb.outline))
        .chain(
            sa.regions
                .iter()
                .map(|r| &r.ring)
                .zip(sb.regions.iter().map(|r| &r.ring)),
        )
        .chain(sa.holes.iter().zip(&sb.holes))
    {
        assert_eq!(ra.points, rb.points, "{}", ra.label);
        assert_eq!(ra.edge_boundary, rb.edge_boundary, "{}", ra.label);
    }
    assert_eq!(a.mesh.nodes.len(), b.mesh.nodes.len());
    assert!(a.mesh.triangles == b.mesh.triangles, "triangles differ");
    assert_eq!(a.mesh.material, b.mesh.material);
    assert_eq!(a.mesh.boundary_edges, b.mesh.boundary_edges);
    assert_eq!(a.mesh.nodes, b.mesh.nodes);
    assert_eq!(a.solution.temperature, b.solution.temperature);
}

#[test]
fn bad_drawings_are_refused_naming_the_item() {
    let open_chain = r12(
        "AC1009",
        &[
            E::Line("GROUND", [0.0, 0.0], [4000.0, 0.0]),
            E::Line("GROUND", [4000.0, 0.0], [4000.0, 2000.0]),
            E::Line("GROUND", [4000.0, 2000.0], [0.0, 2000.0]),
            E::Line("GROUND", [0.0, 2000.0], [0.0, 5.0]),
        ],
    );
    let only_ground = "length_unit = \"mm\"\n[drawing.layers]\nGROUND = { material = \"soil\" }\n";
    let crossing = r12(
        "AC1009",
        &[E::Poly(
            "GROUND",
            vec![
                (0.0, 0.0, 0.0),
                (2000.0, 0.0, 0.0),
                (2000.0, 200.0, -0.6),
                (0.0, 200.0, 0.0),
            ],
        )],
    );
    let cases: Vec<(String, String, &str)> = vec![
        (
            open_chain,
            only_ground.into(),
            "layer GROUND: open chain of LINE #0, LINE #1, LINE #2, LINE #3: it ends at (0, 0.005) but starts at (0, 0) (m, gap 0.005 m)",
        ),
        (
            section_r12("AC1009"),
            format!("{LAYERS}EMPTY = {{ material = \"soil\" }}\n"),
            "[drawing.layers] EMPTY: no LINE, ARC, CIRCLE or polyline on this layer",
        ),
        (
            r12("AC1009", &[E::Line("TOP", [0.0, 0.0], [1.0, 0.0])]),
            "[drawing.layers]\nTOP = { boundary = \"top\" }\n".into(),
            "no closed ring on a material or hole layer",
        ),
        (
            section_r12("AC1006"),
            LAYERS.into(),
            "is not supported (ASCII or binary DXF of versions R12 (AC1009) to R2018 (AC1032) are read)",
        ),
        (crossing, only_ground.into(), "ring intersects itself"),
        (
            section_r12("AC1009"),
            LAYERS.replace("\"concrete\"", "\"concrete-c30\""),
            "d.dxf layer BOX POLYLINE #4: material \"concrete-c30\" is not defined",
        ),
        (
            section_r12("AC1009"),
            LAYERS.replace(
                "TOP = { boundary",
                "TOP = { hole = false, boundary = \"top\", material",
            ),
            "[drawing.layers] TOP: `boundary` on a material layer",
        ),
        (
            section_r12("AC1009"),
            LAYERS.replace("\"mm\"", "\"inch\""),
            "[drawing] length_unit = \"inch\" is not one of",
        ),
    ];
    for (dxf, keys, expected) in cases {
        let e = load(dxf.as_bytes(), &keys).expect_err(expected);
        assert!(
            e.message().contains(expected),
            "{expected}:\n{}",
            e.message()
        );
        assert_eq!(e.exit_code(), 2, "{expected}");
    }
}

#[test]
fn bad_drawing_exits_2_and_writes_nothing() {
    let d = tmp();
    std::fs::write(d.path().join("d.dxf"), section_r12("AC1006")).expect("write");
    let m = write(
        d.path(),
        "m.toml",
        &format!("[drawing]\nfile = \"d.dxf\"\n{LAYERS}{TABLES}"),
    );
    let out = d.path().join("out");
    let r = xsheat([
        "solve".as_ref(),
        m.as_os_str(),
        "--out".as_ref(),
        out.as_os_str(),
    ]);
    assert_eq!(r.code, 2, "{}", r.stderr);
    assert!(
        r.stderr.contains("[drawing] file \"d.dxf\""),
        "{}",
        r.stderr
    );
    assert!(!out.exists());
}

/// A model in millimetres (`length_unit = "mm"`) beside a drawing in millimetres: the model's
/// unit converts the model's own lengths (max_area, probes) and leaves the drawing's rings
/// alone (the drawing's own `length_unit` converted them), so the section is the metre demo's.
#[test]
fn model_length_unit_does_not_scale_the_drawing_twice() {
    let demo = repo_file("geometry/cable-tunnel.toml");
    let text = std::fs::read_to_string(&demo).expect("demo");
    let mm = text
        .replace(
            "title = \"Bored cable tunnel",
            "length_unit = \"mm\"\ntitle = \"Bored cable tunnel",
        )
        .replace("max_area = 0.25", "max_area = 250000.0")
        .replace("max_area = 0.02", "max_area = 20000.0")
        .replace("max_area = 0.002", "max_area = 2000.0")
        .replace("at = [0.0, -6.0]", "at = [0.0, -6000.0]")
        .replace("at = [0.0, -3.5]", "at = [0.0, -3500.0]");
    assert!(mm.contains("length_unit = \"mm\"\ntitle"));
    let dir = common::tmp();
    std::fs::copy(
        repo_file("geometry/cable-tunnel.dxf"),
        dir.path().join("cable-tunnel.dxf"),
    )
    .expect("copy drawing");
    let mm_path = common::write(dir.path(), "mm.toml", &mm);
    let o = MeshOptions::default();
    let a = run::solve(run::prepare(&demo).expect("demo prepares"), &o).expect("demo solves");
    let b = run::solve(run::prepare(&mm_path).expect("mm prepares"), &o).expect("mm solves");
    assert_eq!(a.section().outline.points, b.section().outline.points);
    assert_eq!(a.mesh.nodes, b.mesh.nodes);
    assert_eq!(a.solution.temperature, b.solution.temperature);
    for (pa, pb) in a.results.probes.iter().zip(&b.results.probes) {
        assert_eq!(pa.temperature, pb.temperature, "{}", pa.name);
    }
}
