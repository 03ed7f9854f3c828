//! Particle snapshots as VTK XML PolyData (`.vtp`, binary, zlib-compressed), written through
//! vtkio, and read back for analyses (by [`super::vtk_xml`], which never panics).
//!
//! Every particle is a point (and a vertex cell, so viewers draw it). Point arrays: `velocity`,
//! `density`, `pressure`, `mass`, `viscosity`, `phase`, `id`, `kind`, `initial_position` and
//! `shear_rate` (see [`shear_rate_field`]). Field data: `time`, `step`, `dimension`,
//! `case_name`.
//! In 2D, points and vectors get a zero z component (viewers expect three).
//!
//! vtkio's XML model has no `FieldData` element, so the writer inserts a small ASCII
//! `<FieldData>` block into the document vtkio produced, and the reader parses it back itself.
//! Without the FieldData block, the dimension, time or case name, a snapshot is refused.

use std::io::Write;
use std::path::Path;

use lamella_cells::{Domain, Vector};
use lamella_sph::{Kernel, Kind, Particles, shear_rates};
use vtkio::model::{
    Attribute, Attributes, ByteOrder, DataArray, DataSet, ElementType, IOBuffer, Piece,
    PolyDataPiece, Version, VertexNumbers, Vtk,
};
use vtkio::xml::Compressor;

use super::OutputError;
use super::atomic::write_atomically;
use super::cell_order::CellOrdered;
use super::vtk_xml::{attribute, decode_binary, start_tag};

/// zlib level for snapshots: fast, still a good ratio on particle data (common practice).
const COMPRESSION_LEVEL: u32 = 5;

/// What a snapshot says about itself besides the particle arrays.
#[derive(Clone, Debug, PartialEq)]
pub struct SnapshotMeta {
    /// Simulated time (s).
    pub time: f64,
    /// Time step number.
    pub step: u64,
    /// Name of the case that produced the run.
    pub case_name: String,
}

/// A snapshot read back from a `.vtp` file: dimension-free arrays, one entry per particle.
/// Vectors always have three components (z = 0 in 2D).
#[derive(Clone, Debug, PartialEq)]
pub struct Snapshot {
    /// Time, step and case name.
    pub meta: SnapshotMeta,
    /// Spatial dimension of the run (2 or 3).
    pub dimension: usize,
    /// Position (m).
    pub position: Vec<[f64; 3]>,
    /// Velocity (m/s).
    pub velocity: Vec<[f64; 3]>,
    /// Density (kg/m³).
    pub density: Vec<f64>,
    /// Pressure (Pa).
    pub pressure: Vec<f64>,
    /// Mass (kg in 3D, kg/m in 2D).
    pub mass: Vec<f64>,
    /// Dynamic viscosity (Pa·s).
    pub viscosity: Vec<f64>,
    /// Phase index.
    pub phase: Vec<u16>,
    /// Fluid or wall.
    pub kind: Vec<Kind>,
    /// Stable particle identity.
    pub id: Vec<u64>,
    /// Position at time zero (m).
    pub initial_position: Vec<[f64; 3]>,
    /// Shear rate (1/s); NaN for wall particles.
    pub shear_rate: Vec<f64>,
}

impl Snapshot {
    /// Number of particles.
    pub fn len(&self) -> usize {
        self.position.len()
    }

    /// True when the snapshot holds no particle.
    pub fn is_empty(&self) -> bool {
        self.position.is_empty()
    }

    /// The particle state in dimension `V` (fails when the snapshot has another dimension).
    pub fn to_particles<V: Vector>(&self) -> Result<Particles<V>, String> {
        if self.dimension != V::DIM {
            return Err(format!(
                "the snapshot is {}D but a {}D state was asked for",
                self.dimension,
                V::DIM
            ));
        }
        let vectors = |a: &[[f64; 3]]| a.iter().map(|p| V::from_fn(|i| p[i])).collect();
        Ok(Particles {
            position: vectors(&self.position),
            velocity: vectors(&self.velocity),
            density: self.density.clone(),
            pressure: self.pressure.clone(),
            mass: self.mass.clone(),
            viscosity: self.viscosity.clone(),
            phase: self.phase.clone(),
            kind: self.kind.clone(),
            id: self.id.clone(),
            initial_position: vectors(&self.initial_position),
        })
    }
}

/// The `shear_rate` array of a snapshot: γ̇ = √(2 D:D) (1/s) of every fluid particle from the
/// corrected SPH velocity gradient ([`lamella_sph::shear_rate`]), NaN for wall particles, in
/// the order of `particles`. Neighbours are searched over the solver's `domain` with the
/// `kernel` support, across periodic seams.
pub fn shear_rate_field<V: Vector>(
    particles: &Particles<V>,
    domain: Domain<V>,
    kernel: &Kernel,
) -> Result<Vec<f64>, OutputError> {
    let ordered = CellOrdered::new(particles, domain, kernel.support_radius())?;
    let p = &ordered.particles;
    let volume: Vec<f64> = p
        .mass
        .iter()
        .zip(&p.density)
        .map(|(m, rho)| m / rho)
        .collect();
    let rates = shear_rates(
        ordered.cells(),
        &p.position,
        &p.velocity,
        &volume,
        &p.kind,
        kernel,
    );
    Ok(ordered.to_given_order(&rates))
}

/// Writes `particles` and their `shear_rate` to `path` as compressed binary `.vtp`,
/// atomically (a crash leaves the old file or none, never half of one).
pub fn write_snapshot<V: Vector>(
    path: &Path,
    particles: &Particles<V>,
    shear_rate: &[f64],
    meta: &SnapshotMeta,
) -> Result<(), OutputError> {
    let document = snapshot_document(particles, shear_rate, meta)
        .map_err(|reason| OutputError::invalid(path, "snapshot", reason))?;
    write_atomically(path, |w| w.write_all(document.as_bytes()))
}

/// The complete XML text of a snapshot.
fn snapshot_document<V: Vector>(
    particles: &Particles<V>,
    shear_rate: &[f64],
    meta: &SnapshotMeta,
) -> Result<String, String> {
    // Destructured without `..`: a new state field fails to compile here until it is written.
    let Particles {
        position,
        velocity,
        density,
        pressure,
        mass,
        viscosity,
        phase,
        kind,
        id,
        initial_position,
    } = particles;
    let n = position.len();
    if shear_rate.len() != n {
        return Err(format!(
            "shear_rate has {} values for {n} particles",
            shear_rate.len()
        ));
    }
    let point = vec![
        vector_array("velocity", velocity),
        scalar_array("density", IOBuffer::F64(density.clone())),
        scalar_array("pressure", IOBuffer::F64(pressure.clone())),
        scalar_array("mass", IOBuffer::F64(mass.clone())),
        scalar_array("viscosity", IOBuffer::F64(viscosity.clone())),
        scalar_array("phase", IOBuffer::U16(phase.clone())),
        scalar_array("id", IOBuffer::U64(id.clone())),
        scalar_array(
            "kind",
            IOBuffer::U8(kind.iter().map(|&k| k as u8).collect()),
        ),
        vector_array("initial_position", initial_position),
        scalar_array("shear_rate", IOBuffer::F64(shear_rate.to_vec())),
    ];
    let piece = PolyDataPiece {
        points: IOBuffer::F64(padded_xyz(position)),
        verts: Some(VertexNumbers::XML {
            connectivity: (0..n as u64).collect(),
            offsets: (1..=n as u64).collect(),
        }),
        lines: None,
        polys: None,
        strips: None,
        data: Attributes {
            point,
            cell: Vec::new(),
        },
    };
    let vtk = Vtk {
        version: Version::new_xml(1, 0),
        title: String::new(),
        byte_order: ByteOrder::LittleEndian,
        data: DataSet::PolyData {
            meta: None,
            pieces: vec![Piece::Inline(Box::new(piece))],
        },
        file_path: None,
    };
    let xml = vtk
        .try_into_xml_format(Compressor::ZLib, COMPRESSION_LEVEL)
        .map_err(|err| format!("vtkio cannot encode the particles: {err}"))?;
    let mut text = xml.to_string();
    let anchor = "<PolyData>";
    let at = text
        .find(anchor)
        .ok_or("vtkio wrote no <PolyData> element")?
        + anchor.len();
    text.insert_str(at, &field_data_block(meta, V::DIM));
    Ok(text)
}

fn scalar_array(name: &str, data: IOBuffer) -> Attribute {
    Attribute::DataArray(DataArray {
        name: name.to_string(),
        elem: ElementType::Scalars {
            num_comp: 1,
            lookup_table: None,
        },
        data,
    })
}

fn vector_array<V: Vector>(name: &str, values: &[V]) -> Attribute {
    Attribute::DataArray(DataArray {
        name: name.to_string(),
        elem: ElementType::Vectors,
        data: IOBuffer::F64(padded_xyz(values)),
    })
}

/// Interleaved x, y, z components; z = 0 in 2D.
fn padded_xyz<V: Vector>(values: &[V]) -> Vec<f64> {
    values
        .iter()
        .flat_map(|v| (0..3).map(move |axis| if axis < V::DIM { v.get(axis) } else { 0.0 }))
        .collect()
}

/// The `<FieldData>` element: time (Float64), step (UInt64), dimension (UInt8) and the case
/// name as a VTK string array (ASCII bytes, each string ended by a 0 byte).
fn field_data_block(meta: &SnapshotMeta, dimension: usize) -> String {
    let name_bytes: Vec<String> = meta
        .case_name
        .bytes()
        .chain(std::iter::once(0))
        .map(|b| b.to_string())
        .collect();
    format!(
        "<FieldData>\
         <DataArray type=\"Float64\" Name=\"time\" NumberOfTuples=\"1\" format=\"ascii\">{:e}</DataArray>\
         <DataArray type=\"UInt64\" Name=\"step\" NumberOfTuples=\"1\" format=\"ascii\">{}</DataArray>\
         <DataArray type=\"UInt8\" Name=\"dimension\" NumberOfTuples=\"1\" format=\"ascii\">{}</DataArray>\
         <Array type=\"String\" Name=\"case_name\" NumberOfTuples=\"1\" format=\"ascii\">{}</Array>\
         </FieldData>",
        meta.time,
        meta.step,
        dimension,
        name_bytes.join(" ")
    )
}

/// Reads a snapshot written by [`write_snapshot`].
pub fn read_snapshot(path: &Path) -> Result<Snapshot, OutputError> {
    let bytes = std::fs::read(path).map_err(|err| OutputError::read(path, err))?;
    parse_snapshot(&bytes).map_err(|reason| OutputError::invalid(path, "snapshot", reason))
}

/// Parses the bytes of a snapshot written by [`write_snapshot`]; the error says what is wrong
/// (without the file name; see [`read_snapshot`]). Damaged input gives an error, never a
/// panic.
pub fn parse_snapshot(bytes: &[u8]) -> Result<Snapshot, String> {
    let text = std::str::from_utf8(bytes)
        .map_err(|e| format!("not UTF-8 text (at byte {})", e.valid_up_to()))?;
    let (root, _) = start_tag(text, "VTKFile", 0)?;
    for (key, wanted) in [
        ("type", "PolyData"),
        ("byte_order", "LittleEndian"),
        ("header_type", "UInt64"),
        ("compressor", "vtkZLibDataCompressor"),
    ] {
        if attribute(&root, key) != Some(wanted) {
            return Err(format!("the VTKFile attribute {key} is not \"{wanted}\""));
        }
    }
    let (meta, dimension) = parse_field_data(text)?;
    let (piece, piece_end) = start_tag(text, "Piece", 0)?;
    let n = attribute(&piece, "NumberOfPoints")
        .and_then(|v| v.parse::<usize>().ok())
        .ok_or("the Piece has no whole NumberOfPoints")?;
    let arrays = BinaryArrays::after(text, piece_end)?;
    let vectors = |name: &str| -> Result<Vec<[f64; 3]>, String> {
        let flat = f64s(&arrays.bytes(name, "Float64", 3, n)?);
        Ok(flat.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect())
    };
    let scalars = |name: &str| Ok::<_, String>(f64s(&arrays.bytes(name, "Float64", 1, n)?));
    Ok(Snapshot {
        meta,
        dimension,
        position: vectors("Points")?,
        velocity: vectors("velocity")?,
        density: scalars("density")?,
        pressure: scalars("pressure")?,
        mass: scalars("mass")?,
        viscosity: scalars("viscosity")?,
        phase: arrays
            .bytes("phase", "UInt16", 1, n)?
            .chunks_exact(2)
            .map(|c| u16::from_le_bytes([c[0], c[1]]))
            .collect(),
        kind: kinds(arrays.bytes("kind", "UInt8", 1, n)?)?,
        id: arrays
            .bytes("id", "UInt64", 1, n)?
            .chunks_exact(8)
            .map(|c| u64::from_le_bytes(c.try_into().expect("eight bytes")))
            .collect(),
        initial_position: vectors("initial_position")?,
        shear_rate: scalars("shear_rate")?,
    })
}

/// The `<DataArray>` elements of a piece: their attributes and text, by name.
struct BinaryArrays<'a>(Vec<(Vec<(&'a str, &'a str)>, &'a str)>);

impl<'a> BinaryArrays<'a> {
    /// Every `<DataArray>` element of `text` after byte `from`.
    fn after(text: &'a str, from: usize) -> Result<Self, String> {
        let mut found = Vec::new();
        let mut at = from;
        while text
            .get(at..)
            .is_some_and(|rest| rest.contains("<DataArray"))
        {
            let (attributes, start) = start_tag(text, "DataArray", at)?;
            let length = text
                .get(start..)
                .and_then(|rest| rest.find("</DataArray>"))
                .ok_or("a DataArray is not closed")?;
            found.push((attributes, &text[start..start + length]));
            at = start + length;
        }
        Ok(BinaryArrays(found))
    }

    /// The decoded bytes of array `name`, checked to be `kind` with `components` per point,
    /// for `points` points.
    fn bytes(
        &self,
        name: &str,
        kind: &str,
        components: usize,
        points: usize,
    ) -> Result<Vec<u8>, String> {
        let (attributes, text) = self
            .0
            .iter()
            .find(|(a, _)| attribute(a, "Name") == Some(name))
            .ok_or_else(|| format!("the point array `{name}` is missing"))?;
        if attribute(attributes, "type") != Some(kind) {
            return Err(format!("{name} is not {kind}"));
        }
        let given = attribute(attributes, "NumberOfComponents").unwrap_or("1");
        if given != components.to_string() {
            return Err(format!(
                "{name} has {given:?} components where {components} are expected"
            ));
        }
        if attribute(attributes, "format") != Some("binary") {
            return Err(format!("{name} is not in binary format"));
        }
        let width = match kind {
            "Float64" | "UInt64" => 8,
            "UInt16" => 2,
            _ => 1,
        };
        let expected = points
            .checked_mul(components * width)
            .ok_or_else(|| format!("{points} points are more than memory holds"))?;
        decode_binary(text, expected).map_err(|e| format!("array `{name}`: {e}"))
    }
}

fn f64s(bytes: &[u8]) -> Vec<f64> {
    bytes
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().expect("eight bytes")))
        .collect()
}

fn kinds(raw: Vec<u8>) -> Result<Vec<Kind>, String> {
    raw.into_iter()
        .map(|k| match k {
            0 => Ok(Kind::Fluid),
            1 => Ok(Kind::Wall),
            other => Err(format!("kind {other} is neither fluid (0) nor wall (1)")),
        })
        .collect()
}

/// Parses the `<FieldData>` block written by [`field_data_block`].
fn parse_field_data(text: &str) -> Result<(SnapshotMeta, usize), String> {
    let block = between(text, "<FieldData>", "</FieldData>").ok_or("no <FieldData> block")?;
    let value = |name: &str| -> Result<&str, String> {
        let at = block
            .find(&format!("Name=\"{name}\""))
            .ok_or_else(|| format!("field data `{name}` is missing"))?;
        let (_, after) = block[at..]
            .split_once('>')
            .ok_or("unterminated field data")?;
        let (value, _) = after.split_once("</").ok_or("unterminated field data")?;
        Ok(value.trim())
    };
    let time = value("time")?
        .parse::<f64>()
        .ok()
        .filter(|t| t.is_finite())
        .ok_or("field data `time` is not a finite number")?;
    let step = value("step")?
        .parse::<u64>()
        .map_err(|_| "field data `step` is not a whole number")?;
    let dimension = value("dimension")?
        .parse::<usize>()
        .ok()
        .filter(|d| (2..=3).contains(d))
        .ok_or("field data `dimension` is not 2 or 3")?;
    let bytes: Vec<u8> = value("case_name")?
        .split_whitespace()
        .map(str::parse::<u8>)
        .collect::<Result<_, _>>()
        .map_err(|_| "field data `case_name` is not a byte list")?;
    let name_end = bytes.iter().position(|&b| b == 0).unwrap_or(bytes.len());
    let case_name = String::from_utf8(bytes[..name_end].to_vec())
        .map_err(|_| "field data `case_name` is not UTF-8")?;
    Ok((
        SnapshotMeta {
            time,
            step,
            case_name,
        },
        dimension,
    ))
}

fn between<'a>(text: &'a str, open: &str, close: &str) -> Option<&'a str> {
    let start = text.find(open)? + open.len();
    let end = start + text[start..].find(close)?;
    Some(&text[start..end])
}
