//! `solve --export-matrix DIR`: the Matrix Market files re-read (sprs) equal the reduced system
//! assembled by the library exactly, solving them reproduces the temperatures, and the
//! `--no-nodes-csv` / `--vtk-compress` choices of the same command.
mod common;

use sprs::CsMat;
use xsheat::mesh::MeshOptions;
use xsheat::solve::{LinearSolver, SparseCholesky, factorized::reduced_system};
use xsheat::{model, run};

fn solved() -> run::Solved {
    let p = run::prepare_model(model::parse(common::L_SECTION).unwrap()).unwrap();
    run::solve(p, &MeshOptions::default()).unwrap()
}

/// f.mtx (`array real general`, one column) read by hand.
fn read_vector(text: &str) -> Vec<f64> {
    let mut lines = text.lines().filter(|l| !l.starts_with('%'));
    let size: Vec<usize> = lines
        .next()
        .unwrap()
        .split_whitespace()
        .map(|s| s.parse().unwrap())
        .collect();
    let v: Vec<f64> = lines.map(|l| l.trim().parse().unwrap()).collect();
    assert_eq!(size, [v.len(), 1]);
    v
}

#[test]
fn exported_matrix_equals_the_reduced_system_and_solves_to_the_temperatures() {
    let d = common::tmp();
    let model = common::write(d.path(), "model.toml", common::L_SECTION);
    let (out, mtx) = (d.path().join("out"), d.path().join("mtx"));
    let run = common::xsheat([
        "solve".as_ref(),
        model.as_os_str(),
        "--out".as_ref(),
        out.as_os_str(),
        "--export-matrix".as_ref(),
        mtx.as_os_str(),
    ]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let mut names: Vec<String> = std::fs::read_dir(&mtx)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["K.mtx", "f.mtx", "free_nodes.csv", "manifest.json"]);

    let sv = solved();
    let (free, k_ff, rhs) = reduced_system(&sv.system).unwrap();
    let k: CsMat<f64> = sprs::io::read_matrix_market::<f64, usize, _>(mtx.join("K.mtx"))
        .unwrap()
        .to_csr();
    // The file holds the triangle the factorisation reads (row j, columns ≥ j of the CSR
    // matrix), mirrored: equal to it bit for bit, and so to the other triangle, since assembly
    // makes the matrix symmetric bit for bit.
    assert_eq!(k.shape(), k_ff.shape());
    assert_eq!(k.nnz(), k_ff.nnz());
    assert_eq!(k.indptr().raw_storage(), k_ff.indptr().raw_storage());
    assert_eq!(k.indices(), k_ff.indices());
    let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    for (j, row) in k_ff.outer_iterator().enumerate() {
        for (i, &v) in row.iter() {
            let (a, b) = (j.min(i), j.max(i));
            let stored = *k_ff.get(a, b).unwrap();
            assert_eq!(
                k.get(j, i).unwrap().to_bits(),
                stored.to_bits(),
                "({j}, {i})"
            );
            assert!(
                v.to_bits() == stored.to_bits(),
                "({j}, {i}): {v} vs {stored}"
            );
        }
    }
    let f = read_vector(&std::fs::read_to_string(mtx.join("f.mtx")).unwrap());
    assert_eq!(bits(&f), bits(&rhs));

    // free_nodes.csv maps row r to mesh node free[r] at its coordinates.
    let csv = std::fs::read_to_string(mtx.join("free_nodes.csv")).unwrap();
    let mut lines = csv.lines();
    assert_eq!(lines.next(), Some("row,node,x_m,y_m"));
    for (r, line) in lines.enumerate() {
        let c: Vec<&str> = line.split(',').collect();
        let node: usize = c[1].parse().unwrap();
        assert_eq!((c[0].parse::<usize>().unwrap(), node), (r, free[r]));
        let xy = [c[2].parse::<f64>().unwrap(), c[3].parse::<f64>().unwrap()];
        assert_eq!(xy, sv.mesh.nodes[node]);
    }

    // Solving the re-read system gives the temperatures of the run: the factorisation reads
    // the same triangle, so bit for bit (the tolerance only allows for a later reordering).
    let chol = SparseCholesky::factorize(&k).unwrap();
    let mut t = f.clone();
    chol.solve_in_place(&mut t).unwrap();
    for (r, &i) in free.iter().enumerate() {
        let want = sv.solution.temperature[i];
        assert!(
            (t[r] - want).abs() <= 1e-12 * want.abs().max(1.0),
            "node {i}: {} vs {want}",
            t[r]
        );
    }
}

#[test]
fn export_matrix_refuses_the_out_directory_and_writes_nothing() {
    let d = common::tmp();
    let model = common::write(d.path(), "model.toml", common::L_SECTION);
    let out = d.path().join("out");
    for mtx in [out.clone(), out.join("m"), d.path().to_path_buf()] {
        let run = common::xsheat([
            "solve".as_ref(),
            model.as_os_str(),
            "--out".as_ref(),
            out.as_os_str(),
            "--export-matrix".as_ref(),
            mtx.as_os_str(),
        ]);
        assert_eq!(run.code, 2, "{}", run.stderr);
        assert!(run.stderr.contains("--export-matrix"), "{}", run.stderr);
        assert!(!out.exists());
    }
}

#[test]
fn no_nodes_csv_and_vtk_compress() {
    let (run, _d, out) =
        common::solve_text(common::L_SECTION, &["--no-nodes-csv", "--vtk-compress"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(!out.join("nodes.csv").exists());
    let summary = std::fs::read_to_string(out.join("summary.json")).unwrap();
    assert!(!summary.contains("nodes.csv"));
    let vtu = std::fs::read(out.join("field.vtu")).unwrap();
    assert!(String::from_utf8_lossy(&vtu).contains("vtkZLibDataCompressor"));
    vtkio::Vtk::parse_xml(&vtu[..]).expect("compressed field.vtu reads back");
}
