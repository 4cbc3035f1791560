//! Heat flow across cuts, per item (hole, run of ring segments) and per material, and the
//! files that carry them (cuts.csv, items.csv, materials.csv, boundary.vtp, the field data of
//! field.vtu). Each check against the outside world names its source.

mod common;

use xsheat::mesh::MeshOptions;
use xsheat::study::verify;
use xsheat::{model, output, run};

fn solve(text: &str) -> run::Solved {
    let p = run::prepare_model(model::parse(text).expect("parse")).expect("valid");
    let s = run::solve(p, &MeshOptions::default()).expect("solve");
    assert!(s.checks_passed(), "{:?}", s.checks);
    s
}

fn reference_model(name: &str) -> String {
    verify::case(name)
        .expect("reference case")
        .model
        .to_string()
}

fn flow(s: &run::Solved, name: &str) -> f64 {
    s.results
        .boundaries
        .iter()
        .find(|b| b.name == name)
        .unwrap_or_else(|| panic!("no boundary {name}"))
        .heat_flow
}

fn cut(s: &run::Solved, name: &str) -> xsheat::post::cuts::CutResult {
    s.results
        .cuts
        .iter()
        .find(|c| c.name == name)
        .unwrap_or_else(|| panic!("no cut {name}"))
        .clone()
}

fn cut_toml(name: &str, points: &[[f64; 2]]) -> String {
    let pts: Vec<String> = points
        .iter()
        .map(|p| format!("[{:?}, {:?}]", p[0], p[1]))
        .collect();
    format!(
        "[[cuts]]\nname = \"{name}\"\npoints = [{}]\n",
        pts.join(", ")
    )
}

#[test]
fn cuts_through_a_composite_wall_carry_the_boundary_heat_flow() {
    // Source: 1D series thermal resistances (Incropera et al., Fundamentals of Heat and Mass
    // Transfer, ch. 3): in steady state without sources the same heat crosses every plane
    // parallel to the faces. The discrete flow across a cut that divides the wall is the nodal
    // balance of the part on its left, so it equals the face flows to round-off. Travelling in
    // +y, the left is −x (the inside face at x = 0); heat flows towards +x, so the flow to
    // the left equals the (negative) flow into the section through the outside face.
    let mut text = reference_model("composite_wall");
    // Straight cuts in the masonry, exactly on the interface (nodes on the cut), in the
    // insulation; a bent cut; one running downwards (sign reversed).
    text += &cut_toml("masonry", &[[0.1, -0.5], [0.1, 1.5]]);
    text += &cut_toml("interface", &[[0.2, -0.5], [0.2, 1.5]]);
    text += &cut_toml("insulation", &[[0.37, -0.5], [0.37, 1.5]]);
    text += &cut_toml("bent", &[[0.05, -0.2], [0.3, 0.5], [0.11, 1.3]]);
    text += &cut_toml("down", &[[0.3, 1.5], [0.3, -0.5]]);
    let s = solve(&text);
    let q_out = flow(&s, "outside");
    let q_in = flow(&s, "inside");
    assert!(q_in > 0.0 && q_out < 0.0);
    for name in ["masonry", "interface", "insulation", "bent"] {
        let c = cut(&s, name);
        assert!(
            (c.heat_flow - q_out).abs() <= 1e-10 * q_in,
            "cut {name}: {} vs outside face {q_out}",
            c.heat_flow
        );
    }
    let down = cut(&s, "down");
    assert!(
        (down.heat_flow - q_in).abs() <= 1e-10 * q_in,
        "{}",
        down.heat_flow
    );
    // 2 m drawn, 1 m inside the 1 m high wall, the rest skipped.
    let m = cut(&s, "masonry");
    assert!((m.length - 2.0).abs() < 1e-12);
    assert!((m.inside_length - 1.0).abs() < 1e-12, "{}", m.inside_length);
    assert!((m.skipped_length() - 1.0).abs() < 1e-12);
    assert!(!m.closed);
}

#[test]
fn a_closed_cut_around_a_pipe_carries_the_pipe_heat_flow() {
    // Source: conservation of energy in the annulus between the cut and the pipe (no source):
    // all heat entering through the pipe wall crosses any closed curve around it — for the
    // discrete field exactly, since the flow is the nodal balance of the enclosed part.
    // Counter-clockwise, positive means into the enclosed area: minus the pipe's flow.
    let mut text = reference_model("hollow_cylinder");
    let ccw = [
        [-0.6, -0.6],
        [0.6, -0.6],
        [0.6, 0.6],
        [-0.6, 0.6],
        [-0.6, -0.6],
    ];
    let mut cw = ccw;
    cw.reverse();
    text += &cut_toml("ccw", &ccw);
    text += &cut_toml("cw", &cw);
    let s = solve(&text);
    let q_pipe = flow(&s, "inner");
    assert!(q_pipe > 0.0);
    let c = cut(&s, "ccw");
    assert!(c.closed);
    assert!(
        (c.heat_flow + q_pipe).abs() <= 1e-10 * q_pipe,
        "{} vs {q_pipe}",
        c.heat_flow
    );
    assert!((cut(&s, "cw").heat_flow - q_pipe).abs() <= 1e-10 * q_pipe);
    assert!((c.inside_length - 4.8).abs() < 1e-12);
    assert!(
        s.results.warnings.iter().all(|w| !w.contains("cut")),
        "{:?}",
        s.results.warnings
    );
}

/// An invented block of ground around a square cable zone that generates heat, fixed
/// temperature all round.
const SOURCE_BLOCK: &str = r#"
[mesh]
max_area = 0.002
[materials.ground]
conductivity = 1.6
[materials.cable]
conductivity = 0.9
heat_source = 1500.0
[outline]
material = "ground"
points = [[0.0, 0.0], [2.0, 0.0], [2.0, 1.5], [0.0, 1.5]]
boundary = "edge"
[[regions]]
material = "cable"
points = [[0.8, 0.6], [1.1, 0.6], [1.1, 0.85], [0.8, 0.85]]
[boundaries.edge]
kind = "fixed"
temperature = 12.0
"#;

#[test]
fn a_closed_cut_around_a_source_region_carries_its_generated_heat() {
    // Source: conservation of energy: the heat generated inside a closed curve through
    // source-free material leaves across it (Q̇ = q̇·A, here 1500 W/m³ × 0.3 m × 0.25 m).
    let mut text = SOURCE_BLOCK.to_string();
    text += &cut_toml(
        "around",
        &[[0.6, 0.4], [1.4, 0.4], [1.3, 1.1], [0.6, 1.1], [0.6, 0.4]],
    );
    // An open cut ending inside the ground: a warning says it does not divide the section.
    text += &cut_toml("stub", &[[0.2, -0.1], [0.2, 0.7]]);
    let s = solve(&text);
    let generated = 1500.0 * 0.3 * 0.25;
    assert!((s.results.heat_source - generated).abs() < 1e-9 * generated);
    let c = cut(&s, "around");
    assert!(
        (c.heat_flow + generated).abs() <= 1e-10 * generated,
        "{}",
        c.heat_flow
    );
    assert!(
        s.results
            .warnings
            .iter()
            .any(|w| w.contains("cut \"stub\" ends inside the material")),
        "{:?}",
        s.results.warnings
    );
    // Per material: the cable generates all the heat; areas add up to the section.
    let m = &s.results.materials;
    assert_eq!(m.len(), 2);
    let cable = m.iter().find(|x| x.name == "cable").unwrap();
    let ground = m.iter().find(|x| x.name == "ground").unwrap();
    assert!((cable.heat_generated - generated).abs() < 1e-9 * generated);
    assert_eq!(ground.heat_generated, 0.0);
    assert!((cable.area - 0.075).abs() < 1e-12);
    assert!((cable.area + ground.area - 3.0).abs() < 1e-12);
    assert!(cable.max_temperature >= cable.mean_temperature);
    assert!(cable.mean_temperature >= cable.min_temperature);
    assert!(ground.min_temperature >= 12.0 - 1e-9);
}

/// Two pipes under one boundary name at different depths below a cold surface, in an invented
/// block of ground; the outline's names alternate so that one name has two runs.
const TWO_PIPES: &str = r#"
[mesh]
max_area = 0.004
[materials.soil]
conductivity = 1.2
[outline]
material = "soil"
points = [[0.0, 0.0], [3.0, 0.0], [3.0, 2.0], [0.0, 2.0]]
edges = ["far", "side", "surface", "side"]
[[holes]]
circle = { center = [1.0, 1.5], radius = 0.1, segments = 48 }
boundary = "pipe"
[[holes]]
circle = { center = [2.0, 0.6], radius = 0.1, segments = 48 }
boundary = "pipe"
[boundaries.pipe]
kind = "fixed"
temperature = 60.0
[boundaries.surface]
kind = "convection"
h = 15.0
ambient = 5.0
[boundaries.far]
kind = "fixed"
temperature = 10.0
[boundaries.side]
kind = "insulated"
"#;

#[test]
fn items_split_a_shared_name_by_hole_and_by_run() {
    // Source: conservation of energy: a closed cut around each pipe alone carries that pipe's
    // heat flow, which checks the per-hole split of the one boundary name independently.
    let mut text = TWO_PIPES.to_string();
    let square = |cx: f64, cy: f64| {
        [
            [cx - 0.25, cy - 0.25],
            [cx + 0.25, cy - 0.25],
            [cx + 0.25, cy + 0.25],
            [cx - 0.25, cy + 0.25],
            [cx - 0.25, cy - 0.25],
        ]
    };
    text += &cut_toml("around-0", &square(1.0, 1.5));
    text += &cut_toml("around-1", &square(2.0, 0.6));
    let s = solve(&text);
    let items = &s.results.items;
    let labels: Vec<&str> = items.iter().map(|i| i.item.as_str()).collect();
    assert_eq!(
        labels,
        [
            "outline:0",
            "outline:1",
            "outline:2",
            "outline:3",
            "holes[0]",
            "holes[1]"
        ]
    );
    let h0 = &items[4].result;
    let h1 = &items[5].result;
    assert_eq!((h0.name.as_str(), h1.name.as_str()), ("pipe", "pipe"));
    // The shallow pipe loses more heat than the deep one, and the two add up to the name.
    assert!(h0.heat_flow > h1.heat_flow && h1.heat_flow > 0.0);
    let total = flow(&s, "pipe");
    assert!((h0.heat_flow + h1.heat_flow - total).abs() <= 1e-12 * total);
    for (i, h) in [(0, h0), (1, h1)] {
        let c = cut(&s, &format!("around-{i}"));
        assert!(
            (c.heat_flow + h.heat_flow).abs() <= 1e-9 * h.heat_flow,
            "pipe {i}: cut {} vs item {}",
            c.heat_flow,
            h.heat_flow
        );
    }
    // "side" has two runs (segments 1 and 3) whose flows add up to the name's.
    let side: f64 = items
        .iter()
        .filter(|i| i.result.name == "side")
        .map(|i| i.result.heat_flow)
        .sum();
    assert_eq!(items.iter().filter(|i| i.result.name == "side").count(), 2);
    assert!((side - flow(&s, "side")).abs() < 1e-12);
    let all: f64 = items.iter().map(|i| i.result.heat_flow).sum();
    let by_name: f64 = s.results.boundaries.iter().map(|b| b.heat_flow).sum();
    assert!((all - by_name).abs() <= 1e-12 * total);
}

#[test]
fn solve_writes_cuts_items_materials_and_the_boundary_polydata() {
    let mut text = TWO_PIPES.to_string();
    text += &cut_toml("vertical", &[[1.5, -0.1], [1.5, 2.1]]);
    let (run, _d, out) = common::solve_text(&text, &[]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let read = |f: &str| std::fs::read_to_string(out.join(f)).expect(f);
    let cuts = read("cuts.csv");
    let rows: Vec<&str> = cuts.lines().collect();
    assert_eq!(rows[0], "name,length_m,inside_length_m,heat_flow_w_per_m");
    let cols: Vec<&str> = rows[1].split(',').collect();
    assert_eq!(cols[0], "vertical");
    assert!(
        (cols[1].parse::<f64>().unwrap() - 2.2).abs() < 1e-12,
        "{cuts}"
    );
    assert!(
        (cols[2].parse::<f64>().unwrap() - 2.0).abs() < 1e-12,
        "{cuts}"
    );
    let items = read("items.csv");
    assert!(items.starts_with(
        "item,ring,segments,boundary,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,max_temperature_c\n"
    ));
    assert!(
        items.contains("\nholes[1],holes[1],0-47,pipe,fixed,"),
        "{items}"
    );
    let materials = read("materials.csv");
    assert!(materials.starts_with(
        "material,id,area_m2,heat_generated_w_per_m,mean_temperature_c,min_temperature_c,max_temperature_c\nsoil,0,"
    ));
    let summary: serde_json::Value = serde_json::from_str(&read("summary.json")).unwrap();
    assert_eq!(summary["cuts"][0]["name"], "vertical");
    assert_eq!(summary["items"].as_array().unwrap().len(), 6);
    assert!(summary["materials"][0]["area_m2"].as_f64().unwrap() > 5.9);

    // boundary.vtp: read back with vtkio; one line per boundary edge with its boundary id.
    let p = run::prepare_model(model::parse(&text).unwrap()).unwrap();
    let solved = run::solve(p, &MeshOptions::default()).unwrap();
    let bytes = std::fs::read(out.join("boundary.vtp")).unwrap();
    assert_eq!(
        bytes,
        output::boundary_vtp(
            solved.section(),
            &solved.mesh,
            &solved.results,
            &Default::default()
        )
        .unwrap(),
        "the file is the library's encoding of the same solve"
    );
    let vtp = vtkio::Vtk::parse_xml(&bytes[..]).expect("vtkio reads boundary.vtp");
    let vtkio::model::DataSet::PolyData { pieces, .. } = vtp.data else {
        panic!("not PolyData");
    };
    let Some(vtkio::model::Piece::Inline(piece)) = pieces.into_iter().next() else {
        panic!("piece not inline");
    };
    let lines = piece.lines.as_ref().expect("lines");
    assert_eq!(lines.num_cells(), solved.mesh.boundary_edges.len());
    let cell: Vec<(String, vtkio::model::IOBuffer)> = piece
        .data
        .cell
        .iter()
        .map(|a| match a {
            vtkio::model::Attribute::DataArray(d) => (d.name.clone(), d.data.clone()),
            vtkio::model::Attribute::Field { name, .. } => panic!("field {name}"),
        })
        .collect();
    let names: Vec<&str> = cell.iter().map(|a| a.0.as_str()).collect();
    assert_eq!(
        names,
        [
            "boundary_id",
            "ring_id",
            "segment",
            "heat_flux_normal_w_per_m2",
            "temperature_c",
            "length_m"
        ]
    );
    let vtkio::model::IOBuffer::I32(ids) = &cell[0].1 else {
        panic!("boundary_id")
    };
    let vtkio::model::IOBuffer::F64(flux) = &cell[3].1 else {
        panic!("flux")
    };
    let vtkio::model::IOBuffer::F64(len) = &cell[5].1 else {
        panic!("length")
    };
    // The name tables as field data: one Int32 array per boundary and per material.
    let vtp_text = read("boundary.vtp");
    for (i, b) in ["far", "pipe", "side", "surface"].iter().enumerate() {
        assert!(
            vtp_text.contains(&format!(
                r#"<DataArray type="Int32" Name="{b}" NumberOfTuples="1""#
            )),
            "{b}"
        );
        assert_eq!(solved.section().boundaries[i].name, *b);
    }
    let vtu_text = read("field.vtu");
    assert!(
        vtu_text.contains("<FieldData>") && vtu_text.contains(r#"Name="soil" NumberOfTuples="1""#)
    );
    // Convection edges report h·(T_ambient − T_edge): flux × length over the surface's edges
    // adds up to the boundary's heat flow (the same edge integral); insulated edges report 0.
    let sum = |id: i32| -> f64 {
        ids.iter()
            .zip(flux.iter().zip(len))
            .filter(|(b, _)| **b == id)
            .map(|(_, (q, l))| q * l)
            .sum()
    };
    let surface = flow(&solved, "surface");
    assert!(
        (sum(3) - surface).abs() <= 1e-12 * surface.abs(),
        "{} vs {surface}",
        sum(3)
    );
    assert_eq!(sum(2), 0.0);
}
