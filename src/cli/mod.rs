//! Command-line interface: argument parsing, reading inputs, exit codes.
//!
//! Only this module does I/O. Each input becomes one document; a document that cannot be
//! read or decoded is reported in the output and on stderr, and the run goes on. Batches
//! run in parallel through [`batch::for_each_document`]; exit codes are in [`exit`].

pub mod batch;
pub mod exit;
pub mod extract;
pub mod inputs;
pub mod output;

use clap::{Parser, Subcommand, ValueEnum};

use crate::config::{Config, DateOrder};

/// Reads heart-failure notes, extracts what they document, builds the congestion/perfusion
/// profile and lints the documentation. Documentation support only, not a diagnostic device.
/// Notes never leave this machine: tidemark has no network code.
#[derive(Debug, Parser)]
#[command(
    name = "tidemark",
    version,
    about,
    long_about = None,
    after_help = "Inputs are opened read-only and never modified. Notes never leave this machine: \
tidemark has no network code and writes no temporary files with note text except the \
--output file, which is written atomically.\n\n\
Exit codes: 0 ok; 1 lint findings at the fail level (lint); 2 usage error or output not \
written; 3 some input was skipped (see stderr)."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Extract measurements, findings and the clinical picture from notes.
    Extract(ExtractArgs),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ExtractFormat {
    /// One JSON object for the whole run.
    Json,
    /// One JSON object per document, one per line.
    Jsonl,
    /// A compact human summary of each note's picture.
    Text,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum DateOrderArg {
    /// Day first unless the note's own dates or units say otherwise.
    Auto,
    /// Day first: 03/04/2026 is 3 April.
    Dmy,
    /// Month first: 03/04/2026 is March 4.
    Mdy,
}

#[derive(Debug, clap::Args)]
pub struct CommonArgs {
    /// Files or directories (searched recursively); `-` or nothing reads stdin.
    pub paths: Vec<String>,
    /// How to read numeric dates such as 03/04/2026.
    #[arg(long, value_enum, default_value_t = DateOrderArg::Auto)]
    pub date_order: DateOrderArg,
    /// Worker threads for a batch [default: all cores]. Output order does not depend on it.
    #[arg(long, short = 'j', value_name = "N", value_parser = clap::value_parser!(u32).range(1..=4096))]
    pub jobs: Option<u32>,
    /// Skip input files larger than this (bytes; suffixes K, M, G, KiB, MiB, GiB).
    #[arg(long, value_name = "SIZE", default_value = "32MiB", value_parser = parse_size)]
    pub max_file_size: u64,
    /// Write the output to FILE (atomically: a temporary file in the same directory, then
    /// renamed) instead of stdout.
    #[arg(long, short = 'o', value_name = "FILE")]
    pub output: Option<std::path::PathBuf>,
}

/// Parse a byte size such as `1000`, `64K`, `32MiB` or `1G` (K = KiB = 1024).
pub fn parse_size(s: &str) -> Result<u64, String> {
    let t = s.trim();
    let split = t.find(|c: char| !c.is_ascii_digit()).unwrap_or(t.len());
    let (num, unit) = t.split_at(split);
    let n: u64 = num
        .parse()
        .map_err(|_| format!("`{s}` is not a size (examples: 1000, 64K, 32MiB)"))?;
    let mult: u64 = match unit.trim().to_ascii_lowercase().as_str() {
        "" | "b" => 1,
        "k" | "kb" | "kib" => 1 << 10,
        "m" | "mb" | "mib" => 1 << 20,
        "g" | "gb" | "gib" => 1 << 30,
        _ => return Err(format!("unknown size unit in `{s}` (use K, M or G)")),
    };
    n.checked_mul(mult)
        .ok_or_else(|| format!("`{s}` is too large"))
}

#[derive(Debug, clap::Args)]
pub struct ExtractArgs {
    #[command(flatten)]
    pub common: CommonArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = ExtractFormat::Json)]
    pub format: ExtractFormat,
}

impl CommonArgs {
    pub fn config(&self) -> Config {
        let mut config = Config::default();
        config.extract.date_order = match self.date_order {
            DateOrderArg::Auto => DateOrder::Auto,
            DateOrderArg::Dmy => DateOrder::Dmy,
            DateOrderArg::Mdy => DateOrder::Mdy,
        };
        config
    }

    /// Batch options from `--jobs` and `--max-file-size`.
    pub fn batch(&self) -> batch::BatchOptions {
        batch::BatchOptions {
            jobs: self.jobs.map_or(0, |j| j as usize),
            max_file_size: self.max_file_size,
            ..batch::BatchOptions::default()
        }
    }

    /// Open the output (`--output` or stdout), refusing to overwrite an input.
    pub fn open_output(&self) -> Result<output::Output, String> {
        if let Some(dest) = &self.output {
            output::check_not_an_input(dest, &self.paths)?;
        }
        output::Output::open(self.output.as_deref()).map_err(|e| {
            let dest = self.output.as_deref().unwrap_or(std::path::Path::new("-"));
            format!("cannot write {}: {e}", dest.display())
        })
    }
}

/// Run the command line; returns the process exit code.
pub fn run() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() {
                exit::USAGE
            } else {
                exit::OK
            };
        }
    };
    match cli.command {
        Command::Extract(args) => extract::run(&args),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_parse_with_binary_suffixes() {
        assert_eq!(parse_size("1000"), Ok(1000));
        assert_eq!(parse_size("64K"), Ok(64 * 1024));
        assert_eq!(parse_size("32MiB"), Ok(32 * 1024 * 1024));
        assert_eq!(parse_size("1g"), Ok(1 << 30));
        assert!(parse_size("ten").is_err());
        assert!(parse_size("5 parsecs").is_err());
        assert!(parse_size("99999999999999999999G").is_err());
    }
}
