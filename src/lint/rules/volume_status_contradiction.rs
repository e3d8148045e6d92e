//! `volume-status-contradiction`: see [`RULE`] and its documentation text.

use crate::lint::kind::ANY;
use crate::lint::{at_line, quote, statements, Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::StatementKind;
use crate::picture::{Congestion, Evidence};

pub const RULE: Rule = Rule {
    id: "volume-status-contradiction",
    category: Category::Consistency,
    severity: Severity::Warning,
    summary: "A stated volume status disagrees with the documented congestion findings.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when the clinician's stated volume status (overloaded, euvolaemic, dry or depleted)
disagrees with the congestion signs the same note documents: \"euvolaemic\" beside a raised JVP
and oedema, or \"overloaded\" where every sign examined is absent. It reads the conflicts the
clinical picture lists on the congestion axis; when the picture lists none, it compares the
stated status with the picture's congestion judgement. The diagnostic points at the statement
and lists the findings with their lines.

## Why
A summary word that contradicts the examination is copied forward, coded and handed over. The
documented signs decide the bedside profile, so the statement is what needs a second look.

## Fires
```text
JVP +5 cm, bibasal crackles, pitting oedema to knees. Clinically euvolaemic.
```

## Does not fire
```text
JVP not raised, chest clear, no oedema. Clinically euvolaemic.
```

## Sources
Documented signs over the summary word: the project's profile rules (Nohria–Stevenson
bedside profile, J Am Coll Cardiol 2003).
";

fn list(ev: &[Evidence]) -> String {
    ev.iter()
        .map(|e| {
            format!(
                "{} ({})",
                crate::lint::concept_label(&e.concept),
                at_line(&e.span)
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    let conflicts: Vec<_> = cx
        .pic
        .profile
        .conflicts
        .iter()
        .filter(|c| c.axis == "congestion" && !c.stated.is_empty())
        .collect();
    for c in &conflicts {
        let stated = &c.stated[0];
        let mut message = format!(
            "The stated volume status (\"{}\") disagrees with the documented findings",
            quote(cx.text.get(stated.span.range()).unwrap_or(&stated.note))
        );
        if !c.documented.is_empty() {
            message.push_str(&format!(": {}", list(&c.documented)));
        }
        message.push_str(". Review the statement against the examination.");
        out.push(RULE.diag(message, Some(stated.span)));
    }
    if !conflicts.is_empty() {
        return;
    }
    // No conflict listed: compare the latest stated status with the profile's judgement.
    let Some(stated) = statements(cx.ex, StatementKind::VolumeStatus)
        .last()
        .copied()
    else {
        return;
    };
    let profile = cx.pic.profile.congestion;
    let clash = matches!(
        (stated.value.as_str(), profile),
        ("euvolemic" | "depleted", Congestion::Wet) | ("overloaded", Congestion::Dry)
    );
    if !clash {
        return;
    }
    let side = if profile == Congestion::Wet {
        "wet"
    } else {
        "dry"
    };
    let documented: Vec<Evidence> = cx
        .pic
        .profile
        .evidence
        .iter()
        .filter(|e| e.supports == side && e.concept != "volume_status")
        .cloned()
        .collect();
    let mut message = format!(
        "The stated volume status (\"{}\") disagrees with the documented findings, which make \
         the congestion profile {side}",
        quote(&stated.text)
    );
    if !documented.is_empty() {
        message.push_str(&format!(": {}", list(&documented)));
    }
    message.push_str(". Review the statement against the examination.");
    out.push(RULE.diag(message, Some(stated.span)));
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::picture::Conflict;

    const NOTE: &str = "JVP +5 cm, pitting oedema to knees. Clinically euvolaemic.\n";

    fn ev(n: &mut Note, concept: &str, supports: &'static str, text: &str) -> Evidence {
        Evidence {
            concept: concept.into(),
            supports,
            span: n.span_of(text),
            note: text.into(),
            item: "finding",
            text: text.into(),
            episode: None,
        }
    }

    #[test]
    fn fires_from_a_picture_conflict() {
        let mut n = Note::new(NOTE);
        let jvp = ev(&mut n, "raised_jvp", "wet", "JVP +5 cm");
        let oed = ev(&mut n, "peripheral_edema", "wet", "pitting oedema");
        let st = ev(&mut n, "volume_status", "dry", "euvolaemic");
        let n = n.picture(|p| {
            p.profile.conflicts.push(Conflict {
                axis: "congestion",
                message: "stated euvolaemic against wet signs".into(),
                stated: vec![st],
                documented: vec![jvp, oed],
                kind: "stated-vs-documented",
            })
        });
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        assert!(
            d[0].message.contains("raised JVP (line 1)"),
            "{}",
            d[0].message
        );
        assert_eq!(&NOTE[d[0].span.unwrap().range()], "euvolaemic");
    }

    #[test]
    fn fires_from_statement_against_profile_when_no_conflict_is_listed() {
        let n = Note::new(NOTE)
            .stmt(StatementKind::VolumeStatus, "euvolemic", "euvolaemic")
            .picture(|p| p.profile.congestion = Congestion::Wet);
        assert_eq!(n.check(&RULE).len(), 1);
    }

    #[test]
    fn silent_when_statement_and_profile_agree() {
        let n = Note::new("JVP not raised, no oedema. Clinically euvolaemic.\n")
            .stmt(StatementKind::VolumeStatus, "euvolemic", "euvolaemic")
            .picture(|p| p.profile.congestion = Congestion::Dry);
        assert!(n.check(&RULE).is_empty());
        let n = Note::new(NOTE).picture(|p| p.profile.congestion = Congestion::Wet);
        assert!(n.check(&RULE).is_empty());
    }
}
