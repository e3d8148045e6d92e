//! The batch driver through the library: a file that vanishes between the walk and the
//! read is reported on that document and the run goes on.

use std::fs;
use std::path::PathBuf;

use tidemark::cli::batch::{for_each_entry, BatchOptions};
use tidemark::cli::exit;
use tidemark::cli::inputs::Entry;

#[test]
fn a_file_that_vanishes_mid_run_is_reported_and_the_run_goes_on() {
    let dir = tempfile::tempdir().unwrap();
    let names = ["a.txt", "b.txt", "c.txt"];
    for n in names {
        fs::write(dir.path().join(n), format!("note {n}\nHR 70\n")).unwrap();
    }
    let victim = dir.path().join("b.txt");
    let entries: Vec<Entry> = names
        .iter()
        .map(|n| Entry::File(dir.path().join(n)))
        .collect();
    let opts = BatchOptions {
        jobs: 1,
        window: 1,
        report_warnings: false,
        progress: false,
        ..BatchOptions::default()
    };
    let mut seen: Vec<(PathBuf, bool, Vec<&'static str>)> = Vec::new();
    let report = for_each_entry(
        entries.into_iter(),
        &opts,
        |doc| {
            // Analysing the first file removes the second before it is read: with one
            // worker and a window of one, b.txt is listed but not yet opened.
            if doc.source.ends_with("a.txt") {
                fs::remove_file(&victim).unwrap();
            }
            doc.text
                .as_deref()
                .map(|t| tidemark::analyze(t, &Default::default()))
        },
        |doc, analysis| {
            seen.push((
                PathBuf::from(&doc.source),
                analysis.is_some(),
                doc.warnings.iter().map(|w| w.code).collect(),
            ));
            Ok(())
        },
    )
    .unwrap();
    assert_eq!(
        seen,
        vec![
            (dir.path().join("a.txt"), true, vec![]),
            (dir.path().join("b.txt"), false, vec!["unreadable"]),
            (dir.path().join("c.txt"), true, vec![]),
        ]
    );
    assert_eq!(report.documents, 3);
    assert_eq!(report.skipped, 1);
    assert_eq!(report.exit_code(), exit::SKIPPED);
}
