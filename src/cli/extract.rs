//! `tidemark extract`.

use std::io::Write;

use super::batch::for_each_document;
use super::{exit, ExtractArgs, ExtractFormat};
use crate::render;

/// `tidemark extract`.
pub fn run(args: &ExtractArgs) -> i32 {
    let config = args.common.config();
    let mut out = match args.common.open_output() {
        Ok(o) => o,
        Err(e) => {
            eprintln!("tidemark: {e}");
            return exit::USAGE;
        }
    };
    let format = args.format;
    let mut run = None;
    let result = (|| {
        if format == ExtractFormat::Json {
            run = Some(render::json::RunWriter::start(
                &mut out,
                render::json::EXTRACT_SCHEMA,
            )?);
        }
        // Each worker analyses and renders its document; the sink only writes, in order.
        let report = for_each_document(
            &args.common.paths,
            &args.common.batch(),
            |doc| {
                let analysis = doc.text.as_deref().map(|t| crate::analyze(t, &config));
                let mut buf = Vec::new();
                match format {
                    ExtractFormat::Json => {
                        let v = render::json::extract_document(doc, analysis.as_ref());
                        buf = render::json::pretty_document(&v);
                    }
                    ExtractFormat::Jsonl => {
                        render::json::write_extract_line(&mut buf, doc, analysis.as_ref())
                            .expect("writing to memory");
                    }
                    ExtractFormat::Text => {
                        render::summary::write_document(&mut buf, doc, analysis.as_ref())
                            .expect("writing to memory");
                    }
                }
                buf
            },
            |_doc, rendered| match run.as_mut() {
                Some(run) => run.document(&mut out, &rendered),
                None => out.write_all(&rendered),
            },
        )?;
        match run.take() {
            Some(run) => run.end(&mut out)?,
            None if format == ExtractFormat::Text => render::summary::write_footer(&mut out)?,
            None => {}
        }
        out.flush()?;
        Ok::<_, std::io::Error>(report)
    })();
    let report = match result.and_then(|r| out.finish().map(|_| r)) {
        Ok(r) => r,
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => return exit::OK,
        Err(e) => {
            eprintln!("tidemark: cannot write output: {e}");
            return exit::USAGE;
        }
    };
    report.exit_code()
}
