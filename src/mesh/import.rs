//! A mesh made elsewhere (`solve --mesh`): a VTK XML unstructured grid of triangles with a
//! `material` cell array of the model's material ids, read with vtkio and checked — triangles
//! only, one plane, no duplicate or unused points, every id a material of the model, each
//! triangle turned counter-clockwise, every interior edge shared by exactly two triangles in
//! opposite senses, and the triangles covering the section's area. Its boundary edges take the
//! boundary names of the model's ring segments they lie on, or the `boundary_id` of the matching
//! line of a boundary.vtp (`--mesh-boundary`).

use super::{BoundaryEdge, Mesh, RingRef, quality};
use crate::error::{Error, Result};
use crate::geom::{self, format_point, index::BoxIndex};
use crate::geometry::Pslg;
use crate::model::Section;
use std::collections::HashMap;

use std::path::Path;
use vtkio::Vtk;
use vtkio::model::{Attribute, CellType, DataSet, IOBuffer, Piece};

/// Largest mesh or boundary file accepted, bytes (1 GiB), checked before it is read.
pub const MAX_MESH_FILE_BYTES: u64 = 1 << 30;
/// A mesh point lies on a ring segment when within this fraction of the section's diameter.
pub const ON_SEGMENT_TOLERANCE: f64 = 1e-7;
/// The triangles' total area may differ from the section's by this fraction.
pub const AREA_TOLERANCE: f64 = 1e-8;

/// The mesh in `mesh_path` for `section` (validated with its segment set `pslg`), named by the
/// ring segments or by `boundary_path`; with the warnings of the import.
pub fn read_mesh(
    section: &Section,
    pslg: &Pslg,
    mesh_path: &Path,
    boundary_path: Option<&Path>,
) -> Result<(Mesh, Vec<String>)> {
    let label = format!("--mesh {}", mesh_path.display());
    if !section.contacts.is_empty() {
        return Err(Error::input(format!(
            "{label}: contacts[0]: a model with [[contacts]] is meshed here (the interface nodes are split after meshing); --mesh takes models without contact resistances"
        )));
    }
    let piece = grid_piece(mesh_path, &label)?;
    let mut warnings = Vec::new();
    let nodes = plane_points(&piece.points, section, &label)?;
    let (connectivity, offsets) = piece.cells.cell_verts.clone().into_xml();
    let n_cells = piece.cells.types.len();
    if offsets.len() != n_cells {
        return Err(Error::input(format!(
            "{label}: {n_cells} cell types but {} cells",
            offsets.len()
        )));
    }
    let mut triangles = Vec::with_capacity(n_cells);
    let mut start = 0usize;
    for (c, (&end, ty)) in offsets.iter().zip(&piece.cells.types).enumerate() {
        let end = end as usize;
        if *ty != CellType::Triangle || end < start || end - start != 3 || end > connectivity.len()
        {
            return Err(Error::input(format!(
                "{label}: cell {c} is a {ty:?} with {} points; only triangles (VTK type 5) are accepted",
                end.saturating_sub(start)
            )));
        }
        let mut tri = [0usize; 3];
        for (k, v) in connectivity[start..end].iter().enumerate() {
            let v = *v as usize;
            if v >= nodes.len() {
                return Err(Error::input(format!(
                    "{label}: cell {c} refers to point {v}, but the file has {} points",
                    nodes.len()
                )));
            }
            tri[k] = v;
        }
        triangles.push(tri);
        start = end;
    }
    if triangles.is_empty() {
        return Err(Error::input(format!("{label}: the grid has no cells")));
    }
    let material = material_ids(&piece.data.cell, triangles.len(), section, &label)?;
    for (i, ps) in section.point_sources.iter().enumerate() {
        if !nodes.contains(&ps.at) {
            return Err(Error::input(format!(
                "{label}: point_sources[{i}] \"{}\" at {}: no mesh point lies exactly there (the source's load goes to the node at its position)",
                ps.name,
                format_point(ps.at)
            )));
        }
    }
    check_points(&nodes, &triangles, &label)?;
    let turned = orient(&nodes, &mut triangles, &label)?;
    if turned > 0 {
        warnings.push(format!(
            "{label}: {turned} of {} triangles were clockwise and were turned counter-clockwise",
            triangles.len()
        ));
    }
    let edges = outer_edges(&triangles, &label)?;
    let mut boundary_edges = name_by_rings(section, &nodes, &edges, &label)?;
    if let Some(path) = boundary_path {
        name_by_polydata(section, &nodes, &mut boundary_edges, path)?;
    }
    check_area(section, &nodes, &triangles, &label)?;
    let stats = quality::stats(
        pslg,
        &nodes,
        &triangles,
        boundary_edges.len(),
        &[],
        &vec![false; nodes.len()],
        section.mesh.max_area,
    );
    let mesh = Mesh {
        nodes,
        triangles,
        material,
        boundary_edges,
        stats,
        interfaces: Vec::new(),
    };
    mesh.check_consistency()?;
    Ok((mesh, warnings))
}

/// The bytes-limited, parsed VTK file at `path`.
fn import(path: &Path, label: &str) -> Result<Vtk> {
    let size = std::fs::metadata(path)
        .map_err(|e| Error::input(format!("{label}: cannot read the file: {e}")))?
        .len();
    if size > MAX_MESH_FILE_BYTES {
        return Err(Error::input(format!(
            "{label}: {size} bytes, above the limit of {MAX_MESH_FILE_BYTES} bytes"
        )));
    }
    Vtk::import(path).map_err(|e| Error::input(format!("{label}: not a readable VTK file: {e}")))
}

/// The one piece of the unstructured grid in `path`.
fn grid_piece(path: &Path, label: &str) -> Result<vtkio::model::UnstructuredGridPiece> {
    let vtk = import(path, label)?;
    let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
        return Err(Error::input(format!(
            "{label}: not a VTK unstructured grid (.vtu)"
        )));
    };
    one_piece(pieces, path, label)
}

fn one_piece<P: vtkio::model::PieceData>(
    mut pieces: Vec<Piece<P>>,
    path: &Path,
    label: &str,
) -> Result<P> {
    if pieces.len() != 1 {
        return Err(Error::input(format!(
            "{label}: {} pieces; exactly one is accepted",
            pieces.len()
        )));
    }
    pieces
        .remove(0)
        .into_loaded_piece_data(Some(path))
        .map_err(|e| Error::input(format!("{label}: cannot load the piece: {e}")))
}

/// (x, y) of the points, all in one plane z = const.
fn plane_points(points: &IOBuffer, section: &Section, label: &str) -> Result<Vec<[f64; 2]>> {
    let xyz: Vec<f64> = points
        .clone()
        .cast_into::<f64>()
        .ok_or_else(|| Error::input(format!("{label}: points are not numbers")))?;
    if !xyz.len().is_multiple_of(3) {
        return Err(Error::input(format!(
            "{label}: {} point coordinates is not a multiple of 3",
            xyz.len()
        )));
    }
    let tol = ON_SEGMENT_TOLERANCE * section.diameter();
    let z0 = xyz.get(2).copied().unwrap_or(0.0);
    let mut out = Vec::with_capacity(xyz.len() / 3);
    for (i, p) in xyz.chunks_exact(3).enumerate() {
        if !p.iter().all(|v| v.is_finite()) {
            return Err(Error::input(format!(
                "{label}: point {i} has a non-finite coordinate"
            )));
        }
        if (p[2] - z0).abs() > tol {
            return Err(Error::input(format!(
                "{label}: point {i} has z = {} but point 0 has z = {z0}; the mesh must lie in one plane z = const",
                p[2]
            )));
        }
        out.push([p[0], p[1]]);
    }
    Ok(out)
}

/// The `material` cell array as model material ids.
fn material_ids(
    cell: &[Attribute],
    triangles: usize,
    section: &Section,
    label: &str,
) -> Result<Vec<usize>> {
    let values = cell
        .iter()
        .find_map(|a| match a {
            Attribute::DataArray(d) if d.name == "material" => Some(d.data.clone()),
            _ => None,
        })
        .ok_or_else(|| {
            Error::input(format!(
                "{label}: no `material` cell array (the model's material id of each triangle)"
            ))
        })?
        .cast_into::<f64>()
        .ok_or_else(|| Error::input(format!("{label}: `material` holds no numbers")))?;
    if values.len() != triangles {
        return Err(Error::input(format!(
            "{label}: `material` has {} values for {triangles} cells",
            values.len()
        )));
    }
    let n = section.materials.len();
    values
        .iter()
        .enumerate()
        .map(|(c, &v)| {
            if v.fract() == 0.0 && v >= 0.0 && v < n as f64 {
                Ok(v as usize)
            } else {
                let names: Vec<String> = section
                    .materials
                    .iter()
                    .enumerate()
                    .map(|(i, m)| format!("{i} = {}", m.name))
                    .collect();
                Err(Error::input(format!(
                    "{label}: cell {c} has material id {v}, which is no material of the model ({})",
                    names.join(", ")
                )))
            }
        })
        .collect()
}

/// No two points at one place, and every point on some triangle.
fn check_points(nodes: &[[f64; 2]], triangles: &[[usize; 3]], label: &str) -> Result<()> {
    let mut order: Vec<usize> = (0..nodes.len()).collect();
    order.sort_by(|&a, &b| {
        nodes[a][0]
            .total_cmp(&nodes[b][0])
            .then(nodes[a][1].total_cmp(&nodes[b][1]))
            .then(a.cmp(&b))
    });
    for w in order.windows(2) {
        if nodes[w[0]] == nodes[w[1]] {
            return Err(Error::input(format!(
                "{label}: points {} and {} are the same point {}; merge duplicate points before solving",
                w[0].min(w[1]),
                w[0].max(w[1]),
                format_point(nodes[w[0]])
            )));
        }
    }
    let mut used = vec![false; nodes.len()];
    for t in triangles {
        for &v in t {
            used[v] = true;
        }
    }
    if let Some(i) = used.iter().position(|u| !u) {
        return Err(Error::input(format!(
            "{label}: point {i} {} belongs to no triangle",
            format_point(nodes[i])
        )));
    }
    Ok(())
}

/// Turn clockwise triangles counter-clockwise; refuse degenerate ones. Returns how many turned.
fn orient(nodes: &[[f64; 2]], triangles: &mut [[usize; 3]], label: &str) -> Result<usize> {
    let mut turned = 0;
    for (c, t) in triangles.iter_mut().enumerate() {
        let o = geom::orient(nodes[t[0]], nodes[t[1]], nodes[t[2]]);
        if o == 0.0 {
            return Err(Error::input(format!(
                "{label}: cell {c} is degenerate (its three points {}, {}, {} lie on one line)",
                format_point(nodes[t[0]]),
                format_point(nodes[t[1]]),
                format_point(nodes[t[2]])
            )));
        }
        if o < 0.0 {
            t.swap(1, 2);
            turned += 1;
        }
    }
    Ok(turned)
}

/// The edges of one triangle each (the section's boundary): (from, to, triangle) with the
/// triangle on the left. Refuses edges of three or more triangles and two triangles on one side
/// of an edge (overlap).
fn outer_edges(triangles: &[[usize; 3]], label: &str) -> Result<Vec<([usize; 2], usize)>> {
    // (undirected key, directed edge, cell), sorted by key: equal keys are adjacent and the
    // first offending edge is the same on every run.
    let mut all: Vec<([usize; 2], [usize; 2], usize)> = Vec::with_capacity(3 * triangles.len());
    for (c, t) in triangles.iter().enumerate() {
        for k in 0..3 {
            let (a, b) = (t[k], t[(k + 1) % 3]);
            all.push(([a.min(b), a.max(b)], [a, b], c));
        }
    }
    all.sort_unstable();
    let mut out = Vec::new();
    for group in all.chunk_by(|x, y| x.0 == y.0) {
        match group {
            [(_, d, c)] => out.push((*d, *c)),
            [(key, d0, c0), (_, d1, c1)] => {
                if d0 == d1 {
                    return Err(Error::input(format!(
                        "{label}: cells {c0} and {c1} overlap (both lie on the same side of their shared edge between points {} and {})",
                        key[0], key[1]
                    )));
                }
            }
            more => {
                let key = more[0].0;
                return Err(Error::input(format!(
                    "{label}: the edge between points {} and {} belongs to {} cells; a mesh edge joins at most two triangles",
                    key[0],
                    key[1],
                    more.len()
                )));
            }
        }
    }
    out.sort_by_key(|&(d, c)| (c, d));
    Ok(out)
}

/// Every outer edge on one segment of the outline or a hole, named by that segment.
fn name_by_rings(
    section: &Section,
    nodes: &[[f64; 2]],
    edges: &[([usize; 2], usize)],
    label: &str,
) -> Result<Vec<BoundaryEdge>> {
    let tol = ON_SEGMENT_TOLERANCE * section.diameter();
    let rings: Vec<(RingRef, &crate::model::Ring)> =
        std::iter::once((RingRef::Outline, &section.outline))
            .chain(
                section
                    .holes
                    .iter()
                    .enumerate()
                    .map(|(h, r)| (RingRef::Hole(h), r)),
            )
            .collect();
    let segments: Vec<(usize, usize)> = rings
        .iter()
        .enumerate()
        .flat_map(|(r, (_, ring))| (0..ring.len()).map(move |s| (r, s)))
        .collect();
    let index = BoxIndex::new(segments.iter().map(|&(r, s)| {
        let (a, b) = rings[r].1.segment(s);
        geom::index::inflate(geom::index::segment_bbox(a, b), tol)
    }));
    let mut near = Vec::new();
    let mut out = Vec::with_capacity(edges.len());
    for &([p, q], triangle) in edges {
        let (a, b) = (nodes[p], nodes[q]);
        index.meeting(geom::index::segment_bbox(a, b), &mut near);
        let hit = near.iter().copied().find(|&i| {
            let (r, s) = segments[i];
            let (u, v) = rings[r].1.segment(s);
            geom::project(u, v, a).1 <= tol && geom::project(u, v, b).1 <= tol
        });
        let Some(i) = hit else {
            return Err(Error::input(format!(
                "{label}: the boundary edge from point {p} {} to point {q} {} (cell {triangle}) lies on no segment of the model's outline or holes (tolerance {} m): the mesh is not of this section",
                format_point(a),
                format_point(b),
                crate::text::sig3(tol)
            )));
        };
        let (r, segment) = segments[i];
        let (ring_ref, ring) = rings[r];
        out.push(BoundaryEdge {
            nodes: [p, q],
            boundary: ring.edge_boundary[segment],
            triangle,
            ring: ring_ref,
            segment,
        });
    }
    Ok(out)
}

/// Boundary ids from the lines of a boundary.vtp of the same points: every line one boundary
/// edge of the mesh (matched by its end points), every boundary edge one line.
fn name_by_polydata(
    section: &Section,
    nodes: &[[f64; 2]],
    edges: &mut [BoundaryEdge],
    path: &Path,
) -> Result<()> {
    let label = format!("--mesh-boundary {}", path.display());
    let vtk = import(path, &label)?;
    let DataSet::PolyData { pieces, .. } = vtk.data else {
        return Err(Error::input(format!(
            "{label}: not VTK polygonal data (.vtp)"
        )));
    };
    let piece = one_piece(pieces, path, &label)?;
    let points = plane_points(&piece.points, section, &label)?;
    let (connectivity, offsets) = piece
        .lines
        .clone()
        .ok_or_else(|| Error::input(format!("{label}: no lines")))?
        .into_xml();
    let ids = piece
        .data
        .cell
        .iter()
        .find_map(|a| match a {
            Attribute::DataArray(d) if d.name == "boundary_id" => d.data.clone().cast_into::<f64>(),
            _ => None,
        })
        .ok_or_else(|| Error::input(format!("{label}: no numeric `boundary_id` cell array")))?;
    if ids.len() != offsets.len() {
        return Err(Error::input(format!(
            "{label}: `boundary_id` has {} values for {} lines",
            ids.len(),
            offsets.len()
        )));
    }
    let key = |p: [f64; 2]| [p[0].to_bits(), p[1].to_bits()];
    let mut by_ends: HashMap<[[u64; 2]; 2], usize> = HashMap::new();
    for (e, edge) in edges.iter().enumerate() {
        let (a, b) = (key(nodes[edge.nodes[0]]), key(nodes[edge.nodes[1]]));
        by_ends.insert(if a <= b { [a, b] } else { [b, a] }, e);
    }
    let mut named = vec![false; edges.len()];
    let mut start = 0usize;
    for (l, &end) in offsets.iter().enumerate() {
        let end = end as usize;
        if end < start || end - start != 2 || end > connectivity.len() {
            return Err(Error::input(format!(
                "{label}: line {l} has {} points; boundary lines have two",
                end.saturating_sub(start)
            )));
        }
        let v = [
            connectivity[start] as usize,
            connectivity[start + 1] as usize,
        ];
        start = end;
        if v.iter().any(|&i| i >= points.len()) {
            return Err(Error::input(format!(
                "{label}: line {l} refers to a point beyond the file's {} points",
                points.len()
            )));
        }
        let (a, b) = (key(points[v[0]]), key(points[v[1]]));
        let Some(&e) = by_ends.get(&if a <= b { [a, b] } else { [b, a] }) else {
            return Err(Error::input(format!(
                "{label}: line {l} from {} to {} is no boundary edge of the mesh (the files must share their points)",
                format_point(points[v[0]]),
                format_point(points[v[1]])
            )));
        };
        let id = ids[l];
        edges[e].boundary = if id == -1.0 {
            None
        } else if id.fract() == 0.0 && id >= 0.0 && id < section.boundaries.len() as f64 {
            Some(id as usize)
        } else {
            return Err(Error::input(format!(
                "{label}: line {l} has boundary_id {id}, which is no boundary of the model (0 to {}, or -1 for unnamed)",
                section.boundaries.len().saturating_sub(1)
            )));
        };
        named[e] = true;
    }
    if let Some(e) = named.iter().position(|n| !n) {
        let count = named.iter().filter(|n| !**n).count();
        let edge = &edges[e];
        return Err(Error::input(format!(
            "{label}: {count} boundary edges of the mesh have no line, the first from {} to {}",
            format_point(nodes[edge.nodes[0]]),
            format_point(nodes[edge.nodes[1]])
        )));
    }
    Ok(())
}

/// The triangles cover the section: outline area less the holes', within [`AREA_TOLERANCE`].
fn check_area(
    section: &Section,
    nodes: &[[f64; 2]],
    triangles: &[[usize; 3]],
    label: &str,
) -> Result<()> {
    let section_area = geom::polygon_area(&section.outline.points).abs()
        - section
            .holes
            .iter()
            .map(|h| geom::polygon_area(&h.points).abs())
            .sum::<f64>();
    let mesh_area: f64 = triangles
        .iter()
        .map(|t| geom::triangle_area(nodes[t[0]], nodes[t[1]], nodes[t[2]]))
        .sum();
    if (mesh_area - section_area).abs() > AREA_TOLERANCE * section_area {
        return Err(Error::input(format!(
            "{label}: the triangles cover {} m², the section (outline less holes) {} m²: the mesh is not of this section",
            crate::text::format_f64(mesh_area),
            crate::text::format_f64(section_area)
        )));
    }
    Ok(())
}
