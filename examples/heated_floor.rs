//! Build a section in code and solve it: an invented heated floor strip — a 0.12 m screed on
//! 0.08 m insulation, one warm-water pipe in the screed, room air above, a cold slab below.
use xsheat::model::{BoundaryFile, CircleFile, MaterialFile, ModelFile, PointEntry, RingFile};

fn main() -> Result<(), xsheat::Error> {
    let mat = |k: f64| MaterialFile {
        conductivity: k.into(),
        ..Default::default()
    };
    let fixed = |t: f64| BoundaryFile {
        kind: "fixed".into(),
        temperature: Some(t.into()),
        ..Default::default()
    };
    let mut m = ModelFile {
        title: Some("heated floor strip (example)".into()),
        ..Default::default()
    };
    m.mesh.max_area = Some(2e-5);
    m.materials.insert("screed".into(), mat(1.3));
    m.materials.insert("insulation".into(), mat(0.035));
    m.outline = Some(RingFile {
        material: Some("screed".into()),
        points: Some(PointEntry::list(&[
            [0.0, 0.0],
            [0.15, 0.0],
            [0.15, 0.2],
            [0.0, 0.2],
        ])),
        edges: Some(vec!["slab".into(), "".into(), "room".into(), "".into()]),
        ..Default::default()
    });
    m.regions.push(RingFile {
        material: Some("insulation".into()),
        points: Some(PointEntry::list(&[
            [0.0, 0.0],
            [0.15, 0.0],
            [0.15, 0.08],
            [0.0, 0.08],
        ])),
        ..Default::default()
    });
    m.holes.push(RingFile {
        circle: Some(CircleFile {
            center: [0.075, 0.12],
            radius: 0.008,
            segments: Some(32),
        }),
        boundary: Some("pipe".into()),
        ..Default::default()
    });
    m.boundaries.insert("slab".into(), fixed(8.0));
    m.boundaries.insert("pipe".into(), fixed(35.0));
    let room = BoundaryFile {
        kind: "convection".into(),
        h: Some(10.8),
        ambient: Some(20.0.into()),
        ..Default::default()
    };
    m.boundaries.insert("room".into(), room);

    let solved = xsheat::run::solve(xsheat::run::prepare_model(m)?, &Default::default())?;
    print!("{}", xsheat::report::solve_report(&solved));
    eprintln!("CAUTION: {}", xsheat::CAUTION);
    Ok(())
}
