//! `tidemark lint`, `tidemark rules` and `tidemark explain`.
//!
//! Exit codes of `lint`:
//!
//! | code | meaning |
//! | --- | --- |
//! | 0 | no diagnostic at or above `--fail-on` (default `warning`, or `[lint] fail-on`) |
//! | 1 | at least one diagnostic at or above `--fail-on` |
//! | 2 | usage error, configuration error, or the output could not be written |
//! | 3 | otherwise, some input was skipped (unreadable, empty, binary or too large) |
//!
//! `rules` and `explain` exit 0, or 2 for an unknown rule id.

use std::io::{IsTerminal, Write};
use std::path::PathBuf;

use super::batch::{run_command, Framing, Rendered};
use super::{
    inputs, ColorArg, ExplainArgs, FailOnArg, LintArgs, LintFormat, RulesArgs, RulesFormat,
};
use crate::config::{find_config_file, Config};
use crate::lint::config::{nearest, FailOn};
use crate::lint::{docs, find_rule, registry};
use crate::render;

/// The directory of the first input named (itself when it is a directory), if it exists.
fn first_input_dir(paths: &[String]) -> Option<PathBuf> {
    let p = std::path::Path::new(paths.iter().find(|p| p.as_str() != "-")?);
    let dir = if p.is_dir() {
        p.to_path_buf()
    } else {
        p.parent()?.to_path_buf()
    };
    let dir = if dir.as_os_str().is_empty() {
        PathBuf::from(".")
    } else {
        dir
    };
    std::fs::canonicalize(dir).ok()
}

/// The configuration for a lint run: `--config PATH`, else the nearest `tidemark.toml` next
/// to the first input or in a parent of its directory, else the nearest from the current
/// directory upwards, else the defaults; then the command-line options.
pub fn load_config(args: &LintArgs) -> Result<Config, String> {
    let path: Option<PathBuf> = match &args.config {
        Some(p) => Some(PathBuf::from(p)),
        None => first_input_dir(&args.common.paths)
            .and_then(|d| find_config_file(&d))
            .or_else(|| {
                std::env::current_dir()
                    .ok()
                    .and_then(|d| find_config_file(&d))
            }),
    };
    let mut config = match path {
        Some(p) => Config::load(&p).map_err(|e| e.to_string())?,
        None => Config::default(),
    };
    let cli = args.common.config();
    if cli.extract.date_order != crate::config::DateOrder::Auto {
        config.extract.date_order = cli.extract.date_order;
    }
    Ok(config)
}

fn fail_on(args: &LintArgs, config: &Config) -> FailOn {
    match args.fail_on {
        Some(FailOnArg::Error) => FailOn::Error,
        Some(FailOnArg::Warning) => FailOn::Warning,
        Some(FailOnArg::Info) => FailOn::Info,
        Some(FailOnArg::Never) => FailOn::Never,
        None => config.lint.fail_on.unwrap_or_default(),
    }
}

/// Whether to colour human output: `--color always|never`, else only on a terminal and only
/// when `NO_COLOR` is unset or empty (no-color.org).
fn use_color(arg: ColorArg) -> bool {
    match arg {
        ColorArg::Always => true,
        ColorArg::Never => false,
        ColorArg::Auto => {
            std::env::var_os("NO_COLOR").is_none_or_empty() && std::io::stdout().is_terminal()
        }
    }
}

trait EmptyOs {
    fn is_none_or_empty(&self) -> bool;
}

impl EmptyOs for Option<std::ffi::OsString> {
    fn is_none_or_empty(&self) -> bool {
        self.as_ref().is_none_or(|v| v.is_empty())
    }
}

/// `tidemark lint`.
/// `tidemark lint --input jsonl --format jsonl`: one result line per input line, in order.
fn run_stream(args: &LintArgs, config: &crate::Config) -> i32 {
    if args.format != LintFormat::Jsonl {
        eprintln!("tidemark: --input jsonl needs --format jsonl");
        return 2;
    }
    if args.common.paths.iter().any(|p| p != "-") {
        eprintln!("tidemark: --input jsonl reads stdin only; no paths are taken");
        return 2;
    }
    let stdin = std::io::stdin();
    let stdout = std::io::stdout();
    let result = super::stream::run(stdin.lock(), stdout.lock(), |_, doc| {
        let analysis = doc.text.as_deref().map(|t| crate::analyze(t, config));
        let view = render::json::lint_view(doc, analysis.as_ref(), Some(render::json::LINT_SCHEMA));
        serde_json::to_value(view).unwrap_or(serde_json::Value::Null)
    });
    super::stream::exit_code(result)
}

pub fn run(args: &LintArgs) -> i32 {
    let config = match load_config(args) {
        Ok(c) => c,
        Err(e) => {
            eprintln!("tidemark: configuration error: {e}");
            return 2;
        }
    };
    let threshold = fail_on(args, &config);
    if args.input == super::InputFormat::Jsonl {
        return run_stream(args, &config);
    }
    // The machine formats stream through the parallel batch driver, in input order.
    if matches!(args.format, LintFormat::Json | LintFormat::Jsonl) {
        let framing = match args.format {
            LintFormat::Json => Framing::JsonRun(render::json::LINT_SCHEMA),
            _ => Framing::Plain { footer: Vec::new() },
        };
        let format = args.format;
        return run_command(&args.common, framing, |doc| {
            let analysis = doc.text.as_deref().map(|t| crate::analyze(t, &config));
            let fails = analysis
                .as_ref()
                .is_some_and(|a| a.diagnostics.iter().any(|d| threshold.fails(d.severity)));
            let mut bytes = Vec::new();
            if format == LintFormat::Json {
                let v = render::json::lint_view(doc, analysis.as_ref(), None);
                bytes = render::json::pretty_document(&v);
            } else {
                render::json::write_lint_line(&mut bytes, doc, analysis.as_ref())
                    .expect("writing to memory");
            }
            Rendered { bytes, fails }
        });
    }
    let docs = inputs::load_all(&args.common.paths);
    let mut analysed = Vec::with_capacity(docs.len());
    let mut skipped = false;
    for doc in docs {
        if args.format != LintFormat::Human {
            for w in &doc.warnings {
                eprintln!("tidemark: {}: {}", doc.source, w.message);
            }
        }
        skipped |= doc.text.is_none();
        let analysis = doc.text.as_deref().map(|t| crate::analyze(t, &config));
        analysed.push((doc, analysis));
    }
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let result = match args.format {
        LintFormat::Human => render::lint_human::write(
            &mut out,
            &analysed,
            render::lint_human::HumanOptions {
                color: use_color(args.color),
            },
        ),
        LintFormat::Json => render::json::write_lint_run(&mut out, &analysed),
        LintFormat::Jsonl => analysed
            .iter()
            .try_for_each(|(d, a)| render::json::write_lint_line(&mut out, d, a.as_ref())),
        LintFormat::Sarif => render::sarif::write(&mut out, &analysed),
    };
    if let Err(e) = result.and_then(|_| out.flush()) {
        if e.kind() != std::io::ErrorKind::BrokenPipe {
            eprintln!("tidemark: cannot write output: {e}");
            return 2;
        }
    }
    let failed = analysed.iter().any(|(_, a)| {
        a.as_ref()
            .is_some_and(|a| a.diagnostics.iter().any(|d| threshold.fails(d.severity)))
    });
    exit_code(failed, skipped)
}

/// 1 when a diagnostic reached the threshold, else 3 when an input was skipped, else 0.
/// The exit code of a lint run, by the shared priority of [`super::exit`]: an incomplete run
/// (3) says so even when it also found diagnostics (1).
pub fn exit_code(failed: bool, skipped: bool) -> i32 {
    use super::exit;
    exit::combine(
        if failed { exit::FINDINGS } else { exit::OK },
        if skipped { exit::SKIPPED } else { exit::OK },
    )
}

/// `tidemark rules`.
pub fn rules(args: &RulesArgs) -> i32 {
    let mut text = String::new();
    match args.format {
        RulesFormat::Text => {
            for r in registry() {
                text.push_str(&format!(
                    "{:<34} {:<14} {:<8} {}\n",
                    r.id,
                    r.category.name(),
                    r.severity.name(),
                    r.summary
                ));
            }
            text.push_str(&format!("\n{}\n", render::CAUTION));
        }
        RulesFormat::Json => {
            let list: Vec<serde_json::Value> = registry()
                .iter()
                .map(|r| {
                    serde_json::json!({
                        "id": r.id,
                        "category": r.category.name(),
                        "severity": r.severity.name(),
                        "kinds": r.kinds.iter().map(|k| k.name()).collect::<Vec<_>>(),
                        "summary": r.summary,
                    })
                })
                .collect();
            text = serde_json::to_string_pretty(&list).unwrap_or_default();
            text.push('\n');
        }
    }
    print_or_fail(&text)
}

/// `tidemark explain ID`.
pub fn explain(args: &ExplainArgs) -> i32 {
    match find_rule(&args.id) {
        Some(r) => print_or_fail(&format!("{}\n{}\n", docs::explain(r), render::CAUTION)),
        None => {
            let ids: Vec<&str> = registry().iter().map(|r| r.id).collect();
            match nearest(&args.id, &ids) {
                Some(s) => eprintln!(
                    "tidemark: unknown rule id \"{}\"; did you mean \"{s}\"?",
                    args.id
                ),
                None => eprintln!(
                    "tidemark: unknown rule id \"{}\"; `tidemark rules` lists them",
                    args.id
                ),
            }
            2
        }
    }
}

fn print_or_fail(text: &str) -> i32 {
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    match out.write_all(text.as_bytes()).and_then(|_| out.flush()) {
        Ok(()) => 0,
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => 0,
        Err(e) => {
            eprintln!("tidemark: cannot write output: {e}");
            2
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exit_codes() {
        assert_eq!(exit_code(false, false), 0);
        assert_eq!(exit_code(true, false), 1);
        assert_eq!(exit_code(true, true), 3);
        assert_eq!(exit_code(false, true), 3);
    }
}
