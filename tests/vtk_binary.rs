//! The VTK XML writers (base64 appended data, plain and zlib-compressed) read back by vtkio
//! with every array equal bit for bit to what was written: points, connectivity, offsets, cell
//! types, point and cell data of field.vtu, mesh.vtu and the grid model's vtu.
//!
//! Checked by hand as well (2026-12-02, field.vtu, mesh.vtu and grid.vtu of the L-shaped
//! fixture, plain and with --vtk-compress): VTK 9.7.2 (`pip install vtk`,
//! `vtkXMLUnstructuredGridReader`, shared/tools/read-vtu.py) and meshio 5.3.5 (`pip install
//! meshio`, `meshio.read`) read every array, the plain and compressed files give equal arrays,
//! meshio's equal VTK's, and points and temperatures equal nodes.csv bit for bit.
mod common;

use vtkio::Vtk;
use vtkio::model::{
    Attribute, CellType, DataSet, IOBuffer, Piece, UnstructuredGridPiece, VertexNumbers,
};
use xsheat::mesh::MeshOptions;
use xsheat::output::{self, VtkOptions};
use xsheat::{grid, model, run};

const PLAIN: VtkOptions = VtkOptions { compress: false };
const ZLIB: VtkOptions = VtkOptions { compress: true };

fn solved() -> run::Solved {
    let p = run::prepare_model(model::parse(common::L_SECTION).unwrap()).unwrap();
    run::solve(p, &MeshOptions::default()).unwrap()
}

fn piece(bytes: &[u8]) -> UnstructuredGridPiece {
    let vtk = Vtk::parse_xml(bytes).expect("vtu parses back");
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        panic!("not an unstructured grid")
    };
    let Piece::Inline(p) = pieces.into_iter().next().expect("one piece") else {
        panic!("piece not inline")
    };
    *p
}

/// (name, components, values) of every array of `attrs`, in file order.
fn arrays(attrs: &[Attribute]) -> Vec<(String, usize, IOBuffer)> {
    attrs
        .iter()
        .map(|a| match a {
            Attribute::DataArray(d) => (d.name.clone(), d.num_comp(), d.data.clone()),
            Attribute::Field { name, .. } => panic!("unexpected field data {name}"),
        })
        .collect()
}

fn bits(v: &[f64]) -> Vec<u64> {
    v.iter().map(|x| x.to_bits()).collect()
}

fn f64s(b: &IOBuffer) -> Vec<u64> {
    let IOBuffer::F64(v) = b else {
        panic!("not Float64: {:?}", b.scalar_type())
    };
    bits(v)
}

fn xyz(v: &[[f64; 2]]) -> Vec<f64> {
    v.iter().flat_map(|p| [p[0], p[1], 0.0]).collect()
}

/// Points, connectivity, offsets and types of `p` equal the triangles of `mesh`.
fn assert_topology(p: &UnstructuredGridPiece, nodes: &[f64], cells: &[Vec<u64>], ty: CellType) {
    assert_eq!(f64s(&p.points), bits(nodes));
    let VertexNumbers::XML {
        connectivity,
        offsets,
    } = &p.cells.cell_verts
    else {
        panic!("not XML cells")
    };
    let want: Vec<u64> = cells.iter().flatten().copied().collect();
    assert_eq!(connectivity, &want);
    let mut end = 0;
    let want_offsets: Vec<u64> = cells
        .iter()
        .map(|c| {
            end += c.len() as u64;
            end
        })
        .collect();
    assert_eq!(offsets, &want_offsets);
    assert_eq!(p.cells.types, vec![ty; cells.len()]);
}

#[test]
fn field_vtu_reads_back_bit_for_bit_plain_and_compressed() {
    let sv = solved();
    let (mesh, r) = (&sv.mesh, &sv.results);
    let case: Vec<f64> = r.temperature.iter().map(|t| t * 0.5 - 3.25).collect();
    let extra_p: &[(&str, &[f64])] = &[("temperature_c:winter & <cold>", &case)];
    let ind = &sv.error_estimate.indicator;
    let extra_c: &[(&str, &[f64])] = &[("error_indicator", ind)];
    let cells: Vec<Vec<u64>> = mesh
        .triangles
        .iter()
        .map(|t| t.iter().map(|&v| v as u64).collect())
        .collect();
    let mut sizes = Vec::new();
    for opts in [PLAIN, ZLIB] {
        let bytes = output::field_vtu_arrays(mesh, r, extra_c, extra_p, &opts).unwrap();
        sizes.push(bytes.len());
        let p = piece(&bytes);
        assert_topology(&p, &xyz(&mesh.nodes), &cells, CellType::Triangle);
        let point = arrays(&p.data.point);
        let names: Vec<(&str, usize)> = point.iter().map(|(n, c, _)| (n.as_str(), *c)).collect();
        assert_eq!(
            names,
            [
                ("temperature_c", 1),
                ("heat_flux_nodal_w_per_m2", 3),
                ("gradient_nodal_k_per_m", 3),
                ("temperature_c:winter & <cold>", 1)
            ]
        );
        assert_eq!(f64s(&point[0].2), bits(&r.temperature));
        assert_eq!(f64s(&point[1].2), bits(&xyz(&r.nodal_flux)));
        assert_eq!(f64s(&point[2].2), bits(&xyz(&r.nodal_gradient)));
        assert_eq!(f64s(&point[3].2), bits(&case));
        let cell = arrays(&p.data.cell);
        let names: Vec<&str> = cell.iter().map(|(n, _, _)| n.as_str()).collect();
        assert_eq!(
            names,
            [
                "heat_flux_w_per_m2",
                "gradient_k_per_m",
                "material",
                "error_indicator"
            ]
        );
        assert_eq!(f64s(&cell[0].2), bits(&xyz(&r.cell_flux)));
        assert_eq!(f64s(&cell[1].2), bits(&xyz(&r.cell_gradient)));
        let material: Vec<i32> = mesh.material.iter().map(|&m| m as i32).collect();
        assert_eq!(cell[2].2, IOBuffer::I32(material));
        assert_eq!(f64s(&cell[3].2), bits(ind));
    }
    assert!(
        sizes[1] < sizes[0],
        "compressed {} ≥ plain {}",
        sizes[1],
        sizes[0]
    );
    // The default writer is the plain one.
    assert_eq!(
        output::field_vtu_with(mesh, r, extra_c).unwrap(),
        output::field_vtu_arrays(mesh, r, extra_c, &[], &PLAIN).unwrap()
    );
}

#[test]
fn mesh_vtu_reads_back_bit_for_bit_plain_and_compressed() {
    let sv = solved();
    let mesh = &sv.mesh;
    let cells: Vec<Vec<u64>> = mesh
        .triangles
        .iter()
        .map(|t| t.iter().map(|&v| v as u64).collect())
        .collect();
    let areas: Vec<f64> = (0..mesh.triangles.len())
        .map(|t| mesh.triangle_area(t))
        .collect();
    for opts in [PLAIN, ZLIB] {
        let bytes = output::mesh_vtu_with(mesh, &opts).unwrap();
        let p = piece(&bytes);
        assert_topology(&p, &xyz(&mesh.nodes), &cells, CellType::Triangle);
        assert!(p.data.point.is_empty());
        let cell = arrays(&p.data.cell);
        let material: Vec<i32> = mesh.material.iter().map(|&m| m as i32).collect();
        assert_eq!(cell[0].2, IOBuffer::I32(material));
        assert_eq!(cell[1].0, "quality_min_angle_deg");
        assert_eq!(cell[2].0, "area_m2");
        assert_eq!(f64s(&cell[2].2), bits(&areas));
    }
}

#[test]
fn grid_vtu_reads_back_bit_for_bit_plain_and_compressed() {
    let s = model::validate(&model::parse(common::L_SECTION).unwrap()).unwrap();
    let m = grid::build(&s, 0.01).unwrap();
    let sol = grid::solve(&m).unwrap();
    let nodes: Vec<f64> = m.nodes.iter().flat_map(|n| [n.x, n.y, 0.0]).collect();
    for opts in [PLAIN, ZLIB] {
        let bytes = output::grid_vtu_with(&m, &sol, &opts).unwrap();
        let p = piece(&bytes);
        assert_eq!(f64s(&p.points), bits(&nodes));
        assert!(p.cells.types.iter().all(|&t| t == CellType::Quad));
        assert!(!p.cells.types.is_empty());
        let point = arrays(&p.data.point);
        assert_eq!(point[0].0, "temperature_c");
        assert_eq!(f64s(&point[0].2), bits(&sol.temperature));
        assert_eq!(point[1].0, "kind");
        assert_eq!(point[1].2.len(), m.nodes.len());
    }
}

#[test]
fn compressed_output_is_deterministic() {
    let sv = solved();
    let a = output::field_vtu_arrays(&sv.mesh, &sv.results, &[], &[], &ZLIB).unwrap();
    let b = output::field_vtu_arrays(&sv.mesh.clone(), &sv.results.clone(), &[], &[], &ZLIB);
    assert_eq!(a, b.unwrap());
    let text = String::from_utf8(a).unwrap();
    assert!(text.contains(r#"compressor="vtkZLibDataCompressor""#));
    assert!(text.contains(r#"header_type="UInt64""#));
}

#[test]
fn nodes_csv_equals_the_generic_csv_encoder() {
    let sv = solved();
    let fast = output::nodes_csv(&sv.mesh, &sv.results).unwrap();
    let slow = output::csv_bytes(
        ["node", "x_m", "y_m", "temperature_c"],
        sv.mesh
            .nodes
            .iter()
            .zip(&sv.results.temperature)
            .enumerate()
            .map(|(i, (p, &t))| {
                [
                    i.to_string(),
                    output::format_f64(p[0]),
                    output::format_f64(p[1]),
                    output::format_f64(t),
                ]
            }),
    )
    .unwrap();
    assert_eq!(fast, slow);
}
