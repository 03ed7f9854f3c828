//! Particle snapshots as VTK XML PolyData (`.vtp`, binary, zlib-compressed), written through
//! vtkio, and read back for analyses.
//!
//! Every particle is a point (and a vertex cell, so viewers draw it). Point arrays: `velocity`,
//! `density`, `pressure`, `mass`, `viscosity`, `phase`, `id`, `kind`, `initial_position` and
//! `shear_rate` (see [`shear_rate_field`]). Field data: `time`, `step`, `dimension`,
//! `case_name`.
//! In 2D, points and vectors get a zero z component (viewers expect three).
//!
//! vtkio's XML model has no `FieldData` element, so the writer inserts a small ASCII
//! `<FieldData>` block into the document vtkio produced, and the reader parses it back itself.

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
        &ordered.cells,
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
    let invalid = |reason: String| OutputError::invalid(path, "snapshot", reason);
    let text = std::str::from_utf8(&bytes).map_err(|_| invalid("not UTF-8 text".into()))?;
    let (meta, dimension) = parse_field_data(text).map_err(invalid)?;
    let vtk = Vtk::parse_xml(bytes.as_slice())
        .map_err(|err| invalid(format!("vtkio cannot parse it: {err}")))?;
    let piece = match vtk.data {
        DataSet::PolyData { pieces, .. } if pieces.len() == 1 => match pieces.into_iter().next() {
            Some(Piece::Inline(piece)) => piece,
            _ => return Err(invalid("the piece is not stored inline".into())),
        },
        _ => return Err(invalid("expected PolyData with exactly one piece".into())),
    };
    snapshot_from_piece(*piece, meta, dimension).map_err(invalid)
}

fn snapshot_from_piece(
    piece: PolyDataPiece,
    meta: SnapshotMeta,
    dimension: usize,
) -> Result<Snapshot, String> {
    let mut arrays = ArraySet::new(piece.data.point);
    let position = xyz(piece.points, "points")?;
    let n = position.len();
    let snapshot = Snapshot {
        meta,
        dimension,
        velocity: xyz(arrays.take("velocity")?, "velocity")?,
        density: f64s(arrays.take("density")?, "density")?,
        pressure: f64s(arrays.take("pressure")?, "pressure")?,
        mass: f64s(arrays.take("mass")?, "mass")?,
        viscosity: f64s(arrays.take("viscosity")?, "viscosity")?,
        phase: arrays
            .take("phase")?
            .into_vec::<u16>()
            .ok_or("phase is not UInt16")?,
        kind: kinds(arrays.take("kind")?)?,
        id: arrays
            .take("id")?
            .into_vec::<u64>()
            .ok_or("id is not UInt64")?,
        initial_position: xyz(arrays.take("initial_position")?, "initial_position")?,
        shear_rate: f64s(arrays.take("shear_rate")?, "shear_rate")?,
        position,
    };
    let lengths = [
        snapshot.velocity.len(),
        snapshot.density.len(),
        snapshot.pressure.len(),
        snapshot.mass.len(),
        snapshot.viscosity.len(),
        snapshot.phase.len(),
        snapshot.kind.len(),
        snapshot.id.len(),
        snapshot.initial_position.len(),
        snapshot.shear_rate.len(),
    ];
    if lengths.iter().any(|&len| len != n) {
        return Err(format!(
            "point arrays disagree in length with the {n} points"
        ));
    }
    Ok(snapshot)
}

/// The point arrays of a piece, taken out by name.
struct ArraySet(Vec<DataArray>);

impl ArraySet {
    fn new(attributes: Vec<Attribute>) -> Self {
        ArraySet(
            attributes
                .into_iter()
                .filter_map(|a| match a {
                    Attribute::DataArray(array) => Some(array),
                    Attribute::Field { .. } => None,
                })
                .collect(),
        )
    }

    fn take(&mut self, name: &str) -> Result<IOBuffer, String> {
        let at = self
            .0
            .iter()
            .position(|a| a.name == name)
            .ok_or_else(|| format!("the point array `{name}` is missing"))?;
        Ok(self.0.swap_remove(at).data)
    }
}

fn f64s(buffer: IOBuffer, name: &str) -> Result<Vec<f64>, String> {
    buffer
        .into_vec::<f64>()
        .ok_or_else(|| format!("{name} is not Float64"))
}

fn xyz(buffer: IOBuffer, name: &str) -> Result<Vec<[f64; 3]>, String> {
    let flat = f64s(buffer, name)?;
    if flat.len() % 3 != 0 {
        return Err(format!("{name} does not have three components"));
    }
    Ok(flat.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect())
}

fn kinds(buffer: IOBuffer) -> Result<Vec<Kind>, String> {
    let raw = buffer.into_vec::<u8>().ok_or("kind is not UInt8")?;
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
        let rest = &block[at..];
        let start = rest.find('>').ok_or("unterminated field data")? + 1;
        let end = rest.find("</").ok_or("unterminated field data")?;
        Ok(rest[start..end].trim())
    };
    let time = value("time")?
        .parse::<f64>()
        .map_err(|_| "field data `time` is not a number")?;
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
