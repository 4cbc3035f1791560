//! VTK XML unstructured-grid encoding of meshes and solved fields.

use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::post::Results;
use vtkio::model::{
    Attribute, Attributes, ByteOrder, CellType, Cells, DataSet, Piece, UnstructuredGridPiece,
    Version, VertexNumbers, Vtk,
};

// ---------------------------------------------------------------------------------------------
// Consistency checks (the writers never index out of bounds)
// ---------------------------------------------------------------------------------------------

pub(crate) fn check_mesh(mesh: &Mesh) -> Result<()> {
    mesh.check_consistency()
}

pub(crate) fn check_len(what: &str, got: usize, want: usize, per: &str) -> Result<()> {
    crate::post::check_count(what, got, want, per)
}

pub(crate) fn check_results(mesh: &Mesh, results: &Results) -> Result<()> {
    results.check_lengths(mesh)
}

// ---------------------------------------------------------------------------------------------
// VTK
// ---------------------------------------------------------------------------------------------

fn vec3(v: &[[f64; 2]]) -> Vec<f64> {
    v.iter().flat_map(|a| [a[0], a[1], 0.0]).collect()
}

fn material_ids(mesh: &Mesh) -> Result<Vec<i32>> {
    mesh.material
        .iter()
        .map(|&m| {
            i32::try_from(m)
                .map_err(|_| Error::run(format!("internal: material id {m} does not fit Int32")))
        })
        .collect()
}

/// Smallest interior angle of triangle `t`, degrees (0 for a degenerate triangle).
fn min_angle_deg(mesh: &Mesh, t: usize) -> f64 {
    crate::mesh::min_angle_of(mesh.triangles[t].map(|v| mesh.nodes[v]))
}

fn unstructured_vtu(mesh: &Mesh, title: &str, data: Attributes) -> Result<Vec<u8>> {
    let connectivity: Vec<u64> = mesh
        .triangles
        .iter()
        .flat_map(|t| t.map(|v| v as u64))
        .collect();
    let offsets: Vec<u64> = (1..=mesh.triangles.len() as u64).map(|i| 3 * i).collect();
    let piece = UnstructuredGridPiece {
        points: vec3(&mesh.nodes).into(),
        cells: Cells {
            cell_verts: VertexNumbers::XML {
                connectivity,
                offsets,
            },
            types: vec![CellType::Triangle; mesh.triangles.len()],
        },
        data,
    };
    encode_vtu(title, piece)
}

/// One unstructured-grid piece as VTK XML (`.vtu`) bytes: little-endian, base64 binary arrays,
/// a trailing newline.
pub fn encode_vtu(title: &str, piece: UnstructuredGridPiece) -> Result<Vec<u8>> {
    let vtk = Vtk {
        version: Version::new((1, 0)),
        title: title.to_string(),
        byte_order: ByteOrder::LittleEndian,
        data: DataSet::UnstructuredGrid {
            meta: None,
            pieces: vec![Piece::Inline(Box::new(piece))],
        },
        file_path: None,
    };
    let mut out = Vec::new();
    vtk.write_xml(&mut out)
        .map_err(|e| Error::run(format!("cannot encode VTK XML ({title}): {e}")))?;
    if !out.ends_with(b"\n") {
        out.push(b'\n');
    }
    Ok(out)
}

/// The solved field as a VTK XML unstructured grid (`.vtu`).
///
/// Points (x, y, 0) m; triangle cells. Point data: `temperature_c` (°C),
/// `heat_flux_nodal_w_per_m2` (W/m²) and `gradient_nodal_k_per_m` (K/m), vectors with z = 0.
/// Cell data: `heat_flux_w_per_m2` (W/m²), `gradient_k_per_m` (K/m), vectors with z = 0, and
/// `material` (Int32 id).
pub fn field_vtu(mesh: &Mesh, results: &Results) -> Result<Vec<u8>> {
    field_vtu_with(mesh, results, &[])
}

/// [`field_vtu`] with further scalar cell arrays (name, one value per triangle), e.g. the
/// `error_indicator` of the Zienkiewicz–Zhu estimate ((W·K/m)^½ per triangle).
pub fn field_vtu_with(
    mesh: &Mesh,
    results: &Results,
    extra_cells: &[(&str, &[f64])],
) -> Result<Vec<u8>> {
    field_vtu_with_points(mesh, results, extra_cells, &[])
}

/// [`field_vtu_with`] with further scalar point arrays (name, one value per node) after the
/// standard ones, e.g. `temperature_c:CASE` of each load case (°C).
pub fn field_vtu_with_points(
    mesh: &Mesh,
    results: &Results,
    extra_cells: &[(&str, &[f64])],
    extra_points: &[(&str, &[f64])],
) -> Result<Vec<u8>> {
    check_mesh(mesh)?;
    for (name, values) in extra_points {
        check_len(name, values.len(), mesh.nodes.len(), "node")?;
    }
    check_results(mesh, results)?;
    for (name, values) in extra_cells {
        if values.len() != mesh.triangles.len() {
            return Err(Error::run(format!(
                "internal: cell array {name} has {} values for {} triangles",
                values.len(),
                mesh.triangles.len()
            )));
        }
    }
    let mut data = Attributes {
        point: vec![
            Attribute::scalars("temperature_c", 1).with_data(results.temperature.clone()),
            Attribute::vectors("heat_flux_nodal_w_per_m2").with_data(vec3(&results.nodal_flux)),
            Attribute::vectors("gradient_nodal_k_per_m").with_data(vec3(&results.nodal_gradient)),
        ],
        cell: vec![
            Attribute::vectors("heat_flux_w_per_m2").with_data(vec3(&results.cell_flux)),
            Attribute::vectors("gradient_k_per_m").with_data(vec3(&results.cell_gradient)),
            Attribute::scalars("material", 1).with_data(material_ids(mesh)?),
        ],
    };
    for (name, values) in extra_points {
        data.point
            .push(Attribute::scalars(*name, 1).with_data(values.to_vec()));
    }
    for (name, values) in extra_cells {
        data.cell
            .push(Attribute::scalars(*name, 1).with_data(values.to_vec()));
    }
    unstructured_vtu(mesh, "field", data)
}

/// The mesh as a VTK XML unstructured grid (`.vtu`), with cell data `material` (Int32 id),
/// `quality_min_angle_deg` (smallest angle of each triangle, degrees) and `area_m2` (signed
/// area, m²; positive for the counter-clockwise triangles the mesher makes).
pub fn mesh_vtu(mesh: &Mesh) -> Result<Vec<u8>> {
    check_mesh(mesh)?;
    let t = mesh.triangles.len();
    let angles: Vec<f64> = (0..t).map(|i| min_angle_deg(mesh, i)).collect();
    let areas: Vec<f64> = (0..t).map(|i| mesh.triangle_area(i)).collect();
    let data = Attributes {
        point: vec![],
        cell: vec![
            Attribute::scalars("material", 1).with_data(material_ids(mesh)?),
            Attribute::scalars("quality_min_angle_deg", 1).with_data(angles),
            Attribute::scalars("area_m2", 1).with_data(areas),
        ],
    };
    unstructured_vtu(mesh, "mesh", data)
}
