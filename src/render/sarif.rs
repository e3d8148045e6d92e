//! `lint --format sarif`: one SARIF 2.1.0 log (OASIS Static Analysis Results Interchange
//! Format) for the run.
//!
//! One run, with every rule in `tool.driver.rules` (its documentation as help text), one
//! result per diagnostic with a physical location (1-based lines, columns in Unicode code
//! points as `run.columnKind` says, plus byte offsets), the coder query in the result's
//! properties, and fixes as byte-offset replacements. Inputs that were skipped are reported as
//! tool execution notifications. Validated in the tests against the SARIF 2.1.0 JSON schema.

use std::io::{self, Write};

use serde_json::{json, Value};

use crate::cli::inputs::Doc;
use crate::lint::{registry, Diagnostic, Rule};
use crate::Analysis;

pub const SARIF_SCHEMA_URI: &str = "https://json.schemastore.org/sarif-2.1.0.json";

/// `weight-missing` -> `WeightMissing` (SARIF rule `name`, §3.49.7).
fn pascal(id: &str) -> String {
    id.split('-')
        .map(|w| {
            let mut c = w.chars();
            match c.next() {
                Some(f) => f.to_ascii_uppercase().to_string() + c.as_str(),
                None => String::new(),
            }
        })
        .collect()
}

/// The first paragraph of a rule's "What" section.
fn what(rule: &Rule) -> String {
    let after = rule.doc.split("## What\n").nth(1).unwrap_or(rule.doc);
    after
        .split("\n\n")
        .next()
        .unwrap_or("")
        .split_whitespace()
        .collect::<Vec<_>>()
        .join(" ")
}

fn rule_descriptor(rule: &Rule) -> Value {
    let full = crate::lint::docs::explain(rule);
    json!({
        "id": rule.id,
        "name": pascal(rule.id),
        "shortDescription": {"text": rule.summary},
        "fullDescription": {"text": what(rule)},
        "help": {"text": full, "markdown": full},
        "defaultConfiguration": {"level": rule.severity.sarif_level(), "enabled": true},
        "properties": {
            "category": rule.category.name(),
            "tags": [rule.category.name()],
            "appliesTo": rule.kinds.iter().map(|k| k.name()).collect::<Vec<_>>(),
        },
    })
}

/// A relative URI reference for a path as given (RFC 3986: separators become `/`, and
/// characters outside the unreserved and sub-delimiter sets are percent-encoded).
pub fn path_uri(path: &str) -> String {
    let path = path.replace('\\', "/");
    let mut out = String::with_capacity(path.len());
    for b in path.bytes() {
        let keep = b.is_ascii_alphanumeric()
            || matches!(
                b,
                b'-' | b'.'
                    | b'_'
                    | b'~'
                    | b'/'
                    | b'!'
                    | b'$'
                    | b'&'
                    | b'\''
                    | b'('
                    | b')'
                    | b'*'
                    | b'+'
                    | b','
                    | b';'
                    | b'='
                    | b':'
                    | b'@'
            );
        if keep {
            out.push(b as char);
        } else {
            out.push_str(&format!("%{b:02X}"));
        }
    }
    out
}

fn result(doc: &Doc, kind: &str, d: &Diagnostic) -> Value {
    let uri = path_uri(&doc.source);
    let rule_index = registry().iter().position(|r| r.id == d.rule);
    let mut physical = json!({"artifactLocation": {"uri": uri}});
    if let Some(s) = d.span {
        physical["region"] = json!({
            "startLine": s.line,
            "startColumn": s.column,
            "endLine": s.end_line,
            "endColumn": s.end_column,
            "byteOffset": s.start,
            "byteLength": s.len(),
        });
    }
    let mut properties = json!({"category": d.category, "documentKind": kind});
    if let Some(q) = &d.query {
        properties["query"] = json!(q);
    }
    let mut r = json!({
        "ruleId": d.rule,
        "level": d.severity.sarif_level(),
        "message": {"text": d.message},
        "locations": [{"physicalLocation": physical}],
        "properties": properties,
    });
    if let Some(i) = rule_index {
        r["ruleIndex"] = json!(i);
    }
    if let Some(f) = &d.fix {
        r["fixes"] = json!([{
            "description": {"text": f.title},
            "artifactChanges": [{
                "artifactLocation": {"uri": uri},
                "replacements": [{
                    "deletedRegion": {"byteOffset": f.span.start, "byteLength": f.span.len()},
                    "insertedContent": {"text": f.replacement},
                }],
            }],
        }]);
    }
    r
}

/// The SARIF log of a whole run.
pub fn sarif_log(docs: &[(Doc, Option<Analysis>)]) -> Value {
    let mut results = Vec::new();
    let mut notifications = Vec::new();
    for (doc, a) in docs {
        for w in &doc.warnings {
            notifications.push(json!({
                "level": if a.is_some() { "note" } else { "warning" },
                "message": {"text": format!("{}: {}", doc.source, w.message)},
                "descriptor": {"id": w.code},
            }));
        }
        if let Some(a) = a {
            for d in &a.diagnostics {
                results.push(result(doc, a.kind.name(), d));
            }
        }
    }
    json!({
        "$schema": SARIF_SCHEMA_URI,
        "version": "2.1.0",
        "runs": [{
            "tool": {"driver": {
                "name": "tidemark",
                "version": env!("CARGO_PKG_VERSION"),
                "semanticVersion": env!("CARGO_PKG_VERSION"),
                "rules": registry().iter().map(rule_descriptor).collect::<Vec<_>>(),
            }},
            "invocations": [{
                "executionSuccessful": true,
                "toolExecutionNotifications": notifications,
            }],
            "columnKind": "unicodeCodePoints",
            "results": results,
        }],
    })
}

/// Write the SARIF log, pretty-printed.
pub fn write<W: Write>(out: &mut W, docs: &[(Doc, Option<Analysis>)]) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, &sarif_log(docs))?;
    out.write_all(b"\n")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_and_uris() {
        assert_eq!(pascal("hf-type-unspecified"), "HfTypeUnspecified");
        assert_eq!(path_uri("notes/bed 4.txt"), "notes/bed%204.txt");
        assert_eq!(path_uri("a\\b#1.txt"), "a/b%231.txt");
        assert_eq!(path_uri("é.txt"), "%C3%A9.txt");
    }

    #[test]
    fn every_rule_is_described() {
        let log = sarif_log(&[]);
        let rules = log["runs"][0]["tool"]["driver"]["rules"]
            .as_array()
            .unwrap();
        assert_eq!(rules.len(), registry().len());
        for r in rules {
            assert!(!r["fullDescription"]["text"].as_str().unwrap().is_empty());
        }
    }
}
