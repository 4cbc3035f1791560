//! VTK XML unstructured-grid encoding of meshes and solved fields.
//!
//! The XML is written here directly (not through vtkio's writer): every array is appended
//! data (`<AppendedData encoding="base64">`, `header_type="UInt64"`, little-endian), so the
//! payload is plain base64 that needs no XML escaping. Uncompressed, each array is one base64
//! stream of its byte count (UInt64) and its bytes; with [`VtkOptions::compress`], each array is
//! one zlib block (level 6, fixed, so files are byte-identical between runs): the header
//! `[1, n, 0, compressed size]` (UInt64) and the compressed bytes as two base64 streams, the
//! layout of `vtkZLibDataCompressor`. vtkio 0.6 reads this layout back (its reader decodes only
//! the first zlib stream of an array, hence one block per array); it does not read raw appended
//! data (binary bytes such as `<` break its XML parser), so raw is not offered. The arrays
//! of a file are encoded in parallel, each on its own, and laid out in their fixed order, so
//! the bytes do not depend on the thread count.

use crate::error::{Error, Result};
use crate::mesh::Mesh;
use crate::post::Results;
use rayon::prelude::*;
use std::fmt::Write as _;
use std::io::Write as _;

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
// The encoder
// ---------------------------------------------------------------------------------------------

/// How VTK XML arrays are stored.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct VtkOptions {
    /// zlib-compress every array (`compressor="vtkZLibDataCompressor"`, level 6).
    pub compress: bool,
}

/// The zlib level of compressed arrays (fixed: the same input gives the same bytes).
pub const VTK_ZLIB_LEVEL: u32 = 6;

/// The values of one array, little-endian on output.
#[derive(Debug, Clone, Copy)]
pub enum VtkValues<'a> {
    /// `Float64`.
    F64(&'a [f64]),
    /// `Int32`.
    I32(&'a [i32]),
    /// `Int64`.
    I64(&'a [i64]),
    /// `UInt8`.
    U8(&'a [u8]),
}

impl VtkValues<'_> {
    fn type_name(&self) -> &'static str {
        match self {
            VtkValues::F64(_) => "Float64",
            VtkValues::I32(_) => "Int32",
            VtkValues::I64(_) => "Int64",
            VtkValues::U8(_) => "UInt8",
        }
    }

    fn len(&self) -> usize {
        match self {
            VtkValues::F64(v) => v.len(),
            VtkValues::I32(v) => v.len(),
            VtkValues::I64(v) => v.len(),
            VtkValues::U8(v) => v.len(),
        }
    }

    /// Bytes of the values (little-endian).
    fn byte_len(&self) -> usize {
        match self {
            VtkValues::F64(v) => 8 * v.len(),
            VtkValues::I32(v) => 4 * v.len(),
            VtkValues::I64(v) => 8 * v.len(),
            VtkValues::U8(v) => v.len(),
        }
    }

    /// Appends the values' little-endian bytes to `out`.
    fn extend_le(&self, out: &mut Vec<u8>) {
        fn each<const N: usize, T: Copy>(out: &mut Vec<u8>, v: &[T], f: impl Fn(T) -> [u8; N]) {
            out.reserve(v.len() * N);
            for &x in v {
                out.extend_from_slice(&f(x));
            }
        }
        match self {
            VtkValues::F64(v) => each(out, v, f64::to_le_bytes),
            VtkValues::I32(v) => each(out, v, i32::to_le_bytes),
            VtkValues::I64(v) => each(out, v, i64::to_le_bytes),
            VtkValues::U8(v) => out.extend_from_slice(v),
        }
    }

    fn le_bytes(&self) -> Vec<u8> {
        let mut out = Vec::with_capacity(self.byte_len());
        self.extend_le(&mut out);
        out
    }
}

/// One named array: `name`, components per tuple, values (tuples × components).
#[derive(Debug, Clone, Copy)]
pub struct VtkArray<'a> {
    /// Array name (escaped for XML when written).
    pub name: &'a str,
    /// Components per tuple: 1 for scalars, 3 for vectors.
    pub components: usize,
    /// The values, tuple after tuple.
    pub values: VtkValues<'a>,
}

impl<'a> VtkArray<'a> {
    /// A scalar `Float64` array.
    pub fn scalars(name: &'a str, values: &'a [f64]) -> Self {
        VtkArray {
            name,
            components: 1,
            values: VtkValues::F64(values),
        }
    }

    /// A 3-component `Float64` array (x, y, z per tuple).
    pub fn vectors(name: &'a str, values: &'a [f64]) -> Self {
        VtkArray {
            name,
            components: 3,
            values: VtkValues::F64(values),
        }
    }
}

/// One unstructured-grid piece: points (x, y, z flattened), cells of one VTK cell type with a
/// fixed vertex count, point and cell arrays.
#[derive(Debug, Clone)]
pub struct VtuPiece<'a> {
    /// Point coordinates, 3 per point.
    pub points: &'a [f64],
    /// Vertex numbers of the cells, `verts_per_cell` per cell.
    pub connectivity: &'a [i64],
    /// Vertices per cell (3 triangles, 4 quads).
    pub verts_per_cell: usize,
    /// VTK cell type code (5 triangle, 9 quad).
    pub cell_type: u8,
    /// Point data.
    pub point_data: Vec<VtkArray<'a>>,
    /// Cell data.
    pub cell_data: Vec<VtkArray<'a>>,
    /// Field data of the data set (e.g. one array per material name holding its id), written
    /// before the piece.
    pub field_data: Vec<VtkArray<'a>>,
}

/// Length of the standard base64 (RFC 4648, padded) of `n` bytes.
pub(crate) fn base64_len(n: usize) -> usize {
    n.div_ceil(3) * 4
}

/// Standard base64 (RFC 4648, with `=` padding) of `bytes`, appended to `out`.
pub(crate) fn base64_into(out: &mut Vec<u8>, bytes: &[u8]) {
    let at = out.len();
    out.resize(at + base64_len(bytes.len()), 0);
    base64_to_slice(&mut out[at..], bytes);
}

/// Standard base64 of `bytes` written over `out`, which holds exactly
/// [`base64_len`]`(bytes.len())` bytes.
fn base64_to_slice(out: &mut [u8], bytes: &[u8]) {
    const TABLE: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut chunks = bytes.chunks_exact(3);
    let mut quads = out.chunks_exact_mut(4);
    for (c, q) in (&mut chunks).zip(&mut quads) {
        let n = (u32::from(c[0]) << 16) | (u32::from(c[1]) << 8) | u32::from(c[2]);
        q.copy_from_slice(&[
            TABLE[(n >> 18) as usize & 63],
            TABLE[(n >> 12) as usize & 63],
            TABLE[(n >> 6) as usize & 63],
            TABLE[n as usize & 63],
        ]);
    }
    let last = quads.next();
    match (chunks.remainder(), last) {
        (&[a], Some(q)) => {
            let n = u32::from(a) << 16;
            q.copy_from_slice(&[
                TABLE[(n >> 18) as usize],
                TABLE[(n >> 12) as usize & 63],
                b'=',
                b'=',
            ]);
        }
        (&[a, b], Some(q)) => {
            let n = (u32::from(a) << 16) | (u32::from(b) << 8);
            q.copy_from_slice(&[
                TABLE[(n >> 18) as usize],
                TABLE[(n >> 12) as usize & 63],
                TABLE[(n >> 6) as usize & 63],
                b'=',
            ]);
        }
        _ => {}
    }
}

/// `text` with the five XML special characters escaped, for attribute values.
fn xml_attr(text: &str) -> String {
    let mut s = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => s.push_str("&amp;"),
            '<' => s.push_str("&lt;"),
            '>' => s.push_str("&gt;"),
            '"' => s.push_str("&quot;"),
            '\'' => s.push_str("&apos;"),
            c => s.push(c),
        }
    }
    s
}

/// A piece of the XML head: text, or an array whose offset is known once every array before
/// it is encoded.
enum Part<'a> {
    Text(String),
    Array {
        indent: &'static str,
        name: String,
        size: String,
        values: VtkValues<'a>,
    },
}

/// Collects the XML of the arrays; [`Appender::finish`] encodes their appended payload, every
/// array on its own (in parallel: each array's bytes depend on it alone, so the file is the
/// same whatever the thread count) and writes the file.
struct Appender<'a> {
    compress: bool,
    parts: Vec<Part<'a>>,
}

/// A compressed array's appended payload: base64 of the zlib block header and of the block.
fn encode_compressed(name: &str, values: &VtkValues) -> Result<Vec<u8>> {
    let bytes = values.le_bytes();
    let n = bytes.len() as u64;
    let mut z = flate2::write::ZlibEncoder::new(
        Vec::with_capacity(bytes.len() / 2),
        flate2::Compression::new(VTK_ZLIB_LEVEL),
    );
    let packed = z
        .write_all(&bytes)
        .and_then(|()| z.finish())
        .map_err(|e| Error::run(format!("cannot compress VTK array {name}: {e}")))?;
    let header: Vec<u8> = [1, n, 0, packed.len() as u64]
        .iter()
        .flat_map(|h| h.to_le_bytes())
        .collect();
    let mut out = Vec::new();
    base64_into(&mut out, &header);
    base64_into(&mut out, &packed);
    Ok(out)
}

/// Length of an uncompressed array's appended payload: base64 of its byte count (UInt64)
/// and its bytes.
fn plain_len(values: &VtkValues) -> usize {
    base64_len(8 + values.byte_len())
}

/// An uncompressed array's appended payload written over `slot` ([`plain_len`] bytes).
fn encode_plain_into(slot: &mut [u8], values: &VtkValues) {
    let mut all = Vec::with_capacity(8 + values.byte_len());
    all.extend_from_slice(&(values.byte_len() as u64).to_le_bytes());
    values.extend_le(&mut all);
    base64_to_slice(slot, &all);
}

impl<'a> Appender<'a> {
    fn new(compress: bool, head: String) -> Self {
        Appender {
            compress,
            parts: vec![Part::Text(head)],
        }
    }

    fn text(&mut self, text: impl Into<String>) {
        self.parts.push(Part::Text(text.into()));
    }

    fn array(
        &mut self,
        indent: &'static str,
        name: &str,
        components: usize,
        values: VtkValues<'a>,
    ) -> Result<()> {
        let size = format!(r#"NumberOfComponents="{components}""#);
        self.array_with(indent, name, &size, values)
    }

    /// One `DataArray` with the size attribute `size` (`NumberOfComponents="…"` for point and
    /// cell data, `NumberOfTuples="…"` for field data) and its payload.
    fn array_with(
        &mut self,
        indent: &'static str,
        name: &str,
        size: &str,
        values: VtkValues<'a>,
    ) -> Result<()> {
        self.parts.push(Part::Array {
            indent,
            name: name.to_string(),
            size: size.to_string(),
            values,
        });
        Ok(())
    }

    /// The file: the XML head with every array's offset, `tail` (which opens the appended
    /// data), the payload, and the closing tags.
    fn finish(self, tail: &str) -> Result<Vec<u8>> {
        let arrays: Vec<(&str, &VtkValues)> = self
            .parts
            .iter()
            .filter_map(|p| match p {
                Part::Array { name, values, .. } => Some((name.as_str(), values)),
                Part::Text(_) => None,
            })
            .collect();
        // Compressed payloads are made first (their length is the compressed one); plain ones
        // have a length known in advance and are encoded straight into their place below.
        let packed: Option<Vec<Vec<u8>>> = if self.compress {
            Some(
                arrays
                    .par_iter()
                    .map(|(name, values)| encode_compressed(name, values))
                    .collect::<Result<_>>()?,
            )
        } else {
            None
        };
        let lens: Vec<usize> = match &packed {
            Some(p) => p.iter().map(Vec::len).collect(),
            None => arrays.iter().map(|(_, v)| plain_len(v)).collect(),
        };
        let mut xml = String::new();
        let mut offset = 0usize;
        let mut next = lens.iter();
        for p in &self.parts {
            match p {
                Part::Text(t) => xml.push_str(t),
                Part::Array {
                    indent,
                    name,
                    size,
                    values,
                } => {
                    let _ = writeln!(
                        xml,
                        r#"{indent}<DataArray type="{}" Name="{}" {size} format="appended" offset="{offset}"/>"#,
                        values.type_name(),
                        xml_attr(name),
                    );
                    offset += next.next().copied().unwrap_or(0);
                }
            }
        }
        xml.push_str(tail);
        const CLOSE: &[u8] = b"\n  </AppendedData>\n</VTKFile>\n";
        let head = xml.len();
        let mut out = vec![0u8; head + offset + CLOSE.len()];
        out[..head].copy_from_slice(xml.as_bytes());
        out[head + offset..].copy_from_slice(CLOSE);
        // Each array's place in the file, in order.
        let mut slots: Vec<&mut [u8]> = Vec::with_capacity(lens.len());
        let mut rest = &mut out[head..head + offset];
        for &l in &lens {
            let (slot, tail) = std::mem::take(&mut rest).split_at_mut(l);
            slots.push(slot);
            rest = tail;
        }
        match &packed {
            Some(p) => {
                for (slot, bytes) in slots.into_iter().zip(p) {
                    slot.copy_from_slice(bytes);
                }
            }
            None => slots
                .into_par_iter()
                .zip(arrays.par_iter())
                .for_each(|(slot, (_, values))| encode_plain_into(slot, values)),
        }
        Ok(out)
    }

    /// `<FieldData>` with one array per entry (tuples = values / components), when any.
    fn field(&mut self, arrays: &[VtkArray<'a>]) -> Result<()> {
        if arrays.is_empty() {
            return Ok(());
        }
        self.text("    <FieldData>\n");
        for a in arrays {
            if a.components != 1 {
                return Err(Error::run(format!(
                    "internal: VTK field array {} has {} components",
                    a.name, a.components
                )));
            }
            let size = format!(r#"NumberOfTuples="{}""#, a.values.len());
            self.array_with("      ", a.name, &size, a.values)?;
        }
        self.text("    </FieldData>\n");
        Ok(())
    }

    fn data(&mut self, tag: &str, arrays: &[VtkArray<'a>], tuples: usize) -> Result<()> {
        self.text(format!("      <{tag}>\n"));
        for a in arrays {
            if a.components == 0 || a.values.len() != a.components * tuples {
                return Err(Error::run(format!(
                    "internal: VTK array {} has {} values for {tuples} tuples of {}",
                    a.name,
                    a.values.len(),
                    a.components
                )));
            }
            self.array("        ", a.name, a.components, a.values)?;
        }
        self.text(format!("      </{tag}>\n"));
        Ok(())
    }
}

/// One unstructured-grid piece as VTK XML (`.vtu`) bytes (see the module documentation for
/// the layout), ending in a newline.
pub fn encode_vtu(piece: &VtuPiece, options: &VtkOptions) -> Result<Vec<u8>> {
    let points = piece.points.len() / 3;
    let per = piece.verts_per_cell.max(1);
    let cells = piece.connectivity.len() / per;
    if !piece.points.len().is_multiple_of(3) || !piece.connectivity.len().is_multiple_of(per) {
        return Err(Error::run(
            "internal: VTK piece with partial points or cells",
        ));
    }
    if let Some(v) = piece
        .connectivity
        .iter()
        .find(|&&v| v < 0 || v as usize >= points)
    {
        return Err(Error::run(format!(
            "internal: VTK cell vertex {v} of {points} points"
        )));
    }
    let compressor = if options.compress {
        r#" compressor="vtkZLibDataCompressor""#
    } else {
        ""
    };
    let mut a = Appender::new(
        options.compress,
        format!(
            "<?xml version=\"1.0\"?>\n<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" \
         byte_order=\"LittleEndian\" header_type=\"UInt64\"{compressor}>\n  \
         <UnstructuredGrid>\n"
        ),
    );
    a.field(&piece.field_data)?;
    a.text(format!(
        "    <Piece NumberOfPoints=\"{points}\" NumberOfCells=\"{cells}\">\n"
    ));
    a.data("PointData", &piece.point_data, points)?;
    a.data("CellData", &piece.cell_data, cells)?;
    a.text("      <Points>\n");
    a.array("        ", "Points", 3, VtkValues::F64(piece.points))?;
    a.text("      </Points>\n      <Cells>\n");
    let offsets: Vec<i64> = (1..=cells as i64).map(|i| i * per as i64).collect();
    let types = vec![piece.cell_type; cells];
    a.array(
        "        ",
        "connectivity",
        1,
        VtkValues::I64(piece.connectivity),
    )?;
    a.array("        ", "offsets", 1, VtkValues::I64(&offsets))?;
    a.array("        ", "types", 1, VtkValues::U8(&types))?;
    a.finish("      </Cells>\n    </Piece>\n  </UnstructuredGrid>\n  <AppendedData encoding=\"base64\">\n   _")
}

/// Line cells (two points each) with point, cell and field data, as VTK XML PolyData
/// (`.vtp`) bytes, in the same appended base64 layout as [`encode_vtu`].
#[derive(Debug, Clone)]
pub struct VtpLines<'a> {
    /// Point coordinates, 3 per point.
    pub points: &'a [f64],
    /// Two point numbers per line.
    pub connectivity: &'a [i64],
    /// Point data.
    pub point_data: Vec<VtkArray<'a>>,
    /// Cell (line) data.
    pub cell_data: Vec<VtkArray<'a>>,
    /// Field data of the data set.
    pub field_data: Vec<VtkArray<'a>>,
}

/// [`VtpLines`] encoded as VTK XML PolyData, ending in a newline.
pub fn encode_vtp_lines(piece: &VtpLines, options: &VtkOptions) -> Result<Vec<u8>> {
    let points = piece.points.len() / 3;
    let lines = piece.connectivity.len() / 2;
    if !piece.points.len().is_multiple_of(3) || !piece.connectivity.len().is_multiple_of(2) {
        return Err(Error::run(
            "internal: VTK lines with partial points or cells",
        ));
    }
    if let Some(v) = piece
        .connectivity
        .iter()
        .find(|&&v| v < 0 || v as usize >= points)
    {
        return Err(Error::run(format!(
            "internal: VTK line vertex {v} of {points} points"
        )));
    }
    let compressor = if options.compress {
        r#" compressor="vtkZLibDataCompressor""#
    } else {
        ""
    };
    let mut a = Appender::new(
        options.compress,
        format!(
            "<?xml version=\"1.0\"?>\n<VTKFile type=\"PolyData\" version=\"1.0\" \
         byte_order=\"LittleEndian\" header_type=\"UInt64\"{compressor}>\n  <PolyData>\n"
        ),
    );
    a.field(&piece.field_data)?;
    a.text(format!(
        "    <Piece NumberOfPoints=\"{points}\" NumberOfVerts=\"0\" NumberOfLines=\"{lines}\" \
         NumberOfStrips=\"0\" NumberOfPolys=\"0\">\n"
    ));
    a.data("PointData", &piece.point_data, points)?;
    a.data("CellData", &piece.cell_data, lines)?;
    a.text("      <Points>\n");
    a.array("        ", "Points", 3, VtkValues::F64(piece.points))?;
    a.text("      </Points>\n      <Lines>\n");
    let offsets: Vec<i64> = (1..=lines as i64).map(|i| 2 * i).collect();
    a.array(
        "        ",
        "connectivity",
        1,
        VtkValues::I64(piece.connectivity),
    )?;
    a.array("        ", "offsets", 1, VtkValues::I64(&offsets))?;
    a.finish(
        "      </Lines>\n    </Piece>\n  </PolyData>\n  <AppendedData encoding=\"base64\">\n   _",
    )
}

// ---------------------------------------------------------------------------------------------
// Meshes and fields
// ---------------------------------------------------------------------------------------------

fn vec3(v: &[[f64; 2]]) -> Vec<f64> {
    let mut out = Vec::with_capacity(3 * v.len());
    for a in v {
        out.extend_from_slice(&[a[0], a[1], 0.0]);
    }
    out
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

/// The ids 0..n as Int32 values (one per name of a field-data name table).
pub(crate) fn id_values(n: usize) -> Result<Vec<i32>> {
    (0..n)
        .map(|i| {
            i32::try_from(i).map_err(|_| Error::run(format!("internal: id {i} does not fit Int32")))
        })
        .collect()
}

/// Smallest interior angle of triangle `t`, degrees (0 for a degenerate triangle).
fn min_angle_deg(mesh: &Mesh, t: usize) -> f64 {
    crate::mesh::min_angle_of(mesh.triangles[t].map(|v| mesh.nodes[v]))
}

/// The mesh's points and triangles with the given arrays, encoded.
fn triangles_vtu(
    mesh: &Mesh,
    point_data: Vec<VtkArray>,
    cell_data: Vec<VtkArray>,
    field_data: Vec<VtkArray>,
    options: &VtkOptions,
) -> Result<Vec<u8>> {
    let points = vec3(&mesh.nodes);
    let mut connectivity = Vec::with_capacity(3 * mesh.triangles.len());
    for t in &mesh.triangles {
        connectivity.extend(t.map(|v| v as i64));
    }
    encode_vtu(
        &VtuPiece {
            points: &points,
            connectivity: &connectivity,
            verts_per_cell: 3,
            cell_type: 5,
            point_data,
            cell_data,
            field_data,
        },
        options,
    )
}

/// The solved field as a VTK XML unstructured grid (`.vtu`), uncompressed.
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
    field_vtu_arrays(mesh, results, extra_cells, &[], &VtkOptions::default())
}

/// [`field_vtu_with`] with further scalar point arrays (name, one value per node, e.g. the
/// temperature of a load case `temperature_c:CASE`), written after the standard point arrays,
/// and the encoding `options`.
pub fn field_vtu_arrays(
    mesh: &Mesh,
    results: &Results,
    extra_cells: &[(&str, &[f64])],
    extra_points: &[(&str, &[f64])],
    options: &VtkOptions,
) -> Result<Vec<u8>> {
    field_vtu_named(mesh, results, &[], extra_cells, extra_points, options)
}

/// [`field_vtu_arrays`] with the material names as field data: one `Int32` array of one tuple
/// per material, named after the material and holding its id (the `material` cell array's
/// value), in id order. (String arrays would be the natural form, but vtkio — which the tests
/// read back with — has none.)
pub fn field_vtu_named(
    mesh: &Mesh,
    results: &Results,
    material_names: &[&str],
    extra_cells: &[(&str, &[f64])],
    extra_points: &[(&str, &[f64])],
    options: &VtkOptions,
) -> Result<Vec<u8>> {
    check_mesh(mesh)?;
    check_results(mesh, results)?;
    for (name, values) in extra_cells {
        check_len(name, values.len(), mesh.triangles.len(), "triangle")?;
    }
    for (name, values) in extra_points {
        check_len(name, values.len(), mesh.nodes.len(), "node")?;
    }
    let nodal_flux = vec3(&results.nodal_flux);
    let nodal_gradient = vec3(&results.nodal_gradient);
    let cell_flux = vec3(&results.cell_flux);
    let cell_gradient = vec3(&results.cell_gradient);
    let material = material_ids(mesh)?;
    let mut point = vec![
        VtkArray::scalars("temperature_c", &results.temperature),
        VtkArray::vectors("heat_flux_nodal_w_per_m2", &nodal_flux),
        VtkArray::vectors("gradient_nodal_k_per_m", &nodal_gradient),
    ];
    point.extend(extra_points.iter().map(|(n, v)| VtkArray::scalars(n, v)));
    let mut cell = vec![
        VtkArray::vectors("heat_flux_w_per_m2", &cell_flux),
        VtkArray::vectors("gradient_k_per_m", &cell_gradient),
        VtkArray {
            name: "material",
            components: 1,
            values: VtkValues::I32(&material),
        },
    ];
    cell.extend(extra_cells.iter().map(|(n, v)| VtkArray::scalars(n, v)));
    let ids = id_values(material_names.len())?;
    let field = material_names
        .iter()
        .zip(&ids)
        .map(|(n, id)| VtkArray {
            name: n,
            components: 1,
            values: VtkValues::I32(std::slice::from_ref(id)),
        })
        .collect();
    triangles_vtu(mesh, point, cell, field, options)
}

/// The mesh as a VTK XML unstructured grid (`.vtu`), uncompressed, with cell data `material`
/// (Int32 id), `quality_min_angle_deg` (smallest angle of each triangle, degrees) and
/// `area_m2` (signed area, m²; positive for the counter-clockwise triangles the mesher makes).
pub fn mesh_vtu(mesh: &Mesh) -> Result<Vec<u8>> {
    mesh_vtu_with(mesh, &VtkOptions::default())
}

/// [`mesh_vtu`] with the encoding `options`.
pub fn mesh_vtu_with(mesh: &Mesh, options: &VtkOptions) -> Result<Vec<u8>> {
    check_mesh(mesh)?;
    let t = mesh.triangles.len();
    let angles: Vec<f64> = (0..t).map(|i| min_angle_deg(mesh, i)).collect();
    let areas: Vec<f64> = (0..t).map(|i| mesh.triangle_area(i)).collect();
    let material = material_ids(mesh)?;
    let cell = vec![
        VtkArray {
            name: "material",
            components: 1,
            values: VtkValues::I32(&material),
        },
        VtkArray::scalars("quality_min_angle_deg", &angles),
        VtkArray::scalars("area_m2", &areas),
    ];
    triangles_vtu(mesh, vec![], cell, vec![], options)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The test vectors of RFC 4648, section 10.
    #[test]
    fn base64_matches_the_rfc_4648_test_vectors() {
        for (plain, coded) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ] {
            let mut out = b"x".to_vec();
            base64_into(&mut out, plain.as_bytes());
            assert_eq!(out, format!("x{coded}").into_bytes(), "{plain:?}");
            assert_eq!(base64_len(plain.len()), coded.len());
        }
    }
}
