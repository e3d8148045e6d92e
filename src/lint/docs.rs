//! `docs/rules.md`, generated from the rules' own documentation text.
//!
//! A test compares the committed file with [`rules_markdown`]; run the tests with
//! `UPDATE_DOCS=1` to rewrite it.

use std::fmt::Write;

use super::{registry, Rule};

/// The kinds a rule applies to, for people.
pub fn kinds_text(rule: &Rule) -> String {
    if rule.kinds.len() == super::kind::DocKind::ALL.len() {
        "all".to_string()
    } else {
        rule.kinds
            .iter()
            .map(|k| k.label())
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// The full text of one rule, as `tidemark explain` prints it (Markdown).
pub fn explain(rule: &Rule) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# {}\n", rule.id);
    let _ = writeln!(s, "{}\n", rule.summary);
    let _ = writeln!(
        s,
        "Category: {}. Default severity: {}. Applies to: {}.\n",
        rule.category.name(),
        rule.severity.name(),
        kinds_text(rule)
    );
    s.push_str(rule.doc.trim_end());
    s.push('\n');
    s
}

/// The whole `docs/rules.md`.
pub fn rules_markdown() -> String {
    let mut s = String::from(
        "# tidemark lint rules\n\n\
         <!-- Generated from the rule documentation in src/lint/rules/. Do not edit by hand: \
         run `UPDATE_DOCS=1 cargo test --lib lint::docs` to regenerate. -->\n\n\
         Every diagnostic names its rule id. Rules can be switched off or given another \
         severity in `tidemark.toml` (`[lint.rules]`). tidemark supports documentation; it is \
         not a diagnostic device, and local policy, coding rules and licensed clinicians \
         prevail.\n\n\
         | id | category | default severity | applies to | summary |\n\
         | --- | --- | --- | --- | --- |\n",
    );
    for r in registry() {
        let _ = writeln!(
            s,
            "| [`{}`](#{}) | {} | {} | {} | {} |",
            r.id,
            r.id,
            r.category.name(),
            r.severity.name(),
            kinds_text(r),
            r.summary
        );
    }
    for r in registry() {
        s.push('\n');
        // Demote the rule's headings one level under its own.
        let body = explain(r)
            .replace("\n## ", "\n### ")
            .replacen("# ", "## ", 1);
        s.push_str(&body);
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn docs_rules_md_is_current() {
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/docs/rules.md");
        let want = rules_markdown();
        if std::env::var_os("UPDATE_DOCS").is_some() {
            std::fs::write(path, &want).expect("write docs/rules.md");
            return;
        }
        let have = std::fs::read_to_string(path).unwrap_or_default();
        assert!(
            have == want,
            "docs/rules.md is stale: run `UPDATE_DOCS=1 cargo test --lib lint::docs`"
        );
    }

    #[test]
    fn every_rule_has_a_section() {
        let md = rules_markdown();
        for r in registry() {
            assert!(md.contains(&format!("\n## {}\n", r.id)), "{}", r.id);
        }
    }
}
