//! VTK encoding of a solved grid (finite-difference) model.

use crate::error::{Error, Result};
use crate::grid::{GridModel, GridSolution, NodeKind};

/// The solved grid as VTK XML unstructured grid bytes (`.vtu`): the nodes as points (x, y, 0)
/// with point data `temperature_c` (°C) and `kind` (Int32: 0 interior, 1 edge, 2 fixed); a quad
/// cell (no cell data) for every in-section grid cell whose four corners are nodes.
/// Grid points outside the section are omitted.
pub fn grid_vtu(model: &GridModel, solution: &GridSolution) -> Result<Vec<u8>> {
    use vtkio::model::{
        Attribute, Attributes, CellType, Cells, UnstructuredGridPiece, VertexNumbers,
    };
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
                connectivity.extend([a as u64, b as u64, c as u64, d as u64]);
            }
        }
    }
    let ncells = connectivity.len() / 4;
    let offsets: Vec<u64> = (1..=ncells as u64).map(|k| 4 * k).collect();
    let piece = UnstructuredGridPiece {
        points: points.into(),
        cells: Cells {
            cell_verts: VertexNumbers::XML {
                connectivity,
                offsets,
            },
            types: vec![CellType::Quad; ncells],
        },
        data: Attributes {
            point: vec![
                Attribute::scalars("temperature_c", 1).with_data(solution.temperature.clone()),
                Attribute::scalars("kind", 1).with_data(kind),
            ],
            cell: vec![],
        },
    };
    crate::output::encode_vtu("grid", piece)
}
