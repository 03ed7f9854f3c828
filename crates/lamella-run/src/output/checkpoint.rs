//! Checkpoints: the complete run state in a versioned binary format with a CRC-32 checksum,
//! written atomically, the two newest kept, read back with validation and fallback.
//!
//! Layout (all numbers little-endian):
//!
//! | bytes | content |
//! | --- | --- |
//! | 8 | magic `LAMELLA\x1a` |
//! | 4 | format version (u32, currently 1) |
//! | 4 | dimension (u32, 2 or 3) |
//! | 8 + 8 | time (f64 bits), step (u64) |
//! | 4 + n | case name (u32 byte length + UTF-8) |
//! | 4 | CRC-32 of the case file text |
//! | 4 + … | named values: count (u32), each name (u16 length + UTF-8), tag (u8: 1 f64, 2 u64), 8 bytes |
//! | 4 + … | named arrays: count (u32), each name, tag (u8: 1 f64, 2 u64, 3 u16, 4 u8), components (u32), element count (u64), the elements |
//! | 4 | CRC-32 (IEEE) of every byte before it |
//!
//! The particle state travels as the arrays `position velocity density pressure mass viscosity
//! phase kind id initial_position`; further arrays and values (solver extras, runner and output
//! bookkeeping) are stored by name, so nothing hidden is lost and bit-identical resumes are possible.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use lamella_cells::Vector;
use lamella_sph::{Field, FieldMut, Kind, Particles};

use super::OutputError;
use super::atomic::write_atomically;

/// First eight bytes of every checkpoint.
pub const MAGIC: [u8; 8] = *b"LAMELLA\x1a";
/// The format version this build writes and reads.
pub const FORMAT_VERSION: u32 = 1;
/// How many checkpoints a run folder keeps.
pub const KEPT: usize = 2;
/// Test hook: when set to `n`, the n-th checkpoint this process writes stops for a minute after
/// half of its temporary file is on disk, so a test can kill the process in mid-write; `n:ms`
/// stops for `ms` milliseconds instead (a test signals the process in mid-write).
pub const PAUSE_HOOK_ENV: &str = "LAMELLA_TEST_PAUSE_IN_CHECKPOINT";

/// Checkpoints written by this process (for [`PAUSE_HOOK_ENV`]).
static WRITTEN_BY_PROCESS: AtomicU64 = AtomicU64::new(0);

/// A named scalar of run bookkeeping.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Value {
    /// A real number, stored bit for bit.
    F64(f64),
    /// A count or index.
    U64(u64),
}

/// A named per-particle (or other) array beyond the particle state.
#[derive(Clone, Debug, PartialEq)]
pub enum ArrayData {
    /// Reals, `components` per element, stored bit for bit.
    F64 {
        /// Components per element (1 for scalars, the dimension for vectors).
        components: u32,
        /// Flat values, `components` per element.
        values: Vec<f64>,
    },
    /// Unsigned 64-bit integers.
    U64(Vec<u64>),
    /// Unsigned 16-bit integers.
    U16(Vec<u16>),
    /// Bytes.
    U8(Vec<u8>),
}

/// Everything needed to continue a run exactly where it stood.
#[derive(Clone, Debug, PartialEq)]
pub struct Checkpoint<V: Vector> {
    /// Simulated time (s).
    pub time: f64,
    /// Steps taken.
    pub step: u64,
    /// Name of the case.
    pub case_name: String,
    /// CRC-32 of the case file text, to detect a case changed under a run folder.
    pub case_checksum: u32,
    /// The particle state.
    pub particles: Particles<V>,
    /// Named bookkeeping values (runner clocks, output counters...).
    pub values: Vec<(String, Value)>,
    /// Named extra arrays (solver state not in `Particles`).
    pub arrays: Vec<(String, ArrayData)>,
}

impl<V: Vector> Checkpoint<V> {
    /// The named value `name`, if stored.
    pub fn value(&self, name: &str) -> Option<Value> {
        self.values.iter().find(|(n, _)| n == name).map(|(_, v)| *v)
    }

    /// The named real `name`, if stored as one.
    pub fn f64_value(&self, name: &str) -> Option<f64> {
        match self.value(name)? {
            Value::F64(x) => Some(x),
            Value::U64(_) => None,
        }
    }

    /// The named count `name`, if stored as one.
    pub fn u64_value(&self, name: &str) -> Option<u64> {
        match self.value(name)? {
            Value::U64(x) => Some(x),
            Value::F64(_) => None,
        }
    }

    /// The named extra array `name`, if stored.
    pub fn array(&self, name: &str) -> Option<&ArrayData> {
        self.arrays.iter().find(|(n, _)| n == name).map(|(_, a)| a)
    }
}

/// The CRC-32 used for case texts and checkpoint bodies.
pub fn checksum(bytes: &[u8]) -> u32 {
    crc32fast::hash(bytes)
}

/// Encodes a checkpoint into its file bytes (checksum included).
pub fn encode<V: Vector>(checkpoint: &Checkpoint<V>) -> Vec<u8> {
    let mut out = Vec::new();
    out.extend_from_slice(&MAGIC);
    put_u32(&mut out, FORMAT_VERSION);
    put_u32(&mut out, V::DIM as u32);
    out.extend_from_slice(&checkpoint.time.to_bits().to_le_bytes());
    out.extend_from_slice(&checkpoint.step.to_le_bytes());
    put_u32(&mut out, checkpoint.case_name.len() as u32);
    out.extend_from_slice(checkpoint.case_name.as_bytes());
    put_u32(&mut out, checkpoint.case_checksum);

    put_u32(&mut out, checkpoint.values.len() as u32);
    for (name, value) in &checkpoint.values {
        put_name(&mut out, name);
        let (tag, bits) = match *value {
            Value::F64(x) => (1u8, x.to_bits()),
            Value::U64(x) => (2u8, x),
        };
        out.push(tag);
        out.extend_from_slice(&bits.to_le_bytes());
    }

    let state = state_arrays(&checkpoint.particles);
    put_u32(&mut out, (state.len() + checkpoint.arrays.len()) as u32);
    for (name, array) in state.iter().chain(&checkpoint.arrays) {
        put_name(&mut out, name);
        put_array(&mut out, array);
    }
    let crc = checksum(&out);
    put_u32(&mut out, crc);
    out
}

/// The particle state as named arrays, in file order (the order of
/// [`Particles::for_each_field`], so every per-particle field is saved).
fn state_arrays<V: Vector>(particles: &Particles<V>) -> Vec<(String, ArrayData)> {
    let mut arrays = Vec::new();
    particles.for_each_field(|name, field| {
        let array = match field {
            Field::Vectors(v) => ArrayData::F64 {
                components: V::DIM as u32,
                values: v
                    .iter()
                    .flat_map(|x| (0..V::DIM).map(move |axis| x.get(axis)))
                    .collect(),
            },
            Field::Scalars(v) => ArrayData::F64 {
                components: 1,
                values: v.to_vec(),
            },
            Field::Phases(v) => ArrayData::U16(v.to_vec()),
            Field::Kinds(v) => ArrayData::U8(v.iter().map(|&k| k as u8).collect()),
            Field::Ids(v) => ArrayData::U64(v.to_vec()),
        };
        arrays.push((name.to_string(), array));
    });
    arrays
}

fn put_u32(out: &mut Vec<u8>, x: u32) {
    out.extend_from_slice(&x.to_le_bytes());
}

fn put_name(out: &mut Vec<u8>, name: &str) {
    out.extend_from_slice(&(name.len() as u16).to_le_bytes());
    out.extend_from_slice(name.as_bytes());
}

fn put_array(out: &mut Vec<u8>, array: &ArrayData) {
    let (tag, components, count) = match array {
        ArrayData::F64 { components, values } => (1u8, *components, values.len()),
        ArrayData::U64(v) => (2, 1, v.len()),
        ArrayData::U16(v) => (3, 1, v.len()),
        ArrayData::U8(v) => (4, 1, v.len()),
    };
    out.push(tag);
    put_u32(out, components);
    out.extend_from_slice(&(count as u64).to_le_bytes());
    match array {
        ArrayData::F64 { values, .. } => values
            .iter()
            .for_each(|x| out.extend_from_slice(&x.to_bits().to_le_bytes())),
        ArrayData::U64(v) => v
            .iter()
            .for_each(|x| out.extend_from_slice(&x.to_le_bytes())),
        ArrayData::U16(v) => v
            .iter()
            .for_each(|x| out.extend_from_slice(&x.to_le_bytes())),
        ArrayData::U8(v) => out.extend_from_slice(v),
    }
}

/// Decodes checkpoint bytes, checking magic, version, dimension, checksum and every length.
/// The error says what is wrong (without the file name; see [`read_checkpoint`]).
pub fn decode<V: Vector>(bytes: &[u8]) -> Result<Checkpoint<V>, String> {
    if bytes.len() < MAGIC.len() || bytes[..MAGIC.len()] != MAGIC {
        return Err(
            "it does not start with the checkpoint magic (not a Lamella checkpoint)".into(),
        );
    }
    if bytes.len() < MAGIC.len() + 8 + 4 {
        return Err(format!("it is truncated ({} bytes)", bytes.len()));
    }
    let (body, stored) = bytes.split_at(bytes.len() - 4);
    let stored = u32::from_le_bytes(stored.try_into().expect("four bytes"));
    let computed = checksum(body);
    if stored != computed {
        return Err(format!(
            "checksum mismatch (stored {stored:08x}, computed {computed:08x}): \
             the file is truncated or damaged"
        ));
    }
    let mut reader = Reader {
        bytes: body,
        at: MAGIC.len(),
    };
    let version = reader.u32()?;
    if version != FORMAT_VERSION {
        return Err(format!(
            "format version {version}, but this build reads version {FORMAT_VERSION}"
        ));
    }
    let dimension = reader.u32()? as usize;
    if dimension != V::DIM {
        return Err(format!(
            "it holds a {dimension}D state but the case is {}D",
            V::DIM
        ));
    }
    let time = f64::from_bits(reader.u64()?);
    if !(time.is_finite() && time >= 0.0) {
        return Err(format!(
            "its time is {time}, not a finite time of 0 s or later"
        ));
    }
    let step = reader.u64()?;
    let name_len = reader.u32()? as usize;
    let case_name = reader.string(name_len)?;
    let case_checksum = reader.u32()?;

    let value_count = reader.u32()?;
    let mut values = Vec::new();
    for _ in 0..value_count {
        let name = reader.name()?;
        let tag = reader.u8()?;
        let bits = reader.u64()?;
        let value = match tag {
            1 => Value::F64(f64::from_bits(bits)),
            2 => Value::U64(bits),
            other => return Err(format!("value `{name}` has unknown type tag {other}")),
        };
        values.push((name, value));
    }

    let array_count = reader.u32()?;
    let mut arrays = Vec::new();
    for _ in 0..array_count {
        let name = reader.name()?;
        arrays.push((name.clone(), reader.array(&name)?));
    }
    if reader.at != body.len() {
        return Err(format!(
            "{} unexpected bytes after the last array",
            body.len() - reader.at
        ));
    }
    let particles = take_state::<V>(&mut arrays)?;
    check_finite(&particles)?;
    Ok(Checkpoint {
        time,
        step,
        case_name,
        case_checksum,
        particles,
        values,
        arrays,
    })
}

/// Takes the particle-state arrays out of `arrays` (every field of
/// [`Particles::for_each_field_mut`]) and checks their types and lengths.
fn take_state<V: Vector>(arrays: &mut Vec<(String, ArrayData)>) -> Result<Particles<V>, String> {
    let mut particles = Particles::default();
    let mut failure = None;
    particles.for_each_field_mut(|name, field| {
        if failure.is_none()
            && let Err(why) = restore_field(arrays, name, field)
        {
            failure = Some(why);
        }
    });
    if let Some(why) = failure {
        return Err(why);
    }
    if particles.inconsistent_field().is_some() {
        return Err(format!(
            "the particle arrays disagree in length ({} positions)",
            particles.len()
        ));
    }
    Ok(particles)
}

/// Takes the array `name` out of `arrays` into `field`, checking its type.
fn restore_field<V: Vector>(
    arrays: &mut Vec<(String, ArrayData)>,
    name: &str,
    field: FieldMut<'_, V>,
) -> Result<(), String> {
    let at = arrays
        .iter()
        .position(|(n, _)| n == name)
        .ok_or_else(|| format!("the array `{name}` is missing"))?;
    let array = arrays.remove(at).1;
    match (field, array) {
        (FieldMut::Vectors(v), ArrayData::F64 { components, values })
            if components as usize == V::DIM =>
        {
            *v = values
                .chunks_exact(V::DIM)
                .map(|c| V::from_fn(|axis| c[axis]))
                .collect();
        }
        (FieldMut::Vectors(_), _) => {
            return Err(format!("`{name}` is not a {}D vector array", V::DIM));
        }
        (
            FieldMut::Scalars(v),
            ArrayData::F64 {
                components: 1,
                values,
            },
        ) => *v = values,
        (FieldMut::Scalars(_), _) => return Err(format!("`{name}` is not a real scalar array")),
        (FieldMut::Phases(v), ArrayData::U16(values)) => *v = values,
        (FieldMut::Phases(_), _) => return Err(format!("`{name}` is not a UInt16 array")),
        (FieldMut::Kinds(v), ArrayData::U8(values)) => {
            *v = values
                .into_iter()
                .map(|k| match k {
                    0 => Ok(Kind::Fluid),
                    1 => Ok(Kind::Wall),
                    other => Err(format!("`{name}` holds {other}, neither fluid nor wall")),
                })
                .collect::<Result<_, _>>()?;
        }
        (FieldMut::Kinds(_), _) => return Err(format!("`{name}` is not a UInt8 array")),
        (FieldMut::Ids(v), ArrayData::U64(values)) => *v = values,
        (FieldMut::Ids(_), _) => return Err(format!("`{name}` is not a UInt64 array")),
    }
    Ok(())
}

/// Refuses a state with a non-finite position, velocity, density, pressure, mass or
/// viscosity: the solver never saves one (it stops at the last good state instead).
fn check_finite<V: Vector>(p: &Particles<V>) -> Result<(), String> {
    let vectors = [("position", &p.position), ("velocity", &p.velocity)];
    for (name, values) in vectors {
        if let Some(i) = values
            .iter()
            .position(|v| (0..V::DIM).any(|axis| !v.get(axis).is_finite()))
        {
            return Err(format!(
                "the {name} of particle {} is not finite",
                p.id.get(i).copied().unwrap_or(i as u64)
            ));
        }
    }
    let scalars = [
        ("density", &p.density),
        ("pressure", &p.pressure),
        ("mass", &p.mass),
        ("viscosity", &p.viscosity),
    ];
    for (name, values) in scalars {
        if let Some(i) = values.iter().position(|x| !x.is_finite()) {
            return Err(format!(
                "the {name} of particle {} is not finite",
                p.id.get(i).copied().unwrap_or(i as u64)
            ));
        }
    }
    Ok(())
}

/// Where every particle of a checkpoint must lie: the solver's search box widened by a
/// margin on each side (particles of a healthy run never leave it): the first particle outside,
/// with its id and position, if any.
pub fn outside_by<V: Vector>(
    particles: &Particles<V>,
    lower: V,
    upper: V,
    margin: f64,
) -> Option<(u64, V)> {
    particles
        .position
        .iter()
        .zip(&particles.id)
        .find(|(x, _)| {
            (0..V::DIM).any(|axis| {
                x.get(axis) < lower.get(axis) - margin || x.get(axis) > upper.get(axis) + margin
            })
        })
        .map(|(x, id)| (*id, *x))
}

/// Bounds-checked little-endian reading.
struct Reader<'a> {
    bytes: &'a [u8],
    at: usize,
}

impl Reader<'_> {
    fn take(&mut self, n: usize) -> Result<&[u8], String> {
        let end = self
            .at
            .checked_add(n)
            .filter(|&end| end <= self.bytes.len())
            .ok_or_else(|| format!("it ends early (wanted {n} bytes at offset {})", self.at))?;
        let slice = &self.bytes[self.at..end];
        self.at = end;
        Ok(slice)
    }
    fn u8(&mut self) -> Result<u8, String> {
        Ok(self.take(1)?[0])
    }
    fn u16(&mut self) -> Result<u16, String> {
        Ok(u16::from_le_bytes(self.take(2)?.try_into().expect("2")))
    }
    fn u32(&mut self) -> Result<u32, String> {
        Ok(u32::from_le_bytes(self.take(4)?.try_into().expect("4")))
    }
    fn u64(&mut self) -> Result<u64, String> {
        Ok(u64::from_le_bytes(self.take(8)?.try_into().expect("8")))
    }
    fn string(&mut self, len: usize) -> Result<String, String> {
        String::from_utf8(self.take(len)?.to_vec()).map_err(|_| "a name is not UTF-8".into())
    }
    fn name(&mut self) -> Result<String, String> {
        let len = self.u16()? as usize;
        self.string(len)
    }
    fn array(&mut self, name: &str) -> Result<ArrayData, String> {
        let tag = self.u8()?;
        let components = self.u32()?;
        let count = usize::try_from(self.u64()?).map_err(|_| format!("`{name}` is too long"))?;
        let width = match tag {
            1 | 2 => 8,
            3 => 2,
            4 => 1,
            other => return Err(format!("array `{name}` has unknown type tag {other}")),
        };
        if tag == 1 && (components == 0 || count % components as usize != 0) {
            return Err(format!(
                "array `{name}` has {count} values, not a multiple of {components} components"
            ));
        }
        let raw = self.take(count.checked_mul(width).ok_or("array too long")?)?;
        Ok(match tag {
            1 => ArrayData::F64 {
                components,
                values: raw
                    .chunks_exact(8)
                    .map(|c| f64::from_bits(u64::from_le_bytes(c.try_into().expect("8"))))
                    .collect(),
            },
            2 => ArrayData::U64(
                raw.chunks_exact(8)
                    .map(|c| u64::from_le_bytes(c.try_into().expect("8")))
                    .collect(),
            ),
            3 => ArrayData::U16(
                raw.chunks_exact(2)
                    .map(|c| u16::from_le_bytes(c.try_into().expect("2")))
                    .collect(),
            ),
            _ => ArrayData::U8(raw.to_vec()),
        })
    }
}

/// The pause [`PAUSE_HOOK_ENV`] asks of the `ordinal`-th checkpoint of this process, if any.
fn pause_in_checkpoint(ordinal: u64) -> Option<std::time::Duration> {
    let hook = std::env::var(PAUSE_HOOK_ENV).ok()?;
    let (n, millis) = match hook.split_once(':') {
        Some((n, ms)) => (n, ms.parse::<u64>().ok()?),
        None => (hook.as_str(), 60_000),
    };
    (n.parse::<u64>().ok()? == ordinal).then(|| std::time::Duration::from_millis(millis))
}

/// Reads and validates one checkpoint file.
pub fn read_checkpoint<V: Vector>(path: &Path) -> Result<Checkpoint<V>, OutputError> {
    let bytes = fs::read(path).map_err(|err| OutputError::read(path, err))?;
    decode(&bytes).map_err(|reason| OutputError::invalid(path, "checkpoint", reason))
}

/// The folder of numbered checkpoints of a run (`checkpoint_000001.bin`, ...).
#[derive(Clone, Debug)]
pub struct CheckpointStore {
    folder: PathBuf,
}

/// A checkpoint found by [`CheckpointStore::newest_valid`], with notes on skipped files.
#[derive(Debug)]
pub struct Restored<V: Vector> {
    /// The checkpoint itself.
    pub checkpoint: Checkpoint<V>,
    /// The file it came from.
    pub path: PathBuf,
    /// One line per newer checkpoint that was skipped because it is damaged.
    pub skipped: Vec<String>,
}

impl CheckpointStore {
    /// The store in `folder` (created on the first write if missing).
    pub fn new(folder: impl Into<PathBuf>) -> Self {
        CheckpointStore {
            folder: folder.into(),
        }
    }

    /// The checkpoint files present, oldest first, with their sequence numbers.
    pub fn list(&self) -> Result<Vec<(u64, PathBuf)>, OutputError> {
        let entries = match fs::read_dir(&self.folder) {
            Ok(entries) => entries,
            Err(err) if err.kind() == std::io::ErrorKind::NotFound => return Ok(Vec::new()),
            Err(err) => return Err(OutputError::read(&self.folder, err)),
        };
        let mut found = Vec::new();
        for entry in entries {
            let path = entry
                .map_err(|err| OutputError::read(&self.folder, err))?
                .path();
            let number = path
                .file_name()
                .and_then(|n| n.to_str())
                .and_then(|n| n.strip_prefix("checkpoint_"))
                .and_then(|n| n.strip_suffix(".bin"))
                .and_then(|n| n.parse::<u64>().ok());
            if let Some(number) = number {
                found.push((number, path));
            }
        }
        found.sort();
        Ok(found)
    }

    /// Writes `checkpoint` as the next numbered file, atomically, then deletes all but the
    /// [`KEPT`] newest. On failure the earlier checkpoints are untouched.
    pub fn write<V: Vector>(&self, checkpoint: &Checkpoint<V>) -> Result<PathBuf, OutputError> {
        fs::create_dir_all(&self.folder).map_err(|err| OutputError::write(&self.folder, err))?;
        let mut existing = self.list()?;
        let number = match existing.last() {
            None => 1,
            Some((n, _)) => match n.checked_add(1) {
                Some(next) => next,
                None => {
                    existing = self.renumber(&existing)?;
                    existing.len() as u64 + 1
                }
            },
        };
        let path = self.folder.join(format!("checkpoint_{number:06}.bin"));
        let bytes = encode(checkpoint);
        let ordinal = WRITTEN_BY_PROCESS.fetch_add(1, Ordering::Relaxed) + 1;
        let pause = pause_in_checkpoint(ordinal);
        write_atomically(&path, |w| {
            let (first, second) = bytes.split_at(bytes.len() / 2);
            w.write_all(first)?;
            if let Some(pause) = pause {
                w.flush()?;
                std::thread::sleep(pause);
            }
            w.write_all(second)
        })?;
        let all = self.list()?;
        for (_, old) in all.iter().take(all.len().saturating_sub(KEPT)) {
            fs::remove_file(old).map_err(|err| OutputError::write(old, err))?;
        }
        Ok(path)
    }

    /// Renames the checkpoints `existing` (oldest first) to the numbers 1, 2, ... in order,
    /// when the next number would pass the largest a `u64` holds. Each rename is atomic and
    /// keeps the order, so a crash in between leaves a folder `newest_valid` still reads.
    fn renumber(&self, existing: &[(u64, PathBuf)]) -> Result<Vec<(u64, PathBuf)>, OutputError> {
        let mut renamed = Vec::new();
        for (k, (number, path)) in existing.iter().enumerate() {
            let target_number = k as u64 + 1;
            let target = self
                .folder
                .join(format!("checkpoint_{target_number:06}.bin"));
            if *number != target_number {
                if target.exists() {
                    return Err(OutputError::Folder(format!(
                        "cannot renumber the checkpoints in {}: {} exists; keep only the two \
                         newest checkpoint files there",
                        self.folder.display(),
                        target.display()
                    )));
                }
                fs::rename(path, &target).map_err(|err| OutputError::write(&target, err))?;
            }
            renamed.push((target_number, target));
        }
        super::atomic::sync_folder(&self.folder)
            .map_err(|err| OutputError::write(&self.folder, err))?;
        Ok(renamed)
    }

    /// The newest checkpoint that reads back whole. Damaged newer files are skipped and listed
    /// in [`Restored::skipped`]; when none is valid, the error names every file and its fault.
    pub fn newest_valid<V: Vector>(&self) -> Result<Restored<V>, OutputError> {
        self.newest_accepted(|_: &Checkpoint<V>| Ok(()))
    }

    /// The newest checkpoint that reads back whole and that `accept` takes (it says why not:
    /// written for another case, a particle outside the domain, ...). Refused and damaged
    /// newer files are skipped and listed in [`Restored::skipped`], so an older valid
    /// checkpoint is used; when none is left, the error names every file and its fault.
    pub fn newest_accepted<V: Vector>(
        &self,
        accept: impl Fn(&Checkpoint<V>) -> Result<(), String>,
    ) -> Result<Restored<V>, OutputError> {
        let files = self.list()?;
        if files.is_empty() {
            return Err(OutputError::Folder(format!(
                "{} holds no checkpoint to resume from",
                self.folder.display()
            )));
        }
        let mut skipped = Vec::new();
        for (_, path) in files.iter().rev() {
            match read_checkpoint::<V>(path) {
                Ok(checkpoint) => match accept(&checkpoint) {
                    Ok(()) => {
                        return Ok(Restored {
                            checkpoint,
                            path: path.clone(),
                            skipped,
                        });
                    }
                    Err(reason) => skipped.push(
                        OutputError::invalid(path, "checkpoint of this run", reason).to_string(),
                    ),
                },
                Err(err) => skipped.push(err.to_string()),
            }
        }
        Err(OutputError::Folder(format!(
            "no valid checkpoint in {}:\n  {}\nthe run cannot be resumed; start it again with \
             `lamella run CASE --out DIR --force`",
            self.folder.display(),
            skipped.join("\n  ")
        )))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use glam::DVec2;

    fn small() -> Checkpoint<DVec2> {
        Checkpoint {
            time: 0.1 + 0.2,
            step: 17,
            case_name: "layers".into(),
            case_checksum: checksum(b"(case text)"),
            particles: Particles {
                position: vec![DVec2::new(0.1, 0.2), DVec2::new(-1e-300, 3.0)],
                velocity: vec![DVec2::new(1.0, -0.0), DVec2::new(f64::MIN_POSITIVE, 2.0)],
                density: vec![1000.5, 999.25],
                pressure: vec![1.0, -2.0],
                mass: vec![0.01, 0.02],
                viscosity: vec![0.1, 1.0],
                phase: vec![0, 1],
                kind: vec![Kind::Fluid, Kind::Wall],
                id: vec![7, 3],
                initial_position: vec![DVec2::new(0.0, 0.2), DVec2::new(0.0, 3.0)],
            },
            values: vec![
                ("next_snapshot_time".into(), Value::F64(0.5)),
                ("snapshots_written".into(), Value::U64(3)),
            ],
            arrays: vec![(
                "shift".into(),
                ArrayData::F64 {
                    components: 2,
                    values: vec![1.0; 4],
                },
            )],
        }
    }

    #[test]
    fn encode_then_decode_is_the_identity() {
        let checkpoint = small();
        let back: Checkpoint<DVec2> = decode(&encode(&checkpoint)).unwrap();
        assert_eq!(back, checkpoint);
        assert_eq!(back.f64_value("next_snapshot_time"), Some(0.5));
        assert_eq!(back.u64_value("snapshots_written"), Some(3));
        assert!(back.array("shift").is_some());
        // -0.0 == 0.0 for PartialEq, so compare the sign bit as well.
        assert!(back.particles.velocity[0].y.is_sign_negative());
    }

    #[test]
    fn every_truncation_is_detected() {
        let bytes = encode(&small());
        for len in 0..bytes.len() {
            assert!(
                decode::<DVec2>(&bytes[..len]).is_err(),
                "length {len} accepted"
            );
        }
    }

    #[test]
    fn every_single_bit_flip_is_detected() {
        // CRC-32 detects every single-bit error (Peterson & Brown 1961, "Cyclic codes for
        // error detection", Proc. IRE 49).
        let bytes = encode(&small());
        for bit in 0..bytes.len() * 8 {
            let mut damaged = bytes.clone();
            damaged[bit / 8] ^= 1 << (bit % 8);
            assert!(
                decode::<DVec2>(&damaged).is_err(),
                "flip of bit {bit} accepted"
            );
        }
    }

    #[test]
    fn wrong_magic_version_and_dimension_are_named() {
        let bytes = encode(&small());
        let mut other = bytes.clone();
        other[0] = b'X';
        assert!(decode::<DVec2>(&other).unwrap_err().contains("magic"));
        let mut newer = bytes[..bytes.len() - 4].to_vec();
        newer[8..12].copy_from_slice(&2u32.to_le_bytes());
        let crc = checksum(&newer);
        newer.extend_from_slice(&crc.to_le_bytes());
        assert!(decode::<DVec2>(&newer).unwrap_err().contains("version 2"));
        assert!(decode::<glam::DVec3>(&bytes).unwrap_err().contains("2D"));
    }

    #[test]
    fn a_time_or_state_that_is_not_finite_is_refused_despite_a_valid_checksum() {
        let mut nan_time = small();
        nan_time.time = f64::NAN;
        let err = decode::<DVec2>(&encode(&nan_time)).unwrap_err();
        assert!(err.contains("time is NaN"), "{err}");
        let mut inf_velocity = small();
        inf_velocity.particles.velocity[1].x = f64::INFINITY;
        let err = decode::<DVec2>(&encode(&inf_velocity)).unwrap_err();
        assert!(err.contains("velocity of particle 3"), "{err}");
        let mut far = small();
        far.particles.position[0].x = 1e6;
        let found = outside_by(&far.particles, DVec2::ZERO, DVec2::splat(4.0), 0.1);
        assert_eq!(found.map(|(id, _)| id), Some(7));
        assert_eq!(
            outside_by(
                &small().particles,
                DVec2::splat(-1.0),
                DVec2::splat(4.0),
                0.0
            ),
            None
        );
    }

    #[test]
    fn numbering_at_the_u64_limit_renumbers_and_keeps_the_new_checkpoint() {
        let dir = tempfile::tempdir().unwrap();
        let folder = dir.path().join("checkpoints");
        fs::create_dir_all(&folder).unwrap();
        let mut checkpoint = small();
        for (step, number) in [(1, u64::MAX - 1), (2, u64::MAX)] {
            checkpoint.step = step;
            fs::write(
                folder.join(format!("checkpoint_{number:06}.bin")),
                encode(&checkpoint),
            )
            .unwrap();
        }
        let store = CheckpointStore::new(&folder);
        checkpoint.step = 3;
        let path = store.write(&checkpoint).unwrap();
        assert!(
            path.ends_with("checkpoint_000003.bin"),
            "{}",
            path.display()
        );
        let numbers: Vec<u64> = store.list().unwrap().iter().map(|(n, _)| *n).collect();
        assert_eq!(numbers, [2, 3]);
        let restored = store.newest_valid::<DVec2>().unwrap();
        assert_eq!(restored.checkpoint.step, 3);
        assert_eq!(
            read_checkpoint::<DVec2>(&folder.join("checkpoint_000002.bin"))
                .unwrap()
                .step,
            2
        );
    }

    #[test]
    fn a_refused_newest_checkpoint_falls_back_to_the_older_one() {
        let dir = tempfile::tempdir().unwrap();
        let store = CheckpointStore::new(dir.path().join("checkpoints"));
        let mut checkpoint = small();
        store.write(&checkpoint).unwrap();
        checkpoint.case_checksum ^= 1;
        checkpoint.step = 18;
        store.write(&checkpoint).unwrap();
        let ours = small().case_checksum;
        let restored = store
            .newest_accepted(|c: &Checkpoint<DVec2>| {
                if c.case_checksum == ours {
                    Ok(())
                } else {
                    Err("written for another case".into())
                }
            })
            .unwrap();
        assert_eq!(restored.checkpoint.step, 17);
        assert_eq!(restored.skipped.len(), 1);
        assert!(
            restored.skipped[0].contains("another case"),
            "{:?}",
            restored.skipped
        );
    }

    #[test]
    fn the_store_keeps_two_and_a_failed_write_leaves_the_previous_whole() {
        let dir = tempfile::tempdir().unwrap();
        let store = CheckpointStore::new(dir.path().join("checkpoints"));
        let mut checkpoint = small();
        for step in 1..=3 {
            checkpoint.step = step;
            store.write(&checkpoint).unwrap();
        }
        let numbers: Vec<u64> = store.list().unwrap().iter().map(|(n, _)| *n).collect();
        assert_eq!(numbers, [2, 3]);
        let before = fs::read(dir.path().join("checkpoints/checkpoint_000003.bin")).unwrap();
        // An unwritable temporary name (a folder squatting on it) stands for a full disk.
        let squatter = dir
            .path()
            .join("checkpoints/.checkpoint_000004.bin.partial");
        fs::create_dir(&squatter).unwrap();
        checkpoint.step = 4;
        let err = store.write(&checkpoint).unwrap_err().to_string();
        assert!(err.contains("checkpoint_000004.bin"), "{err}");
        let after = fs::read(dir.path().join("checkpoints/checkpoint_000003.bin")).unwrap();
        assert_eq!(before, after);
        let restored = store.newest_valid::<DVec2>().unwrap();
        assert_eq!(restored.checkpoint.step, 3);
        assert!(restored.skipped.is_empty());
    }
}
