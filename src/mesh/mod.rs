//! Mesh stage: spade's constrained Delaunay triangulation of the tagged segment set and its
//! Ruppert-style refinement (angle and area limits), our own classification of triangles
//! (hole or material), the geometric mapping of every final boundary edge back to its boundary
//! name, and quality statistics.

use serde::Serialize;

pub use crate::geometry::RingRef;

/// An edge of the mesh on the section boundary (outline or hole).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoundaryEdge {
    /// Node indices, ordered so that the section lies to the left (counter-clockwise around it).
    pub nodes: [usize; 2],
    /// Boundary id (index into `Section::boundaries`), `None` for an unnamed (insulated) segment.
    pub boundary: Option<usize>,
    /// The triangle this edge belongs to.
    pub triangle: usize,
    pub ring: RingRef,
}

/// A triangle angle that cannot be raised to the limit because two input segments meet at a
/// smaller angle there.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SmallInputAngle {
    pub at: [f64; 2],
    pub angle_deg: f64,
    /// Triangles with their centroid within this distance, m, count as next to it.
    pub radius: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MeshStats {
    pub nodes: usize,
    pub triangles: usize,
    pub boundary_edges: usize,
    /// Smallest angle over all triangles, degrees.
    pub min_angle_deg: f64,
    /// Smallest angle over triangles not next to a small input angle (not touching its vertex,
    /// centroid outside its `radius`), degrees.
    pub min_angle_away_from_small_input_angles_deg: f64,
    /// m²
    pub max_area: f64,
    /// m²
    pub min_area: f64,
    /// Triangle with the smallest angle.
    pub worst_triangle: usize,
    pub worst_triangle_centroid: [f64; 2],
    pub small_input_angles: Vec<SmallInputAngle>,
    /// Area of the meshed section, m².
    pub area: f64,
}

/// A conforming triangle mesh of the section.
#[derive(Debug, Clone, PartialEq)]
pub struct Mesh {
    /// Node coordinates, m.
    pub nodes: Vec<[f64; 2]>,
    /// Node indices of each triangle, counter-clockwise.
    pub triangles: Vec<[usize; 3]>,
    /// Material id of each triangle.
    pub material: Vec<usize>,
    /// Every edge on the outline or a hole, each once.
    pub boundary_edges: Vec<BoundaryEdge>,
    pub stats: MeshStats,
}

impl Mesh {
    /// Signed area of triangle t (positive for counter-clockwise), m².
    pub fn triangle_area(&self, t: usize) -> f64 {
        let [a, b, c] = self.triangles[t];
        let (pa, pb, pc) = (self.nodes[a], self.nodes[b], self.nodes[c]);
        0.5 * ((pb[0] - pa[0]) * (pc[1] - pa[1]) - (pc[0] - pa[0]) * (pb[1] - pa[1]))
    }

    /// Length of boundary edge e, m.
    pub fn edge_length(&self, e: &BoundaryEdge) -> f64 {
        let (p, q) = (self.nodes[e.nodes[0]], self.nodes[e.nodes[1]]);
        ((q[0] - p[0]).powi(2) + (q[1] - p[1]).powi(2)).sqrt()
    }
}

use crate::error::{Error, Result};
use crate::geometry::{Pslg, Zone};
use crate::model::Section;
use spade::handles::{FaceHandle, FixedVertexHandle, InnerTag};
use spade::{
    AngleLimit, CdtEdge, ConstrainedDelaunayTriangulation, Point2, PositionInTriangulation,
    RefinementParameters, Triangulation,
};

type Cdt = ConstrainedDelaunayTriangulation<Point2<f64>>;

/// Rough number of triangles a quality mesh with this area limit has (Delaunay refinement
/// leaves triangles of about half the limit on average; measured on the demo sections).
pub fn estimate_triangles(section_area: f64, max_area: f64) -> f64 {
    2.2 * section_area / max_area
}

/// Options of the mesh stage beyond the model file.
#[derive(Debug, Clone, Copy)]
pub struct MeshOptions {
    /// Refuse a mesh estimated to exceed this many triangles.
    pub max_triangles: usize,
    /// Refine (false: constrained Delaunay triangulation of the input only, for `check`).
    pub refine: bool,
}

impl Default for MeshOptions {
    fn default() -> Self {
        MeshOptions {
            max_triangles: crate::model::DEFAULT_MAX_TRIANGLES,
            refine: true,
        }
    }
}

fn ring_area(points: &[[f64; 2]]) -> f64 {
    let n = points.len();
    (0..n)
        .map(|i| {
            let (p, q) = (points[i], points[(i + 1) % n]);
            p[0] * q[1] - q[0] * p[1]
        })
        .sum::<f64>()
        * 0.5
}

/// Area of the discretised section (outline minus holes), m².
pub fn section_area(section: &Section) -> f64 {
    ring_area(&section.outline.points)
        - section
            .holes
            .iter()
            .map(|h| ring_area(&h.points))
            .sum::<f64>()
}

fn angle_deg(a: [f64; 2], b: [f64; 2], c: [f64; 2]) -> f64 {
    // angle at a
    let u = [b[0] - a[0], b[1] - a[1]];
    let v = [c[0] - a[0], c[1] - a[1]];
    let cross = u[0] * v[1] - u[1] * v[0];
    let dot = u[0] * v[0] + u[1] * v[1];
    cross.abs().atan2(dot).to_degrees()
}

/// Smallest angle of a triangle, degrees.
pub fn min_angle_of(p: [[f64; 2]; 3]) -> f64 {
    angle_deg(p[0], p[1], p[2])
        .min(angle_deg(p[1], p[2], p[0]))
        .min(angle_deg(p[2], p[0], p[1]))
}

/// Input angles (between constraint pieces meeting at a vertex, inside the section) smaller
/// than `limit` degrees: (vertex, angle).
/// Input angles (between constraint pieces meeting at a vertex, inside the section) smaller
/// than `limit` degrees: (vertex, angle in degrees, length of the shorter of the two pieces).
fn small_input_angles(pslg: &Pslg, used: &[usize], limit: f64) -> Vec<(usize, f64, f64)> {
    let mut incident: Vec<Vec<(f64, Zone, f64)>> = vec![Vec::new(); pslg.vertices.len()];
    for p in &pslg.pieces {
        let [a, b] = p.v;
        let (pa, pb) = (pslg.vertices[a], pslg.vertices[b]);
        let len = ((pb[0] - pa[0]).powi(2) + (pb[1] - pa[1]).powi(2)).sqrt();
        incident[a].push(((pb[1] - pa[1]).atan2(pb[0] - pa[0]), p.left, len));
        incident[b].push(((pa[1] - pb[1]).atan2(pa[0] - pb[0]), p.right, len));
    }
    let mut out = Vec::new();
    for &v in used {
        let inc = &mut incident[v];
        if inc.len() < 2 {
            continue;
        }
        inc.sort_by(|x, y| x.0.total_cmp(&y.0));
        let mut smallest: Option<(f64, f64)> = None;
        for i in 0..inc.len() {
            let (a0, zone, l0) = inc[i];
            let (a1, _, l1) = inc[(i + 1) % inc.len()];
            let mut w = a1 - a0;
            if w <= 0.0 {
                w += 2.0 * std::f64::consts::PI;
            }
            let w = w.to_degrees();
            if zone.is_some() && w < limit && smallest.is_none_or(|(s, _)| w < s) {
                smallest = Some((w, l0.min(l1)));
            }
        }
        if let Some((w, l)) = smallest {
            out.push((v, w, l));
        }
    }
    out
}

/// Zone to the left of a directed edge lying on `piece`, going from `a` to `b`.
fn zone_left_of(pslg: &Pslg, piece: usize, a: [f64; 2], b: [f64; 2]) -> Zone {
    let p = &pslg.pieces[piece];
    let (pa, pb) = (pslg.vertices[p.v[0]], pslg.vertices[p.v[1]]);
    let same = (b[0] - a[0]) * (pb[0] - pa[0]) + (b[1] - a[1]) * (pb[1] - pa[1]) > 0.0;
    if same { p.left } else { p.right }
}

/// A size field for adaptive refinement: the largest triangle area wanted at a point, m².
pub trait SizeField {
    fn max_area_at(&self, p: [f64; 2]) -> f64;
}

/// Triangles touching a boundary with a `size` have their longest edge at most this factor
/// times the size.
pub const BOUNDARY_SIZE_FACTOR: f64 = 1.5;
/// Input angles below this factor times `min_angle` are reported as too small for the angle
/// limit. Ruppert's quality guarantee assumes input angles of at least 60° (Ruppert, J.
/// Algorithms 18, 1995); on our property tests the limit was missed next to input angles of
/// about 1.2 × the limit, never beyond 2 × the limit.
pub const SMALL_INPUT_ANGLE_FACTOR: f64 = 2.0;
/// Passes of "insert points where the size field asks, refine again" before giving up.
const MAX_SIZE_PASSES: usize = 60;
/// Passes that insert circumcentres of triangles still below the angle limit.
const MAX_ANGLE_PASSES: usize = 6;

/// A constraint edge handed to the triangulation: end vertices (triangulation indices) and the
/// PSLG piece it lies on (a piece may be split in advance to honour a boundary `size`).
struct Constraint {
    a: usize,
    b: usize,
    piece: usize,
}

/// Zones of the faces and the piece of every constraint edge of the current triangulation.
struct Classified {
    edge_piece: Vec<u32>,
    /// Zone per face index (outer face and void faces: `None`).
    face_zone: Vec<Zone>,
}

fn classify(cdt: &Cdt, pslg: &Pslg, cons: &[Constraint]) -> Result<Classified> {
    // Map every constraint edge to the piece it lies on by walking from each constraint's first
    // vertex to its last along collinear constraint edges (refinement splits constraints).
    let mut edge_piece = vec![u32::MAX; cdt.num_undirected_edges()];
    for c in cons {
        let pb = cdt.vertex(FixedVertexHandle::from_index(c.b)).position();
        let mut cur = FixedVertexHandle::from_index(c.a);
        let mut steps = 0usize;
        while cur.index() != c.b {
            let here = cdt.vertex(cur).position();
            let dir = [pb.x - here.x, pb.y - here.y];
            let dl = (dir[0] * dir[0] + dir[1] * dir[1]).sqrt();
            let mut best: Option<(f64, _)> = None;
            for e in cdt.vertex(cur).out_edges() {
                if !e.is_constraint_edge() {
                    continue;
                }
                let to = e.to().position();
                let d = [to.x - here.x, to.y - here.y];
                let l = (d[0] * d[0] + d[1] * d[1]).sqrt();
                let cos = (d[0] * dir[0] + d[1] * dir[1]) / (l * dl);
                if best.as_ref().is_none_or(|(bc, _)| cos > *bc) {
                    best = Some((cos, e));
                }
            }
            match best {
                Some((cos, e)) if cos > 1.0 - 1e-6 => {
                    edge_piece[e.as_undirected().fix().index()] = c.piece as u32;
                    cur = e.to().fix();
                }
                _ => {
                    return Err(Error::run(format!(
                        "internal: lost the constraint path of a segment near ({}, {})",
                        here.x, here.y
                    )));
                }
            }
            steps += 1;
            if steps > cdt.num_vertices() {
                return Err(Error::run("internal: constraint path does not end"));
            }
        }
    }

    // Components of faces connected across non-constraint edges; zone from a bounding piece.
    let nfaces = cdt.num_all_faces();
    let mut comp = vec![usize::MAX; nfaces];
    let mut comp_zone: Vec<Zone> = Vec::new();
    let mut stack = Vec::new();
    for f in cdt.inner_faces() {
        let fi = f.fix().index();
        if comp[fi] != usize::MAX {
            continue;
        }
        let c = comp_zone.len();
        let mut zone: Option<Zone> = None;
        comp[fi] = c;
        stack.push(f);
        while let Some(face) = stack.pop() {
            for e in face.adjacent_edges() {
                if e.is_constraint_edge() {
                    let piece = edge_piece[e.as_undirected().fix().index()];
                    if piece == u32::MAX {
                        return Err(Error::run("internal: constraint edge without a segment"));
                    }
                    let [a, b] = e.positions();
                    let z = zone_left_of(pslg, piece as usize, [a.x, a.y], [b.x, b.y]);
                    match zone {
                        None => zone = Some(z),
                        Some(prev) if prev != z => {
                            return Err(Error::run(format!(
                                "internal: inconsistent zones around ({}, {})",
                                a.x, a.y
                            )));
                        }
                        _ => {}
                    }
                    continue;
                }
                match e.rev().face().as_inner() {
                    Some(n) => {
                        let ni = n.fix().index();
                        if comp[ni] == usize::MAX {
                            comp[ni] = c;
                            stack.push(n);
                        }
                    }
                    None => {
                        // A convex-hull edge that is no constraint: outside the outline.
                        if let Some(Some(_)) = zone {
                            return Err(Error::run(
                                "internal: material zone reaches the convex hull",
                            ));
                        }
                        zone = zone.or(Some(None));
                    }
                }
            }
        }
        comp_zone.push(zone.unwrap_or(None));
    }
    let mut face_zone = vec![None; nfaces];
    for f in cdt.inner_faces() {
        let i = f.fix().index();
        face_zone[i] = comp_zone[comp[i]];
    }
    Ok(Classified {
        edge_piece,
        face_zone,
    })
}

/// True when `p` lies in the diametral circle of a constraint edge of face `g` or of a face next
/// to it (Ruppert's rule: such a point would make a sliver against the segment).
fn encroaches_nearby_constraint(
    cdt: &Cdt,
    g: spade::handles::FixedFaceHandle<InnerTag>,
    p: Point2<f64>,
) -> bool {
    let face = cdt.face(g);
    let mut edges = Vec::with_capacity(9);
    for e in face.adjacent_edges() {
        edges.push(e);
        if let Some(n) = e.rev().face().as_inner() {
            edges.extend(n.adjacent_edges());
        }
    }
    edges.iter().any(|e| {
        if !e.is_constraint_edge() {
            return false;
        }
        let [a, b] = e.positions();
        let m = Point2::new((a.x + b.x) / 2.0, (a.y + b.y) / 2.0);
        let r2 = ((a.x - b.x).powi(2) + (a.y - b.y).powi(2)) / 4.0;
        (p.x - m.x).powi(2) + (p.y - m.y).powi(2) <= r2
    })
}

fn tri_area(p: [Point2<f64>; 3]) -> f64 {
    0.5 * ((p[1].x - p[0].x) * (p[2].y - p[0].y) - (p[2].x - p[0].x) * (p[1].y - p[0].y))
}

fn longest_edge(p: [Point2<f64>; 3]) -> f64 {
    let d = |a: Point2<f64>, b: Point2<f64>| ((a.x - b.x).powi(2) + (a.y - b.y).powi(2)).sqrt();
    d(p[0], p[1]).max(d(p[1], p[2])).max(d(p[2], p[0]))
}

/// Mesh a section: PSLG → constrained Delaunay triangulation → refinement → classification.
pub fn build(section: &Section, pslg: &Pslg, opts: &MeshOptions) -> Result<Mesh> {
    build_with(section, pslg, opts, None)
}

/// A triangulation being refined: keeps spade's triangulation between refinement steps, so a
/// mesh can be refined further where an error indicator asks (adaptive refinement) without
/// starting over.
pub struct Mesher<'a> {
    section: &'a Section,
    pslg: &'a Pslg,
    opts: MeshOptions,
    cdt: Cdt,
    cons: Vec<Constraint>,
    classified: Classified,
    small: Vec<(usize, f64, f64)>,
    to_cdt: Vec<usize>,
    zone_limit: Vec<f64>,
    n_input: usize,
    bbox_area: f64,
    min_area: f64,
}

/// Mesh a section with an optional size field (adaptive refinement) on top of the model's own
/// limits: the global `max_area`, each material's `max_area`, each boundary's `size`.
pub fn build_with(
    section: &Section,
    pslg: &Pslg,
    opts: &MeshOptions,
    field: Option<&dyn SizeField>,
) -> Result<Mesh> {
    let mut m = Mesher::new(section, pslg, opts)?;
    if opts.refine {
        m.refine(field, &[])?;
    }
    m.mesh()
}

impl<'a> Mesher<'a> {
    /// Triangulate the segment set (no refinement yet) and check the size estimate.
    pub fn new(section: &'a Section, pslg: &'a Pslg, opts: &MeshOptions) -> Result<Self> {
        let max_area = section.mesh.max_area;
        let boundary_size = |b: Option<usize>| b.and_then(|id| section.boundaries[id].size);

        // Only vertices that end a piece enter the triangulation; boundary pieces with a `size`
        // are split in advance into equal parts no longer than the size.
        let mut used = vec![false; pslg.vertices.len()];
        for p in &pslg.pieces {
            used[p.v[0]] = true;
            used[p.v[1]] = true;
        }
        let used_list: Vec<usize> = (0..pslg.vertices.len()).filter(|&i| used[i]).collect();
        let mut to_cdt = vec![usize::MAX; pslg.vertices.len()];
        for (k, &i) in used_list.iter().enumerate() {
            to_cdt[i] = k;
        }
        let mut verts: Vec<Point2<f64>> = used_list
            .iter()
            .map(|&i| Point2::new(pslg.vertices[i][0], pslg.vertices[i][1]))
            .collect();
        // Refuse a boundary `size` that asks for more triangles than the limit before
        // splitting the pieces: a tiny size would otherwise allocate millions of vertices first.
        let boundary_estimate: f64 = pslg
            .pieces
            .iter()
            .filter_map(|p| {
                let s = boundary_size(p.boundary).filter(|_| p.ring.is_some())?;
                let (pa, pb) = (pslg.vertices[p.v[0]], pslg.vertices[p.v[1]]);
                Some(4.0 * (pb[0] - pa[0]).hypot(pb[1] - pa[1]) / s)
            })
            .sum();
        {
            let estimate = boundary_estimate;
            if estimate > opts.max_triangles as f64 {
                return Err(Error::input(format!(
                    "mesh: the boundaries' size would give about {estimate:.0} triangles along the boundaries alone, above the limit of {}; raise the boundaries' size or pass --max-triangles",
                    opts.max_triangles
                )));
            }
        }
        let mut cons = Vec::with_capacity(pslg.pieces.len());
        for (pi, p) in pslg.pieces.iter().enumerate() {
            let (a, b) = (to_cdt[p.v[0]], to_cdt[p.v[1]]);
            let size = if p.ring.is_some() {
                boundary_size(p.boundary)
            } else {
                None
            };
            let (pa, pb) = (verts[a], verts[b]);
            let len = ((pb.x - pa.x).powi(2) + (pb.y - pa.y).powi(2)).sqrt();
            let parts = match size {
                Some(s) => ((len / s).ceil() as usize).clamp(1, 10_000_000),
                None => 1,
            };
            let mut prev = a;
            for k in 1..parts {
                let t = k as f64 / parts as f64;
                verts.push(Point2::new(
                    pa.x + t * (pb.x - pa.x),
                    pa.y + t * (pb.y - pa.y),
                ));
                let v = verts.len() - 1;
                cons.push(Constraint {
                    a: prev,
                    b: v,
                    piece: pi,
                });
                prev = v;
            }
            cons.push(Constraint {
                a: prev,
                b,
                piece: pi,
            });
        }
        // Four frame vertices around the section make the convex hull. Without them the hull runs
        // along the outline, and a snapped crossing point that sits off its segment's line by
        // round-off lies just inside a hull edge: refinement then splits that hull edge without end.
        {
            let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
            for p in &verts {
                lo = [lo[0].min(p.x), lo[1].min(p.y)];
                hi = [hi[0].max(p.x), hi[1].max(p.y)];
            }
            let m = 0.02 * ((hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2)).sqrt();
            for (x, y) in [
                (lo[0] - m, lo[1] - m),
                (hi[0] + m, lo[1] - m),
                (hi[0] + m, hi[1] + m),
                (lo[0] - m, hi[1] + m),
            ] {
                verts.push(Point2::new(x, y));
            }
        }
        let edges: Vec<[usize; 2]> = cons.iter().map(|c| [c.a, c.b]).collect();
        let mut conflicts = Vec::new();
        let cdt = Cdt::try_bulk_load_cdt(verts.clone(), edges, |e| conflicts.push(e))
            .map_err(|e| Error::run(format!("triangulation failed: {e:?}")))?;
        if !conflicts.is_empty() || cdt.num_vertices() != verts.len() {
            return Err(Error::run(format!(
                "internal: {} constraint conflicts while triangulating the segment set",
                conflicts.len()
            )));
        }
        for (k, v) in cdt.vertices().enumerate() {
            if v.position() != verts[k] {
                return Err(Error::run(
                    "internal: triangulation reordered the input vertices",
                ));
            }
        }
        let small = small_input_angles(
            pslg,
            &used_list,
            SMALL_INPUT_ANGLE_FACTOR * section.mesh.min_angle,
        );

        // Area limit of a triangle of a zone.
        let zone_limit: Vec<f64> = pslg
            .zone_material
            .iter()
            .map(|&m| {
                section.materials[m]
                    .max_area
                    .map_or(max_area, |a| a.min(max_area))
            })
            .collect();

        let classified = classify(&cdt, pslg, &cons)?;
        {
            // Estimate the final size from the zones' areas and limits, and the sized boundaries.
            let mut estimate = boundary_estimate;
            for f in cdt.inner_faces() {
                if let Some(z) = classified.face_zone[f.fix().index()] {
                    estimate += estimate_triangles(tri_area(f.positions()), zone_limit[z]);
                }
            }
            if estimate > opts.max_triangles as f64 {
                let area = section_area(section);
                return Err(Error::input(format!(
                    "mesh: max_area = {max_area:e} m² (with the materials' max_area and boundaries' size) would give about {estimate:.0} triangles for a section of {area:.6e} m², above the limit of {}; raise max_area (at least {:.3e} m² if uniform) or pass --max-triangles",
                    opts.max_triangles,
                    estimate_triangles(area, opts.max_triangles as f64)
                )));
            }
        }
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in &verts {
            lo = [lo[0].min(p.x), lo[1].min(p.y)];
            hi = [hi[0].max(p.x), hi[1].max(p.y)];
        }
        let bbox_area = (hi[0] - lo[0]) * (hi[1] - lo[1]);
        // Triangles below this area are left alone by the refinement. Snapped crossing points
        // sit off their segment's line by round-off, which leaves slivers of ~1e-16 relative
        // area outside the section; refining them never ends. A triangle this small inside the
        // section would need a feature below 1e-6 of the section's size; the reported minimum
        // angle would show it.
        let diam = ((hi[0] - lo[0]).powi(2) + (hi[1] - lo[1]).powi(2)).sqrt();
        let min_area = (1e-6 * diam).powi(2);
        Ok(Mesher {
            section,
            pslg,
            opts: *opts,
            cdt,
            cons,
            classified,
            small,
            to_cdt,
            zone_limit,
            n_input: verts.len(),
            bbox_area,
            min_area,
        })
    }

    /// The current triangulation as a [`Mesh`].
    pub fn mesh(&self) -> Result<Mesh> {
        extract(
            self.section,
            self.pslg,
            &self.cdt,
            &self.classified,
            &self.small,
            &self.to_cdt,
        )
    }

    /// Insert `points` (e.g. centroids of triangles an error indicator marks), then refine until
    /// the angle limit, the area limits, the boundary sizes and the size field all hold.
    pub fn refine(&mut self, field: Option<&dyn SizeField>, points: &[[f64; 2]]) -> Result<()> {
        let Mesher {
            section,
            pslg,
            opts,
            cdt,
            cons,
            classified,
            small,
            to_cdt,
            zone_limit,
            n_input,
            bbox_area,
            min_area,
        } = self;
        let (section, pslg, n_input, bbox_area, min_area) =
            (*section, *pslg, *n_input, *bbox_area, *min_area);
        let max_area = section.mesh.max_area;
        let boundary_size = |b: Option<usize>| b.and_then(|id| section.boundaries[id].size);
        // Keep the points that fall inside a triangle of the section (located before any
        // insertion changes the face numbering).
        let inside: Vec<Point2<f64>> = points
            .iter()
            .map(|p| Point2::new(p[0], p[1]))
            .filter(|&q| {
                matches!(cdt.locate(q), PositionInTriangulation::OnFace(g)
                    if classified.face_zone[g.index()].is_some())
            })
            .collect();
        for q in inside {
            cdt.insert(q)
                .map_err(|e| Error::run(format!("triangulation failed: {e:?}")))?;
        }
        let mut pass = 0;
        let mut angle_passes = 0;
        // Triangulation vertices at input angles too small for the angle limit.
        let mut small_cdt = vec![false; n_input];
        for &(v, _, _) in small.iter() {
            small_cdt[to_cdt[v]] = true;
        }
        loop {
            let budget = (3.0 * bbox_area / max_area).min(4.0 * opts.max_triangles as f64) as usize
                + 4 * cdt.num_vertices()
                + 50 * n_input
                + 10_000;
            let params = RefinementParameters::<f64>::new()
                .with_angle_limit(AngleLimit::from_deg(section.mesh.min_angle))
                .with_max_allowed_area(max_area)
                .with_min_required_area(min_area)
                .with_max_additional_vertices(budget);
            let before = cdt.num_vertices();
            let result = cdt.refine(params);
            if !result.refinement_complete {
                return Err(Error::run(format!(
                    "mesh refinement stopped after {} added vertices without meeting min_angle = {}° and max_area = {:e} m²; lower min_angle (e.g. 25), raise max_area, or remove very small input angles{}",
                    cdt.num_vertices() - before,
                    section.mesh.min_angle,
                    max_area,
                    if small.is_empty() {
                        String::new()
                    } else {
                        format!(
                            " ({} vertices have input angles below min_angle)",
                            small.len()
                        )
                    }
                )));
            }
            *classified = classify(cdt, pslg, cons)?;

            // Vertices on sized boundaries: the smallest size there.
            let mut vertex_size = vec![f64::INFINITY; cdt.num_vertices()];
            let any_size = section.boundaries.iter().any(|b| b.size.is_some());
            if any_size {
                for e in cdt.undirected_edges() {
                    let piece = classified.edge_piece[e.fix().index()];
                    if piece == u32::MAX {
                        continue;
                    }
                    let p = &pslg.pieces[piece as usize];
                    if let (Some(_), Some(s)) = (p.ring, boundary_size(p.boundary)) {
                        for v in e.vertices() {
                            let i = v.fix().index();
                            vertex_size[i] = vertex_size[i].min(s);
                        }
                    }
                }
            }
            // Triangles that the size controls still find too large get a point at their
            // centroid; refinement then restores the angle bound around it.
            small_cdt.resize(cdt.num_vertices(), false);
            let mut inserts = Vec::new();
            let mut angle_inserts = Vec::new();
            for f in cdt.inner_faces() {
                let Some(z) = classified.face_zone[f.fix().index()] else {
                    continue;
                };
                let p = f.positions();
                let c = Point2::new(
                    (p[0].x + p[1].x + p[2].x) / 3.0,
                    (p[0].y + p[1].y + p[2].y) / 3.0,
                );
                let mut limit = zone_limit[z];
                if let Some(field) = field {
                    limit = limit.min(field.max_area_at([c.x, c.y]));
                }
                let mut split = tri_area(p) > limit * (1.0 + 1e-12);
                if !split && any_size {
                    let s = f
                        .vertices()
                        .iter()
                        .map(|v| vertex_size[v.fix().index()])
                        .fold(f64::INFINITY, f64::min);
                    split = s.is_finite() && longest_edge(p) > BOUNDARY_SIZE_FACTOR * s;
                }
                if split {
                    inserts.push(c);
                    continue;
                }
                // spade skips a skinny triangle whose shortest edge joins points on two
                // segments from one input vertex, whatever the angle there; away from input
                // angles that are truly small, put the triangle's circumcentre in and refine
                // again (a few passes at most).
                if angle_passes < MAX_ANGLE_PASSES
                    && min_angle_of([[p[0].x, p[0].y], [p[1].x, p[1].y], [p[2].x, p[2].y]])
                        < section.mesh.min_angle * (1.0 - 1e-9)
                    && !f.vertices().iter().any(|v| small_cdt[v.fix().index()])
                {
                    let cc = f.circumcenter();
                    if let PositionInTriangulation::OnFace(g) = cdt.locate(cc)
                        && classified.face_zone[g.index()].is_some()
                        && !encroaches_nearby_constraint(cdt, g, cc)
                    {
                        angle_inserts.push(cc);
                    }
                }
            }
            if inserts.is_empty() && angle_inserts.is_empty() {
                break;
            }
            if inserts.is_empty() {
                angle_passes += 1;
            }
            inserts.append(&mut angle_inserts);
            pass += 1;
            if pass > MAX_SIZE_PASSES {
                return Err(Error::run(format!(
                    "local size control did not settle after {MAX_SIZE_PASSES} passes ({} triangles still too large); check the materials' max_area and boundaries' size",
                    inserts.len()
                )));
            }
            if cdt.num_vertices() + inserts.len() > 2 * opts.max_triangles + n_input {
                return Err(Error::input(format!(
                    "mesh: the size controls ask for more than the limit of {} triangles; raise the sizes or pass --max-triangles",
                    opts.max_triangles
                )));
            }
            for c in inserts {
                cdt.insert(c)
                    .map_err(|e| Error::run(format!("triangulation failed: {e:?}")))?;
            }
        }
        Ok(())
    }
}

/// Turn the classified triangulation into a [`Mesh`].
fn extract(
    section: &Section,
    pslg: &Pslg,
    cdt: &Cdt,
    cl: &Classified,
    small: &[(usize, f64, f64)],
    to_cdt: &[usize],
) -> Result<Mesh> {
    let face_zone =
        |f: FaceHandle<InnerTag, Point2<f64>, (), CdtEdge<()>, ()>| cl.face_zone[f.fix().index()];
    let mut node_of = vec![usize::MAX; cdt.num_vertices()];
    let mut kept_faces = Vec::new();
    for f in cdt.inner_faces() {
        if face_zone(f).is_some() {
            kept_faces.push(f);
            for v in f.vertices() {
                node_of[v.fix().index()] = 0;
            }
        }
    }
    if kept_faces.is_empty() {
        return Err(Error::input("mesh: the section has no area"));
    }
    let mut nodes = Vec::new();
    for v in cdt.vertices() {
        let i = v.fix().index();
        if node_of[i] == 0 {
            node_of[i] = nodes.len();
            let p = v.position();
            nodes.push([p.x, p.y]);
        }
    }
    let mut tri_index = vec![usize::MAX; cdt.num_all_faces()];
    let mut triangles = Vec::with_capacity(kept_faces.len());
    let mut material = Vec::with_capacity(kept_faces.len());
    for (t, f) in kept_faces.iter().enumerate() {
        tri_index[f.fix().index()] = t;
        let vs = f.vertices();
        triangles.push([
            node_of[vs[0].fix().index()],
            node_of[vs[1].fix().index()],
            node_of[vs[2].fix().index()],
        ]);
        let zone = face_zone(*f).ok_or_else(|| Error::run("internal: kept face without zone"))?;
        material.push(pslg.zone_material[zone]);
    }
    // Boundary edges: edges of kept faces whose other side is not kept.
    let mut boundary_edges = Vec::new();
    for f in &kept_faces {
        for e in f.adjacent_edges() {
            let other_kept = e
                .rev()
                .face()
                .as_inner()
                .map(|n| face_zone(n).is_some())
                .unwrap_or(false);
            if other_kept {
                continue;
            }
            let piece = cl.edge_piece[e.as_undirected().fix().index()];
            if piece == u32::MAX {
                return Err(Error::run(
                    "internal: section boundary edge is not a constraint",
                ));
            }
            let p = &pslg.pieces[piece as usize];
            let ring = p
                .ring
                .ok_or_else(|| Error::run("internal: boundary edge on an interface"))?;
            boundary_edges.push(BoundaryEdge {
                nodes: [
                    node_of[e.from().fix().index()],
                    node_of[e.to().fix().index()],
                ],
                boundary: p.boundary,
                triangle: tri_index[f.fix().index()],
                ring,
            });
        }
    }

    // Quality statistics. Next to a small input angle θ, Delaunay refinement leaves skinny
    // triangles in the wedge out to where its opening reaches the mesh size: triangles touching
    // the vertex or with their centroid within R = min(2ℓ/θ, shorter side) of it are "next to"
    // it (ℓ: edge of an equilateral triangle of area max_area).
    let ell = (4.0 * section.mesh.max_area / 3f64.sqrt()).sqrt();
    let exclusion: Vec<([f64; 2], f64)> = small
        .iter()
        .map(|&(v, angle, side)| (pslg.vertices[v], (2.0 * ell / angle.to_radians()).min(side)))
        .collect();
    let mut small_nodes = vec![false; nodes.len()];
    for &(pv, _, _) in small {
        let n = node_of[to_cdt[pv]];
        if n != usize::MAX {
            small_nodes[n] = true;
        }
    }
    let mut stats = MeshStats {
        nodes: nodes.len(),
        triangles: triangles.len(),
        boundary_edges: boundary_edges.len(),
        min_angle_deg: f64::INFINITY,
        min_angle_away_from_small_input_angles_deg: f64::INFINITY,
        max_area: 0.0,
        min_area: f64::INFINITY,
        worst_triangle: 0,
        worst_triangle_centroid: [0.0; 2],
        small_input_angles: small
            .iter()
            .map(|&(v, a, side)| SmallInputAngle {
                at: pslg.vertices[v],
                angle_deg: a,
                radius: (2.0 * ell / a.to_radians()).min(side),
            })
            .collect(),
        area: 0.0,
    };
    for (t, tri) in triangles.iter().enumerate() {
        let p = [nodes[tri[0]], nodes[tri[1]], nodes[tri[2]]];
        let a = crate::geom::triangle_area(p[0], p[1], p[2]);
        stats.area += a;
        stats.max_area = stats.max_area.max(a);
        stats.min_area = stats.min_area.min(a);
        let m = min_angle_of(p);
        if m < stats.min_angle_deg {
            stats.min_angle_deg = m;
            stats.worst_triangle = t;
            stats.worst_triangle_centroid = [
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ];
        }
        let c = [
            (p[0][0] + p[1][0] + p[2][0]) / 3.0,
            (p[0][1] + p[1][1] + p[2][1]) / 3.0,
        ];
        let near = exclusion
            .iter()
            .any(|(q, r)| (c[0] - q[0]).powi(2) + (c[1] - q[1]).powi(2) <= r * r);
        if !near && !tri.iter().any(|&n| small_nodes[n]) {
            stats.min_angle_away_from_small_input_angles_deg =
                stats.min_angle_away_from_small_input_angles_deg.min(m);
        }
    }
    Ok(Mesh {
        nodes,
        triangles,
        material,
        boundary_edges,
        stats,
    })
}
