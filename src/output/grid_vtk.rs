//! VTK encoding of a solved grid (finite-difference) model.

use super::vtk::{VtkArray, VtkOptions, VtkValues, VtuPiece, encode_vtu};
use crate::error::{Error, Result};
use crate::grid::{GridModel, GridSolution, NodeKind};

/// The solved grid as VTK XML unstructured grid bytes (`.vtu`), uncompressed: the nodes as
/// points (x, y, 0) with point data `temperature_c` (°C) and `kind` (Int32: 0 interior, 1 edge,
/// 2 fixed); a quad cell (no cell data) for every in-section grid cell whose four corners are
/// nodes. Grid points outside the section are omitted.
pub fn grid_vtu(model: &GridModel, solution: &GridSolution) -> Result<Vec<u8>> {
    grid_vtu_with(model, solution, &VtkOptions::default())
}

/// [`grid_vtu`] with the encoding `options`.
pub fn grid_vtu_with(
    model: &GridModel,
    solution: &GridSolution,
    options: &VtkOptions,
) -> Result<Vec<u8>> {
    if solution.temperature.len() != model.nodes.len() {
        return Err(Error::run(format!(
            "grid model: the solution holds {} temperatures for {} nodes",
            solution.temperature.len(),
            model.nodes.len()
        )));
    }
    let points: Vec<f64> = model.nodes.iter().flat_map(|n| [n.x, n.y, 0.0]).collect();
    let kind: Vec<i32> = model
        .nodes
        .iter()
        .map(|n| match n.kind {
            NodeKind::Interior => 0,
            NodeKind::Edge => 1,
            NodeKind::Fixed { .. } => 2,
        })
        .collect();
    let mut connectivity = Vec::new();
    for j in 0..model.ny - 1 {
        for i in 0..model.nx - 1 {
            if !model.cell_inside[j * (model.nx - 1) + i] {
                continue;
            }
            let c = [
                model.node_index(i, j),
                model.node_index(i + 1, j),
                model.node_index(i + 1, j + 1),
                model.node_index(i, j + 1),
            ];
            if let [Some(a), Some(b), Some(c), Some(d)] = c {
                connectivity.extend([a as i64, b as i64, c as i64, d as i64]);
            }
        }
    }
    encode_vtu(
        &VtuPiece {
            points: &points,
            connectivity: &connectivity,
            verts_per_cell: 4,
            cell_type: 9,
            point_data: vec![
                VtkArray::scalars("temperature_c", &solution.temperature),
                VtkArray {
                    name: "kind",
                    components: 1,
                    values: VtkValues::I32(&kind),
                },
            ],
            cell_data: vec![],
            field_data: vec![],
        },
        options,
    )
}
