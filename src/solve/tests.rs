//! Unit tests of the solve stage.

use super::*;
use crate::error::Error;
use crate::fem::testutil::{rectangle_mesh, rectangle_section};
use crate::fem::{LoadCase, assemble, assemble_load};
use crate::model::{BoundaryKind, Section};

fn plate(n: usize) -> (Section, crate::mesh::Mesh) {
    let tags = [Some(0), Some(1), Some(2), Some(1)];
    let section = rectangle_section(
        1.0,
        0.8,
        &[("a", 1.4, 2000.0), ("b", 35.0, 0.0)],
        &[
            (
                "air",
                BoundaryKind::Convection {
                    h: 12.0,
                    ambient: -3.0,
                },
            ),
            ("side", BoundaryKind::Insulated),
            ("top", BoundaryKind::Fixed { temperature: 40.0 }),
        ],
        tags,
    );
    let mesh = rectangle_mesh(1.0, 0.8, n, n, tags, |c| usize::from(c[0] > 0.4));
    (section, mesh)
}

#[test]
fn repeated_runs_are_bit_identical() {
    let (section, mesh) = plate(80);
    let a = solve_system(&assemble(&section, &mesh).unwrap()).unwrap();
    let b = solve_system(&assemble(&section, &mesh).unwrap()).unwrap();
    let bits = |s: &Solution| {
        s.temperature
            .iter()
            .map(|v| v.to_bits())
            .collect::<Vec<_>>()
    };
    assert_eq!(bits(&a), bits(&b));
    assert_eq!(a.residual_relative.to_bits(), b.residual_relative.to_bits());
    assert!(a.residual_relative < 1e-12);
}

#[test]
fn factorisation_is_reused_for_new_boundary_values() {
    let (mut section, mesh) = plate(12);
    let system = assemble(&section, &mesh).unwrap();
    let factorized = Factorized::new(&system).unwrap();
    let mut case = LoadCase::from_section(&section);
    case.boundary_value[2] = 75.0;
    case.boundary_value[0] = 10.0;
    case.heat_source[0] = -500.0;
    let load = assemble_load(&section, &mesh, &case).unwrap();
    let reused = factorized.solve(&load.vector, &load.fixed).unwrap();
    section.boundaries[2].kind = BoundaryKind::Fixed { temperature: 75.0 };
    section.boundaries[0].kind = BoundaryKind::Convection {
        h: 12.0,
        ambient: 10.0,
    };
    section.materials[0].heat_source = -500.0;
    let fresh = solve_system(&assemble(&section, &mesh).unwrap()).unwrap();
    for (a, b) in reused.temperature.iter().zip(&fresh.temperature) {
        assert!((a - b).abs() < 1e-12 * 75.0);
    }
    // A different set of fixed nodes is refused.
    let mut fixed = load.fixed.clone();
    fixed[0] = Some(1.0);
    assert!(matches!(
        factorized.solve(&load.vector, &fixed),
        Err(Error::Run(_))
    ));
}

#[test]
fn conjugate_gradient_agrees_with_cholesky() {
    let (section, mesh) = plate(20);
    let system = assemble(&section, &mesh).unwrap();
    let direct = solve_system(&system).unwrap();
    let cg = Factorized::with_solver(&system, |a| ConjugateGradient::new(a, 1e-13, 10_000))
        .unwrap()
        .solve(&system.load, &system.fixed)
        .unwrap();
    let scale = direct
        .temperature
        .iter()
        .fold(0.0f64, |m, v| m.max(v.abs()));
    for (a, b) in direct.temperature.iter().zip(&cg.temperature) {
        assert!((a - b).abs() < 1e-9 * scale);
    }
    assert!(cg.residual_relative < 1e-12);
}

#[test]
fn all_nodes_fixed_needs_no_factorisation() {
    let tags = [Some(0); 4];
    let section = rectangle_section(
        1.0,
        1.0,
        &[("m", 1.0, 0.0)],
        &[("t", BoundaryKind::Fixed { temperature: 7.0 })],
        tags,
    );
    let mesh = rectangle_mesh(1.0, 1.0, 1, 1, tags, |_| 0);
    let s = solve_system(&assemble(&section, &mesh).unwrap()).unwrap();
    assert_eq!(s.temperature, vec![7.0; 4]);
    assert_eq!(s.residual_relative, 0.0);
}

#[test]
fn indefinite_matrix_fails_with_a_run_error() {
    let a = sprs::TriMat::from_triplets(
        (2, 2),
        vec![0, 0, 1, 1],
        vec![0, 1, 0, 1],
        vec![1.0, 2.0, 2.0, 1.0],
    )
    .to_csr();
    let err = SparseCholesky::factorize(&a).unwrap_err();
    assert!(matches!(&err, Error::Run(m) if m.contains("not numerically positive definite")));
}

#[test]
fn conversion_to_faer_keeps_every_entry_and_refuses_non_square() {
    let (section, mesh) = plate(3);
    let system = assemble(&section, &mesh).unwrap();
    let a = &system.matrix;
    let f = to_faer(a).unwrap();
    assert_eq!((f.nrows(), f.ncols()), (a.rows(), a.cols()));
    // faer holds the CSR arrays as columns: entry (i, j) of faer is entry (j, i) of sprs,
    // which equals (i, j) by symmetry.
    let mut count = 0;
    for (v, (i, j)) in a.iter() {
        assert_eq!(f.as_ref().get(j, i), Some(v));
        count += 1;
    }
    assert_eq!(f.compute_nnz(), count);
    let rect = sprs::TriMat::from_triplets((2, 3), vec![0], vec![2], vec![1.0]).to_csr();
    assert!(matches!(to_faer(&rect), Err(Error::Run(m)) if m.contains("non-square 2×3")));
}

#[test]
fn every_ordering_gives_the_same_temperatures() {
    // The ordering changes only the order of elimination: AMD, both nested dissections and
    // the pipeline's constructor agree to round-off, and the geometric order is not worse
    // than AMD by more than a quarter in fill on this mesh.
    let (section, mesh) = plate(90);
    let system = assemble(&section, &mesh).unwrap();
    let amd = Factorized::new(&system).unwrap();
    let reference = amd.solve(&system.load, &system.fixed).unwrap();
    let geometric = Factorized::with_coordinates(&system, &mesh.nodes).unwrap();
    let level = Factorized::with_solver(&system, |a| {
        SparseCholesky::factorize_with(a, Ordering::NestedDissection)
    })
    .unwrap();
    for f in [&geometric, &level] {
        let s = f.solve(&system.load, &system.fixed).unwrap();
        for (a, b) in s.temperature.iter().zip(&reference.temperature) {
            assert!((a - b).abs() < 1e-11 * 40.0, "{a} {b}");
        }
        assert!(s.residual_relative < 1e-13);
    }
    let (free, k, _) = factorized::reduced_system(&system).unwrap();
    let xy: Vec<[f64; 2]> = free.iter().map(|&i| mesh.nodes[i]).collect();
    let fill_amd = SparseCholesky::factorize(&k).unwrap().factor_entries();
    let fill_nd = SparseCholesky::factorize_with(&k, Ordering::Geometric(&xy))
        .unwrap()
        .factor_entries();
    assert!(
        (fill_nd as f64) < 1.25 * fill_amd as f64,
        "{fill_nd} vs {fill_amd}"
    );
    // Coordinates of the wrong length are an internal error.
    assert!(Factorized::with_coordinates(&system, &mesh.nodes[1..]).is_err());
}

#[test]
fn parallel_factorisation_is_bit_identical_to_one_thread() {
    // 301² nodes: above PARALLEL_FACTOR_FROM, so the 2-thread pool factorises in parallel.
    let (section, mesh) = plate(300);
    let system = assemble(&section, &mesh).unwrap();
    assert!(system.node_count() > cholesky::PARALLEL_FACTOR_FROM);
    let in_pool = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                Factorized::with_coordinates(&system, &mesh.nodes)
                    .unwrap()
                    .solve(&system.load, &system.fixed)
                    .unwrap()
            })
    };
    let (one, two) = (in_pool(1), in_pool(2));
    let bits = |s: &Solution| -> Vec<u64> { s.temperature.iter().map(|v| v.to_bits()).collect() };
    assert_eq!(bits(&one), bits(&two));
    assert_eq!(
        one.residual_relative.to_bits(),
        two.residual_relative.to_bits()
    );
}
