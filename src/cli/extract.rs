//! `tidemark extract`.

use std::io::Write;

use super::{inputs, ExtractArgs, ExtractFormat};
use crate::render;

/// `tidemark extract`.
pub fn run(args: &ExtractArgs) -> i32 {
    let config = args.common.config();
    let docs = inputs::load_all(&args.common.paths);
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let mut skipped = false;
    let mut analysed = Vec::with_capacity(docs.len());
    for doc in docs {
        for w in &doc.warnings {
            eprintln!("tidemark: {}: {}", doc.source, w.message);
        }
        skipped |= doc.text.is_none();
        let analysis = doc.text.as_deref().map(|t| crate::analyze(t, &config));
        analysed.push((doc, analysis));
    }
    let result = match args.format {
        ExtractFormat::Json => render::json::write_extract_run(&mut out, &analysed),
        ExtractFormat::Jsonl => analysed
            .iter()
            .try_for_each(|(d, a)| render::json::write_extract_line(&mut out, d, a.as_ref())),
        ExtractFormat::Text => render::summary::write(&mut out, &analysed),
    };
    if let Err(e) = result.and_then(|_| out.flush()) {
        if e.kind() != std::io::ErrorKind::BrokenPipe {
            eprintln!("tidemark: cannot write output: {e}");
            return 2;
        }
    }
    if skipped {
        1
    } else {
        0
    }
}
