//! Where a command's output goes: stdout, or a file written atomically.
//!
//! `--output FILE` writes to a temporary file in the same directory as FILE and renames it
//! over FILE only when the whole output was written, so a reader never sees half a file
//! and a failed run leaves FILE as it was. The temporary file is created readable by its
//! owner only (note-derived data), and it is removed if the run fails.

use std::io::{self, BufWriter, Write};
use std::path::{Path, PathBuf};

enum Target {
    Stdout(BufWriter<io::StdoutLock<'static>>),
    File {
        tmp: BufWriter<tempfile::NamedTempFile>,
        dest: PathBuf,
    },
}

/// A command's output stream.
pub struct Output {
    target: Target,
}

impl Output {
    /// Standard output, or an atomic writer for `dest`.
    pub fn open(dest: Option<&Path>) -> io::Result<Output> {
        let target = match dest {
            None => Target::Stdout(BufWriter::with_capacity(64 * 1024, io::stdout().lock())),
            Some(dest) => {
                let dir = match dest.parent() {
                    Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                    _ => PathBuf::from("."),
                };
                let tmp = tempfile::Builder::new()
                    .prefix(".tidemark-output-")
                    .suffix(".tmp")
                    .tempfile_in(&dir)?;
                Target::File {
                    tmp: BufWriter::with_capacity(64 * 1024, tmp),
                    dest: dest.to_path_buf(),
                }
            }
        };
        Ok(Output { target })
    }

    /// Flush everything; for a file, rename the temporary file over the destination.
    pub fn finish(self) -> io::Result<()> {
        match self.target {
            Target::Stdout(mut w) => w.flush(),
            Target::File { tmp, dest } => {
                let tmp = tmp.into_inner().map_err(|e| e.into_error())?;
                tmp.as_file().sync_all()?;
                tmp.persist(&dest).map_err(|e| e.error)?;
                Ok(())
            }
        }
    }
}

impl Write for Output {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match &mut self.target {
            Target::Stdout(w) => w.write(buf),
            Target::File { tmp, .. } => tmp.write(buf),
        }
    }

    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        match &mut self.target {
            Target::Stdout(w) => w.write_all(buf),
            Target::File { tmp, .. } => tmp.write_all(buf),
        }
    }

    fn flush(&mut self) -> io::Result<()> {
        match &mut self.target {
            Target::Stdout(w) => w.flush(),
            Target::File { tmp, .. } => tmp.flush(),
        }
    }
}

/// Refuse an output file that is also an input, or that a directory walk would read.
pub fn check_not_an_input(dest: &Path, paths: &[String]) -> Result<(), String> {
    let canon_dest = canonical_dest(dest);
    for p in paths {
        if p == "-" {
            continue;
        }
        let Ok(canon) = std::fs::canonicalize(p) else {
            continue;
        };
        if canon.is_dir() {
            if canon_dest.starts_with(&canon) && super::inputs::is_note_file(dest) {
                return Err(format!(
                    "--output {} lies inside the input directory {p} and would be read as a note",
                    dest.display()
                ));
            }
        } else if canon == canon_dest {
            return Err(format!(
                "--output {} is also an input; inputs are never overwritten",
                dest.display()
            ));
        }
    }
    Ok(())
}

/// The canonical form of a path that may not exist yet.
fn canonical_dest(dest: &Path) -> PathBuf {
    if let Ok(c) = std::fs::canonicalize(dest) {
        return c;
    }
    let parent = match dest.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    match (std::fs::canonicalize(parent), dest.file_name()) {
        (Ok(p), Some(name)) => p.join(name),
        _ => dest.to_path_buf(),
    }
}
