//! `tidemark handover`.

use std::io::Write;

use super::{inputs, HandoverArgs, HandoverFormat};
use crate::handover::{self, patients::Matcher, Input};

/// `tidemark handover`.
pub fn run(args: &HandoverArgs) -> i32 {
    let mut config = args.common.config();
    if let Some(re) = &args.patient_id {
        config.handover.patient_id = Some(re.clone());
    }
    let matcher = match Matcher::new(config.handover.patient_id.as_deref()) {
        Ok(m) => m,
        Err(e) => {
            eprintln!("tidemark: invalid patient-id pattern: {e}");
            return 2;
        }
    };
    let docs = inputs::load_all(&args.common.paths);
    let mut skipped = false;
    let mut notes = Vec::with_capacity(docs.len());
    for doc in docs {
        for w in &doc.warnings {
            eprintln!("tidemark: {}: {}", doc.source, w.message);
        }
        match doc.text {
            Some(text) => {
                let analysis = crate::analyze(&text, &config);
                notes.push(Input {
                    source: doc.source,
                    text,
                    analysis,
                });
            }
            None => skipped = true,
        }
    }
    let sheet = handover::build_sheet(&notes, &matcher);
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let result = match args.format {
        HandoverFormat::Text => handover::text::write(&mut out, &sheet),
        HandoverFormat::Markdown => handover::markdown::write(&mut out, &sheet),
        HandoverFormat::Json => handover::json::write(&mut out, &sheet),
        HandoverFormat::Html => handover::html::write(&mut out, &sheet),
    };
    if let Err(e) = result.and_then(|_| out.flush()) {
        if e.kind() != std::io::ErrorKind::BrokenPipe {
            eprintln!("tidemark: cannot write output: {e}");
            return 2;
        }
    }
    i32::from(skipped)
}
