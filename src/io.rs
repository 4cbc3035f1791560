//! Output stage: turns a mesh and its results into files, and writes files safely.
//!
//! This module owns
//! * [`OutputSet`] and [`write_file_atomic`]: all-or-nothing writing of result files (each file
//!   goes to a temporary next to its target, is flushed to disk, and only when every temporary
//!   is complete are they renamed into place);
//! * the VTK XML unstructured-grid writers [`field_vtu`] (solved field) and [`mesh_vtu`] (mesh
//!   and its quality);
//! * the CSV writers [`nodes_csv`], [`probes_csv`], [`line_csv`] and [`boundaries_csv`];
//! * the run summary [`summary_json`].
//!
//! Every writer returns bytes; nothing here touches the disk except [`OutputSet::commit`] and
//! [`write_file_atomic`].
//!
//! # Determinism and number formatting
//!
//! The same inputs give byte-identical files (only the caller-supplied `run` object of the
//! summary is expected to vary). No hash-ordered container is iterated.
//!
//! * CSV numbers use [`format_f64`]: the shortest decimal string that reads back to the same
//!   `f64` (Rust's round-trip formatting), written positionally (`{}`) when
//!   `1e-4 <= |x| < 1e15` and in scientific notation (`{:e}`, e.g. `1.5e-7`) otherwise;
//!   zero (either sign) is written `0`; non-finite values are written `NaN`, `inf`, `-inf`.
//! * JSON numbers are written by `serde_json` (shortest round-trip, e.g. `0.1`, `1e-7`);
//!   a non-finite value becomes `null`.
//! * VTK arrays are stored exactly as little-endian binary (Float64 / Int32 / UInt64), base64
//!   encoded inline, uncompressed, so no decimal conversion happens at all.
//!
//! Node and triangle numbers in every file are 0-based, matching VTK point and cell ids.

use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::model::Section;
use crate::post::{LineResult, Results};
use serde::Serialize;
use serde::ser::SerializeMap;
use serde_json::Value;
use std::collections::BTreeSet;
use std::fs::{self, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use vtkio::model::{
    Attribute, Attributes, ByteOrder, CellType, Cells, DataSet, Piece, UnstructuredGridPiece,
    Version, VertexNumbers, Vtk,
};

// ---------------------------------------------------------------------------------------------
// Atomic file writing
// ---------------------------------------------------------------------------------------------

/// Distinguishes temporaries of concurrent commits within one process.
static COMMIT_COUNTER: AtomicU64 = AtomicU64::new(0);

/// A set of files written together, all or nothing.
///
/// [`add`](OutputSet::add) collects files in memory; [`commit`](OutputSet::commit) writes them
/// into a directory. Only the files in the set are created or replaced; nothing else in the
/// directory is touched.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct OutputSet {
    files: Vec<(String, Vec<u8>)>,
}

impl OutputSet {
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds a file (a plain file name, no directory part). Names are checked by
    /// [`commit`](OutputSet::commit), which refuses the whole set if one is invalid or repeated.
    pub fn add(&mut self, name: impl Into<String>, bytes: Vec<u8>) {
        self.files.push((name.into(), bytes));
    }

    /// File names in the order they were added.
    pub fn names(&self) -> impl Iterator<Item = &str> {
        self.files.iter().map(|(n, _)| n.as_str())
    }

    pub fn len(&self) -> usize {
        self.files.len()
    }

    pub fn is_empty(&self) -> bool {
        self.files.is_empty()
    }

    /// Writes every file into `dir` (created if missing) and returns the paths written, in the
    /// order added.
    ///
    /// Each file is first written to a temporary `.NAME.tmp-<pid>-<n>` in `dir` and flushed to
    /// disk; only when all temporaries are complete are they renamed over their targets. On a
    /// failure before the renames, every temporary is removed and no target is created or
    /// changed. A rename can only fail in between if the file system changes under us (targets
    /// are checked beforehand); the error then says which files were already replaced.
    pub fn commit(&self, dir: impl AsRef<Path>) -> Result<Vec<PathBuf>> {
        let files: Vec<(&str, &[u8])> = self
            .files
            .iter()
            .map(|(n, b)| (n.as_str(), b.as_slice()))
            .collect();
        commit_files(dir.as_ref(), &files)
    }
}

/// Writes one file atomically: a temporary next to `path`, flushed, then renamed over `path`.
/// The parent directory is created if missing. On failure `path` is left as it was.
pub fn write_file_atomic(path: impl AsRef<Path>, bytes: &[u8]) -> Result<()> {
    let path = path.as_ref();
    let name = path.file_name().and_then(|n| n.to_str()).ok_or_else(|| {
        Error::run(format!(
            "cannot write {}: the path does not end in a valid file name",
            path.display()
        ))
    })?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    commit_files(dir, &[(name, bytes)]).map(|_| ())
}

fn check_file_name(dir: &Path, name: &str) -> Result<()> {
    let bad = name.is_empty()
        || name == "."
        || name == ".."
        || name.contains(['/', '\\', '\0'])
        || Path::new(name).file_name().and_then(|n| n.to_str()) != Some(name);
    if bad {
        return Err(Error::run(format!(
            "cannot write {:?} in {}: not a plain file name",
            name,
            dir.display()
        )));
    }
    Ok(())
}

fn remove_all(paths: &[PathBuf]) {
    for p in paths {
        // Best effort: the file was created by us; if it is already gone there is nothing to do.
        let _ = fs::remove_file(p);
    }
}

fn write_temporary(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    // create_new: never follow or clobber something that is already there.
    let mut f = OpenOptions::new().write(true).create_new(true).open(path)?;
    f.write_all(bytes)?;
    f.sync_all()
}

fn commit_files(dir: &Path, files: &[(&str, &[u8])]) -> Result<Vec<PathBuf>> {
    // 1. Check every name before touching the disk.
    let mut seen = BTreeSet::new();
    for (name, _) in files {
        check_file_name(dir, name)?;
        if !seen.insert(*name) {
            return Err(Error::run(format!(
                "cannot write {}: the file is listed twice in one output set",
                dir.join(name).display()
            )));
        }
    }

    // 2. The directory.
    fs::create_dir_all(dir).map_err(|e| {
        Error::run(format!(
            "cannot create output directory {}: {e}",
            dir.display()
        ))
    })?;

    // 3. Targets must be absent or replaceable (not directories).
    let targets: Vec<PathBuf> = files.iter().map(|(n, _)| dir.join(n)).collect();
    for t in &targets {
        if let Ok(meta) = fs::symlink_metadata(t)
            && meta.is_dir()
        {
            return Err(Error::run(format!(
                "cannot write {}: a directory of that name exists",
                t.display()
            )));
        }
    }

    // 4. Temporaries, each flushed to disk.
    let pid = std::process::id();
    let serial = COMMIT_COUNTER.fetch_add(1, Ordering::Relaxed);
    let mut temps: Vec<PathBuf> = Vec::with_capacity(files.len());
    for ((name, bytes), target) in files.iter().zip(&targets) {
        let tmp = dir.join(format!(".{name}.tmp-{pid}-{serial}"));
        if let Err(e) = write_temporary(&tmp, bytes) {
            // Only remove the temporary if we created it (AlreadyExists means someone else's).
            if e.kind() != std::io::ErrorKind::AlreadyExists {
                temps.push(tmp.clone());
            }
            remove_all(&temps);
            return Err(Error::run(format!(
                "cannot write {} (temporary {}): {e}; no output file was changed",
                target.display(),
                tmp.display()
            )));
        }
        temps.push(tmp);
    }

    // 5. Rename into place.
    for (i, (tmp, target)) in temps.iter().zip(&targets).enumerate() {
        if let Err(e) = fs::rename(tmp, target) {
            remove_all(&temps[i..]);
            let done: Vec<String> = targets[..i]
                .iter()
                .map(|t| t.display().to_string())
                .collect();
            let state = if done.is_empty() {
                "no output file was changed".to_string()
            } else {
                format!("already replaced: {}", done.join(", "))
            };
            return Err(Error::run(format!(
                "cannot move {} into place as {}: {e}; {state}",
                tmp.display(),
                target.display()
            )));
        }
    }

    // 6. Make the renames durable. Best effort: not every platform can open a directory.
    if let Ok(d) = fs::File::open(dir) {
        let _ = d.sync_all();
    }
    Ok(targets)
}

// ---------------------------------------------------------------------------------------------
// Number formatting
// ---------------------------------------------------------------------------------------------

/// Formats a float for text output: the shortest decimal that reads back to the same `f64`,
/// positional for `1e-4 <= |x| < 1e15`, scientific (`1.5e-7`, `2e15`) otherwise. Both zeros
/// give `0`; non-finite values give `NaN`, `inf`, `-inf`.
pub fn format_f64(x: f64) -> String {
    if x == 0.0 {
        "0".to_string()
    } else if x.is_finite() && (1e-4..1e15).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

// ---------------------------------------------------------------------------------------------
// Consistency checks (the writers never index out of bounds)
// ---------------------------------------------------------------------------------------------

fn check_mesh(mesh: &Mesh) -> Result<()> {
    let n = mesh.nodes.len();
    if mesh.material.len() != mesh.triangles.len() {
        return Err(Error::run(format!(
            "internal: mesh has {} triangles but {} material ids",
            mesh.triangles.len(),
            mesh.material.len()
        )));
    }
    for (t, tri) in mesh.triangles.iter().enumerate() {
        if let Some(&v) = tri.iter().find(|&&v| v >= n) {
            return Err(Error::run(format!(
                "internal: triangle {t} refers to node {v}, but the mesh has {n} nodes"
            )));
        }
    }
    Ok(())
}

fn check_len(what: &str, got: usize, want: usize, per: &str) -> Result<()> {
    if got != want {
        return Err(Error::run(format!(
            "internal: results hold {got} values of {what}, expected one per {per} ({want})"
        )));
    }
    Ok(())
}

fn check_results(mesh: &Mesh, results: &Results) -> Result<()> {
    let (n, t) = (mesh.nodes.len(), mesh.triangles.len());
    check_len("temperature", results.temperature.len(), n, "node")?;
    check_len("nodal gradient", results.nodal_gradient.len(), n, "node")?;
    check_len("nodal heat flux", results.nodal_flux.len(), n, "node")?;
    check_len(
        "triangle gradient",
        results.cell_gradient.len(),
        t,
        "triangle",
    )?;
    check_len("triangle heat flux", results.cell_flux.len(), t, "triangle")?;
    Ok(())
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
/// Points (x, y, 0) m; triangle cells. Point data: `temperature` (°C), `heat_flux_nodal`
/// (W/m²) and `gradient_nodal` (K/m), vectors with z = 0. Cell data: `heat_flux` (W/m²),
/// `gradient` (K/m), vectors with z = 0, and `material` (Int32 id).
pub fn field_vtu(mesh: &Mesh, results: &Results) -> Result<Vec<u8>> {
    field_vtu_with(mesh, results, &[])
}

/// [`field_vtu`] with further scalar cell arrays (name, one value per triangle), e.g. the
/// `error_indicator` of the error estimate.
pub fn field_vtu_with(
    mesh: &Mesh,
    results: &Results,
    extra_cells: &[(&str, &[f64])],
) -> Result<Vec<u8>> {
    check_mesh(mesh)?;
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
            Attribute::scalars("temperature", 1).with_data(results.temperature.clone()),
            Attribute::vectors("heat_flux_nodal").with_data(vec3(&results.nodal_flux)),
            Attribute::vectors("gradient_nodal").with_data(vec3(&results.nodal_gradient)),
        ],
        cell: vec![
            Attribute::vectors("heat_flux").with_data(vec3(&results.cell_flux)),
            Attribute::vectors("gradient").with_data(vec3(&results.cell_gradient)),
            Attribute::scalars("material", 1).with_data(material_ids(mesh)?),
        ],
    };
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

// ---------------------------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------------------------

/// CSV bytes of a header and rows (`\n` line ends): the one CSV encoder of every output.
pub fn csv_bytes<H, T, R, U>(header: H, rows: impl IntoIterator<Item = R>) -> Result<Vec<u8>>
where
    H: IntoIterator<Item = T>,
    T: AsRef<[u8]>,
    R: IntoIterator<Item = U>,
    U: AsRef<[u8]>,
{
    let fail = |e: &dyn std::fmt::Display| Error::run(format!("cannot encode CSV: {e}"));
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::new());
    w.write_record(header).map_err(|e| fail(&e))?;
    for row in rows {
        w.write_record(row).map_err(|e| fail(&e))?;
    }
    w.into_inner().map_err(|e| fail(&e.error()))
}

/// `node,x_m,y_m,temperature_c` — one row per node, 0-based node numbers.
pub fn nodes_csv(mesh: &Mesh, results: &Results) -> Result<Vec<u8>> {
    check_len(
        "temperature",
        results.temperature.len(),
        mesh.nodes.len(),
        "node",
    )?;
    csv_bytes(
        ["node", "x_m", "y_m", "temperature_c"],
        mesh.nodes
            .iter()
            .zip(&results.temperature)
            .enumerate()
            .map(|(i, (p, &t))| {
                [
                    i.to_string(),
                    format_f64(p[0]),
                    format_f64(p[1]),
                    format_f64(t),
                ]
            }),
    )
}

/// `name,x_m,y_m,temperature_c` — x, y are where the field was evaluated.
pub fn probes_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        ["name", "x_m", "y_m", "temperature_c"],
        results.probes.iter().map(|p| {
            [
                p.name.clone(),
                format_f64(p.x),
                format_f64(p.y),
                format_f64(p.temperature),
            ]
        }),
    )
}

/// `s_m,x_m,y_m,temperature_c,qx_w_per_m2,qy_w_per_m2` — one row per evaluated sample.
pub fn line_csv(line: &LineResult) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "s_m",
            "x_m",
            "y_m",
            "temperature_c",
            "qx_w_per_m2",
            "qy_w_per_m2",
        ],
        line.samples
            .iter()
            .map(|s| [s.s, s.x, s.y, s.temperature, s.qx, s.qy].map(format_f64)),
    )
}

/// `name,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,
/// max_temperature_c` — heat flow per metre of section depth, positive into the section.
pub fn boundaries_csv(results: &Results) -> Result<Vec<u8>> {
    csv_bytes(
        [
            "name",
            "kind",
            "length_m",
            "heat_flow_w_per_m",
            "mean_temperature_c",
            "min_temperature_c",
            "max_temperature_c",
        ],
        results.boundaries.iter().map(|b| {
            [
                b.name.clone(),
                b.kind.clone(),
                format_f64(b.length),
                format_f64(b.heat_flow),
                format_f64(b.mean_temperature),
                format_f64(b.min_temperature),
                format_f64(b.max_temperature),
            ]
        }),
    )
}

// ---------------------------------------------------------------------------------------------
// Summary JSON
// ---------------------------------------------------------------------------------------------

/// Statement written into every summary.
pub const CAUTION: &str = "Results depend on the inputs and the model assumptions (steady state, \
2D section, linear conduction, the boundary conditions given). They must be reviewed by a \
qualified engineer under local codes and licensed practice before use.";

/// Summary schema version; raised when a key changes meaning or disappears.
pub const SUMMARY_SCHEMA: u32 = 1;

/// Units of every quantity in the summary, in output order.
const UNITS: [(&str, &str); 10] = [
    ("length", "m"),
    ("temperature", "°C"),
    ("conductivity", "W/(m·K)"),
    ("heat_source", "W/m³"),
    ("film_coefficient", "W/(m²·K)"),
    ("heat_flux", "W/m²"),
    ("heat_flow", "W/m (per metre of section depth)"),
    ("area", "m²"),
    ("gradient", "K/m"),
    ("angle", "degrees"),
];

/// Everything the summary is built from; the caller fills it.
#[derive(Debug, Clone, Copy)]
pub struct SummaryInputs<'a> {
    pub section: &'a Section,
    pub mesh: &'a Mesh,
    pub results: &'a Results,
    /// All warnings of the run (model, mesh, post), in the order they should be shown.
    pub warnings: &'a [String],
    /// Self-checks (residual, energy balance, ...), as the caller reports them.
    pub checks: &'a Value,
    /// The model as resolved, with its defaults filled in.
    pub model: &'a Value,
    /// Run information (timings, host, ...): the only part expected to vary run to run.
    pub run: &'a Value,
    /// Further results keyed by name (e.g. `error_estimate`, `adaptivity`), written after
    /// `lines` in the given order.
    pub extra: &'a [(&'a str, Value)],
}

/// A JSON object whose keys keep the given order (a `serde_json::Value` object would sort
/// them, as the `preserve_order` feature is not enabled).
struct OrderedMap<K, V>(Vec<(K, V)>);

impl<K: Serialize, V: Serialize> Serialize for OrderedMap<K, V> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            m.serialize_entry(k, v)?;
        }
        m.end()
    }
}

#[derive(Serialize)]
struct MaterialOut<'a> {
    id: usize,
    name: &'a str,
    conductivity: f64,
    heat_source: f64,
}

#[derive(Serialize)]
struct TemperatureOut {
    min: f64,
    max: f64,
    min_at: [f64; 2],
    max_at: [f64; 2],
    min_node: usize,
    max_node: usize,
}

#[derive(Serialize)]
struct BoundaryOut<'a> {
    name: &'a str,
    kind: &'a str,
    length_m: f64,
    heat_flow_w_per_m: f64,
    mean_temperature_c: f64,
    min_temperature_c: f64,
    max_temperature_c: f64,
    /// The boundary condition as given (null for unnamed segments).
    condition: Option<&'a crate::model::BoundaryKind>,
}

#[derive(Serialize)]
struct ProbeOut<'a> {
    name: &'a str,
    x: f64,
    y: f64,
    temperature: f64,
    requested_at: [f64; 2],
    snapped: bool,
}

#[derive(Serialize)]
struct SkippedOut {
    index: usize,
    x: f64,
    y: f64,
}

#[derive(Serialize)]
struct LineOut<'a> {
    name: &'a str,
    /// Number of samples evaluated (rows of the line's CSV).
    samples: usize,
    skipped: Vec<SkippedOut>,
}

#[derive(Serialize)]
struct Summary<'a> {
    schema: u32,
    version: &'static str,
    title: &'a str,
    caution: &'static str,
    units: OrderedMap<&'static str, &'static str>,
    nodes: usize,
    triangles: usize,
    min_angle_deg: f64,
    max_triangle_area_m2: f64,
    section_area_m2: f64,
    materials: Vec<MaterialOut<'a>>,
    temperature: TemperatureOut,
    heat_flow_w_per_m: OrderedMap<&'a str, f64>,
    boundaries: Vec<BoundaryOut<'a>>,
    heat_source_w_per_m: f64,
    energy_imbalance_w_per_m: f64,
    energy_imbalance_relative: f64,
    probes: Vec<ProbeOut<'a>>,
    lines: Vec<LineOut<'a>>,
    #[serde(flatten)]
    extra: OrderedMap<&'a str, &'a Value>,
    warnings: &'a [String],
    checks: &'a Value,
    model: &'a Value,
    run: &'a Value,
}

/// The run summary as pretty-printed JSON with a trailing newline. Keys appear in a fixed
/// order (identification, units, mesh, materials, results, warnings, checks, model, run);
/// per-boundary, probe and line entries keep the order of `results`.
pub fn summary_json(inputs: &SummaryInputs<'_>) -> Result<Vec<u8>> {
    let SummaryInputs {
        section,
        mesh,
        results: r,
        ..
    } = *inputs;

    let mut names = BTreeSet::new();
    for b in &r.boundaries {
        if !names.insert(b.name.as_str()) {
            return Err(Error::run(format!(
                "internal: boundary {:?} appears twice in the results",
                b.name
            )));
        }
    }

    let summary = Summary {
        schema: SUMMARY_SCHEMA,
        version: crate::VERSION,
        title: &section.title,
        caution: CAUTION,
        units: OrderedMap(UNITS.to_vec()),
        nodes: mesh.nodes.len(),
        triangles: mesh.triangles.len(),
        min_angle_deg: mesh.stats.min_angle_deg,
        max_triangle_area_m2: mesh.stats.max_area,
        section_area_m2: mesh.stats.area,
        materials: section
            .materials
            .iter()
            .map(|m| MaterialOut {
                id: m.id,
                name: &m.name,
                conductivity: m.conductivity,
                heat_source: m.heat_source,
            })
            .collect(),
        temperature: TemperatureOut {
            min: r.t_min.value,
            max: r.t_max.value,
            min_at: r.t_min.at,
            max_at: r.t_max.at,
            min_node: r.t_min.node,
            max_node: r.t_max.node,
        },
        heat_flow_w_per_m: OrderedMap(
            r.boundaries
                .iter()
                .map(|b| (b.name.as_str(), b.heat_flow))
                .collect(),
        ),
        boundaries: r
            .boundaries
            .iter()
            .map(|b| BoundaryOut {
                name: &b.name,
                kind: &b.kind,
                length_m: b.length,
                heat_flow_w_per_m: b.heat_flow,
                mean_temperature_c: b.mean_temperature,
                min_temperature_c: b.min_temperature,
                max_temperature_c: b.max_temperature,
                condition: section
                    .boundaries
                    .iter()
                    .find(|s| s.name == b.name)
                    .map(|s| &s.kind),
            })
            .collect(),
        heat_source_w_per_m: r.heat_source,
        energy_imbalance_w_per_m: r.energy_imbalance,
        energy_imbalance_relative: r.energy_imbalance_relative,
        probes: r
            .probes
            .iter()
            .map(|p| ProbeOut {
                name: &p.name,
                x: p.x,
                y: p.y,
                temperature: p.temperature,
                requested_at: p.at,
                snapped: p.snapped,
            })
            .collect(),
        lines: r
            .lines
            .iter()
            .map(|l| LineOut {
                name: &l.name,
                samples: l.samples.len(),
                skipped: l
                    .skipped
                    .iter()
                    .map(|&(index, [x, y])| SkippedOut { index, x, y })
                    .collect(),
            })
            .collect(),
        extra: OrderedMap(inputs.extra.iter().map(|(k, v)| (*k, v)).collect()),
        warnings: inputs.warnings,
        checks: inputs.checks,
        model: inputs.model,
        run: inputs.run,
    };
    let mut out = serde_json::to_vec_pretty(&summary)
        .map_err(|e| Error::run(format!("cannot encode summary JSON: {e}")))?;
    out.push(b'\n');
    Ok(out)
}

// ---------------------------------------------------------------------------------------------
// Tests
// ---------------------------------------------------------------------------------------------

#[cfg(test)]
mod tests {
    use super::*;
    use crate::mesh::{BoundaryEdge, MeshStats, RingRef};
    use crate::model::{Boundary, BoundaryKind, Material, MeshSettings, Ring};
    use crate::post::{BoundaryResult, Extreme, LineSample, ProbeResult};
    use serde_json::json;
    use vtkio::model::{DataArray, IOBuffer};

    /// Unit square (0,0)-(2,1) split into two triangles.
    fn tiny_mesh() -> Mesh {
        let nodes = vec![[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [0.0, 1.0]];
        let edge = |a, b, t| BoundaryEdge {
            nodes: [a, b],
            boundary: Some(0),
            triangle: t,
            ring: RingRef::Outline,
        };
        Mesh {
            nodes,
            triangles: vec![[0, 1, 2], [0, 2, 3]],
            material: vec![0, 1],
            boundary_edges: vec![edge(0, 1, 0), edge(1, 2, 0), edge(2, 3, 1), edge(3, 0, 1)],
            stats: MeshStats {
                nodes: 4,
                triangles: 2,
                boundary_edges: 4,
                min_angle_deg: 26.56505117707799,
                min_angle_away_from_small_input_angles_deg: 26.56505117707799,
                max_area: 1.0,
                min_area: 1.0,
                worst_triangle: 0,
                worst_triangle_centroid: [4.0 / 3.0, 1.0 / 3.0],
                small_input_angles: vec![],
                area: 2.0,
            },
        }
    }

    fn tiny_results() -> Results {
        let boundary = |name: &str, kind: &str, q: f64| BoundaryResult {
            name: name.into(),
            kind: kind.into(),
            length: 1.0,
            heat_flow: q,
            mean_temperature: 10.0,
            min_temperature: 0.0,
            max_temperature: 20.0,
        };
        Results {
            temperature: vec![20.0, 0.0, 0.0, 20.0],
            cell_gradient: vec![[-10.0, 0.0], [-10.0, 0.0]],
            cell_flux: vec![[10.0, 0.0], [10.0, 0.0]],
            nodal_gradient: vec![[-10.0, 0.0]; 4],
            nodal_flux: vec![[10.0, 1e-20]; 4],
            // Deliberately not alphabetical: output must follow this order.
            boundaries: vec![
                boundary("warm", "fixed", 10.0),
                boundary("cold", "fixed", -10.0),
                boundary("(unnamed)", "insulated", 0.0),
            ],
            heat_source: 0.0,
            energy_imbalance: 1.0e-15,
            energy_imbalance_relative: 5.0e-17,
            t_min: Extreme {
                value: 0.0,
                node: 1,
                at: [2.0, 0.0],
            },
            t_max: Extreme {
                value: 20.0,
                node: 0,
                at: [0.0, 0.0],
            },
            probes: vec![ProbeResult {
                name: "mid, centre".into(),
                at: [1.0, 0.5],
                x: 1.0,
                y: 0.5,
                temperature: 10.0,
                snapped: false,
            }],
            lines: vec![LineResult {
                name: "across".into(),
                samples: vec![
                    LineSample {
                        s: 0.0,
                        x: 0.0,
                        y: 0.5,
                        temperature: 20.0,
                        qx: 10.0,
                        qy: 0.0,
                    },
                    LineSample {
                        s: 2.0,
                        x: 2.0,
                        y: 0.5,
                        temperature: 0.0,
                        qx: 10.0,
                        qy: 0.0,
                    },
                ],
                skipped: vec![(2, [3.0, 0.5])],
            }],
            warnings: vec![],
        }
    }

    fn tiny_section(mesh: &Mesh) -> Section {
        let ring = Ring {
            label: "outline".into(),
            points: mesh.nodes.clone(),
            edge_boundary: vec![Some(1), None, Some(0), None],
            written_segment: vec![0, 1, 2, 3],
            circle: None,
        };
        Section {
            title: "Two triangles".into(),
            mesh: MeshSettings {
                max_area: 1.0,
                max_area_is_default: false,
                min_angle: 20.0,
            },
            materials: vec![
                Material {
                    id: 0,
                    name: "concrete".into(),
                    conductivity: 1.6,
                    heat_source: 0.0,
                    max_area: None,
                },
                Material {
                    id: 1,
                    name: "steel".into(),
                    conductivity: 50.0,
                    heat_source: 0.0,
                    max_area: None,
                },
            ],
            outline_material: 0,
            outline: ring,
            regions: vec![],
            holes: vec![],
            boundaries: vec![
                Boundary {
                    name: "cold".into(),
                    kind: BoundaryKind::Fixed { temperature: 0.0 },
                    size: None,
                },
                Boundary {
                    name: "warm".into(),
                    kind: BoundaryKind::Fixed { temperature: 20.0 },
                    size: None,
                },
            ],
            probes: vec![],
            lines: vec![],
            warnings: vec![],
        }
    }

    fn scratch_dir(name: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("xsheat-io-{}-{name}", std::process::id()));
        let _ = fs::remove_dir_all(&d);
        d
    }

    fn dir_listing(d: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    fn first_line(bytes: &[u8]) -> &str {
        std::str::from_utf8(bytes).unwrap().lines().next().unwrap()
    }

    /// Parses VTK bytes and returns (point count, cell types, point arrays, cell arrays).
    fn parse_vtu(bytes: &[u8]) -> (usize, Vec<CellType>, Vec<DataArray>, Vec<DataArray>) {
        let vtk = Vtk::parse_xml(bytes).expect("vtu parses back");
        let DataSet::UnstructuredGrid { pieces, .. } = vtk.data else {
            panic!("not an unstructured grid")
        };
        assert_eq!(pieces.len(), 1);
        let Piece::Inline(piece) = pieces.into_iter().next().unwrap() else {
            panic!("piece not inline")
        };
        let arrays = |a: Vec<Attribute>| {
            a.into_iter()
                .map(|x| match x {
                    Attribute::DataArray(d) => d,
                    Attribute::Field { .. } => panic!("unexpected field"),
                })
                .collect::<Vec<_>>()
        };
        let n = piece.num_points();
        let types = piece.cells.types.clone();
        (n, types, arrays(piece.data.point), arrays(piece.data.cell))
    }

    fn shape(arrays: &[DataArray]) -> Vec<(String, usize, usize)> {
        arrays
            .iter()
            .map(|a| (a.name.clone(), a.num_comp(), a.len()))
            .collect()
    }

    fn owned(v: &[(&str, usize, usize)]) -> Vec<(String, usize, usize)> {
        v.iter().map(|&(n, c, l)| (n.to_string(), c, l)).collect()
    }

    #[test]
    fn field_vtu_parses_back_with_expected_arrays() {
        let (mesh, res) = (tiny_mesh(), tiny_results());
        let bytes = field_vtu(&mesh, &res).unwrap();
        let (n, types, point, cell) = parse_vtu(&bytes);
        assert_eq!(n, 4);
        assert_eq!(types, vec![CellType::Triangle; 2]);
        assert_eq!(
            shape(&point),
            owned(&[
                ("temperature", 1, 4),
                ("heat_flux_nodal", 3, 12),
                ("gradient_nodal", 3, 12)
            ])
        );
        assert_eq!(
            shape(&cell),
            owned(&[("heat_flux", 3, 6), ("gradient", 3, 6), ("material", 1, 2)])
        );
        assert_eq!(point[0].data, IOBuffer::F64(res.temperature.clone()));
        assert_eq!(point[1].data, IOBuffer::F64([10.0, 1e-20, 0.0].repeat(4)));
        assert_eq!(cell[2].data, IOBuffer::I32(vec![0, 1]));
    }

    #[test]
    fn mesh_vtu_parses_back_with_quality_arrays() {
        let mesh = tiny_mesh();
        let bytes = mesh_vtu(&mesh).unwrap();
        let (n, types, point, cell) = parse_vtu(&bytes);
        assert_eq!((n, types.len(), point.len()), (4, 2, 0));
        assert_eq!(
            shape(&cell),
            owned(&[
                ("material", 1, 2),
                ("quality_min_angle_deg", 1, 2),
                ("area_m2", 1, 2)
            ])
        );
        assert_eq!(cell[0].data.scalar_type(), vtkio::model::ScalarType::I32);
        let IOBuffer::F64(angles) = &cell[1].data else {
            panic!("angles not f64")
        };
        let expect = 0.5f64.atan().to_degrees(); // 26.565° at the 2×1 rectangle's corners
        assert!(
            angles.iter().all(|a| (a - expect).abs() < 1e-12),
            "{angles:?}"
        );
        assert_eq!(cell[2].data, IOBuffer::F64(vec![1.0, 1.0]));
    }

    #[test]
    fn vtu_rejects_inconsistent_input() {
        let mut mesh = tiny_mesh();
        let mut res = tiny_results();
        res.temperature.pop();
        assert!(matches!(field_vtu(&mesh, &res), Err(Error::Run(_))));
        mesh.triangles[1] = [0, 2, 9];
        assert!(matches!(mesh_vtu(&mesh), Err(Error::Run(_))));
    }

    #[test]
    fn csv_headers_and_rows() {
        let (mesh, res) = (tiny_mesh(), tiny_results());
        let nodes = nodes_csv(&mesh, &res).unwrap();
        assert_eq!(first_line(&nodes), "node,x_m,y_m,temperature_c");
        assert_eq!(
            String::from_utf8(nodes).unwrap(),
            "node,x_m,y_m,temperature_c\n0,0,0,20\n1,2,0,0\n2,2,1,0\n3,0,1,20\n"
        );
        let probes = probes_csv(&res).unwrap();
        assert_eq!(
            String::from_utf8(probes).unwrap(),
            "name,x_m,y_m,temperature_c\n\"mid, centre\",1,0.5,10\n"
        );
        let line = line_csv(&res.lines[0]).unwrap();
        assert_eq!(
            first_line(&line),
            "s_m,x_m,y_m,temperature_c,qx_w_per_m2,qy_w_per_m2"
        );
        assert_eq!(line.iter().filter(|&&b| b == b'\n').count(), 3);
        let b = boundaries_csv(&res).unwrap();
        assert_eq!(
            first_line(&b),
            "name,kind,length_m,heat_flow_w_per_m,mean_temperature_c,min_temperature_c,\
             max_temperature_c"
        );
        let text = String::from_utf8(b).unwrap();
        let order: Vec<&str> = text
            .lines()
            .skip(1)
            .map(|l| l.split(',').next().unwrap())
            .collect();
        assert_eq!(order, ["warm", "cold", "(unnamed)"]);
    }

    #[test]
    fn float_format_round_trips() {
        assert_eq!(format_f64(0.1), "0.1");
        assert_eq!(format_f64(-0.0), "0");
        assert_eq!(format_f64(20.0), "20");
        assert_eq!(format_f64(1e-20), "1e-20");
        assert_eq!(format_f64(-1.5e-7), "-1.5e-7");
        assert_eq!(format_f64(2e15), "2e15");
        assert_eq!(format_f64(f64::NAN), "NaN");
        for x in [
            0.1,
            1.0 / 3.0,
            -273.15,
            6.02214076e23,
            5e-324,
            f64::MAX,
            1e-4,
            9.99e14,
        ] {
            assert_eq!(format_f64(x).parse::<f64>().unwrap(), x);
        }
    }

    #[test]
    fn summary_has_keys_in_order() {
        let (mesh, res) = (tiny_mesh(), tiny_results());
        let section = tiny_section(&mesh);
        let warnings = vec!["segment 1 of outline has no boundary name".to_string()];
        let (checks, model, run) = (
            json!({"energy_balance": {"pass": true}}),
            json!({"title": "Two triangles"}),
            json!({"seconds": 0.25}),
        );
        let inputs = SummaryInputs {
            section: &section,
            mesh: &mesh,
            results: &res,
            warnings: &warnings,
            checks: &checks,
            model: &model,
            run: &run,
            extra: &[("error_estimate", json!({"relative": 0.01}))],
        };
        let bytes = summary_json(&inputs).unwrap();
        assert!(bytes.ends_with(b"}\n"));
        assert_eq!(bytes, summary_json(&inputs).unwrap());
        let v: Value = serde_json::from_slice(&bytes).unwrap();
        for key in [
            "schema",
            "version",
            "title",
            "caution",
            "units",
            "nodes",
            "triangles",
            "min_angle_deg",
            "max_triangle_area_m2",
            "materials",
            "temperature",
            "heat_flow_w_per_m",
            "boundaries",
            "heat_source_w_per_m",
            "energy_imbalance_w_per_m",
            "energy_imbalance_relative",
            "probes",
            "lines",
            "warnings",
            "checks",
            "model",
            "run",
        ] {
            assert!(v.get(key).is_some(), "missing {key}");
        }
        assert_eq!(v["schema"], json!(1));
        assert_eq!(v["version"], json!(crate::VERSION));
        assert_eq!(v["caution"], json!(CAUTION));
        assert_eq!(v["units"]["film_coefficient"], json!("W/(m²·K)"));
        assert_eq!(
            v["units"]["heat_flow"],
            json!("W/m (per metre of section depth)")
        );
        assert_eq!(v["materials"][1]["name"], json!("steel"));
        assert_eq!(v["temperature"]["max_at"], json!([0.0, 0.0]));
        assert_eq!(v["boundaries"][0]["condition"]["temperature"], json!(20.0));
        assert_eq!(v["boundaries"][2]["condition"], Value::Null);
        assert_eq!(v["lines"][0]["samples"], json!(2));
        assert_eq!(v["lines"][0]["skipped"][0]["index"], json!(2));
        assert_eq!(v["probes"][0]["temperature"], json!(10.0));
        // Result order is kept in the text (a Value object would sort the keys).
        let text = String::from_utf8(bytes).unwrap();
        let flows = &text[text.find("\"heat_flow_w_per_m\": {").unwrap()..];
        let (w, c, u) = (
            flows.find("\"warm\"").unwrap(),
            flows.find("\"cold\"").unwrap(),
            flows.find("\"(unnamed)\"").unwrap(),
        );
        assert!(w < c && c < u);
        assert!(text.find("\"schema\"").unwrap() < text.find("\"run\"").unwrap());
    }

    #[test]
    fn writers_are_deterministic() {
        let (mesh, res) = (tiny_mesh(), tiny_results());
        assert_eq!(
            field_vtu(&mesh, &res).unwrap(),
            field_vtu(&mesh.clone(), &res.clone()).unwrap()
        );
        assert_eq!(mesh_vtu(&mesh).unwrap(), mesh_vtu(&mesh.clone()).unwrap());
        assert_eq!(
            nodes_csv(&mesh, &res).unwrap(),
            nodes_csv(&mesh, &res).unwrap()
        );
        assert_eq!(
            boundaries_csv(&res).unwrap(),
            boundaries_csv(&res.clone()).unwrap()
        );
    }

    #[test]
    fn output_set_writes_all_and_leaves_no_temporaries() {
        let dir = scratch_dir("ok").join("nested");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("keep.txt"), b"other").unwrap();
        fs::write(dir.join("a.csv"), b"old").unwrap();
        let mut set = OutputSet::new();
        set.add("a.csv", b"new a".to_vec());
        set.add("b.json", b"{}\n".to_vec());
        let written = set.commit(&dir).unwrap();
        assert_eq!(written, vec![dir.join("a.csv"), dir.join("b.json")]);
        assert_eq!(dir_listing(&dir), ["a.csv", "b.json", "keep.txt"]);
        assert_eq!(fs::read(dir.join("a.csv")).unwrap(), b"new a");
        assert_eq!(fs::read(dir.join("keep.txt")).unwrap(), b"other");
        // Creates a missing directory.
        let fresh = dir.join("deeper");
        set.commit(&fresh).unwrap();
        assert_eq!(dir_listing(&fresh), ["a.csv", "b.json"]);
        let _ = fs::remove_dir_all(scratch_dir("ok"));
    }

    #[test]
    fn output_set_failure_leaves_no_new_file() {
        let root = scratch_dir("fail");
        fs::create_dir_all(&root).unwrap();
        let mut set = OutputSet::new();
        set.add("a.csv", b"a".to_vec());
        set.add("b.csv", b"b".to_vec());

        // The output "directory" is an existing regular file.
        let file = root.join("plain");
        fs::write(&file, b"x").unwrap();
        let e = set.commit(&file).unwrap_err();
        assert!(matches!(e, Error::Run(_)));
        assert!(e.message().contains("plain"), "{e}");
        assert_eq!(fs::read(&file).unwrap(), b"x");

        // A directory stands where the second file should go.
        let dir = root.join("out");
        fs::create_dir_all(dir.join("b.csv")).unwrap();
        let e = set.commit(&dir).unwrap_err();
        assert!(e.message().contains("b.csv"), "{e}");
        assert_eq!(dir_listing(&dir), ["b.csv"]);

        // A temporary cannot be created for the second file: the first is cleaned up.
        let dir2 = root.join("out2");
        fs::create_dir_all(&dir2).unwrap();
        let serial = COMMIT_COUNTER.load(Ordering::Relaxed);
        let blockers: Vec<String> = (serial..serial + 64)
            .map(|s| format!(".b.csv.tmp-{}-{s}", std::process::id()))
            .collect();
        for b in &blockers {
            fs::create_dir(dir2.join(b)).unwrap();
        }
        let e = set.commit(&dir2).unwrap_err();
        assert!(e.message().contains("b.csv"), "{e}");
        let left: Vec<String> = dir_listing(&dir2)
            .into_iter()
            .filter(|n| !blockers.contains(n))
            .collect();
        assert!(left.is_empty(), "left behind: {left:?}");

        // Bad names are refused before anything is written.
        for bad in ["", "..", "sub/x.csv"] {
            let mut s = OutputSet::new();
            s.add(bad, vec![]);
            assert!(s.commit(root.join("never")).is_err());
        }
        let mut dup = OutputSet::new();
        dup.add("x", vec![]);
        dup.add("x", vec![]);
        assert!(dup.commit(root.join("never")).is_err());
        assert!(!root.join("never").exists());
        let _ = fs::remove_dir_all(&root);
    }

    #[test]
    fn write_file_atomic_replaces_single_file() {
        let root = scratch_dir("single");
        let path = root.join("mesh.vtu");
        write_file_atomic(&path, b"one").unwrap();
        write_file_atomic(&path, b"two").unwrap();
        assert_eq!(fs::read(&path).unwrap(), b"two");
        assert_eq!(dir_listing(&root), ["mesh.vtu"]);
        assert!(write_file_atomic(&root, b"x").is_err());
        assert!(write_file_atomic(root.join(".."), b"x").is_err());
        let _ = fs::remove_dir_all(&root);
    }
}
