//! Bytes → a structured model built in code (outline, holes, regions, boundaries, probes and
//! lines on a small integer lattice, so that degenerate, collinear, repeated and self-touching
//! cases are frequent) → prepare → mesh → solve. Errors are fine; a panic, an abort or a hang
//! is a bug.
#![no_main]

use libfuzzer_sys::arbitrary::{Result, Unstructured};
use libfuzzer_sys::fuzz_target;
use xsheat::mesh::MeshOptions;
use xsheat::model::{
    BoundaryFile, CircleFile, LineFile, MaterialFile, ModelFile, PointEntry, ProbeFile, RingFile,
};

/// Lattice size: coordinates are integers 0..=LATTICE, times the scale, plus the offset.
const LATTICE: u8 = 8;
const BOUNDARY_NAMES: [&str; 4] = ["a", "b", "c", "d"];
const MATERIAL_NAMES: [&str; 3] = ["m0", "m1", "m2"];

struct Frame {
    scale: f64,
    offset: [f64; 2],
}

impl Frame {
    fn point(&self, u: &mut Unstructured) -> Result<[f64; 2]> {
        let x = u.int_in_range(0..=LATTICE)?;
        let y = u.int_in_range(0..=LATTICE)?;
        Ok([
            self.offset[0] + f64::from(x) * self.scale,
            self.offset[1] + f64::from(y) * self.scale,
        ])
    }
}

fn polygon(u: &mut Unstructured, f: &Frame, min: usize, max: usize) -> Result<Vec<[f64; 2]>> {
    let n = u.int_in_range(min..=max)?;
    (0..n).map(|_| f.point(u)).collect()
}

/// A boundary name for a segment: mostly defined ones, sometimes unnamed, rarely undefined.
fn edge_name(u: &mut Unstructured) -> Result<String> {
    Ok(match u.int_in_range(0u8..=9)? {
        0..=5 => BOUNDARY_NAMES[usize::from(u.int_in_range(0u8..=3)?)].to_string(),
        6..=8 => String::new(),
        _ => "undefined".to_string(),
    })
}

/// A hole or region ring: a lattice polygon or a circle.
fn ring(u: &mut Unstructured, f: &Frame, named: bool) -> Result<RingFile> {
    let mut r = RingFile::default();
    if u.ratio(1u8, 3)? {
        let center = f.point(u)?;
        // Radius in half lattice units: 0.5 .. 4.
        let radius = f64::from(u.int_in_range(1u8..=8)?) * 0.5 * f.scale;
        let segments = if u.ratio(1u8, 2)? {
            Some(usize::from(u.int_in_range(3u8..=48)?))
        } else {
            None
        };
        r.circle = Some(CircleFile {
            center,
            radius,
            segments,
        });
        if named {
            r.boundary = Some(edge_name(u)?);
        }
    } else {
        let pts = polygon(u, f, 3, 8)?;
        if named {
            if u.ratio(1u8, 2)? {
                r.edges = Some(
                    (0..pts.len())
                        .map(|_| edge_name(u))
                        .collect::<Result<_>>()?,
                );
            } else {
                r.boundary = Some(edge_name(u)?);
            }
        }
        r.points = Some(PointEntry::list(&pts));
    }
    Ok(r)
}

fn boundary(u: &mut Unstructured, diag: f64) -> Result<BoundaryFile> {
    let temp = |u: &mut Unstructured| -> Result<f64> { Ok(f64::from(u.int_in_range(-20i8..=90)?)) };
    let mut b = match u.int_in_range(0u8..=3)? {
        0 => BoundaryFile {
            kind: "fixed".into(),
            temperature: Some(temp(u)?.into()),
            ..Default::default()
        },
        1 => BoundaryFile {
            kind: "insulated".into(),
            ..Default::default()
        },
        2 => BoundaryFile {
            kind: "flux".into(),
            flux: Some(f64::from(u.int_in_range(-100i8..=100)?)),
            ..Default::default()
        },
        _ => BoundaryFile {
            kind: "convection".into(),
            h: Some(f64::from(u.int_in_range(1u8..=50)?)),
            ambient: Some(temp(u)?.into()),
            ..Default::default()
        },
    };
    match u.int_in_range(0u8..=39)? {
        // Target edge length between diag/4 and diag/60.
        0..=9 => b.size = Some(diag / f64::from(u.int_in_range(4u8..=60)?)),
        // Rarely absurdly small: the triangle limit must refuse it, quickly.
        10 => b.size = Some(diag * 1e-12),
        _ => {}
    }
    Ok(b)
}

fn model(u: &mut Unstructured) -> Result<ModelFile> {
    let scale = [1.0, 0.25, 1e-3, 1e3, 1e-6][usize::from(u.int_in_range(0u8..=4)?)];
    let offset = match u.int_in_range(0u8..=3)? {
        0 => [0.0, 0.0],
        1 => [-4.0 * scale, -4.0 * scale],
        2 => [1e5, -1e5],
        _ => [0.5 * scale, 1e3 * scale],
    };
    let f = Frame { scale, offset };
    let mut m = ModelFile::default();

    // Materials.
    let nmat = u.int_in_range(1u8..=3)?;
    for name in MATERIAL_NAMES.iter().take(usize::from(nmat)) {
        let mut mat = MaterialFile {
            conductivity: xsheat::model::ConductivityFile::Scalar(
                f64::from(u.int_in_range(1u8..=40)?) * 0.1,
            ),
            ..Default::default()
        };
        if u.ratio(1u8, 4)? {
            mat.heat_source = Some(xsheat::model::FieldFile::Value(f64::from(
                u.int_in_range(-50i8..=100)?,
            )));
        }
        m.materials.insert((*name).to_string(), mat);
    }
    let material = |u: &mut Unstructured| -> Result<String> {
        Ok(MATERIAL_NAMES[usize::from(u.int_in_range(0..=nmat - 1)?)].to_string())
    };

    // Outline: a lattice polygon of 3–12 points.
    let pts = polygon(u, &f, 3, 12)?;
    let (lo, hi) = pts.iter().fold(
        ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]),
        |(lo, hi), p| {
            (
                [lo[0].min(p[0]), lo[1].min(p[1])],
                [hi[0].max(p[0]), hi[1].max(p[1])],
            )
        },
    );
    let (w, h) = (hi[0] - lo[0], hi[1] - lo[1]);
    let diag = w.hypot(h).max(scale);
    let mut outline = RingFile {
        material: Some(material(u)?),
        ..Default::default()
    };
    if u.ratio(1u8, 2)? {
        outline.edges = Some(
            (0..pts.len())
                .map(|_| edge_name(u))
                .collect::<Result<_>>()?,
        );
    } else {
        outline.boundary = Some(edge_name(u)?);
    }
    outline.points = Some(PointEntry::list(&pts));
    m.outline = Some(outline);

    // Boundaries: each name defined with a random kind (sometimes left undefined).
    for name in BOUNDARY_NAMES {
        if u.ratio(7u8, 8)? {
            m.boundaries.insert(name.to_string(), boundary(u, diag)?);
        }
    }

    for _ in 0..u.int_in_range(0u8..=3)? {
        m.holes.push(ring(u, &f, true)?);
    }
    for _ in 0..u.int_in_range(0u8..=3)? {
        let mut r = ring(u, &f, false)?;
        r.material = Some(material(u)?);
        m.regions.push(r);
    }
    if u.ratio(1u8, 3)? {
        m.probes.push(ProbeFile {
            name: "p".into(),
            at: f.point(u)?,
        });
    }
    if u.ratio(1u8, 3)? {
        m.lines.push(LineFile {
            name: "l".into(),
            from: f.point(u)?,
            to: f.point(u)?,
            samples: usize::from(u.int_in_range(2u8..=20)?),
        });
    }

    // Small meshes: about 200 triangles' worth of the bounding box (at least a lattice cell's).
    let bbox_area = if w * h > 0.0 { w * h } else { scale * scale };
    m.mesh.max_area = Some(bbox_area / 200.0);
    m.mesh.min_angle =
        [None, Some(20.0), Some(30.0), Some(33.0)][usize::from(u.int_in_range(0u8..=3)?)];
    for (i, mat) in m.materials.values_mut().enumerate() {
        if i > 0 && u.ratio(1u8, 4)? {
            mat.max_area = Some(bbox_area / 1000.0);
        }
    }
    Ok(m)
}

fuzz_target!(|data: &[u8]| {
    let mut u = Unstructured::new(data);
    let Ok(m) = model(&mut u) else {
        return;
    };
    // To write a regression test: print the model of an artifact.
    if std::env::var_os("XSHEAT_FUZZ_PRINT").is_some() {
        eprintln!("{m:#?}");
    }
    let Ok(prepared) = xsheat::run::prepare_model(m) else {
        return;
    };
    let Ok(opts) = MeshOptions::with_max_triangles(20_000) else {
        return;
    };
    if xsheat::run::mesh(&prepared, &opts).is_ok() {
        let _ = xsheat::run::solve(prepared, &opts);
    }
});
