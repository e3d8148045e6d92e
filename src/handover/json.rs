//! `handover --format json` (`tidemark-handover/1`): the typed sheet as one object,
//! documented in `docs/schema/handover.schema.json`. Every item keeps its spans as
//! `{note, start, end, line, column, end_line, end_column}`, `note` indexing the patient's
//! `notes`.

use std::io::{self, Write};

use super::sheet::Sheet;

/// The sheet as a JSON value.
pub fn to_value(sheet: &Sheet) -> serde_json::Value {
    serde_json::to_value(sheet).unwrap_or(serde_json::Value::Null)
}

/// Write the whole sheet, pretty-printed.
pub fn write<W: Write>(out: &mut W, sheet: &Sheet) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, sheet)?;
    out.write_all(b"\n")
}
