//! Reading inputs: files, directories (recursively, in sorted order) and stdin.
//!
//! Directories are walked lazily ([`Walker`]): file paths stream out one at a time in a
//! stable order (entries of each directory sorted by name, depth first), so a directory of
//! millions of notes is never listed in memory as a whole. Symlinks are followed; a symlink
//! that leads back to one of its own ancestors (a loop) or to a directory already walked is
//! reported once and not entered again. Hidden entries (names starting with `.`) are
//! skipped, and a walk only picks up regular files named `*.txt`, `*.note` or `*.text`;
//! a file named explicitly on the command line is read whatever its name.
//!
//! Files are opened read-only and never written.

use std::collections::HashSet;
use std::io::Read;
use std::path::{Path, PathBuf};

use crate::input::{decode, decode_vec, Decoded};
use crate::model::InputWarning;

/// Default size limit for one input file (32 MiB).
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
        Doc::from_decoded(source, decode(bytes))
    }

    /// [`Doc::from_bytes`] without copying valid UTF-8.
    pub fn from_vec(source: String, bytes: Vec<u8>) -> Doc {
        Doc::from_decoded(source, decode_vec(bytes))
    }

    fn from_decoded(source: String, decoded: Decoded) -> Doc {
        match decoded {
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

    /// A document that could not be read at all.
    pub fn failed(source: String, code: &'static str, message: String) -> Doc {
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

    /// Whether the document was skipped (nothing was analysed).
    pub fn is_skipped(&self) -> bool {
        self.text.is_none()
    }
}

/// One item of a walk: a file to read, or a path that could not be walked.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Entry {
    /// A file to read (`-` for stdin).
    File(PathBuf),
    /// A path that is reported and skipped: `(source, code, message)`.
    Problem(String, &'static str, String),
}

struct Frame {
    /// Entries of this directory still to visit, in reverse sorted order (pop from the end).
    pending: Vec<PathBuf>,
    /// The directory's canonical path, to recognise loops.
    canonical: PathBuf,
}

/// A lazy, depth-first walk over the paths given on the command line.
pub struct Walker {
    /// Top-level arguments still to visit, in reverse order.
    args: Vec<String>,
    stack: Vec<Frame>,
    /// Canonical paths of the directories on the stack (ancestors of the current entry).
    ancestors: HashSet<PathBuf>,
    /// Canonical paths of every directory entered so far.
    seen: HashSet<PathBuf>,
    /// Problems found while listing a directory, reported before its entries.
    problems: Vec<Entry>,
}

impl Walker {
    /// Walk `paths`; no paths means stdin.
    pub fn new(paths: &[String]) -> Walker {
        let mut args: Vec<String> = if paths.is_empty() {
            vec!["-".into()]
        } else {
            paths.to_vec()
        };
        args.reverse();
        Walker {
            args,
            stack: Vec::new(),
            ancestors: HashSet::new(),
            seen: HashSet::new(),
            problems: Vec::new(),
        }
    }

    /// Enter a directory: returns a problem when it cannot be or must not be entered.
    fn enter(&mut self, dir: &Path) -> Option<Entry> {
        let source = dir.display().to_string();
        let canonical = match std::fs::canonicalize(dir) {
            Ok(c) => c,
            Err(e) => {
                return Some(Entry::Problem(
                    source,
                    "unreadable",
                    format!("cannot read: {e}"),
                ))
            }
        };
        if self.ancestors.contains(&canonical) {
            return Some(Entry::Problem(
                source,
                "symlink-loop",
                format!(
                    "symlink loop: leads back to {}, not entered again",
                    canonical.display()
                ),
            ));
        }
        if self.seen.contains(&canonical) {
            return Some(Entry::Problem(
                source,
                "already-walked",
                format!(
                    "the directory {} was already walked, not entered again",
                    canonical.display()
                ),
            ));
        }
        let entries = match std::fs::read_dir(dir) {
            Ok(e) => e,
            Err(e) => {
                return Some(Entry::Problem(
                    source,
                    "unreadable",
                    format!("cannot read: {e}"),
                ))
            }
        };
        let mut pending = Vec::new();
        for e in entries {
            match e {
                Ok(e) => {
                    let hidden = e.file_name().to_string_lossy().starts_with('.');
                    if !hidden {
                        pending.push(e.path());
                    }
                }
                Err(e) => {
                    // An entry that cannot be listed: report it, keep the rest.
                    self.problems.push(Entry::Problem(
                        source.clone(),
                        "unreadable",
                        format!("cannot list an entry: {e}"),
                    ));
                }
            }
        }
        pending.sort();
        pending.reverse();
        self.seen.insert(canonical.clone());
        self.ancestors.insert(canonical.clone());
        self.stack.push(Frame { pending, canonical });
        None
    }
}

impl Iterator for Walker {
    type Item = Entry;

    fn next(&mut self) -> Option<Entry> {
        loop {
            if let Some(problem) = self.problems.pop() {
                return Some(problem);
            }
            if let Some(top) = self.stack.last_mut() {
                let Some(path) = top.pending.pop() else {
                    let done = self.stack.pop().expect("non-empty stack");
                    self.ancestors.remove(&done.canonical);
                    continue;
                };
                match std::fs::metadata(&path) {
                    Ok(m) if m.is_dir() => {
                        if let Some(problem) = self.enter(&path) {
                            return Some(problem);
                        }
                    }
                    Ok(m) if m.is_file() && is_note_file(&path) => return Some(Entry::File(path)),
                    Ok(_) => {}
                    Err(e) => {
                        let dangling = std::fs::symlink_metadata(&path)
                            .map(|m| m.file_type().is_symlink())
                            .unwrap_or(false);
                        // Only report what the walk would have read.
                        if dangling || is_note_file(&path) {
                            return Some(Entry::Problem(
                                path.display().to_string(),
                                "unreadable",
                                format!("cannot read: {e}"),
                            ));
                        }
                    }
                }
                continue;
            }
            let arg = self.args.pop()?;
            if arg == "-" {
                return Some(Entry::File(PathBuf::from("-")));
            }
            let path = PathBuf::from(&arg);
            match std::fs::metadata(&path) {
                Ok(m) if m.is_dir() => {
                    if let Some(problem) = self.enter(&path) {
                        return Some(problem);
                    }
                }
                Ok(_) => return Some(Entry::File(path)),
                Err(e) => {
                    return Some(Entry::Problem(
                        arg,
                        "unreadable",
                        format!("cannot read: {e}"),
                    ))
                }
            }
        }
    }
}

/// Expand the given paths into the list of input files, in a stable order.
pub fn expand(paths: &[String]) -> Vec<Result<PathBuf, (String, String)>> {
    Walker::new(paths)
        .map(|e| match e {
            Entry::File(p) => Ok(p),
            Entry::Problem(source, _, message) => Err((source, message)),
        })
        .collect()
}

/// Files a directory walk picks up: plain-text notes.
pub fn is_note_file(p: &Path) -> bool {
    matches!(
        p.extension().and_then(|e| e.to_str()).map(|e| e.to_ascii_lowercase()),
        Some(ref e) if e == "txt" || e == "note" || e == "text"
    )
}

fn too_large(source: String, max_size: u64) -> Doc {
    Doc::failed(
        source,
        "too-large",
        format!("larger than the {max_size}-byte limit (--max-file-size), skipped"),
    )
}

/// Read one file (read-only), respecting the size limit. `-` reads stdin.
pub fn read_file(path: &Path, max_size: u64) -> Doc {
    let source = path.display().to_string();
    let mut buf = Vec::new();
    if source == "-" {
        return match std::io::stdin()
            .lock()
            .take(max_size + 1)
            .read_to_end(&mut buf)
        {
            Ok(_) if buf.len() as u64 > max_size => too_large(source, max_size),
            Ok(_) => Doc::from_vec(source, buf),
            Err(e) => Doc::failed(source, "unreadable", format!("cannot read stdin: {e}")),
        };
    }
    // `File::open` opens read-only.
    let file = match std::fs::File::open(path) {
        Ok(f) => f,
        Err(e) => return Doc::failed(source, "unreadable", format!("cannot open: {e}")),
    };
    match file.metadata() {
        Ok(m) if m.is_dir() => {
            return Doc::failed(source, "unreadable", "is a directory".into());
        }
        Ok(m) if m.is_file() && m.len() > max_size => return too_large(source, max_size),
        Ok(m) if m.is_file() => buf.reserve_exact(m.len() as usize),
        _ => {}
    }
    match file.take(max_size + 1).read_to_end(&mut buf) {
        Ok(_) if buf.len() as u64 > max_size => too_large(source, max_size),
        Ok(_) => Doc::from_vec(source, buf),
        Err(e) => Doc::failed(source, "unreadable", format!("cannot read: {e}")),
    }
}

/// Read the document an [`Entry`] names.
pub fn read_entry(entry: Entry, max_size: u64) -> Doc {
    match entry {
        Entry::File(p) => read_file(&p, max_size),
        Entry::Problem(source, code, message) => Doc::failed(source, code, message),
    }
}

/// Load every input named on the command line (stdin when none), all in memory.
///
/// For batches use [`super::batch::for_each_document`], which streams.
pub fn load_all(paths: &[String]) -> Vec<Doc> {
    Walker::new(paths)
        .map(|e| read_entry(e, DEFAULT_MAX_FILE_SIZE))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn note_extensions() {
        assert!(is_note_file(Path::new("a/b.TXT")));
        assert!(is_note_file(Path::new("b.note")));
        assert!(!is_note_file(Path::new("b.pdf")));
        assert!(!is_note_file(Path::new("txt")));
    }
}
