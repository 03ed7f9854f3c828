//! The Lamella runner and command line.

pub mod cli;
mod commands;
pub mod failure;

pub use failure::Failure;
