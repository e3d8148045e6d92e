//! Command-line interface: argument parsing, reading inputs, exit codes.
//!
//! Only this module does I/O. Each input becomes one document; a document that cannot be
//! read or decoded is reported in the output and on stderr, and the run goes on.

pub mod extract;
pub mod handover;
pub mod inputs;

use clap::{Parser, Subcommand, ValueEnum};

use crate::config::{Config, DateOrder};

/// Reads heart-failure notes, extracts what they document, builds the congestion/perfusion
/// profile and lints the documentation. Documentation support only, not a diagnostic device.
/// Notes never leave this machine: tidemark has no network code.
#[derive(Debug, Parser)]
#[command(name = "tidemark", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Extract measurements, findings and the clinical picture from notes.
    Extract(ExtractArgs),
    /// Pre-fill a handover sheet per patient from a day's notes.
    Handover(HandoverArgs),
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
}

#[derive(Debug, clap::Args)]
pub struct ExtractArgs {
    #[command(flatten)]
    pub common: CommonArgs,
    /// Output format.
    #[arg(long, value_enum, default_value_t = ExtractFormat::Json)]
    pub format: ExtractFormat,
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
}

/// Run the command line; returns the process exit code.
pub fn run() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() { 2 } else { 0 };
        }
    };
    match cli.command {
        Command::Extract(args) => extract::run(&args),
        Command::Handover(args) => handover::run(&args),
    }
}
