//! `tidemark extract`.

use std::io::Write;

use serde_json::Value;

use super::batch::{run_command, Framing, Rendered};
use super::{inputs, stream, ExtractArgs, ExtractFormat, InputFormat};
use crate::config::Config;
use crate::render;

/// `tidemark extract`.
pub fn run(args: &ExtractArgs) -> i32 {
    let config = args.common.config();
    if args.input == InputFormat::Jsonl {
        return run_stream(args, &config);
    }
    let format = args.format;
    let framing = match format {
        ExtractFormat::Fhir => return run_fhir(args, &config),
        ExtractFormat::Json => Framing::JsonRun(render::json::EXTRACT_SCHEMA),
        ExtractFormat::Jsonl => Framing::Plain { footer: Vec::new() },
        ExtractFormat::Text => {
            let mut footer = Vec::new();
            render::summary::write_footer(&mut footer).expect("writing to memory");
            Framing::Plain { footer }
        }
    };
    // Each worker analyses and renders its document; the driver writes them in order.
    run_command(&args.common, framing, |doc| {
        let analysis = doc.text.as_deref().map(|t| crate::analyze(t, &config));
        let mut bytes = Vec::new();
        match format {
            ExtractFormat::Json => {
                let v = render::json::extract_view(doc, analysis.as_ref(), None);
                bytes = render::json::pretty_document(&v);
            }
            ExtractFormat::Jsonl => {
                render::json::write_extract_line(&mut bytes, doc, analysis.as_ref())
                    .expect("writing to memory");
            }
            ExtractFormat::Text => {
                render::summary::write_document(&mut bytes, doc, analysis.as_ref())
                    .expect("writing to memory");
            }
            ExtractFormat::Fhir => {}
        }
        Rendered {
            bytes,
            fails: false,
        }
    })
}

/// `--format fhir`: one Bundle for the whole run, so every document is held until the end.
fn run_fhir(args: &ExtractArgs, config: &Config) -> i32 {
    let docs = inputs::load_all(&args.common.paths);
    let mut skipped = false;
    let mut analysed = Vec::with_capacity(docs.len());
    for doc in docs {
        for w in &doc.warnings {
            eprintln!("tidemark: {}: {}", doc.source, w.message);
        }
        skipped |= doc.text.is_none();
        let analysis = doc.text.as_deref().map(|t| crate::analyze(t, config));
        analysed.push((doc, analysis));
    }
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let result = render::fhir::write_bundle(&mut out, &analysed);
    if let Err(e) = result.and_then(|_| out.flush()) {
        if e.kind() != std::io::ErrorKind::BrokenPipe {
            eprintln!("tidemark: cannot write output: {e}");
            return 2;
        }
    }
    if skipped {
        super::exit::SKIPPED
    } else {
        0
    }
}

/// `tidemark extract --input jsonl --format jsonl`: one result line per input line.
fn run_stream(args: &ExtractArgs, config: &Config) -> i32 {
    if args.format != ExtractFormat::Jsonl {
        eprintln!("tidemark: --input jsonl needs --format jsonl");
        return 2;
    }
    if args.common.paths.iter().any(|p| p != "-") {
        eprintln!("tidemark: --input jsonl reads stdin only; no paths are taken");
        return 2;
    }
    let stdin = std::io::stdin();
    let stdout = std::io::stdout();
    let result = stream::run(stdin.lock(), stdout.lock(), |_, doc| {
        extract_line(doc, config)
    });
    stream::exit_code(result)
}

/// The extract result of one streamed document.
pub fn extract_line(doc: &inputs::Doc, config: &Config) -> Value {
    let analysis = doc.text.as_deref().map(|t| crate::analyze(t, config));
    let view =
        render::json::extract_view(doc, analysis.as_ref(), Some(render::json::EXTRACT_SCHEMA));
    serde_json::to_value(view).unwrap_or(Value::Null)
}
