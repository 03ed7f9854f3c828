//! Running Lamella cases as a library: from a case to a solver ([`setup`]), the run loop
//! ([`runner`]), the run folder ([`output`]) and the observer that
//! writes it during a run ([`recorder`]), the analytical channel profiles ([`reference`]),
//! a case's two-layer channel as stability theory sees it ([`channel`]), the eigenmode seed
//! ([`eigenmode`]), the analyses of a run folder ([`analysis`]), what a case asks of the
//! machine ([`feasibility`]), the standard benchmark ([`benchmark`]) and the sweep folder of a
//! parameter sweep ([`sweep`]).
//!
//! No command line, progress display or signal handling lives here: the run loop reports
//! progress through [`runner::Progress`] and stops when a flag the caller owns is raised.

pub mod analysis;
pub mod benchmark;
pub mod channel;
pub mod eigenmode;
mod error;
pub mod feasibility;
pub mod output;
pub mod recorder;
pub mod reference;
pub mod runner;
pub mod setup;
pub mod sweep;

pub use error::RunError;
