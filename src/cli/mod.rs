//! Command-line interface: argument parsing, reading inputs, exit codes.
//!
//! Only this module does I/O. Each input becomes one document; a document that cannot be
//! read or decoded is reported in the output and on stderr, and the run goes on. Batches
//! run in parallel through [`batch::for_each_document`]; exit codes are in [`exit`].

pub mod batch;
pub mod check;
pub mod exit;
pub mod extract;
pub mod handover;
pub mod inputs;
pub mod lint;
pub mod output;
pub mod settings;
pub mod stream;

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
    /// Lint notes for missing or inconsistent heart-failure documentation.
    ///
    /// Exit codes: 0 nothing at or above --fail-on; 1 diagnostics at or above it; 2 usage,
    /// configuration or output error; 3 otherwise, some input was skipped.
    Lint(LintArgs),
    /// List the lint rules (id, category, default severity, summary).
    Rules(RulesArgs),
    /// Print the full documentation of one lint rule.
    Explain(ExplainArgs),
    /// Editor mode: read one JSON request on stdin, print one JSON response.
    Check(CheckArgs),
    /// Run the language server over stdin/stdout.
    Lsp(LspArgs),
    /// Pre-fill a handover sheet per patient from a day's notes.
    Handover(HandoverArgs),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum LintFormat {
    /// Diagnostics with the source line underlined, a summary and the caution.
    Human,
    /// One `tidemark-lint/1` JSON object for the whole run.
    Json,
    /// One JSON object per document, one per line.
    Jsonl,
    /// A SARIF 2.1.0 log.
    Sarif,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum FailOnArg {
    Error,
    Warning,
    Info,
    Never,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ColorArg {
    /// Colour on a terminal, unless NO_COLOR is set.
    Auto,
    Always,
    Never,
}

#[derive(Debug, clap::Args)]
pub struct LintArgs {
    #[command(flatten)]
    pub common: CommonArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = LintFormat::Human)]
    pub format: LintFormat,
    /// Lowest severity that makes the exit code 1 [default: warning, or `[lint] fail-on`].
    #[arg(long, value_enum)]
    pub fail_on: Option<FailOnArg>,
    /// Configuration file [default: the nearest tidemark.toml from the current directory up].
    #[arg(long, value_name = "PATH")]
    pub config: Option<String>,
    /// When to colour human output.
    #[arg(long, value_enum, default_value_t = ColorArg::Auto)]
    pub color: ColorArg,
    /// Input format; `jsonl` streams JSON lines from stdin (with `--format jsonl`).
    #[arg(long, value_enum, default_value_t = InputFormat::Files)]
    pub input: InputFormat,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum RulesFormat {
    Text,
    Json,
}

#[derive(Debug, clap::Args)]
pub struct RulesArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = RulesFormat::Text)]
    pub format: RulesFormat,
}

#[derive(Debug, clap::Args)]
pub struct ExplainArgs {
    /// A rule id, as `tidemark rules` lists them.
    pub id: String,
}

#[derive(Debug, clap::Args)]
pub struct CheckArgs {
    /// Read `{"text": ..., "path": ..., "config": ...}` on stdin and answer in JSON.
    #[arg(long, required = true)]
    pub stdin_json: bool,
}

#[derive(Debug, clap::Args)]
pub struct LspArgs {
    /// Talk the Language Server Protocol on stdin/stdout (the only transport).
    #[arg(long)]
    pub stdio: bool,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum InputFormat {
    /// Files, directories or stdin as one document each.
    Files,
    /// JSON lines `{"id": ..., "text": ...}` on stdin, one document per line.
    Jsonl,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ExtractFormat {
    /// One JSON object for the whole run.
    Json,
    /// One JSON object per document, one per line.
    Jsonl,
    /// A compact human summary of each note's picture.
    Text,
    /// A FHIR R4 Bundle (type collection) of Observations and Conditions.
    Fhir,
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
    /// Input format; `jsonl` streams JSON lines from stdin (with `--format jsonl`).
    #[arg(long, value_enum, default_value_t = InputFormat::Files)]
    pub input: InputFormat,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum HandoverFormat {
    /// Fixed width (80 columns), no colour, prints on A4 portrait.
    Text,
    /// One section per patient.
    Markdown,
    /// The typed sheet with spans (`tidemark-handover/1`).
    Json,
    /// One self-contained printable page with inline SVG charts.
    Html,
}

#[derive(Debug, clap::Args)]
pub struct HandoverArgs {
    #[command(flatten)]
    pub common: CommonArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = HandoverFormat::Text)]
    pub format: HandoverFormat,
    /// Regular expression for the patient identifier (first capture group, else the whole
    /// match); tried before the built-in hospital-number and bed patterns.
    #[arg(long, value_name = "REGEX")]
    pub patient_id: Option<String>,
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
        Command::Lint(args) => lint::run(&args),
        Command::Rules(args) => lint::rules(&args),
        Command::Explain(args) => lint::explain(&args),
        Command::Check(_) => check::run(),
        Command::Lsp(_) => crate::lsp::run_stdio(),
        Command::Handover(args) => handover::run(&args),
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
