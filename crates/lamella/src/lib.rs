//! The Lamella runner and command line.

pub mod benchmark;
pub mod cli;
mod commands;
pub mod console;
pub mod eigenmode;
pub mod failure;
mod feasibility;
pub mod memory;
pub mod output;
pub mod reference;
pub mod runner;
pub mod setup;

pub use failure::Failure;
