//! The echoed model: a [`Section`] written back as a [`ModelFile`] with its resolved values
//! (defaults filled in, circle segment counts, rings cleaned up and counter-clockwise), in the
//! model file's own key names, so that the echo reads back as a model file.

use super::{
    Boundary, BoundaryFile, BoundaryKind, CircleFile, LineFile, MaterialFile, MeshFile, ModelFile,
    ProbeFile, Ring, RingFile, Section,
};

impl Section {
    /// The model as resolved with its defaults, for the `model` object of summary.json: a
    /// [`ModelFile`] (see [`Section::resolved_model`]) as JSON.
    pub fn resolved_json(&self) -> serde_json::Value {
        // A ModelFile holds only strings, numbers, arrays and maps: it always serialises.
        serde_json::to_value(self.resolved_model()).unwrap_or(serde_json::Value::Null)
    }

    /// The section as a model file with every resolved value written out: title, max_area and
    /// min_angle, heat sources, circle segment counts, and rings as validated (repeated points
    /// dropped, counter-clockwise, one boundary name per segment). Rings read from a
    /// `[geojson]` or `[drawing]` file are written out as points, with the table kept as a
    /// record of where they came from (remove it to read the echo back as a model).
    pub fn resolved_model(&self) -> ModelFile {
        let (environments, psi) = super::environments::environment_files(self);
        ModelFile {
            title: Some(self.title.clone()),
            length_unit: None,
            mesh: MeshFile {
                max_area: Some(self.mesh.max_area),
                min_angle: Some(self.mesh.min_angle),
            },
            materials: self
                .materials
                .iter()
                .map(|m| {
                    let (conductivity, orientation) = self.conductivity_file(m.id);
                    let file = MaterialFile {
                        conductivity,
                        orientation,
                        heat_source: Some(match m.source_field {
                            Some(l) => super::FieldFile::Linear(l),
                            None => m.heat_source.into(),
                        }),
                        max_area: m.max_area,
                    };
                    (m.name.clone(), file)
                })
                .collect(),
            outline: Some(self.ring_file(&self.outline, Some(self.outline_material))),
            regions: self
                .regions
                .iter()
                .map(|r| self.ring_file(&r.ring, Some(r.material)))
                .collect(),
            holes: self.holes.iter().map(|h| self.ring_file(h, None)).collect(),
            boundaries: self
                .boundaries
                .iter()
                .enumerate()
                .map(|(id, b)| (b.name.clone(), boundary_file(b, self.radiation(id))))
                .collect(),
            probes: self
                .probes
                .iter()
                .map(|p| ProbeFile {
                    name: p.name.clone(),
                    at: p.at,
                })
                .collect(),
            lines: self
                .lines
                .iter()
                .map(|l| LineFile {
                    name: l.name.clone(),
                    from: l.from,
                    to: l.to,
                    samples: l.samples,
                })
                .collect(),
            point_sources: super::point_sources::point_source_files(&self.point_sources),
            cases: super::cases::case_files(self),
            cuts: super::cuts::cut_files(&self.cuts),
            contacts: super::contacts::contact_files(&self.contacts, &self.materials),
            environments,
            psi,
            geojson: self.geojson.clone(),
            drawing: self.drawing.clone(),
            imported: None,
        }
    }

    /// One ring as written: a circle with its segment count and one boundary name, or the
    /// points with one name per segment (none when every segment is unnamed).
    fn ring_file(&self, ring: &Ring, material: Option<usize>) -> RingFile {
        let name =
            |b: &Option<usize>| b.map_or(String::new(), |id| self.boundaries[id].name.clone());
        let named = ring.edge_boundary.iter().any(Option::is_some);
        let mut file = RingFile {
            material: material.map(|m| self.materials[m].name.clone()),
            ..RingFile::default()
        };
        match ring.circle {
            Some(c) => {
                file.circle = Some(CircleFile {
                    center: c.center,
                    radius: c.radius,
                    segments: Some(c.segments),
                });
                file.boundary = ring.edge_boundary.first().filter(|_| named).map(name);
            }
            None if ring.arcs.is_empty() => {
                file.points = Some(super::PointEntry::list(&ring.points));
                file.edges = named.then(|| ring.edge_boundary.iter().map(name).collect());
            }
            None => {
                let (points, names) = arc_entries(ring);
                file.points = Some(points);
                file.edges = named.then(|| names.iter().map(name).collect());
            }
        }
        file
    }
}

/// The `points` entries of a ring with arcs, each arc written back as one entry with its
/// centre, end, sense and chord count (so that it is one segment again), and the boundary id of
/// each written segment. The entries start at a segment boundary and end with a closing point
/// (the first repeated), so there is one name per segment.
fn arc_entries(ring: &Ring) -> (Vec<super::PointEntry>, Vec<Option<usize>>) {
    use super::{ArcFile, PointEntry};
    let n = ring.len();
    let w = &ring.written_segment;
    let first = (0..n).find(|&i| w[i] != w[(i + n - 1) % n]).unwrap_or(0);
    let mut entries = Vec::new();
    let mut names = Vec::new();
    let mut i = 0;
    while i < n {
        let at = (first + i) % n;
        let mut run = 1;
        while i + run < n && w[(first + i + run) % n] == w[at] {
            run += 1;
        }
        if i == 0 {
            entries.push(PointEntry::Point(ring.points[at]));
        }
        names.push(ring.edge_boundary[at]);
        let end = ring.points[(first + i + run) % n];
        match ring.arcs.iter().find(|a| a.written_segment == w[at]) {
            Some(a) => {
                let (p, q, c) = (ring.points[at], ring.points[(at + 1) % n], a.center);
                let turn = (p[0] - c[0]) * (q[1] - c[1]) - (p[1] - c[1]) * (q[0] - c[0]);
                entries.push(PointEntry::Arc {
                    arc: ArcFile {
                        center: c,
                        to: end,
                        direction: if turn >= 0.0 { "ccw" } else { "cw" }.to_string(),
                        segments: Some(run),
                    },
                });
            }
            None => entries.push(PointEntry::Point(end)),
        }
        i += run;
    }
    (entries, names)
}

/// One boundary as written: its kind's name and values, its radiation, and its size.
fn boundary_file(b: &Boundary, radiation: Option<super::Radiation>) -> BoundaryFile {
    let mut file = BoundaryFile {
        kind: b.kind.name().to_string(),
        size: b.size,
        ..BoundaryFile::default()
    };
    match b.kind {
        BoundaryKind::Fixed { temperature } => {
            file.temperature = Some(b.field.as_ref().map_or(temperature.into(), |f| f.file()));
        }
        BoundaryKind::Insulated => {}
        BoundaryKind::Flux { flux } => file.flux = Some(flux),
        BoundaryKind::Convection { h, ambient } => {
            match b.resistance {
                Some(r) => file.resistance = Some(r),
                None => file.h = Some(h),
            }
            file.ambient = Some(b.field.as_ref().map_or(ambient.into(), |f| f.file()));
        }
        BoundaryKind::Radiation { .. } => {}
    }
    if let Some(r) = radiation {
        file.emissivity = Some(r.emissivity);
        file.surroundings = Some(r.surroundings);
    }
    file
}
