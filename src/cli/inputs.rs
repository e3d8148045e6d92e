//! Reading inputs: files, directories (recursively, in sorted order) and stdin.

use std::io::Read;
use std::path::{Path, PathBuf};

use crate::input::{decode, Decoded};
use crate::model::InputWarning;

/// Default size limit for one input file.
pub const DEFAULT_MAX_FILE_SIZE: u64 = 32 * 1024 * 1024;

/// One input document, read and decoded (or not).
#[derive(Debug, Clone)]
pub struct Doc {
    /// The path as given (or as found under a given directory), `-` for stdin.
    pub source: String,
    /// The decoded text, `None` when the input was skipped.
    pub text: Option<String>,
    pub warnings: Vec<InputWarning>,
}

impl Doc {
    pub fn from_bytes(source: String, bytes: &[u8]) -> Doc {
        match decode(bytes) {
            Decoded::Text { text, warnings } => Doc {
                source,
                text: Some(text),
                warnings,
            },
            Decoded::Skipped(w) => Doc {
                source,
                text: None,
                warnings: vec![w],
            },
        }
    }

    fn failed(source: String, code: &'static str, message: String) -> Doc {
        Doc {
            source,
            text: None,
            warnings: vec![InputWarning {
                code,
                message,
                offset: None,
            }],
        }
    }
}

/// Expand the given paths into the list of input files, in a stable order.
pub fn expand(paths: &[String]) -> Vec<Result<PathBuf, (String, String)>> {
    let mut out = Vec::new();
    for p in paths {
        if p == "-" {
            out.push(Ok(PathBuf::from("-")));
            continue;
        }
        let path = Path::new(p);
        match std::fs::metadata(path) {
            Ok(m) if m.is_dir() => {
                let mut found = Vec::new();
                let mut seen = std::collections::HashSet::new();
                walk(path, &mut found, &mut seen, &mut out);
                found.sort();
                out.extend(found.into_iter().map(Ok));
            }
            Ok(_) => out.push(Ok(path.to_path_buf())),
            Err(e) => out.push(Err((p.clone(), format!("cannot read: {e}")))),
        }
    }
    out
}

fn walk(
    dir: &Path,
    found: &mut Vec<PathBuf>,
    seen: &mut std::collections::HashSet<PathBuf>,
    errors: &mut Vec<Result<PathBuf, (String, String)>>,
) {
    // Canonical paths guard against symlink loops.
    let canon = match std::fs::canonicalize(dir) {
        Ok(c) => c,
        Err(e) => {
            errors.push(Err((
                dir.display().to_string(),
                format!("cannot read: {e}"),
            )));
            return;
        }
    };
    if !seen.insert(canon) {
        errors.push(Err((
            dir.display().to_string(),
            "directory already visited (symlink loop?), skipped".into(),
        )));
        return;
    }
    let entries = match std::fs::read_dir(dir) {
        Ok(e) => e,
        Err(e) => {
            errors.push(Err((
                dir.display().to_string(),
                format!("cannot read: {e}"),
            )));
            return;
        }
    };
    let mut entries: Vec<_> = entries.filter_map(|e| e.ok()).map(|e| e.path()).collect();
    entries.sort();
    for p in entries {
        let name = p.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if name.starts_with('.') {
            continue;
        }
        match std::fs::metadata(&p) {
            Ok(m) if m.is_dir() => walk(&p, found, seen, errors),
            Ok(_) if is_note_file(&p) => found.push(p),
            Ok(_) => {}
            Err(e) => errors.push(Err((p.display().to_string(), format!("cannot read: {e}")))),
        }
    }
}

/// Files a directory walk picks up: plain-text notes.
fn is_note_file(p: &Path) -> bool {
    matches!(
        p.extension().and_then(|e| e.to_str()).map(|e| e.to_ascii_lowercase()),
        Some(ref e) if e == "txt" || e == "note" || e == "text"
    )
}

/// Read one file (read-only), respecting the size limit.
pub fn read_file(path: &Path, max_size: u64) -> Doc {
    let source = path.display().to_string();
    if source == "-" {
        let mut buf = Vec::new();
        return match std::io::stdin().lock().read_to_end(&mut buf) {
            Ok(_) => Doc::from_bytes(source, &buf),
            Err(e) => Doc::failed(source, "unreadable", format!("cannot read stdin: {e}")),
        };
    }
    let file = match std::fs::File::open(path) {
        Ok(f) => f,
        Err(e) => return Doc::failed(source, "unreadable", format!("cannot open: {e}")),
    };
    let mut buf = Vec::new();
    match file.take(max_size + 1).read_to_end(&mut buf) {
        Ok(_) if buf.len() as u64 > max_size => Doc::failed(
            source,
            "too-large",
            format!("larger than the {max_size}-byte limit (--max-file-size), skipped"),
        ),
        Ok(_) => Doc::from_bytes(source, &buf),
        Err(e) => Doc::failed(source, "unreadable", format!("cannot read: {e}")),
    }
}

/// Load every input named on the command line (stdin when none).
pub fn load_all(paths: &[String]) -> Vec<Doc> {
    let paths: Vec<String> = if paths.is_empty() {
        vec!["-".into()]
    } else {
        paths.to_vec()
    };
    expand(&paths)
        .into_iter()
        .map(|r| match r {
            Ok(p) => read_file(&p, DEFAULT_MAX_FILE_SIZE),
            Err((source, message)) => Doc::failed(source, "unreadable", message),
        })
        .collect()
}
