//! `lamella new TEMPLATE [PATH]`: write a commented starter case that `lamella check` accepts.

use std::fs;
use std::io::Write as _;
use std::path::{Path, PathBuf};

use clap::builder::{PossibleValue, PossibleValuesParser};
use lamella_case::templates::{TEMPLATES, template};

use crate::Failure;
use crate::cli::Globals;

/// Options of `lamella new`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Exit codes: 0 written, 2 bad input (unknown template, file exists \
    without --force, folder not writable)."
)]
pub struct Args {
    /// Which starter case to write.
    #[arg(value_name = "TEMPLATE", value_parser = template_names())]
    pub template: String,
    /// Where to write it [default: TEMPLATE.ron in the current folder].
    #[arg(value_name = "PATH")]
    pub path: Option<PathBuf>,
    /// Replace the file if it already exists.
    #[arg(long)]
    pub force: bool,
}

fn template_names() -> PossibleValuesParser {
    PossibleValuesParser::new(
        TEMPLATES
            .iter()
            .map(|t| PossibleValue::new(t.name).help(t.summary)),
    )
}

/// Writes the template (whole or not at all) and says how to check it.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let chosen = template(&args.template).ok_or_else(|| {
        let names: Vec<&str> = TEMPLATES.iter().map(|t| t.name).collect();
        Failure::BadInput(format!(
            "unknown template {:?}; choose one of: {}",
            args.template,
            names.join(", ")
        ))
    })?;
    let path = args
        .path
        .unwrap_or_else(|| PathBuf::from(format!("{}.ron", chosen.name)));
    if path.exists() && !args.force {
        return Err(Failure::BadInput(format!(
            "{} already exists; choose another path or add --force to replace it",
            path.display()
        )));
    }
    write_whole(&path, chosen.text).map_err(|err| {
        Failure::BadInput(format!(
            "cannot write {}: {err}; check that its folder exists and can be written",
            path.display()
        ))
    })?;
    if !globals.quiet {
        crate::report!(
            "wrote {} ({}); check it with: lamella check {}",
            path.display(),
            chosen.summary,
            path.display()
        )?;
    }
    Ok(())
}

/// Writes `text` to a temporary file beside `path`, syncs it and renames it into place, so
/// that `path` is never left half-written.
fn write_whole(path: &Path, text: &str) -> std::io::Result<()> {
    let file_name = path
        .file_name()
        .ok_or_else(|| std::io::Error::other("the path names no file"))?;
    let mut temp_name = std::ffi::OsString::from(".");
    temp_name.push(file_name);
    temp_name.push(".partial");
    let temp = path.with_file_name(temp_name);
    let result = (|| {
        let mut file = fs::File::create(&temp)?;
        file.write_all(text.as_bytes())?;
        file.sync_all()?;
        fs::rename(&temp, path)
    })();
    if result.is_err() {
        let _ = fs::remove_file(&temp);
    }
    result
}
