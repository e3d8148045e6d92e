//! `volume-status-missing`: see [`RULE`] and its documentation text.

use super::CONGESTION_SIGNS;
use crate::lint::kind::ANY;
use crate::lint::{Category, Ctx, Diagnostic, Rule, Severity};
use crate::model::{Assertion, Experiencer, MeasureConcept, StatementKind};
use crate::picture::Congestion;

pub const RULE: Rule = Rule {
    id: "volume-status-missing",
    category: Category::Documentation,
    severity: Severity::Warning,
    summary: "Neither a volume status nor any congestion sign (present or absent) is documented.",
    doc: DOC,
    kinds: ANY,
    check,
};

const DOC: &str = "\
## What
Fires when a heart-failure note states no volume status (overloaded, euvolaemic, dry) and
documents no congestion assessment: none of orthopnoea, PND, crackles, peripheral oedema,
raised JVP (or a JVP value), hepatojugular reflux, ascites or pleural effusion, either present
or explicitly absent. A stated volume status always silences it. Breathlessness alone is not
a congestion assessment, and a questioned sign (`?S3`) or one only in advice does not count.

## Why
The congestion axis of the bedside profile (Nohria–Stevenson) cannot be judged from a note
that never looked for fluid, and a coder cannot tell whether an admission was for
decompensation.

## Fires
```text
Night entry. Known heart failure. Denies SOB at rest. Obs stable, sats 95% RA.
```

## Does not fire
```text
Night entry. Known heart failure. No ankle oedema, chest clear. Obs stable.
```

## Sources
Bedside profiles: Nohria A, Tsang SW, Fang JC, et al. Clinical assessment identifies
hemodynamic profiles that predict outcomes in patients admitted with heart failure. J Am
Coll Cardiol 2003;41:1797-1804. The exact list of congestion signs: common practice.
";

fn check(cx: &Ctx<'_>, out: &mut Vec<Diagnostic>) {
    if !super::hf_relevant(cx.ex) {
        return;
    }
    if !crate::lint::statements(cx.ex, StatementKind::VolumeStatus).is_empty()
        || cx.pic.classifications.volume_status.is_some()
    {
        return;
    }
    let assessed_sign = cx.ex.findings.iter().any(|f| {
        CONGESTION_SIGNS.contains(&f.concept)
            && f.experiencer == Experiencer::Patient
            && matches!(f.assertion, Assertion::Present | Assertion::Absent)
    });
    let jvp_value = cx
        .ex
        .measurements
        .iter()
        .any(|m| m.concept == MeasureConcept::Jvp && m.experiencer == Experiencer::Patient);
    if assessed_sign || jvp_value || cx.pic.profile.congestion != Congestion::Unknown {
        return;
    }
    let anchor = crate::lint::hf_mention(cx.ex).map(|s| s.span);
    out.push(
        RULE.diag(
            "No volume status is stated and no congestion sign is documented, present or absent \
         (JVP, crackles, oedema, orthopnoea, ascites, effusion). Document the fluid assessment \
         or the clinician's volume status."
                .into(),
            anchor,
        ),
    );
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lint::testkit::Note;
    use crate::model::FindingConcept;

    fn base(text: &str) -> Note {
        Note::new(text).stmt(StatementKind::HeartFailure, "", "heart failure")
    }

    #[test]
    fn fires_when_only_breathlessness_is_documented() {
        let n = base("Night entry. Known heart failure. Denies SOB at rest.\n").finding(
            FindingConcept::Dyspnea,
            Assertion::Absent,
            "SOB",
        );
        let d = n.check(&RULE);
        insta::assert_snapshot!(n.rendered(&d));
        assert_eq!(d.len(), 1);
        // A questioned sign is not an assessment either.
        let n = base("Known heart failure. ?crackles.\n").finding(
            FindingConcept::Crackles,
            Assertion::Possible,
            "crackles",
        );
        assert_eq!(n.check(&RULE).len(), 1);
    }

    #[test]
    fn silent_with_an_absent_sign_a_jvp_or_a_stated_status() {
        let n = base("Known heart failure. No ankle oedema.\n").finding(
            FindingConcept::PeripheralEdema,
            Assertion::Absent,
            "ankle oedema",
        );
        assert!(n.check(&RULE).is_empty());
        let n = base("Known heart failure. JVP 3 cm.\n").meas(
            MeasureConcept::Jvp,
            3.0,
            Some("cm"),
            "JVP 3 cm",
        );
        assert!(n.check(&RULE).is_empty());
        let n = base("Known heart failure. Euvolaemic.\n").stmt(
            StatementKind::VolumeStatus,
            "euvolemic",
            "Euvolaemic",
        );
        assert!(n.check(&RULE).is_empty());
    }
}
