//! Unit tests of the fem stage.

use super::testutil::{rectangle_mesh, rectangle_section};
use super::*;
use crate::error::Error;
use crate::model::BoundaryKind;

#[test]
fn model_without_fixed_or_convective_edge_is_refused() {
    let tags = [Some(0), Some(1), Some(0), Some(0)];
    let section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 5.0)],
        &[
            ("heater", BoundaryKind::Flux { flux: 10.0 }),
            ("wall", BoundaryKind::Insulated),
        ],
        tags,
    );
    let mesh = rectangle_mesh(1.0, 1.0, 3, 3, tags, |_| 0);
    assert_eq!(
        assemble(&section, &mesh),
        Err(Error::input(SINGULAR_MODEL_MESSAGE))
    );
}

#[test]
fn disconnected_part_without_anchor_is_refused() {
    let tags = [Some(0), None, None, None];
    let section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 0.0)],
        &[("base", BoundaryKind::Fixed { temperature: 0.0 })],
        tags,
    );
    let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
    let other = rectangle_mesh(1.0, 1.0, 2, 2, [None; 4], |_| 0);
    let (n0, t0) = (mesh.nodes.len(), mesh.triangles.len());
    mesh.nodes
        .extend(other.nodes.iter().map(|p| [p[0] + 5.0, p[1]]));
    mesh.triangles
        .extend(other.triangles.iter().map(|t| t.map(|v| v + n0)));
    mesh.material.extend(&other.material);
    mesh.boundary_edges
        .extend(other.boundary_edges.iter().map(|e| {
            let mut e = *e;
            e.nodes = e.nodes.map(|v| v + n0);
            e.triangle += t0;
            e
        }));
    let err = assemble(&section, &mesh).unwrap_err();
    assert!(
        matches!(&err, Error::Input(m) if m.contains("(5, 0)")),
        "{err:?}"
    );
}

#[test]
fn inconsistent_mesh_is_a_run_error_not_a_panic() {
    let tags = [Some(0); 4];
    let section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 0.0)],
        &[("t", BoundaryKind::Fixed { temperature: 0.0 })],
        tags,
    );
    let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
    mesh.triangles[3].swap(0, 1);
    assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
    let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
    mesh.boundary_edges[0].boundary = Some(7);
    assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
    let mut mesh = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
    mesh.nodes.push([0.5, 0.5]);
    assert!(matches!(assemble(&section, &mesh), Err(Error::Run(_))));
}

#[test]
fn matrix_is_symmetric_and_conduction_conserves_heat() {
    let tags = [Some(0), Some(1), Some(2), None];
    let section = rectangle_section(
        1.5,
        0.7,
        &[("a", 2.0, 100.0), ("b", 0.3, 0.0)],
        &[
            (
                "air",
                BoundaryKind::Convection {
                    h: 8.0,
                    ambient: 15.0,
                },
            ),
            ("base", BoundaryKind::Fixed { temperature: 60.0 }),
            ("sun", BoundaryKind::Flux { flux: 300.0 }),
        ],
        tags,
    );
    let mesh = rectangle_mesh(1.5, 0.7, 6, 5, tags, |c| usize::from(c[1] > 0.35));
    let system = assemble(&section, &mesh).unwrap();
    let k = &system.matrix;
    for (i, row) in k.outer_iterator().enumerate() {
        for (j, v) in row.iter() {
            assert_eq!(Some(v), k.get(j, i));
        }
    }
    // A uniform field conducts no heat: K·1 is the film term only, Σ h·L over the
    // convective (bottom) side = 8 · 1.5.
    let ones = vec![1.0; mesh.nodes.len()];
    let k1: f64 = mat_vec(k, &ones).unwrap().iter().sum();
    assert!((k1 - 8.0 * 1.5).abs() < 1e-12);
    // Σ f = Σ Q·A + Σ q·L + Σ h·T∞·L (material a fills y < 0.35).
    let f: f64 = system.load.iter().sum();
    let expected = 100.0 * 1.5 * 0.35 + 300.0 * 1.5 + 8.0 * 15.0 * 1.5;
    assert!((f - expected).abs() < 1e-11 * expected);
    let base: Vec<usize> = (0..mesh.nodes.len())
        .filter(|&i| mesh.nodes[i][0] == 1.5)
        .collect();
    assert_eq!(base.len(), 6);
    assert!(base.iter().all(|&i| system.fixed[i] == Some(60.0)));
    assert_eq!(system.fixed.iter().filter(|f| f.is_some()).count(), 6);
}

#[test]
fn mesh_consistency_names_the_offending_item() {
    let tags = [Some(0); 4];
    let section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 0.0)],
        &[("t", BoundaryKind::Fixed { temperature: 0.0 })],
        tags,
    );
    let message = |mesh: &Mesh| match check_mesh(&section, mesh) {
        Err(Error::Run(m)) => m,
        other => panic!("expected a run error, got {other:?}"),
    };
    let good = rectangle_mesh(1.0, 1.0, 2, 2, tags, |_| 0);
    assert_eq!(check_mesh(&section, &good), Ok(()));
    let mut mesh = good.clone();
    mesh.triangles[2][1] = 99;
    assert!(message(&mesh).contains("triangle 2 refers to node 99"));
    let mut mesh = good.clone();
    mesh.material.pop();
    assert!(message(&mesh).contains("7 material ids for 8 triangles"));
    let mut mesh = good.clone();
    mesh.boundary_edges[3].triangle = 8;
    assert!(message(&mesh).contains("boundary edge 3 refers to triangle 8"));
    let mut mesh = good.clone();
    mesh.material[5] = 1;
    assert!(message(&mesh).contains("triangle 5 has material id 1"));
    let mut mesh = good;
    mesh.boundary_edges[0].boundary = Some(4);
    assert!(message(&mesh).contains("boundary edge 0 has boundary id 4"));
}

#[test]
fn morton_renumbered_and_plain_assembly_give_the_same_temperatures() {
    let tags = [Some(0), Some(1), Some(2), None];
    let section = rectangle_section(
        1.5,
        0.7,
        &[("a", 2.0, 100.0), ("b", 0.3, 0.0)],
        &[
            (
                "air",
                BoundaryKind::Convection {
                    h: 8.0,
                    ambient: 15.0,
                },
            ),
            ("base", BoundaryKind::Fixed { temperature: 60.0 }),
            ("sun", BoundaryKind::Flux { flux: 300.0 }),
        ],
        tags,
    );
    // Row-by-row numbering (plain) against the same mesh in Morton order.
    let plain = rectangle_mesh(1.5, 0.7, 23, 11, tags, |c| usize::from(c[0] > 0.6));
    let mut renumbered = plain.clone();
    let new_of = crate::mesh::spatial::renumber(crate::mesh::spatial::Numbered {
        nodes: &mut renumbered.nodes,
        triangles: &mut renumbered.triangles,
        material: &mut renumbered.material,
        boundary_edges: &mut renumbered.boundary_edges,
    });
    assert_ne!(new_of, (0..plain.nodes.len()).collect::<Vec<_>>());
    let t_plain = crate::solve::solve_system(&assemble(&section, &plain).unwrap()).unwrap();
    let t_new = crate::solve::solve_system(&assemble(&section, &renumbered).unwrap()).unwrap();
    // Matched by coordinates: the node that moved to new_of[i] sits where node i sat.
    for (i, &p) in plain.nodes.iter().enumerate() {
        let j = new_of[i];
        assert_eq!(renumbered.nodes[j], p);
        let (a, b) = (t_plain.temperature[i], t_new.temperature[j]);
        assert!(
            (a - b).abs() <= 1e-12 * a.abs().max(1.0),
            "node {i}: {a} vs {b}"
        );
    }
}

/// A 100 × 100-cell rectangle (20,000 triangles, more than one [`pattern::ELEMENT_CHUNK`]) with
/// nodes moved off the grid and two materials, convection on two sides.
fn irregular_system() -> (Section, crate::mesh::Mesh) {
    let tags = [Some(1), Some(0), Some(0), None];
    let section = rectangle_section(
        2.0,
        1.0,
        &[("a", 1.3, 0.0), ("b", 0.04, 0.0)],
        &[
            (
                "air",
                BoundaryKind::Convection {
                    h: 8.0,
                    ambient: -3.0,
                },
            ),
            ("base", BoundaryKind::Fixed { temperature: 5.0 }),
        ],
        tags,
    );
    let mut mesh = rectangle_mesh(2.0, 1.0, 100, 100, tags, |c| usize::from(c[0] > 1.1));
    for (i, p) in mesh.nodes.iter_mut().enumerate() {
        let on_edge = p[0] == 0.0 || p[0] == 2.0 || p[1] == 0.0 || p[1] == 1.0;
        if !on_edge {
            let s = (i as f64 * 0.618_033_988_7).fract() - 0.5;
            p[0] += 0.004 * s;
            p[1] -= 0.003 * s;
        }
    }
    (section, mesh)
}

#[test]
fn csr_assembly_equals_triplet_assembly_and_is_bit_symmetric() {
    let (section, mesh) = irregular_system();
    let k = assemble_matrix(&section, &mesh).expect("assembles");
    // Reference: the same element and film terms through sprs' triplet list.
    let cond = material_conductivity(&section);
    let n = mesh.nodes.len();
    let mut tri = sprs::TriMat::new((n, n));
    for (t, ids) in mesh.triangles.iter().enumerate() {
        let ke = TriangleGeometry::of(&mesh, t).conduction(&cond[mesh.material[t]]);
        for i in 0..3 {
            for j in 0..3 {
                tri.add_triplet(ids[i], ids[j], ke[(i, j)]);
            }
        }
    }
    for e in &mesh.boundary_edges {
        if e.boundary == Some(0) {
            let l = mesh.edge_length(e);
            let [a, b] = e.nodes;
            tri.add_triplet(a, a, 8.0 * l / 3.0);
            tri.add_triplet(b, b, 8.0 * l / 3.0);
            tri.add_triplet(a, b, 8.0 * l / 6.0);
            tri.add_triplet(b, a, 8.0 * l / 6.0);
        }
    }
    let reference: sprs::CsMat<f64> = tri.to_csr();
    assert_eq!(k.indptr().raw_storage(), reference.indptr().raw_storage());
    assert_eq!(k.indices(), reference.indices());
    let scale = reference.data().iter().fold(0.0f64, |m, v| m.max(v.abs()));
    for (a, b) in k.data().iter().zip(reference.data()) {
        assert!((a - b).abs() <= 1e-12 * scale, "{a} vs {b}");
    }
    // Bit-symmetric: entry (i, j) is entry (j, i) exactly.
    for (i, row) in k.outer_iterator().enumerate() {
        for (j, &v) in row.iter() {
            assert_eq!(k.get(j, i).copied(), Some(v), "({i}, {j})");
        }
    }
}

#[test]
fn csr_assembly_is_the_same_on_one_and_two_threads() {
    let (section, mesh) = irregular_system();
    let on = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("a pool")
            .install(|| assemble_matrix(&section, &mesh).expect("assembles"))
    };
    let (one, two) = (on(1), on(2));
    assert_eq!(one.data(), two.data());
    assert_eq!(one.indices(), two.indices());
}

#[test]
fn pattern_of_a_single_triangle_is_full_and_sorted() {
    let mut mesh = rectangle_mesh(1.0, 1.0, 1, 1, [None; 4], |_| 0);
    mesh.triangles.truncate(1);
    mesh.material.truncate(1);
    let (indptr, indices) = pattern::csr_pattern(&mesh);
    // Triangle (0, 1, 3): rows 0, 1, 3 hold {0, 1, 3}; node 2 is in no triangle and keeps
    // only its diagonal.
    assert_eq!(indptr, vec![0, 3, 6, 7, 10]);
    assert_eq!(indices, vec![0, 1, 3, 0, 1, 3, 2, 0, 1, 3]);
}
