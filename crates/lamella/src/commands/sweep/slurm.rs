//! `lamella sweep slurm SWEEP --out DIR`: write the sweep folder and two Slurm batch scripts,
//! `DIR/sweep.sbatch` (a job array, one task per member, each `lamella sweep member DIR
//! $SLURM_ARRAY_TASK_ID`) and `DIR/collect.sbatch` (`lamella sweep report DIR`); with
//! `--submit`, submit both, the report after the array.

use std::path::{Path, PathBuf};
use std::process::Command;

use lamella_run::output::atomic::write_bytes;

use crate::Failure;
use crate::commands::Globals;

/// Options of `lamella sweep slurm`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Each array task runs one member with --threads $SLURM_CPUS_PER_TASK; its \
    standard output and error go to DIR/logs/member-<index>.out. A task cut off at its time \
    limit saves a checkpoint (Slurm sends SIGTERM first); submitting again resumes interrupted \
    members and skips finished ones. DIR must be on a file system the compute nodes share. \
    Exit codes: 0 written (and submitted), 1 sbatch is missing or refused a script, 2 bad \
    input."
)]
pub struct Args {
    /// The sweep file (RON).
    #[arg(value_name = "SWEEP")]
    pub sweep: PathBuf,
    /// The sweep folder (see `lamella sweep run --help`); the scripts and logs go into it.
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Slurm partition (queue) to submit to [default: the cluster's default partition].
    #[arg(long, value_name = "P", value_parser = partition_name)]
    pub partition: Option<String>,
    /// Time limit of each member's task, HH:MM:SS or D-HH:MM:SS [default: the partition's].
    #[arg(long, value_name = "HH:MM:SS", value_parser = time_limit)]
    pub time: Option<String>,
    /// CPU cores of each member's task (its worker threads).
    #[arg(long, value_name = "C", default_value_t = 1, value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub cpus_per_task: u32,
    /// Submit the scripts with sbatch: the array, then the report to run after it
    /// (--dependency=afterany); prints both job ids.
    #[arg(long)]
    pub submit: bool,
}

/// A partition name (or a comma-separated list of them): letters, digits, `_`, `-`, `.`.
fn partition_name(text: &str) -> Result<String, String> {
    let valid = !text.is_empty()
        && text
            .bytes()
            .all(|b| b.is_ascii_alphanumeric() || b"_-.,".contains(&b));
    if valid {
        Ok(text.to_string())
    } else {
        Err(format!(
            "{text:?} is not a partition name (letters, digits, _ - . and commas); `sinfo` lists \
             the partitions"
        ))
    }
}

/// A Slurm time limit: `[D-]HH:MM:SS`.
fn time_limit(text: &str) -> Result<String, String> {
    let (days, clock) = text.split_once('-').unwrap_or(("0", text));
    let parts: Vec<&str> = clock.split(':').collect();
    let digits = |s: &str| !s.is_empty() && s.len() <= 3 && s.bytes().all(|b| b.is_ascii_digit());
    let valid = digits(days)
        && parts.len() == 3
        && parts.iter().all(|p| digits(p))
        && parts[1].parse::<u32>().is_ok_and(|m| m < 60)
        && parts[2].parse::<u32>().is_ok_and(|s| s < 60);
    if valid {
        Ok(text.to_string())
    } else {
        Err(format!(
            "{text:?} is not a time limit; write HH:MM:SS (e.g. 02:00:00) or D-HH:MM:SS"
        ))
    }
}

/// A path quoted for the shell (single quotes).
fn quoted(path: &Path) -> String {
    format!("'{}'", path.display().to_string().replace('\'', r"'\''"))
}

/// Writes the sweep folder and the scripts; submits them with `--submit`.
pub fn run(args: Args, globals: Globals) -> Result<(), Failure> {
    let folder = super::prepare(&args.sweep, &args.out)?;
    let root = std::fs::canonicalize(folder.root())
        .map_err(|e| Failure::BadInput(format!("{}: {e}", folder.root().display())))?;
    let exe = std::env::current_exe()
        .and_then(std::fs::canonicalize)
        .map_err(|e| Failure::RunFailed(format!("cannot find the lamella program: {e}")))?;
    let logs = root.join("logs");
    std::fs::create_dir_all(&logs)
        .map_err(|e| Failure::BadInput(format!("cannot create {}: {e}", logs.display())))?;
    let mut options = Vec::new();
    if let Some(partition) = &args.partition {
        options.push(format!("#SBATCH --partition={partition}"));
    }
    let header = |name: &str, log: &str, cpus: u32, time: Option<&str>| {
        let mut lines = vec![
            "#!/bin/bash".to_string(),
            format!("#SBATCH --job-name={name}"),
            format!("#SBATCH --output={}", logs.join(log).display()),
            format!("#SBATCH --cpus-per-task={cpus}"),
            "#SBATCH --ntasks=1".to_string(),
        ];
        lines.extend(options.iter().cloned());
        if let Some(time) = time {
            lines.push(format!("#SBATCH --time={time}"));
        }
        lines.join("\n")
    };
    let members = folder.len();
    let sweep_script = format!(
        "{}\n#SBATCH --array=0-{}\n# Written by `lamella sweep slurm`: one task per member of \
         the sweep in {}.\nexec {} sweep member {} \"$SLURM_ARRAY_TASK_ID\" --threads \
         \"$SLURM_CPUS_PER_TASK\"\n",
        header(
            "lamella-sweep",
            "member-%a.out",
            args.cpus_per_task,
            args.time.as_deref()
        ),
        members - 1,
        root.display(),
        quoted(&exe),
        quoted(&root)
    );
    let collect_script = format!(
        "{}\n# Written by `lamella sweep slurm`: the report of the sweep in {}, after its \
         members.\nexec {} sweep report {}\n",
        header(
            "lamella-sweep-report",
            "collect.out",
            1,
            args.time.as_deref()
        ),
        root.display(),
        quoted(&exe),
        quoted(&root)
    );
    let sweep_path = root.join("sweep.sbatch");
    let collect_path = root.join("collect.sbatch");
    write_bytes(&sweep_path, sweep_script.as_bytes())?;
    write_bytes(&collect_path, collect_script.as_bytes())?;
    if !args.submit {
        if !globals.quiet {
            crate::report!(
                "wrote {} ({members} members as a job array) and {}; submit with `sbatch {}`, \
                 then `sbatch --dependency=afterany:<job id> {}`",
                sweep_path.display(),
                collect_path.display(),
                sweep_path.display(),
                collect_path.display()
            )?;
        }
        return Ok(());
    }
    let array = sbatch(&[], &sweep_path)?;
    let collect = sbatch(&[format!("--dependency=afterany:{array}")], &collect_path)?;
    if !globals.quiet {
        crate::report!(
            "sweep job {array}: {members} members (array 0-{})",
            members - 1
        )?;
        crate::report!("report job {collect}: runs `lamella sweep report` after them")?;
    }
    Ok(())
}

/// Submits `script` with `sbatch --parsable` and the `extra` options; its job id.
fn sbatch(extra: &[String], script: &Path) -> Result<String, Failure> {
    let output = Command::new("sbatch")
        .arg("--parsable")
        .args(extra)
        .arg(script)
        .output()
        .map_err(|err| {
            Failure::RunFailed(format!(
                "cannot run `sbatch` ({err}): is Slurm installed here and sbatch on the PATH? \
                 The scripts are written; submit {} yourself on a machine that has Slurm",
                script.display()
            ))
        })?;
    let stdout = String::from_utf8_lossy(&output.stdout);
    // `--parsable` prints "id" or "id;cluster".
    let id = stdout.trim().split(';').next().unwrap_or("").to_string();
    if !output.status.success() || id.is_empty() || !id.bytes().all(|b| b.is_ascii_digit()) {
        return Err(Failure::RunFailed(format!(
            "sbatch refused {} ({}): {}",
            script.display(),
            output.status,
            String::from_utf8_lossy(&output.stderr).trim()
        )));
    }
    Ok(id)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_limits_are_slurm_clock_times() {
        for good in ["02:00:00", "0-12:30:00", "100:00:00", "7-00:00:59"] {
            assert_eq!(time_limit(good), Ok(good.to_string()));
        }
        for bad in ["2h", "02:00", "02:60:00", "1-", "a-01:00:00", ""] {
            assert!(time_limit(bad).is_err(), "{bad}");
        }
        assert_eq!(quoted(Path::new("/a b/it's")), r"'/a b/it'\''s'");
        assert!(partition_name("debug,long").is_ok());
        assert!(partition_name("x\n#SBATCH --mem=1").is_err());
    }
}
