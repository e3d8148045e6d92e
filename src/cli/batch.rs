//! The batch driver: every multi-document command runs its inputs through
//! [`for_each_document`].
//!
//! - Inputs stream: a walker thread lists file paths one at a time ([`inputs::Walker`]);
//!   file contents are read inside the workers, so memory is bounded by the documents in
//!   flight (at most [`BatchOptions::window`] documents and about
//!   [`BatchOptions::max_bytes_in_flight`] bytes), never by the size of the batch.
//! - Work runs on a rayon pool of `--jobs` threads (default: all cores).
//! - Results reach the `sink` on the calling thread in input order, whatever the thread
//!   count, through a bounded reorder buffer.
//! - Per-file problems (unreadable, binary, empty, too large, symlink loop ...) become
//!   warnings on the document; the run goes on. They are printed to stderr as
//!   `tidemark: SOURCE: MESSAGE` unless [`BatchOptions::report_warnings`] is off.
//! - A progress bar is drawn on stderr for a batch that runs longer than a second, only
//!   when stderr is a terminal. Nothing is ever mixed into stdout.
//! - A panic while analysing one document is caught: that document is reported as skipped
//!   (`internal-error`) and the run goes on.

use std::collections::BTreeMap;
use std::io::{self, IsTerminal};
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::sync::{Condvar, Mutex};
use std::time::{Duration, Instant};

use crossbeam_channel::{bounded, unbounded, RecvTimeoutError};

use super::exit;
use super::inputs::{self, Doc, Entry, Walker};
use crate::model::InputWarning;

/// How a batch runs.
#[derive(Debug, Clone)]
pub struct BatchOptions {
    /// Worker threads; 0 means one per available core.
    pub jobs: usize,
    /// Files larger than this are skipped with a `too-large` warning.
    pub max_file_size: u64,
    /// Most documents in flight (queued, being analysed or waiting to be written in
    /// order); 0 means eight per worker.
    pub window: usize,
    /// Most bytes of input in flight (by file size when listed); a file larger than this
    /// still runs, alone. 0 means 64 MiB.
    pub max_bytes_in_flight: u64,
    /// Print each document's input warnings to stderr.
    pub report_warnings: bool,
    /// Draw a progress bar on stderr for long batches (only when stderr is a terminal).
    pub progress: bool,
}

impl Default for BatchOptions {
    fn default() -> Self {
        BatchOptions {
            jobs: 0,
            max_file_size: inputs::DEFAULT_MAX_FILE_SIZE,
            window: 0,
            max_bytes_in_flight: 0,
            report_warnings: true,
            progress: true,
        }
    }
}

impl BatchOptions {
    /// The number of worker threads this batch uses.
    pub fn effective_jobs(&self) -> usize {
        if self.jobs > 0 {
            self.jobs
        } else {
            std::thread::available_parallelism()
                .map(|n| n.get())
                .unwrap_or(1)
        }
    }

    fn effective_bytes(&self) -> u64 {
        if self.max_bytes_in_flight > 0 {
            self.max_bytes_in_flight
        } else {
            64 << 20
        }
    }

    fn effective_window(&self, jobs: usize) -> usize {
        if self.window > 0 {
            self.window
        } else {
            jobs * 8
        }
    }
}

/// What happened in a batch.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct BatchReport {
    /// Documents handed to the sink (skipped ones included).
    pub documents: usize,
    /// Documents not analysed (unreadable, binary, empty, too large, loop, internal error).
    pub skipped: usize,
    /// Documents with at least one input warning (skipped ones included).
    pub warned: usize,
    /// Bytes of document text analysed.
    pub bytes: u64,
}

impl BatchReport {
    /// [`exit::SKIPPED`] when any input was skipped, else [`exit::OK`].
    pub fn exit_code(&self) -> i32 {
        if self.skipped > 0 {
            exit::SKIPPED
        } else {
            exit::OK
        }
    }
}

/// Read every input `paths` names (files, directories, `-` for stdin; nothing means stdin),
/// run `per_doc` on each in parallel, and hand `(doc, result)` to `sink` in input order.
///
/// `per_doc` also sees skipped documents (`doc.text` is `None`); it should do the
/// expensive work (analysis and rendering), so that `sink` only writes. When `sink`
/// returns an error the batch stops early and the error is returned.
pub fn for_each_document<R, F, S>(
    paths: &[String],
    opts: &BatchOptions,
    per_doc: F,
    sink: S,
) -> io::Result<BatchReport>
where
    R: Send,
    F: Fn(&Doc) -> R + Sync,
    S: FnMut(Doc, R) -> io::Result<()>,
{
    for_each_entry(Walker::new(paths), opts, per_doc, sink)
}

/// [`for_each_document`] over an explicit stream of entries.
pub fn for_each_entry<I, R, F, S>(
    entries: I,
    opts: &BatchOptions,
    per_doc: F,
    mut sink: S,
) -> io::Result<BatchReport>
where
    I: Iterator<Item = Entry> + Send,
    R: Send,
    F: Fn(&Doc) -> R + Sync,
    S: FnMut(Doc, R) -> io::Result<()>,
{
    let jobs = opts.effective_jobs();
    let window = opts.effective_window(jobs).max(1);
    let max_size = opts.max_file_size;
    let pool = match rayon::ThreadPoolBuilder::new()
        .num_threads(jobs)
        .thread_name(|i| format!("tidemark-worker-{i}"))
        // The same stack as a main thread, so deep input nests as deep on a worker.
        .stack_size(8 << 20)
        .build()
    {
        Ok(p) => p,
        Err(e) => {
            return Err(io::Error::other(format!(
                "cannot start worker threads: {e}"
            )))
        }
    };

    let (work_tx, work_rx) = bounded::<(usize, Entry, u64)>(window);
    let (done_tx, done_rx) = unbounded::<(usize, Doc, R, u64)>();
    // Taken by the walker for each document, given back once it is written.
    let budget = Budget::new(window, opts.effective_bytes());
    let found = AtomicUsize::new(0);
    let walk_done = AtomicBool::new(false);
    let cancelled = AtomicBool::new(false);
    let per_doc = &per_doc;

    let mut report = BatchReport::default();
    let mut progress = Progress::new(opts.progress);
    let mut failure: Option<io::Error> = None;

    std::thread::scope(|threads| {
        let found = &found;
        let walk_done = &walk_done;
        let cancelled = &cancelled;
        let budget = &budget;
        threads.spawn(move || {
            for (i, entry) in entries.enumerate() {
                let size = match &entry {
                    Entry::File(p) => std::fs::metadata(p).map_or(0, |m| m.len().min(max_size)),
                    Entry::Problem(..) => 0,
                };
                if !budget.acquire(size, cancelled) {
                    break;
                }
                found.fetch_add(1, Ordering::Relaxed);
                if work_tx.send((i, entry, size)).is_err() {
                    break;
                }
            }
            walk_done.store(true, Ordering::Relaxed);
        });

        pool.in_place_scope(|scope| {
            for _ in 0..jobs {
                let rx = work_rx.clone();
                let tx = done_tx.clone();
                scope.spawn(move |_| {
                    // A panic escaping here (per_doc failing even on a skipped document)
                    // stops the batch instead of leaving the others waiting for ever.
                    let _stop = StopOnDrop { cancelled, budget };
                    for (i, entry, size) in rx {
                        if cancelled.load(Ordering::Relaxed) {
                            break;
                        }
                        let mut doc = inputs::read_entry(entry, max_size);
                        let r = run_guarded(per_doc, &mut doc);
                        if tx.send((i, doc, r, size)).is_err() {
                            break;
                        }
                    }
                });
            }
            drop(work_rx);
            drop(done_tx);
            // Likewise if the sink panics.
            let _stop = StopOnDrop { cancelled, budget };

            let mut pending: BTreeMap<usize, (Doc, R, u64)> = BTreeMap::new();
            let mut next = 0usize;
            loop {
                match done_rx.recv_timeout(Duration::from_millis(200)) {
                    Ok((i, doc, r, size)) => {
                        pending.insert(i, (doc, r, size));
                    }
                    Err(RecvTimeoutError::Timeout) => {}
                    Err(RecvTimeoutError::Disconnected) => break,
                }
                while let Some((doc, r, size)) = pending.remove(&next) {
                    next += 1;
                    report.documents += 1;
                    report.skipped += usize::from(doc.is_skipped());
                    report.warned += usize::from(!doc.warnings.is_empty());
                    report.bytes += doc.text.as_ref().map_or(0, |t| t.len() as u64);
                    if opts.report_warnings {
                        progress.suspend(|| {
                            for w in &doc.warnings {
                                eprintln!("tidemark: {}: {}", doc.source, w.message);
                            }
                        });
                    }
                    if failure.is_none() {
                        if let Err(e) = sink(doc, r) {
                            failure = Some(e);
                            cancelled.store(true, Ordering::Relaxed);
                            budget.wake();
                        }
                    }
                    budget.release(size);
                }
                let total = walk_done
                    .load(Ordering::Relaxed)
                    .then(|| found.load(Ordering::Relaxed));
                progress.tick(next, found.load(Ordering::Relaxed), total);
            }
            // Let the walker finish if it is still waiting for room.
            cancelled.store(true, Ordering::Relaxed);
            budget.wake();
        });
    });
    progress.finish();
    match failure {
        Some(e) => Err(e),
        None => Ok(report),
    }
}

/// One document rendered by a command, on a worker thread.
#[derive(Debug, Clone, Default)]
pub struct Rendered {
    /// The document's output: for [`Framing::JsonRun`], one document rendered with
    /// [`crate::render::json::pretty_document`]; otherwise the bytes exactly as written.
    pub bytes: Vec<u8>,
    /// The document has findings at the fail level (`lint`): the run exits 1.
    pub fails: bool,
}

/// How a command frames its documents' output.
#[derive(Debug, Clone)]
pub enum Framing {
    /// One JSON run object `{"schema": ..., "documents": [...]}`, streamed.
    JsonRun(&'static str),
    /// Documents written one after another (JSON lines, text), then `footer`.
    Plain { footer: Vec<u8> },
}

/// A whole multi-document command in one call: open the output (`--output` or stdout),
/// run the batch with `--jobs` and `--max-file-size`, write each [`Rendered`] document in
/// order inside `framing`, and return the exit code ([`exit`]).
pub fn run_command<F>(common: &super::CommonArgs, framing: Framing, per_doc: F) -> i32
where
    F: Fn(&Doc) -> Rendered + Sync,
{
    use crate::render::json::RunWriter;
    use std::io::Write;

    let mut out = match common.open_output() {
        Ok(o) => o,
        Err(e) => {
            eprintln!("tidemark: {e}");
            return exit::USAGE;
        }
    };
    let mut fails = false;
    let result = (|| {
        let mut run = match &framing {
            Framing::JsonRun(schema) => Some(RunWriter::start(&mut out, schema)?),
            Framing::Plain { .. } => None,
        };
        let report = for_each_document(&common.paths, &common.batch(), per_doc, |_, r| {
            fails |= r.fails;
            match run.as_mut() {
                Some(run) => run.document(&mut out, &r.bytes),
                None => out.write_all(&r.bytes),
            }
        })?;
        match (run, &framing) {
            (Some(run), _) => run.end(&mut out)?,
            (None, Framing::Plain { footer }) => out.write_all(footer)?,
            (None, _) => {}
        }
        out.flush()?;
        Ok::<_, io::Error>(report)
    })();
    let report = match result.and_then(|r| out.finish().map(|_| r)) {
        Ok(r) => r,
        // A reader that stopped early (`| head`) is not an error.
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => return exit::OK,
        Err(e) => {
            eprintln!("tidemark: cannot write output: {e}");
            return exit::USAGE;
        }
    };
    let findings = if fails { exit::FINDINGS } else { exit::OK };
    exit::combine(report.exit_code(), findings)
}

/// Cancels the batch when dropped: at the end of a worker, of the writer, or on a panic.
struct StopOnDrop<'a> {
    cancelled: &'a AtomicBool,
    budget: &'a Budget,
}

impl Drop for StopOnDrop<'_> {
    fn drop(&mut self) {
        if std::thread::panicking() {
            self.cancelled.store(true, Ordering::Relaxed);
            self.budget.wake();
        }
    }
}

/// Documents and bytes in flight, bounded; the walker waits for room.
struct Budget {
    state: Mutex<(usize, u64)>,
    room: Condvar,
    max_docs: usize,
    max_bytes: u64,
}

impl Budget {
    fn new(max_docs: usize, max_bytes: u64) -> Budget {
        Budget {
            state: Mutex::new((0, 0)),
            room: Condvar::new(),
            max_docs,
            max_bytes,
        }
    }

    /// Wait for room for one document of `size` bytes; false when the batch is cancelled.
    /// A document always fits when nothing else is in flight.
    fn acquire(&self, size: u64, cancelled: &AtomicBool) -> bool {
        let mut st = self.state.lock().unwrap_or_else(|e| e.into_inner());
        loop {
            if cancelled.load(Ordering::Relaxed) {
                return false;
            }
            let (docs, bytes) = *st;
            if docs == 0 || (docs < self.max_docs && bytes + size <= self.max_bytes) {
                *st = (docs + 1, bytes + size);
                return true;
            }
            st = self.room.wait(st).unwrap_or_else(|e| e.into_inner());
        }
    }

    fn release(&self, size: u64) {
        let mut st = self.state.lock().unwrap_or_else(|e| e.into_inner());
        st.0 -= 1;
        st.1 -= size;
        drop(st);
        self.room.notify_all();
    }

    fn wake(&self) {
        let _guard = self.state.lock().unwrap_or_else(|e| e.into_inner());
        self.room.notify_all();
    }
}

/// Run `per_doc`, turning a panic into a skipped document so the batch goes on.
fn run_guarded<R>(per_doc: &(impl Fn(&Doc) -> R + Sync), doc: &mut Doc) -> R {
    match catch_unwind(AssertUnwindSafe(|| per_doc(doc))) {
        Ok(r) => r,
        Err(payload) => {
            let what = payload
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| payload.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown".into());
            doc.text = None;
            doc.warnings.push(InputWarning {
                code: "internal-error",
                message: format!("internal error while analysing this document ({what}); skipped"),
                offset: None,
            });
            per_doc(doc)
        }
    }
}

/// A progress bar on stderr, drawn only for long batches on a terminal.
struct Progress {
    enabled: bool,
    started: Instant,
    bar: Option<indicatif::ProgressBar>,
}

impl Progress {
    fn new(wanted: bool) -> Progress {
        Progress {
            enabled: wanted && io::stderr().is_terminal(),
            started: Instant::now(),
            bar: None,
        }
    }

    fn tick(&mut self, done: usize, found: usize, total: Option<usize>) {
        if !self.enabled {
            return;
        }
        if self.bar.is_none() {
            // Long batches only: more than a second in, with work still to do.
            if self.started.elapsed() < Duration::from_secs(1) || total == Some(done) {
                return;
            }
            let bar = indicatif::ProgressBar::with_draw_target(
                Some(found as u64),
                indicatif::ProgressDrawTarget::stderr(),
            );
            if let Ok(style) = indicatif::ProgressStyle::with_template(
                "{elapsed_precise} [{bar:40}] {human_pos}/{human_len} documents, eta {eta}",
            ) {
                bar.set_style(style.progress_chars("=> "));
            }
            self.bar = Some(bar);
        }
        if let Some(bar) = &self.bar {
            bar.set_length(total.unwrap_or(found) as u64);
            bar.set_position(done as u64);
        }
    }

    fn suspend(&self, f: impl FnOnce()) {
        match &self.bar {
            Some(bar) => bar.suspend(f),
            None => f(),
        }
    }

    fn finish(self) {
        if let Some(bar) = self.bar {
            bar.finish_and_clear();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    fn entries(n: usize) -> Vec<Entry> {
        (0..n)
            .map(|i| Entry::Problem(format!("doc{i}"), "unreadable", "test".into()))
            .collect()
    }

    fn quiet(jobs: usize) -> BatchOptions {
        BatchOptions {
            jobs,
            report_warnings: false,
            progress: false,
            ..BatchOptions::default()
        }
    }

    #[test]
    fn order_is_input_order_whatever_the_thread_count() {
        for jobs in [1, 2, 3, 8] {
            let mut seen = Vec::new();
            let report = for_each_entry(
                entries(200).into_iter(),
                &quiet(jobs),
                |d| {
                    // Uneven work so that later documents often finish first.
                    let n: usize = d.source[3..].parse().unwrap();
                    std::thread::sleep(Duration::from_micros(((n * 7919) % 13) as u64 * 50));
                    n
                },
                |d, n| {
                    assert_eq!(d.source, format!("doc{n}"));
                    seen.push(n);
                    Ok(())
                },
            )
            .unwrap();
            assert_eq!(seen, (0..200).collect::<Vec<_>>(), "jobs={jobs}");
            assert_eq!(report.documents, 200);
            assert_eq!(report.skipped, 200);
        }
    }

    #[test]
    fn documents_in_flight_never_exceed_the_window() {
        let in_flight = AtomicUsize::new(0);
        let peak = AtomicUsize::new(0);
        let opts = BatchOptions {
            window: 3,
            ..quiet(4)
        };
        let in_flight_ref = &in_flight;
        for_each_entry(
            entries(100).into_iter(),
            &opts,
            |_| {
                let now = in_flight_ref.fetch_add(1, Ordering::SeqCst) + 1;
                peak.fetch_max(now, Ordering::SeqCst);
            },
            |_, ()| {
                in_flight_ref.fetch_sub(1, Ordering::SeqCst);
                Ok(())
            },
        )
        .unwrap();
        assert!(peak.load(Ordering::SeqCst) <= 3);
        assert_eq!(in_flight.load(Ordering::SeqCst), 0);
    }

    #[test]
    fn bytes_in_flight_stay_under_the_budget_but_a_big_file_still_runs() {
        let dir = tempfile::tempdir().unwrap();
        let mut entries = Vec::new();
        for i in 0..30 {
            let p = dir.path().join(format!("n{i:02}.txt"));
            // One file larger than the whole budget: it must run, alone.
            let size = if i == 17 { 9000 } else { 1000 };
            std::fs::write(&p, "a".repeat(size)).unwrap();
            entries.push(Entry::File(p));
        }
        let bytes = AtomicUsize::new(0);
        let peak = AtomicUsize::new(0);
        let small_peak = AtomicUsize::new(0);
        let opts = BatchOptions {
            max_bytes_in_flight: 2500,
            ..quiet(4)
        };
        let mut count = 0;
        for_each_entry(
            entries.into_iter(),
            &opts,
            |d| {
                let n = d.text.as_ref().unwrap().len();
                let now = bytes.fetch_add(n, Ordering::SeqCst) + n;
                peak.fetch_max(now, Ordering::SeqCst);
                if now < 9000 {
                    small_peak.fetch_max(now, Ordering::SeqCst);
                }
                std::thread::sleep(Duration::from_millis(1));
                n
            },
            |_, n| {
                bytes.fetch_sub(n, Ordering::SeqCst);
                count += 1;
                Ok(())
            },
        )
        .unwrap();
        assert_eq!(count, 30);
        // Two 1000-byte files fit in 2500 bytes, three do not; the big one runs alone.
        assert_eq!(peak.load(Ordering::SeqCst), 9000);
        assert!(small_peak.load(Ordering::SeqCst) <= 2000);
        assert_eq!(bytes.load(Ordering::SeqCst), 0);
    }

    fn common(args: &[&str]) -> crate::cli::CommonArgs {
        use clap::Parser;
        let mut argv = vec!["tidemark", "extract"];
        argv.extend_from_slice(args);
        match crate::cli::Cli::try_parse_from(argv).unwrap().command {
            crate::cli::Command::Extract(a) => a.common,
            // Other commands are added beside `extract`.
            #[allow(unreachable_patterns)]
            _ => unreachable!("parsed as extract"),
        }
    }

    #[test]
    fn run_command_frames_documents_and_combines_exit_codes() {
        let dir = tempfile::tempdir().unwrap();
        let (a, b, dest) = (
            dir.path().join("a.txt"),
            dir.path().join("b.txt"),
            dir.path().join("out"),
        );
        std::fs::write(&a, "HR 70").unwrap();
        std::fs::write(&b, "BP 120/80").unwrap();
        let s = |p: &std::path::Path| p.to_str().unwrap().to_string();
        let render = |fail_on: &'static str| {
            move |d: &Doc| Rendered {
                bytes: format!("[{}]", d.text.as_deref().unwrap_or("-")).into_bytes(),
                fails: d.source.ends_with(fail_on),
            }
        };
        let plain = || Framing::Plain {
            footer: b"end".to_vec(),
        };

        let c = common(&["-j", "2", "-o", &s(&dest), &s(&a), &s(&b)]);
        assert_eq!(run_command(&c, plain(), render("none")), exit::OK);
        assert_eq!(
            std::fs::read_to_string(&dest).unwrap(),
            "[HR 70][BP 120/80]end"
        );

        assert_eq!(run_command(&c, plain(), render("b.txt")), exit::FINDINGS);

        let missing = dir.path().join("gone.txt");
        let c = common(&["-o", &s(&dest), &s(&a), &s(&missing)]);
        assert_eq!(run_command(&c, plain(), render("a.txt")), exit::SKIPPED);
        assert_eq!(std::fs::read_to_string(&dest).unwrap(), "[HR 70][-]end");

        let c = common(&["-o", &s(&dest), &s(&a)]);
        assert_eq!(
            run_command(&c, Framing::JsonRun("t/1"), |_| Rendered {
                bytes: b"    {}".to_vec(),
                fails: false,
            }),
            exit::OK
        );
        let v: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(&dest).unwrap()).unwrap();
        assert_eq!(v, serde_json::json!({"schema": "t/1", "documents": [{}]}));
    }

    #[test]
    fn a_panic_that_escapes_is_propagated_without_a_deadlock() {
        // per_doc panics on every document, skipped ones included; the writer panics too.
        for jobs in [1, 3] {
            let r = std::panic::catch_unwind(|| {
                for_each_entry(
                    entries(200).into_iter(),
                    &BatchOptions {
                        window: 2,
                        ..quiet(jobs)
                    },
                    |d| -> () { panic!("always: {}", d.source) },
                    |_, ()| Ok(()),
                )
            });
            assert!(r.is_err(), "jobs={jobs}");
            let r = std::panic::catch_unwind(|| {
                for_each_entry(
                    entries(200).into_iter(),
                    &BatchOptions {
                        window: 2,
                        ..quiet(jobs)
                    },
                    |_| (),
                    |_, ()| -> io::Result<()> { panic!("writer") },
                )
            });
            assert!(r.is_err(), "jobs={jobs}");
        }
    }

    #[test]
    fn a_sink_error_stops_the_batch() {
        let mut written = 0;
        let err = for_each_entry(
            entries(1000).into_iter(),
            &quiet(2),
            |_| (),
            |_, ()| {
                written += 1;
                if written == 5 {
                    Err(io::Error::other("disk full"))
                } else {
                    Ok(())
                }
            },
        )
        .unwrap_err();
        assert_eq!(err.to_string(), "disk full");
        assert_eq!(written, 5);
    }

    #[test]
    fn a_panic_in_one_document_skips_it_and_the_run_goes_on() {
        let mut got = Vec::new();
        let report = for_each_entry(
            vec![
                Entry::File(PathBuf::from("Cargo.toml")),
                Entry::File(PathBuf::from("Cargo.lock")),
            ]
            .into_iter(),
            &quiet(2),
            |d| {
                if d.source == "Cargo.toml" && d.text.is_some() {
                    panic!("boom");
                }
                d.text.is_some()
            },
            |d, analysed| {
                got.push((d.source, analysed, d.warnings.first().map(|w| w.code)));
                Ok(())
            },
        )
        .unwrap();
        assert_eq!(
            got,
            vec![
                ("Cargo.toml".to_string(), false, Some("internal-error")),
                ("Cargo.lock".to_string(), true, None),
            ]
        );
        assert_eq!(report.skipped, 1);
        assert_eq!(report.exit_code(), exit::SKIPPED);
    }
}
