//! `tidemark extract`.

use super::batch::{run_command, Framing, Rendered};
use super::{ExtractArgs, ExtractFormat};
use crate::render;

/// `tidemark extract`.
pub fn run(args: &ExtractArgs) -> i32 {
    let config = args.common.config();
    let format = args.format;
    let framing = match format {
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
                let v = render::json::extract_document(doc, analysis.as_ref());
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
        }
        Rendered {
            bytes,
            fails: false,
        }
    })
}
