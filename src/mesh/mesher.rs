//! The mesher: spade's constrained Delaunay triangulation of the PSLG (boundary pieces with a
//! `size` split in advance, a frame around the section), the size estimates that refuse
//! oversized meshes early, and the refinement loop (spade's Ruppert-style refinement, then
//! centroids where the size controls still find triangles too large, circumcentres where the
//! angle limit is still missed).

use super::classify::{Classified, NO_PIECE, Screen, classify};
use super::quality::{SmallAngle, centroid, longest_edge, small_input_angles};
use super::{
    BOUNDARY_SIZE_FACTOR, Cdt, Constraint, MAX_ANGLE_PASSES, MAX_SIZE_PASSES, Mesh, MeshOptions,
    MeshTimings, SMALL_INPUT_ANGLE_FACTOR, SizeField, estimate_triangles, extract::extract,
    section_area,
};
use crate::error::{Error, Result};
use crate::geom::{self, Point};
use crate::geometry::Pslg;
use crate::model::Section;
use spade::CdtEdge;
use spade::handles::{FaceHandle, FixedFaceHandle, InnerTag};
use spade::{AngleLimit, Point2, PositionInTriangulation, RefinementParameters, Triangulation};
use std::time::Instant;

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
    small: Vec<SmallAngle>,
    to_cdt: Vec<usize>,
    zone_limit: Vec<f64>,
    n_input: usize,
    bbox_area: f64,
    min_area: f64,
    estimate: f64,
    timings: MeshTimings,
    parity_zones: bool,
}

type Face<'a> = FaceHandle<'a, InnerTag, Point2<f64>, (), CdtEdge<()>, ()>;

/// Margin between the section's box and the frame, in edges of a triangle of `max_area`.
const FRAME_MARGIN_EDGES: f64 = 2.0;

/// Seconds since `t`, added to `acc`; restarts `t`.
pub(super) fn lap(t: &mut Instant, acc: &mut f64) {
    let now = Instant::now();
    *acc += (now - *t).as_secs_f64();
    *t = now;
}

/// Points in Morton order (ties by their position in `pts`): each insertion starts its walk
/// next to the previous one.
fn in_morton_order(pts: Vec<Point2<f64>>) -> Vec<Point2<f64>> {
    let as_points: Vec<Point> = pts.iter().map(|&p| to_point(p)).collect();
    super::spatial::morton_order(&as_points)
        .into_iter()
        .map(|i| pts[i])
        .collect()
}

fn to_point(p: Point2<f64>) -> Point {
    [p.x, p.y]
}

fn positions(p: [Point2<f64>; 3]) -> [Point; 3] {
    [to_point(p[0]), to_point(p[1]), to_point(p[2])]
}

fn insert(cdt: &mut Cdt, p: Point2<f64>) -> Result<()> {
    cdt.insert(p)
        .map(|_| ())
        .map_err(|e| Error::run(format!("triangulation failed: {e:?}")))
}

/// The `size` of a boundary piece's boundary, if it has one.
fn piece_size(section: &Section, pslg: &Pslg, piece: usize) -> Option<f64> {
    let p = &pslg.pieces[piece];
    p.ring?;
    p.boundary.and_then(|id| section.boundaries[id].size)
}

/// The PSLG vertices that end a piece, and each vertex's triangulation index.
fn used_vertices(pslg: &Pslg) -> (Vec<usize>, Vec<usize>) {
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
    (used_list, to_cdt)
}

/// Triangles the ring points and the sized boundaries alone ask for
/// ([`super::estimate_point_triangles`] per input point, 4 per `size` of length); refused above
/// the limit before splitting the pieces (a tiny size would otherwise allocate millions of
/// vertices first).
fn boundary_estimate(section: &Section, pslg: &Pslg, opts: &MeshOptions) -> Result<f64> {
    let sized: f64 = (0..pslg.pieces.len())
        .filter_map(|i| {
            let s = piece_size(section, pslg, i)?;
            let p = &pslg.pieces[i];
            Some(4.0 * geom::distance(pslg.vertices[p.v[0]], pslg.vertices[p.v[1]]) / s)
        })
        .sum();
    let points = pslg.vertices.len() + pslg.points.len();
    let estimate = sized + super::estimate_point_triangles(points);
    if estimate > opts.max_triangles as f64 {
        return Err(Error::input(format!(
            "mesh: the rings' {points} points and the boundaries' size would give about {estimate:.0} triangles along the boundaries alone, above the limit of {} (--max-triangles); use fewer ring points, raise the boundaries' size or pass --max-triangles",
            opts.max_triangles
        )));
    }
    Ok(estimate)
}

/// One constraint per piece; boundary pieces with a `size` split into equal parts no longer
/// than the size (the new vertices appended to `verts`).
fn constraints(
    section: &Section,
    pslg: &Pslg,
    to_cdt: &[usize],
    verts: &mut Vec<Point2<f64>>,
) -> Vec<Constraint> {
    let mut cons = Vec::with_capacity(pslg.pieces.len());
    for (pi, p) in pslg.pieces.iter().enumerate() {
        let (a, b) = (to_cdt[p.v[0]], to_cdt[p.v[1]]);
        let (pa, pb) = (verts[a], verts[b]);
        let len = geom::distance(to_point(pa), to_point(pb));
        let parts = match piece_size(section, pslg, pi) {
            Some(s) => ((len / s).ceil() as usize).clamp(1, 10_000_000),
            None => 1,
        };
        let mut prev = a;
        for k in 1..parts {
            let q = geom::lerp(to_point(pa), to_point(pb), k as f64 / parts as f64);
            verts.push(Point2::new(q[0], q[1]));
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
    cons
}

/// Four frame vertices around the section make the convex hull. Without them the hull runs
/// along the outline, and a snapped crossing point that sits off its segment's line by
/// round-off lies just inside a hull edge: refinement then splits that hull edge without end.
/// The frame keeps a margin of [`FRAME_MARGIN_EDGES`] edges of an equilateral triangle of area
/// `max_area` (at most 2 %, at least 0.1 % of the box's diagonal): refinement fills the strip
/// between frame and section too, so a wide strip costs triangles that are thrown away (with
/// 2 % of the diagonal, some 14 % more vertices on a 2:1 box at 10⁶ triangles), and a strip
/// much narrower than the mesh size fills with triangles of its width.
fn add_frame(verts: &mut Vec<Point2<f64>>, max_area: f64) {
    let [x0, y0, x1, y1] = geom::bbox(verts.iter().map(|p| to_point(*p)));
    let diag = geom::distance([x0, y0], [x1, y1]);
    let edge = (4.0 * max_area / 3f64.sqrt()).sqrt();
    let m = (FRAME_MARGIN_EDGES * edge).clamp(1e-3 * diag, 0.02 * diag);
    for (x, y) in [
        (x0 - m, y0 - m),
        (x1 + m, y0 - m),
        (x1 + m, y1 + m),
        (x0 - m, y1 + m),
    ] {
        verts.push(Point2::new(x, y));
    }
}

/// True when every piece has the section on exactly one side. Then the faces outside the
/// section (in holes, between the outline and the frame) are exactly those that spade's
/// `exclude_outer_faces` finds by parity (an even number of constraint crossings from the
/// hull), and refinement may leave them alone. With regions, an interface between two
/// materials has the section on both sides and parity would call a region outside; such
/// sections refine everything (the zones always come from our own flood fill).
fn parity_zones(pslg: &Pslg) -> bool {
    pslg.pieces
        .iter()
        .all(|p| p.left.is_some() != p.right.is_some())
}

/// Bulk-loads the constrained triangulation, checking that no constraint conflicts and that
/// the vertices keep their order.
fn triangulate(verts: &[Point2<f64>], cons: &[Constraint]) -> Result<Cdt> {
    let edges: Vec<[usize; 2]> = cons.iter().map(|c| [c.a, c.b]).collect();
    let mut conflicts = Vec::new();
    let cdt = Cdt::try_bulk_load_cdt(verts.to_vec(), edges, |e| conflicts.push(e))
        .map_err(|e| Error::run(format!("triangulation failed: {e:?}")))?;
    if !conflicts.is_empty() || cdt.num_vertices() != verts.len() {
        return Err(Error::run(format!(
            "internal: {} constraint conflicts while triangulating the segment set",
            conflicts.len()
        )));
    }
    if cdt.vertices().zip(verts).any(|(v, p)| v.position() != *p) {
        return Err(Error::run(
            "internal: triangulation reordered the input vertices",
        ));
    }
    Ok(cdt)
}

/// Area limit of a triangle of each zone: the global `max_area`, lowered by the material's.
fn zone_limits(section: &Section, pslg: &Pslg) -> Vec<f64> {
    let max_area = section.mesh.max_area;
    pslg.zone_material
        .iter()
        .map(|&m| {
            section.materials[m]
                .max_area
                .map_or(max_area, |a| a.min(max_area))
        })
        .collect()
}

/// Estimates the final size from the zones' areas and limits and the sized boundaries;
/// refuses a mesh above the limit, else returns the estimate.
fn check_size_estimate(
    section: &Section,
    cdt: &Cdt,
    classified: &Classified,
    zone_limit: &[f64],
    boundary: f64,
    opts: &MeshOptions,
) -> Result<f64> {
    let mut estimate = boundary;
    for f in cdt.inner_faces() {
        if let Some(z) = classified.zone(f.fix().index()) {
            let p = positions(f.positions());
            estimate += estimate_triangles(geom::triangle_area(p[0], p[1], p[2]), zone_limit[z]);
        }
    }
    if estimate > opts.max_triangles as f64 {
        let area = section_area(section);
        return Err(Error::input(format!(
            "mesh: max_area = {:e} m² (with the materials' max_area and boundaries' size) would give about {estimate:.0} triangles for a section of {area:.6e} m², above the limit of {}; raise max_area (at least {:.3e} m² if uniform) or pass --max-triangles",
            section.mesh.max_area,
            opts.max_triangles,
            estimate_triangles(area, opts.max_triangles as f64)
        )));
    }
    Ok(estimate)
}

/// True when `p` lies in the diametral circle of a constraint edge of face `g` or of a face next
/// to it (Ruppert's rule: such a point would make a sliver against the segment).
fn encroaches_nearby_constraint(cdt: &Cdt, g: FixedFaceHandle<InnerTag>, p: Point2<f64>) -> bool {
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

/// Points to insert after a refinement pass: centroids of triangles still too large, and
/// circumcentres of triangles still below the angle limit.
struct Inserts {
    size: Vec<Point2<f64>>,
    angle: Vec<Point2<f64>>,
}

impl<'a> Mesher<'a> {
    /// Triangulate the segment set (no refinement yet) and check the size estimate.
    pub fn new(section: &'a Section, pslg: &'a Pslg, opts: &MeshOptions) -> Result<Self> {
        let mut timings = MeshTimings::default();
        let mut t = Instant::now();
        let (used_list, to_cdt) = used_vertices(pslg);
        let mut verts: Vec<Point2<f64>> = used_list
            .iter()
            .map(|&i| Point2::new(pslg.vertices[i][0], pslg.vertices[i][1]))
            .collect();
        let boundary = boundary_estimate(section, pslg, opts)?;
        let cons = constraints(section, pslg, &to_cdt, &mut verts);
        // Free vertices (point sources): spade keeps every vertex where it was inserted, so a
        // mesh node lies exactly at each.
        verts.extend(pslg.points.iter().map(|p| Point2::new(p[0], p[1])));
        add_frame(&mut verts, section.mesh.max_area);
        let cdt = triangulate(&verts, &cons)?;
        lap(&mut t, &mut timings.cdt_s);
        let small = small_input_angles(
            pslg,
            &used_list,
            SMALL_INPUT_ANGLE_FACTOR * section.mesh.min_angle,
        );
        let zone_limit = zone_limits(section, pslg);
        let classified = classify(&cdt, pslg, &cons, None)?;
        lap(&mut t, &mut timings.classify_s);
        let estimate =
            check_size_estimate(section, &cdt, &classified, &zone_limit, boundary, opts)?;
        lap(&mut t, &mut timings.scan_s);
        let [x0, y0, x1, y1] = geom::bbox(verts.iter().map(|p| to_point(*p)));
        // Triangles below `min_area` are left alone by the refinement. Snapped crossing points
        // sit off their segment's line by round-off, which leaves slivers of ~1e-16 relative
        // area outside the section; refining them never ends. A triangle this small inside the
        // section would need a feature below 1e-6 of the section's size; the reported minimum
        // angle would show it.
        let diam = geom::distance([x0, y0], [x1, y1]);
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
            bbox_area: (x1 - x0) * (y1 - y0),
            min_area: (1e-6 * diam).powi(2),
            estimate,
            timings,
            parity_zones: parity_zones(pslg),
        })
    }

    /// The triangle count the size limits ask for, as checked against `--max-triangles`:
    /// zones' areas over their area limits, the ring points' share and the sized boundaries.
    pub fn estimated_triangles(&self) -> f64 {
        self.estimate
    }

    /// Vertices of the triangulation, frame and points outside the section included (what
    /// spade's refinement made, against the nodes a [`Mesh`] keeps).
    pub fn triangulation_vertices(&self) -> usize {
        self.cdt.num_vertices()
    }

    /// The current triangulation as a [`Mesh`].
    pub fn mesh(&self) -> Result<Mesh> {
        Ok(self.mesh_timed()?.0)
    }

    /// The current triangulation as a [`Mesh`], with the time spent in each pass so far
    /// (triangulation, refinement and this extraction).
    pub fn mesh_timed(&self) -> Result<(Mesh, MeshTimings)> {
        let mut timings = self.timings;
        let mesh = extract(
            self.section,
            self.pslg,
            &self.cdt,
            &self.classified,
            &self.small,
            &self.to_cdt,
            &mut timings,
        )?;
        Ok((mesh, timings))
    }

    /// Insert `points` (e.g. centroids of triangles an error indicator marks), then refine until
    /// the angle limit, the area limits, the boundary sizes and the size field all hold.
    pub fn refine(&mut self, field: Option<&dyn SizeField>, points: &[Point]) -> Result<()> {
        let mut t = Instant::now();
        self.insert_inside(points)?;
        lap(&mut t, &mut self.timings.insert_s);
        let mut pass = 0;
        let mut angle_passes = 0;
        // Triangulation vertices at input angles too small for the angle limit.
        let mut small_cdt = vec![false; self.n_input];
        for &(v, _, _) in &self.small {
            small_cdt[self.to_cdt[v]] = true;
        }
        loop {
            self.refine_pass()?;
            lap(&mut t, &mut self.timings.refine_s);
            // Without a size field or boundary sizes, the flood fill itself screens the faces
            // for the area and angle limits; `inserts` then looks at the flagged ones only.
            let screened = field.is_none() && !self.any_boundary_size();
            let screen = Screen {
                zone_limit: &self.zone_limit,
                sin2_limit: self.sin2_limit(),
            };
            self.classified = classify(
                &self.cdt,
                self.pslg,
                &self.cons,
                screened.then_some(&screen),
            )?;
            lap(&mut t, &mut self.timings.classify_s);
            small_cdt.resize(self.cdt.num_vertices(), false);
            let mut ins = self.inserts(field, &small_cdt, angle_passes < MAX_ANGLE_PASSES);
            lap(&mut t, &mut self.timings.scan_s);
            if ins.size.is_empty() && ins.angle.is_empty() {
                break;
            }
            if ins.size.is_empty() {
                angle_passes += 1;
            }
            ins.size.append(&mut ins.angle);
            pass += 1;
            self.check_inserts(pass, ins.size.len())?;
            for c in in_morton_order(ins.size) {
                insert(&mut self.cdt, c)?;
            }
            lap(&mut t, &mut self.timings.insert_s);
        }
        Ok(())
    }

    /// Inserts the points that fall inside a triangle of the section (located before any
    /// insertion changes the face numbering). Points are located and inserted in Morton order:
    /// spade starts each walk at the vertex it found last, so consecutive points close
    /// together keep every walk short (in the order the points come in, e.g. by error
    /// indicator, each walk crosses the mesh and the insertion of 10⁵ points takes minutes).
    fn insert_inside(&mut self, points: &[Point]) -> Result<()> {
        let ordered = in_morton_order(points.iter().map(|p| Point2::new(p[0], p[1])).collect());
        let inside: Vec<Point2<f64>> = ordered
            .into_iter()
            .filter(|&q| {
                matches!(self.cdt.locate(q), PositionInTriangulation::OnFace(g)
                    if self.classified.kept(g.index()))
            })
            .collect();
        for q in inside {
            insert(&mut self.cdt, q)?;
        }
        Ok(())
    }

    /// One run of spade's refinement to the angle and global area limits, within a vertex
    /// budget.
    fn refine_pass(&mut self) -> Result<()> {
        let (section, cdt) = (self.section, &mut self.cdt);
        let max_area = section.mesh.max_area;
        let budget = (3.0 * self.bbox_area / max_area).min(4.0 * self.opts.max_triangles as f64)
            as usize
            + 4 * cdt.num_vertices()
            + 50 * self.n_input
            + 10_000;
        let params = RefinementParameters::<f64>::new()
            .with_angle_limit(AngleLimit::from_deg(section.mesh.min_angle))
            .with_max_allowed_area(max_area)
            .with_min_required_area(self.min_area)
            .with_max_additional_vertices(budget)
            .exclude_outer_faces(self.parity_zones);
        let before = cdt.num_vertices();
        let result = cdt.refine(params);
        if result.refinement_complete {
            return Ok(());
        }
        Err(Error::run(format!(
            "mesh refinement stopped after {} added vertices without meeting min_angle = {}° and max_area = {:e} m²; {}",
            cdt.num_vertices() - before,
            section.mesh.min_angle,
            max_area,
            self.refinement_advice()
        )))
    }

    /// What to change when refinement does not complete: thin features first (they defeat any
    /// angle limit), small input angles only where there are some.
    fn refinement_advice(&self) -> String {
        let mut advice = Vec::new();
        if let Some(f) = self.pslg.thin_features.first() {
            advice.push(format!(
                "widen or remove the features thinner than the resolution ({} in all; the thinnest is {:.3e} m thick at {})",
                self.pslg.thin_features.len(),
                f.thickness,
                geom::format_point(f.at)
            ));
        }
        if !self.small.is_empty() {
            advice.push(format!(
                "remove very small input angles ({} vertices have input angles below 2 × min_angle)",
                self.small.len()
            ));
        }
        advice.push("lower min_angle (e.g. 25) or raise max_area".into());
        advice.join("; ")
    }

    /// True when some boundary has a `size`.
    fn any_boundary_size(&self) -> bool {
        self.section.boundaries.iter().any(|b| b.size.is_some())
    }

    /// sin² of the angle limit (a hair below, so triangles right at the limit pass).
    fn sin2_limit(&self) -> f64 {
        let min_angle = self.section.mesh.min_angle;
        (min_angle * (1.0 - 1e-9)).to_radians().sin().powi(2)
    }

    /// The smallest `size` of the sized boundaries through each triangulation vertex
    /// (infinite elsewhere); `None` when no boundary has a size.
    fn vertex_sizes(&self) -> Option<Vec<f64>> {
        let section = self.section;
        if !self.any_boundary_size() {
            return None;
        }
        let mut vertex_size = vec![f64::INFINITY; self.cdt.num_vertices()];
        for e in self.cdt.undirected_edges() {
            let piece = self.classified.edge_piece[e.fix().index()];
            if piece == NO_PIECE {
                continue;
            }
            if let Some(s) = piece_size(section, self.pslg, piece as usize) {
                for v in e.vertices() {
                    let i = v.fix().index();
                    vertex_size[i] = vertex_size[i].min(s);
                }
            }
        }
        Some(vertex_size)
    }

    /// Triangles that the size controls still find too large get a point at their centroid;
    /// refinement then restores the angle bound around it. spade skips a skinny triangle whose
    /// shortest edge joins points on two segments from one input vertex, whatever the angle
    /// there; away from input angles that are truly small, such a triangle gets its
    /// circumcentre (while `angle_pass` allows).
    fn inserts(
        &self,
        field: Option<&dyn SizeField>,
        small_cdt: &[bool],
        angle_pass: bool,
    ) -> Inserts {
        let vertex_size = self.vertex_sizes();
        let mut out = Inserts {
            size: Vec::new(),
            angle: Vec::new(),
        };
        if field.is_none() && vertex_size.is_none() {
            // The classification flagged every face that breaks a limit (in face order).
            for &i in &self.classified.flagged {
                let f = self.cdt.face(i);
                self.judge(f, None, None, small_cdt, angle_pass, &mut out);
            }
        } else {
            for f in self.cdt.inner_faces() {
                self.judge(
                    f,
                    field,
                    vertex_size.as_deref(),
                    small_cdt,
                    angle_pass,
                    &mut out,
                );
            }
        }
        out
    }

    /// One face for [`Self::inserts`]: its centroid when the size controls find it too large,
    /// else its circumcentre when it is below the angle limit (and may be fixed there).
    fn judge(
        &self,
        f: Face,
        field: Option<&dyn SizeField>,
        vertex_size: Option<&[f64]>,
        small_cdt: &[bool],
        angle_pass: bool,
        out: &mut Inserts,
    ) {
        let Some(z) = self.classified.zone(f.fix().index()) else {
            return;
        };
        let p = positions(f.positions());
        let c = centroid(p);
        let mut limit = self.zone_limit[z];
        if let Some(field) = field {
            limit = limit.min(field.max_area_at(c));
        }
        let mut split = geom::triangle_area(p[0], p[1], p[2]) > limit * (1.0 + 1e-12);
        if let (false, Some(vs)) = (split, vertex_size) {
            let s = f
                .vertices()
                .iter()
                .map(|v| vs[v.fix().index()])
                .fold(f64::INFINITY, f64::min);
            split = s.is_finite() && longest_edge(p) > BOUNDARY_SIZE_FACTOR * s;
        }
        if split {
            out.size.push(Point2::new(c[0], c[1]));
            return;
        }
        if angle_pass
            && geom::min_angle_sin2(p) < self.sin2_limit()
            && !f.vertices().iter().any(|v| small_cdt[v.fix().index()])
        {
            let cc = f.circumcenter();
            if let PositionInTriangulation::OnFace(g) = self.cdt.locate(cc)
                && self.classified.kept(g.index())
                && !encroaches_nearby_constraint(&self.cdt, g, cc)
            {
                out.angle.push(cc);
            }
        }
    }

    /// Refuses to go on after too many passes or beyond the triangle limit.
    fn check_inserts(&self, pass: usize, count: usize) -> Result<()> {
        if pass > MAX_SIZE_PASSES {
            return Err(Error::run(format!(
                "local size control did not settle after {MAX_SIZE_PASSES} passes ({count} triangles still too large); check the materials' max_area and boundaries' size"
            )));
        }
        if self.cdt.num_vertices() + count > 2 * self.opts.max_triangles + self.n_input {
            return Err(Error::input(format!(
                "mesh: the size controls ask for more than the limit of {} triangles; raise the sizes or pass --max-triangles",
                self.opts.max_triangles
            )));
        }
        Ok(())
    }
}
