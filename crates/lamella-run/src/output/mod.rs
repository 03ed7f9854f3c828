//! Everything a run writes and reads back: the run folder, VTK snapshots and their `.pvd`
//! collection, the `series.csv` time series, probes and checkpoints.

pub mod atomic;
mod cell_order;
pub mod checkpoint;
pub mod collection;
mod error;
pub mod folder;
pub mod probes;
pub mod series;
pub mod snapshot;
mod vtk_xml;

pub use checkpoint::{Checkpoint, CheckpointStore};
pub use error::OutputError;
pub use folder::RunFolder;
pub use series::InterfaceTracker;
pub use snapshot::{Snapshot, SnapshotMeta, parse_snapshot, read_snapshot, write_snapshot};
