//! `lamella new TEMPLATE [PATH]`: write a commented starter case that `lamella check` accepts.

use std::path::PathBuf;

use clap::builder::{PossibleValue, PossibleValuesParser};
use lamella_case::templates::{TEMPLATES, template};

use crate::Failure;
use crate::commands::Globals;
use lamella_run::output::atomic::write_bytes;

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
    let folder = path.parent().filter(|d| !d.as_os_str().is_empty());
    if let Some(folder) = folder.filter(|d| !d.is_dir()) {
        return Err(Failure::BadInput(format!(
            "cannot write {}: the folder {} does not exist; create it or choose another path",
            path.display(),
            folder.display()
        )));
    }
    write_bytes(&path, chosen.text.as_bytes())?;
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
