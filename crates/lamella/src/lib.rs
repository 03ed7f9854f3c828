//! The Lamella runner and command line.

pub mod cli;
mod commands;
pub mod failure;
pub mod output;

pub use failure::Failure;
