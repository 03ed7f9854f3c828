//! The `.pvd` collection: a small VTK XML file listing every snapshot file with its time, so a
//! viewer opens the whole run as one time series. vtkio has no type for it; the format is
//! plain XML (VTK file formats, "ParaView Data (PVD)" collection element).

use std::io::Write;
use std::path::{Path, PathBuf};

use super::OutputError;
use super::atomic::write_atomically;

/// One snapshot in the collection.
#[derive(Clone, Debug, PartialEq)]
pub struct Entry {
    /// Simulated time of the snapshot (s).
    pub time: f64,
    /// File name relative to the collection's folder.
    pub file: String,
}

/// The collection file and its entries; rewritten atomically after each added snapshot.
#[derive(Clone, Debug)]
pub struct Collection {
    path: PathBuf,
    entries: Vec<Entry>,
}

impl Collection {
    /// An empty collection to be written at `path`.
    pub fn new(path: impl Into<PathBuf>) -> Self {
        Collection {
            path: path.into(),
            entries: Vec::new(),
        }
    }

    /// Reads the collection written at `path` by this module.
    pub fn read(path: &Path) -> Result<Self, OutputError> {
        let text = std::fs::read_to_string(path).map_err(|err| OutputError::read(path, err))?;
        let entries = parse_entries(&text)
            .map_err(|reason| OutputError::invalid(path, "snapshot collection", reason))?;
        Ok(Collection {
            path: path.to_path_buf(),
            entries,
        })
    }

    /// Where the collection is written.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The snapshots listed, in the order written.
    pub fn entries(&self) -> &[Entry] {
        &self.entries
    }

    /// Keeps only the first `count` entries (a resumed run rewrites the later ones).
    pub fn truncate(&mut self, count: usize) {
        self.entries.truncate(count);
    }

    /// Adds a snapshot and rewrites the file.
    pub fn push(&mut self, time: f64, file: impl Into<String>) -> Result<(), OutputError> {
        self.entries.push(Entry {
            time,
            file: file.into(),
        });
        self.write()
    }

    /// Writes the file atomically.
    pub fn write(&self) -> Result<(), OutputError> {
        let text = render(&self.entries);
        write_atomically(&self.path, |w| w.write_all(text.as_bytes()))
    }
}

fn render(entries: &[Entry]) -> String {
    let mut text = String::from(
        "<?xml version=\"1.0\"?>\n\
         <VTKFile type=\"Collection\" version=\"0.1\" byte_order=\"LittleEndian\">\n\
         <Collection>\n",
    );
    for entry in entries {
        text.push_str(&format!(
            "<DataSet timestep=\"{}\" group=\"\" part=\"0\" file=\"{}\"/>\n",
            entry.time,
            escape(&entry.file)
        ));
    }
    text.push_str("</Collection>\n</VTKFile>\n");
    text
}

fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('"', "&quot;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

fn unescape(text: &str) -> String {
    text.replace("&quot;", "\"")
        .replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&amp;", "&")
}

fn parse_entries(text: &str) -> Result<Vec<Entry>, String> {
    if !text.contains("type=\"Collection\"") {
        return Err("no VTKFile of type Collection".into());
    }
    let attribute = |element: &str, name: &str| -> Result<String, String> {
        let key = format!(" {name}=\"");
        let start = element
            .find(&key)
            .ok_or_else(|| format!("a DataSet has no {name}"))?
            + key.len();
        let end = start
            + element[start..]
                .find('"')
                .ok_or_else(|| format!("unterminated {name}"))?;
        Ok(unescape(&element[start..end]))
    };
    text.split("<DataSet")
        .skip(1)
        .map(|rest| {
            let element = &rest[..rest.find("/>").ok_or("unterminated DataSet")?];
            let time = attribute(element, "timestep")?;
            Ok(Entry {
                time: time
                    .parse::<f64>()
                    .ok()
                    .filter(|t| t.is_finite() && *t >= 0.0)
                    .ok_or_else(|| {
                        format!("timestep {time:?} is not a finite time of 0 s or later")
                    })?,
                file: attribute(element, "file")?,
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn entries_survive_a_write_and_read() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("snapshots.pvd");
        let mut collection = Collection::new(&path);
        collection.push(0.0, "state_000000.vtp").unwrap();
        collection.push(0.1 + 0.2, "state_000001.vtp").unwrap();
        collection.push(1e-9, "a&b.vtp").unwrap();
        let mut back = Collection::read(&path).unwrap();
        assert_eq!(back.entries(), collection.entries());
        back.truncate(1);
        back.write().unwrap();
        assert_eq!(Collection::read(&path).unwrap().entries().len(), 1);
    }

    #[test]
    fn a_foreign_file_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("x.pvd");
        std::fs::write(&path, "<VTKFile type=\"PolyData\"/>").unwrap();
        assert!(Collection::read(&path).is_err());
    }

    #[test]
    fn a_time_that_is_not_finite_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("snapshots.pvd");
        let mut collection = Collection::new(&path);
        collection.push(f64::NAN, "state_000000.vtp").unwrap();
        let err = Collection::read(&path).unwrap_err().to_string();
        assert!(err.contains("timestep \"NaN\""), "{err}");
    }
}
