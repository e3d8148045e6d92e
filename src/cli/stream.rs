//! Line-oriented streaming for pipelines: `--input jsonl`.
//!
//! Input: one JSON object per line, `{"id": "...", "text": "..."}` (`id` a string or a
//! number). Output: exactly one line per input line, in input order, flushed as soon as it is
//! written, so tidemark works as a mapper under a batch engine's pipe operator. A result line
//! is `{"id": ..., ...}` with the fields the per-document function returns; a line that cannot
//! be used gives `{"id": ... or null, "line": N, "error": {"code", "message"}}` and the run
//! goes on. Memory is bounded by the longest line (at most [`MAX_LINE_BYTES`]; a longer line
//! is skipped without being held in memory and reported as `too-large`).
//!
//! [`run`] takes the per-document function, so every command with a JSON result can stream:
//! `extract` passes one that analyses the text and renders the extract document. Another
//! command is wired the same way:
//!
//! ```text
//! let result = stream::run(stdin.lock(), stdout.lock(), |_id, doc| lint_document(doc));
//! return stream::exit_code(result);
//! ```

use std::io::{self, BufRead, Write};
use std::panic::{catch_unwind, AssertUnwindSafe};

use serde_json::{json, Map, Value};

use super::inputs::{Doc, DEFAULT_MAX_FILE_SIZE};

/// Longest input line accepted: the file limit plus room for JSON escaping.
pub const MAX_LINE_BYTES: usize = (DEFAULT_MAX_FILE_SIZE as usize) * 2;

/// What a streaming run did.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct StreamStats {
    /// Input lines read (each gave one output line).
    pub lines: usize,
    /// Lines answered with an error line.
    pub errors: usize,
}

/// Stream `input` to `output`, calling `per_doc` once per good line.
///
/// `per_doc` gets the line's `id` and the decoded document (its `source` is the id as text)
/// and returns the result object; `id` is put first. A panic inside `per_doc` becomes an
/// `internal-error` line for that document. Returns early only on an output error (a closed
/// pipe included) or an input read error.
pub fn run<R, W, F>(mut input: R, mut output: W, mut per_doc: F) -> io::Result<StreamStats>
where
    R: BufRead,
    W: Write,
    F: FnMut(&Value, &Doc) -> Value,
{
    run_with_limit(&mut input, &mut output, &mut per_doc, MAX_LINE_BYTES)
}

/// Exit code of a streaming run: 0 when every line got a result, 1 when some got an error
/// line, 2 on an input or output error (a closed output pipe is not an error).
pub fn exit_code(result: io::Result<StreamStats>) -> i32 {
    match result {
        Ok(stats) if stats.errors > 0 => 1,
        Ok(_) => 0,
        Err(e) if e.kind() == io::ErrorKind::BrokenPipe => 0,
        Err(e) => {
            eprintln!("tidemark: streaming stopped: {e}");
            2
        }
    }
}

fn run_with_limit<R, W, F>(
    input: &mut R,
    output: &mut W,
    per_doc: &mut F,
    max_line: usize,
) -> io::Result<StreamStats>
where
    R: BufRead,
    W: Write,
    F: FnMut(&Value, &Doc) -> Value,
{
    let mut stats = StreamStats::default();
    let mut buf = Vec::new();
    while let Some(overflow) = read_line_bounded(input, &mut buf, max_line)? {
        stats.lines += 1;
        let line_no = stats.lines;
        let value = if overflow {
            error_line(
                Value::Null,
                line_no,
                "too-large",
                format!("line longer than {max_line} bytes, skipped"),
            )
        } else {
            answer_line(&buf, line_no, per_doc)
        };
        if value.get("error").is_some() {
            stats.errors += 1;
        }
        serde_json::to_writer(&mut *output, &value)?;
        output.write_all(b"\n")?;
        output.flush()?;
    }
    Ok(stats)
}

/// Answer one input line.
fn answer_line<F>(line: &[u8], line_no: usize, per_doc: &mut F) -> Value
where
    F: FnMut(&Value, &Doc) -> Value,
{
    let line = line.strip_suffix(b"\r").unwrap_or(line);
    if line.iter().all(|b| b.is_ascii_whitespace()) {
        return error_line(
            Value::Null,
            line_no,
            "empty-line",
            "empty input line".into(),
        );
    }
    let parsed: Value = match serde_json::from_slice(line) {
        Ok(v) => v,
        Err(e) => {
            return error_line(
                salvage_id(line),
                line_no,
                "invalid-json",
                format!("line is not JSON: {e}"),
            )
        }
    };
    let Value::Object(obj) = parsed else {
        return error_line(
            Value::Null,
            line_no,
            "invalid-request",
            "line must be a JSON object".into(),
        );
    };
    let id = obj.get("id").cloned().unwrap_or(Value::Null);
    let source = match &id {
        Value::String(s) => s.clone(),
        Value::Number(n) => n.to_string(),
        _ => {
            return error_line(
                id,
                line_no,
                "invalid-request",
                "\"id\" must be a string or a number".into(),
            )
        }
    };
    let text = match obj.get("text") {
        Some(Value::String(t)) => t,
        _ => {
            return error_line(
                id,
                line_no,
                "invalid-request",
                "\"text\" must be a string".into(),
            )
        }
    };
    let doc = Doc::from_bytes(source, text.as_bytes());
    match catch_unwind(AssertUnwindSafe(|| per_doc(&id, &doc))) {
        Ok(result) => with_id(id, result),
        Err(_) => error_line(
            id,
            line_no,
            "internal-error",
            "this document could not be processed (internal error)".into(),
        ),
    }
}

fn with_id(id: Value, result: Value) -> Value {
    let mut out = Map::new();
    out.insert("id".into(), id);
    match result {
        Value::Object(m) => {
            for (k, v) in m {
                if k != "id" {
                    out.insert(k, v);
                }
            }
        }
        other => {
            out.insert("result".into(), other);
        }
    }
    Value::Object(out)
}

fn error_line(id: Value, line: usize, code: &str, message: String) -> Value {
    json!({"id": id, "line": line, "error": {"code": code, "message": message}})
}

/// The `id` of a line that is not valid JSON as a whole, when its `"id": value` part is.
fn salvage_id(line: &[u8]) -> Value {
    let text = String::from_utf8_lossy(line);
    let Some(at) = text.find("\"id\"") else {
        return Value::Null;
    };
    let rest = text[at + 4..].trim_start();
    let Some(rest) = rest.strip_prefix(':') else {
        return Value::Null;
    };
    let mut values = serde_json::Deserializer::from_str(rest.trim_start()).into_iter::<Value>();
    match values.next() {
        Some(Ok(v @ (Value::String(_) | Value::Number(_)))) => v,
        _ => Value::Null,
    }
}

/// Read one `\n`-terminated line into `buf` (without the `\n`), holding at most `max` bytes.
///
/// Returns `None` at the end of input, `Some(true)` when the line was longer than `max` (it
/// is consumed and `buf` is left empty) and `Some(false)` otherwise.
fn read_line_bounded<R: BufRead>(
    r: &mut R,
    buf: &mut Vec<u8>,
    max: usize,
) -> io::Result<Option<bool>> {
    buf.clear();
    let mut overflow = false;
    let mut consumed_any = false;
    loop {
        let avail = match r.fill_buf() {
            Ok(b) => b,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        };
        if avail.is_empty() {
            return Ok(consumed_any.then_some(overflow));
        }
        let (chunk, done) = match avail.iter().position(|&b| b == b'\n') {
            Some(i) => (&avail[..i], Some(i + 1)),
            None => (avail, None),
        };
        if !overflow {
            if buf.len() + chunk.len() > max {
                overflow = true;
                buf.clear();
                buf.shrink_to(4096);
            } else {
                buf.extend_from_slice(chunk);
            }
        }
        let n = done.unwrap_or(avail.len());
        r.consume(n);
        consumed_any = true;
        if done.is_some() {
            return Ok(Some(overflow));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stream(input: &str, max: usize) -> (Vec<Value>, StreamStats) {
        let mut out = Vec::new();
        let mut reader = input.as_bytes();
        let mut f = |id: &Value, doc: &Doc| {
            if id == "boom" {
                panic!("test panic");
            }
            json!({"source": doc.source, "len": doc.text.as_deref().map(str::len)})
        };
        let stats = run_with_limit(&mut reader, &mut out, &mut f, max).unwrap();
        let lines = String::from_utf8(out)
            .unwrap()
            .lines()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect();
        (lines, stats)
    }

    #[test]
    fn one_output_line_per_input_line_in_order() {
        let input = "{\"id\": \"a\", \"text\": \"Wt 82\"}\n{\"id\": 2, \"text\": \"µ°😀\"}\r\n";
        let (lines, stats) = stream(input, 1000);
        assert_eq!(
            stats,
            StreamStats {
                lines: 2,
                errors: 0
            }
        );
        assert_eq!(lines[0]["id"], "a");
        assert_eq!(lines[0]["len"], 5);
        assert_eq!(lines[1]["id"], 2);
        assert_eq!(lines[1]["source"], "2");
        // "µ°😀" is 2 + 2 + 4 bytes in UTF-8.
        assert_eq!(lines[1]["len"], 8);
    }

    #[test]
    fn bad_lines_give_error_lines_and_the_run_goes_on() {
        let input = concat!(
            "{\"id\": \"x1\", \"text\": 3}\n",
            "{\"id\": \"x2\", \"text\": \"ok\"\n",
            "\n",
            "[1, 2]\n",
            "{\"text\": \"no id\"}\n",
            "{\"id\": \"boom\", \"text\": \"t\"}\n",
            "{\"id\": \"last\", \"text\": \"fine\"}",
        );
        let (lines, stats) = stream(input, 1000);
        assert_eq!(stats.lines, 7);
        assert_eq!(stats.errors, 6);
        let codes: Vec<_> = lines
            .iter()
            .map(|l| l["error"]["code"].as_str().unwrap_or("ok").to_string())
            .collect();
        assert_eq!(
            codes,
            [
                "invalid-request",
                "invalid-json",
                "empty-line",
                "invalid-request",
                "invalid-request",
                "internal-error",
                "ok"
            ]
        );
        // The id of a broken line is recovered when its id part is readable.
        assert_eq!(lines[1]["id"], "x2");
        assert_eq!(lines[1]["line"], 2);
        assert_eq!(lines[0]["id"], "x1");
        assert_eq!(lines[5]["id"], "boom");
        assert_eq!(lines[6]["id"], "last");
    }

    #[test]
    fn an_overlong_line_is_skipped_without_stopping() {
        let long = format!("{{\"id\": \"big\", \"text\": \"{}\"}}\n", "a".repeat(5000));
        let input = format!("{long}{{\"id\": \"small\", \"text\": \"b\"}}\n");
        let (lines, stats) = stream(&input, 100);
        assert_eq!(stats.lines, 2);
        assert_eq!(lines[0]["error"]["code"], "too-large");
        assert_eq!(lines[1]["id"], "small");
    }

    #[test]
    fn output_is_flushed_after_every_line() {
        // A writer that records how many bytes had been written at each flush.
        struct Recorder {
            data: Vec<u8>,
            flushes: Vec<usize>,
        }
        impl Write for Recorder {
            fn write(&mut self, b: &[u8]) -> io::Result<usize> {
                self.data.extend_from_slice(b);
                Ok(b.len())
            }
            fn flush(&mut self) -> io::Result<()> {
                self.flushes.push(self.data.len());
                Ok(())
            }
        }
        let mut rec = Recorder {
            data: Vec::new(),
            flushes: Vec::new(),
        };
        let input = "{\"id\":1,\"text\":\"a\"}\n{\"id\":2,\"text\":\"b\"}\n";
        run(input.as_bytes(), &mut rec, |_, _| json!({})).unwrap();
        let text = String::from_utf8(rec.data.clone()).unwrap();
        let first_len = text.find('\n').unwrap() + 1;
        assert_eq!(rec.flushes, vec![first_len, text.len()]);
    }

    #[test]
    fn exit_codes_tell_error_lines_from_io_errors() {
        let ok = StreamStats {
            lines: 3,
            errors: 0,
        };
        assert_eq!(exit_code(Ok(ok)), 0);
        assert_eq!(
            exit_code(Ok(StreamStats {
                lines: 3,
                errors: 1
            })),
            1
        );
        let pipe = io::Error::new(io::ErrorKind::BrokenPipe, "closed");
        assert_eq!(exit_code(Err(pipe)), 0);
        assert_eq!(exit_code(Err(io::Error::other("disk"))), 2);
    }

    #[test]
    fn salvaged_ids_are_only_strings_or_numbers() {
        assert_eq!(salvage_id(br#"{"id": 7, "text": "#), json!(7));
        assert_eq!(salvage_id(br#"{"id": {"a": 1}"#), Value::Null);
        assert_eq!(salvage_id(b"garbage"), Value::Null);
    }
}
