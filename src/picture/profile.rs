//! The bedside warm/cold wet/dry profile (Nohria, Tsang, Fang et al., J Am Coll Cardiol
//! 2003;41:1797–1804; Stevenson's bedside assessment).
//!
//! Each axis is judged on the latest assessment that assessed it ([`super::timeline`]);
//! within that assessment, the last mention of each concept decides. Only present, current,
//! patient mentions are signs; denied, current, patient mentions are assessed and normal.
//!
//! **Congestion.** Wet signs: orthopnoea, raised JVP (the finding, or a JVP value above
//! normal), crackles, peripheral oedema, ascites, hepatojugular reflux, S3, and pleural
//! effusion only beside another overload sign or an "overloaded" statement. Breathlessness
//! and PND are not counted (the agreed sign list leaves them out; breathlessness alone is not
//! congestion). A JVP value is raised above 3 cm over the sternal angle, or above 8 cm when
//! written in cm H2O or against the right atrium (Bickley, Bates' Guide to Physical
//! Examination: the angle sits about 5 cm above the right atrium).
//! - wet: any sign present;
//! - dry: no sign present and at least one assessed and absent;
//! - otherwise the clinician's volume-status statement decides (overloaded → wet;
//!   euvolaemic or depleted → dry);
//! - unknown when nothing was assessed.
//!
//! The documented signs decide, not the summary word: a stated status against the signs is
//! kept as evidence and reported under `conflicts`.
//!
//! **Perfusion.** Cold signs: cool peripheries, prolonged capillary refill, altered
//! mentation, symptomatic hypotension (the finding as stated), oliguria, a proportional pulse
//! pressure below 25 % from the assessment's blood pressure (Stevenson & Perloff, JAMA
//! 1989;261:884–888: PPP < 25 % had 91 % sensitivity and 83 % specificity for a cardiac index
//! < 2.2 L/min/m²), and a lactate above 2 mmol/L ([`LACTATE_RAISED_ABOVE`]).
//! - cold: any cold sign present; warm findings or a "warm" statement in the same assessment
//!   are kept and reported as a conflict;
//! - warm: peripheries assessed warm or capillary refill normal, or a "warm" statement; or
//!   normal mentation (or no hypotension, no oliguria, a normal lactate) together with a
//!   proportional pulse pressure of 25 % or more;
//! - a "cold" statement decides only when no sign was documented;
//! - unknown otherwise: a pulse rate, an SpO2 or a normal pulse pressure alone is not a
//!   perfusion assessment (the agreed semantics: warm needs perfusion assessed and normal).
//!
//! The label is `warm-dry`, `warm-wet`, `cold-wet` or `cold-dry`, and `unknown` when either
//! axis is; the axes keep the partial answer.

use serde::Serialize;

use super::derived::{bp_pairs, BpPair};
use super::timeline::{Timeline, When};
use super::{counts, fmt_num, Counts};
use crate::model::{Extraction, FindingConcept, MeasureConcept, Measurement, StatementKind};
use crate::span::Span;

/// Lactate above this (mmol/L) counts as hypoperfusion. 2 mmol/L is the usual upper limit of
/// normal and the hyperlactataemia cut-off of the Sepsis-3 definitions (Singer et al., JAMA
/// 2016) and the Surviving Sepsis Campaign; the SCAI shock stages also use 2 mmol/L (from
/// memory, not re-checked). The domain reference lists a raised lactate without a number.
pub const LACTATE_RAISED_ABOVE: f64 = 2.0;

/// JVP above the sternal angle, in cm, above which it is raised (Bates' Guide).
pub const JVP_RAISED_ABOVE_ANGLE_CM: f64 = 3.0;
/// JVP above the right atrium, in cm H2O, above which it is raised (Bates' Guide).
pub const JVP_RAISED_ABOVE_RA_CMH2O: f64 = 8.0;

/// Proportional pulse pressure below this fraction counts as low output (Stevenson &
/// Perloff 1989). The comparison is strict: 25 % exactly is not narrow.
pub const PPP_NARROW_BELOW: f64 = 0.25;

/// Congestion axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Congestion {
    Wet,
    Dry,
    #[default]
    Unknown,
}

/// Perfusion axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Perfusion {
    Warm,
    Cold,
    #[default]
    Unknown,
}

impl Congestion {
    pub fn name(self) -> &'static str {
        match self {
            Self::Wet => "wet",
            Self::Dry => "dry",
            Self::Unknown => "unknown",
        }
    }
}

impl Perfusion {
    pub fn name(self) -> &'static str {
        match self {
            Self::Warm => "warm",
            Self::Cold => "cold",
            Self::Unknown => "unknown",
        }
    }
}

/// One item that moved an axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Evidence {
    /// Finding or measurement concept, or a statement kind (`volume_status`).
    pub concept: String,
    /// `wet`, `dry`, `warm` or `cold`.
    pub supports: &'static str,
    pub span: Span,
    pub note: String,
    /// `finding`, `measurement`, `statement` or `derived` (a value computed from
    /// measurements, such as the proportional pulse pressure).
    pub item: &'static str,
    /// The words as written.
    pub text: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub episode: Option<usize>,
}

/// Evidence on both sides of one axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Conflict {
    /// `congestion` or `perfusion`.
    pub axis: &'static str,
    pub message: String,
    /// The clinician's summary word that disagrees with the signs (empty when two documented
    /// findings disagree).
    pub stated: Vec<Evidence>,
    /// The documented signs (both sides when two findings disagree).
    pub documented: Vec<Evidence>,
    /// `stated-vs-documented` or `documented-both-ways`.
    pub kind: &'static str,
}

/// The warm/cold wet/dry profile.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Profile {
    pub congestion: Congestion,
    pub perfusion: Perfusion,
    /// `warm-dry`, `warm-wet`, `cold-wet`, `cold-dry` or `unknown`.
    pub label: String,
    pub evidence: Vec<Evidence>,
    pub conflicts: Vec<Conflict>,
    /// Why the congestion axis has its value: `signs-present`, `signs-absent`, `stated`,
    /// `not-assessed`, `only-possible`, `only-hypothetical`, `only-historical`,
    /// `only-other-person`, `effusion-without-overload`.
    pub congestion_reason: String,
    /// Why the perfusion axis has its value: `signs-present`, `signs-absent`, `stated`,
    /// `not-assessed`, `partial-assessment`, `pulse-pressure-only`, `only-possible`, ...
    pub perfusion_reason: String,
    /// Mentions that did not count, each with the reason (another person, historical,
    /// possible, hypothetical, an earlier assessment, superseded by a later mention).
    pub set_aside: Vec<Evidence>,
}

impl Default for Profile {
    /// Nothing assessed: both axes and the label unknown.
    fn default() -> Self {
        Profile {
            congestion: Congestion::Unknown,
            perfusion: Perfusion::Unknown,
            label: "unknown".into(),
            evidence: Vec::new(),
            conflicts: Vec::new(),
            congestion_reason: "not-assessed".into(),
            perfusion_reason: "not-assessed".into(),
            set_aside: Vec::new(),
        }
    }
}

impl Profile {
    /// "wet, perfusion unknown" and the like: the partial answer for human output.
    pub fn axes_summary(&self) -> String {
        format!(
            "congestion {} ({}), perfusion {} ({})",
            self.congestion.name(),
            self.congestion_reason,
            self.perfusion.name(),
            self.perfusion_reason
        )
    }
}

const WET_SIGNS: [FindingConcept; 8] = [
    FindingConcept::Orthopnea,
    FindingConcept::RaisedJvp,
    FindingConcept::Crackles,
    FindingConcept::PeripheralEdema,
    FindingConcept::Ascites,
    FindingConcept::HepatojugularReflux,
    FindingConcept::S3,
    FindingConcept::PleuralEffusion,
];

const COLD_SIGNS: [FindingConcept; 5] = [
    FindingConcept::CoolPeripheries,
    FindingConcept::ProlongedCapRefill,
    FindingConcept::AlteredMentation,
    FindingConcept::Hypotension,
    FindingConcept::Oliguria,
];

/// Build the profile.
pub fn build(ex: &Extraction, tl: &Timeline) -> Profile {
    let mut p = Profile::default();
    let c = congestion(ex, tl, &mut p);
    let f = perfusion(ex, tl, &mut p);
    p.congestion = c;
    p.perfusion = f;
    p.label = label(c, f).to_string();
    p
}

/// The profile label of two axis values.
pub fn label(c: Congestion, p: Perfusion) -> &'static str {
    match (p, c) {
        (Perfusion::Warm, Congestion::Dry) => "warm-dry",
        (Perfusion::Warm, Congestion::Wet) => "warm-wet",
        (Perfusion::Cold, Congestion::Wet) => "cold-wet",
        (Perfusion::Cold, Congestion::Dry) => "cold-dry",
        _ => "unknown",
    }
}

/// One mention relevant to an axis, with its place in time.
#[derive(Debug, Clone)]
struct Mention {
    /// Concept key; mentions with the same key supersede each other.
    key: String,
    when: When,
    start: usize,
    ev: Evidence,
    role: Role,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Role {
    /// A sign for the axis's abnormal side (wet, cold).
    Sign,
    /// Assessed and normal, enough on its own (dry; warm peripheries).
    Normal,
    /// Assessed and normal, but not enough on its own for warm (mentation, lactate).
    Support,
    /// Pleural effusion: a sign only beside another overload sign.
    Effusion,
    /// A proportional pulse pressure of 25 % or more: never a perfusion assessment alone.
    PulsePressure,
    /// The clinician's summary word for the abnormal side.
    StatedSign,
    /// The clinician's summary word for the normal side.
    StatedNormal,
}

impl Role {
    /// Whether the mention marks the axis as assessed (chooses the latest assessment).
    fn assesses(self) -> bool {
        !matches!(self, Role::PulsePressure | Role::Effusion)
    }
}

fn ev(
    concept: &str,
    supports: &'static str,
    item: &'static str,
    text: &str,
    span: Span,
    episode: Option<usize>,
    note: String,
) -> Evidence {
    Evidence {
        concept: concept.to_string(),
        supports,
        span,
        note,
        item,
        text: text.to_string(),
        episode,
    }
}

fn canonical(m: &Measurement) -> f64 {
    m.normalized.map(|q| q.value).unwrap_or(m.value)
}

/// Whether a JVP value is raised, with the reference it was read against.
pub fn jvp_raised(m: &Measurement) -> (bool, &'static str) {
    let v = canonical(m);
    let t = m.text.to_lowercase();
    let against_ra = m.unit == Some("cm[H2O]")
        || t.contains("h2o")
        || t.contains("h20")
        || t.contains("right atri")
        || m.text.contains("RA");
    if against_ra {
        (
            v > JVP_RAISED_ABOVE_RA_CMH2O,
            "cm H2O above the right atrium; raised > 8",
        )
    } else {
        (
            v > JVP_RAISED_ABOVE_ANGLE_CM,
            "cm above the sternal angle; raised > 3",
        )
    }
}

/// Splits mentions into the latest assessment's deciding mentions and the set-aside rest.
/// Returns the deciding mentions (the last of each concept in the latest block).
fn decide_latest(mut mentions: Vec<Mention>, set_aside: &mut Vec<Evidence>) -> Vec<Mention> {
    let Some(latest) = mentions
        .iter()
        .filter(|m| m.role.assesses())
        .map(|m| m.when)
        .max()
    else {
        // Nothing assessed: whatever there is (a pulse pressure) is set aside.
        for m in mentions {
            let mut e = m.ev;
            e.note = format!("{}; not an assessment on its own", e.note);
            set_aside.push(e);
        }
        return Vec::new();
    };
    mentions.sort_by_key(|m| (m.when, m.start));
    let mut deciding: Vec<Mention> = Vec::new();
    for m in mentions {
        if m.when < latest {
            let mut e = m.ev;
            e.note = format!("earlier assessment, superseded: {}", e.note);
            set_aside.push(e);
            continue;
        }
        if m.when > latest {
            // A later item that is not an assessment on its own (an effusion, a pulse
            // pressure) outside the assessment that decides.
            let mut e = m.ev;
            e.note = format!(
                "outside the latest assessment, not enough on its own: {}",
                e.note
            );
            set_aside.push(e);
            continue;
        }
        if let Some(prev) = deciding.iter_mut().find(|d| d.key == m.key) {
            let mut e = std::mem::replace(prev, m).ev;
            e.note = format!("superseded by a later mention: {}", e.note);
            set_aside.push(e);
        } else {
            deciding.push(m);
        }
    }
    deciding
}

/// The reason for an unknown axis, from the mentions that did not count.
fn unknown_reason(reasons: &[&'static str]) -> &'static str {
    let has = |r: &str| reasons.contains(&r);
    if reasons.is_empty() {
        "not-assessed"
    } else if has("possible only") {
        "only-possible"
    } else if has("hypothetical") {
        "only-hypothetical"
    } else if has("historical") {
        "only-historical"
    } else if has("about another person") {
        "only-other-person"
    } else {
        "not-assessed"
    }
}

fn congestion(ex: &Extraction, tl: &Timeline, p: &mut Profile) -> Congestion {
    let mut mentions = Vec::new();
    let mut not_counted: Vec<&'static str> = Vec::new();
    for f in &ex.findings {
        let when = tl.when(f.episode, f.section, f.span.start, None);
        if matches!(f.concept, FindingConcept::Dyspnea | FindingConcept::Pnd) {
            if counts(f.assertion, f.temporality, f.experiencer) == Counts::Present {
                p.set_aside.push(ev(
                    f.concept.name(),
                    "wet",
                    "finding",
                    &f.text,
                    f.span,
                    f.episode,
                    format!("{} is not counted as a congestion sign", f.concept.label()),
                ));
            }
            continue;
        }
        if !WET_SIGNS.contains(&f.concept) {
            continue;
        }
        let effusion = f.concept == FindingConcept::PleuralEffusion;
        let (role, supports, note) = match counts(f.assertion, f.temporality, f.experiencer) {
            Counts::Present if effusion => (
                Role::Effusion,
                "wet",
                format!("{} present", f.concept.label()),
            ),
            Counts::Present => (Role::Sign, "wet", present_note(f)),
            Counts::Absent => (Role::Normal, "dry", format!("no {}", f.concept.label())),
            Counts::No(why) => {
                not_counted.push(why);
                let supports = if f.assertion == crate::model::Assertion::Absent {
                    "dry"
                } else {
                    "wet"
                };
                p.set_aside.push(ev(
                    f.concept.name(),
                    supports,
                    "finding",
                    &f.text,
                    f.span,
                    f.episode,
                    format!("{}: {why}", f.concept.label()),
                ));
                continue;
            }
        };
        mentions.push(Mention {
            key: f.concept.name().into(),
            when,
            start: f.span.start,
            ev: ev(
                f.concept.name(),
                supports,
                "finding",
                &f.text,
                f.span,
                f.episode,
                note,
            ),
            role,
        });
    }
    for m in ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::Jvp)
    {
        let when = tl.when(m.episode, m.section, m.span.start, m.time_ref);
        match counts(m.assertion, m.temporality, m.experiencer) {
            Counts::Present => {}
            Counts::Absent => continue,
            Counts::No(why) => {
                not_counted.push(why);
                p.set_aside.push(ev(
                    "jvp",
                    "wet",
                    "measurement",
                    &m.text,
                    m.span,
                    m.episode,
                    format!("JVP value: {why}"),
                ));
                continue;
            }
        }
        if !canonical(m).is_finite() {
            continue;
        }
        let (raised, reference) = jvp_raised(m);
        let note = format!("JVP {} ({reference})", fmt_num(canonical(m), 1));
        mentions.push(Mention {
            // The finding and the value describe one sign: the later of the two decides.
            key: FindingConcept::RaisedJvp.name().into(),
            when,
            start: m.span.start,
            ev: ev(
                "jvp",
                if raised { "wet" } else { "dry" },
                "measurement",
                &m.text,
                m.span,
                m.episode,
                note,
            ),
            role: if raised { Role::Sign } else { Role::Normal },
        });
    }
    for s in ex
        .statements
        .iter()
        .filter(|s| s.kind == StatementKind::VolumeStatus)
    {
        let when = tl.when(s.episode, s.section, s.span.start, None);
        let stated_wet = match s.value.as_str() {
            "overloaded" => true,
            "euvolemic" | "depleted" => false,
            _ => continue,
        };
        // "No signs of fluid overload" is a dry statement; a denied euvolaemia or depletion
        // says nothing definite and is set aside.
        let (wet, note) = match counts(s.assertion, s.temporality, s.experiencer) {
            Counts::Present => (stated_wet, format!("stated {}", s.value)),
            Counts::Absent if stated_wet => (false, "overload denied".to_string()),
            other => {
                let why = match other {
                    Counts::No(w) => w,
                    _ => "denied",
                };
                not_counted.push(why);
                p.set_aside.push(ev(
                    "volume_status",
                    if stated_wet { "wet" } else { "dry" },
                    "statement",
                    &s.text,
                    s.span,
                    s.episode,
                    format!("volume status {}: {why}", s.value),
                ));
                continue;
            }
        };
        mentions.push(Mention {
            key: "volume_status".into(),
            when,
            start: s.span.start,
            ev: ev(
                "volume_status",
                if wet { "wet" } else { "dry" },
                "statement",
                &s.text,
                s.span,
                s.episode,
                note,
            ),
            role: if wet {
                Role::StatedSign
            } else {
                Role::StatedNormal
            },
        });
    }

    let any_effusion = mentions.iter().any(|m| m.role == Role::Effusion);
    let deciding = decide_latest(mentions, &mut p.set_aside);
    if deciding.is_empty() {
        p.congestion_reason = if any_effusion {
            "effusion-without-overload".into()
        } else {
            unknown_reason(&not_counted).into()
        };
        return Congestion::Unknown;
    }
    let signs: Vec<&Mention> = deciding.iter().filter(|m| m.role == Role::Sign).collect();
    let normals: Vec<&Mention> = deciding.iter().filter(|m| m.role == Role::Normal).collect();
    let effusions: Vec<&Mention> = deciding
        .iter()
        .filter(|m| m.role == Role::Effusion)
        .collect();
    let stated_wet: Vec<&Mention> = deciding
        .iter()
        .filter(|m| m.role == Role::StatedSign)
        .collect();
    let stated_dry: Vec<&Mention> = deciding
        .iter()
        .filter(|m| m.role == Role::StatedNormal)
        .collect();
    let overload_context = !signs.is_empty() || !stated_wet.is_empty();

    let push = |p: &mut Profile, ms: &[&Mention]| {
        p.evidence.extend(ms.iter().map(|m| m.ev.clone()));
    };
    if !signs.is_empty() || (!effusions.is_empty() && overload_context) {
        push(p, &signs);
        if overload_context {
            push(p, &effusions);
        }
        push(p, &normals);
        push(p, &stated_wet);
        push(p, &stated_dry);
        if !stated_dry.is_empty() {
            let mut documented: Vec<Evidence> = signs.iter().map(|m| m.ev.clone()).collect();
            if overload_context {
                documented.extend(effusions.iter().map(|m| m.ev.clone()));
            }
            p.conflicts.push(Conflict {
                axis: "congestion",
                message: format!(
                    "stated {} but congestion signs are documented: {}",
                    stated_dry
                        .iter()
                        .map(|m| m.ev.text.as_str())
                        .collect::<Vec<_>>()
                        .join(", "),
                    documented
                        .iter()
                        .map(|e| e.text.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                stated: stated_dry.iter().map(|m| m.ev.clone()).collect(),
                documented,
                kind: "stated-vs-documented",
            });
        }
        p.congestion_reason = "signs-present".into();
        Congestion::Wet
    } else if !normals.is_empty() {
        push(p, &normals);
        push(p, &stated_wet);
        push(p, &stated_dry);
        for m in &effusions {
            let mut e = m.ev.clone();
            e.note = format!("{}; not counted without another overload sign", e.note);
            p.set_aside.push(e);
        }
        if !stated_wet.is_empty() {
            p.conflicts.push(Conflict {
                axis: "congestion",
                message: format!(
                    "stated {} but the congestion signs documented are absent: {}",
                    stated_wet
                        .iter()
                        .map(|m| m.ev.text.as_str())
                        .collect::<Vec<_>>()
                        .join(", "),
                    normals
                        .iter()
                        .map(|m| m.ev.text.as_str())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                stated: stated_wet.iter().map(|m| m.ev.clone()).collect(),
                documented: normals.iter().map(|m| m.ev.clone()).collect(),
                kind: "stated-vs-documented",
            });
        }
        p.congestion_reason = "signs-absent".into();
        Congestion::Dry
    } else if let Some(last) = stated_wet
        .iter()
        .chain(stated_dry.iter())
        .max_by_key(|m| m.start)
    {
        // No sign documented: the clinician's statement decides.
        for m in &effusions {
            let mut e = m.ev.clone();
            e.note = format!("{}; not counted without another overload sign", e.note);
            p.set_aside.push(e);
        }
        p.evidence.push(last.ev.clone());
        p.congestion_reason = "stated".into();
        if last.role == Role::StatedSign {
            Congestion::Wet
        } else {
            Congestion::Dry
        }
    } else {
        for m in &effusions {
            let mut e = m.ev.clone();
            e.note = format!("{}; not counted without another overload sign", e.note);
            p.set_aside.push(e);
        }
        p.congestion_reason = "effusion-without-overload".into();
        Congestion::Unknown
    }
}

fn present_note(f: &crate::model::Finding) -> String {
    let mut s = format!("{} present", f.concept.label());
    let d = &f.detail;
    if let Some(g) = d.grade {
        s.push_str(&format!(", grade {}", fmt_num(g, 1)));
    }
    if let Some(l) = &d.level {
        s.push_str(&format!(", to {l}"));
    }
    if let Some(n) = d.pillows {
        s.push_str(&format!(", {n} pillows"));
    }
    if let Some(n) = d.number {
        s.push_str(&format!(", {}", fmt_num(n, 1)));
    }
    if let Some(t) = &d.trend {
        s.push_str(&format!(", {t}"));
    }
    s
}

fn bp_span(pair: &BpPair) -> Span {
    let (a, b) = (pair.sbp.span, pair.dbp.span);
    if a.start <= b.start {
        Span {
            end: a.end.max(b.end),
            end_line: if b.end >= a.end {
                b.end_line
            } else {
                a.end_line
            },
            end_column: if b.end >= a.end {
                b.end_column
            } else {
                a.end_column
            },
            ..a
        }
    } else {
        a
    }
}

fn perfusion(ex: &Extraction, tl: &Timeline, p: &mut Profile) -> Perfusion {
    let mut mentions = Vec::new();
    let mut not_counted: Vec<&'static str> = Vec::new();
    for f in ex
        .findings
        .iter()
        .filter(|f| COLD_SIGNS.contains(&f.concept))
    {
        let when = tl.when(f.episode, f.section, f.span.start, None);
        let peripheral = matches!(
            f.concept,
            FindingConcept::CoolPeripheries | FindingConcept::ProlongedCapRefill
        );
        let (role, supports, note) = match counts(f.assertion, f.temporality, f.experiencer) {
            Counts::Present => (Role::Sign, "cold", present_note(f)),
            Counts::Absent if peripheral => {
                (Role::Normal, "warm", format!("no {}", f.concept.label()))
            }
            Counts::Absent => (
                Role::Support,
                "warm",
                format!(
                    "no {} (supports warm with a normal pulse pressure)",
                    f.concept.label()
                ),
            ),
            Counts::No(why) => {
                not_counted.push(why);
                let supports = if f.assertion == crate::model::Assertion::Absent {
                    "warm"
                } else {
                    "cold"
                };
                p.set_aside.push(ev(
                    f.concept.name(),
                    supports,
                    "finding",
                    &f.text,
                    f.span,
                    f.episode,
                    format!("{}: {why}", f.concept.label()),
                ));
                continue;
            }
        };
        mentions.push(Mention {
            key: f.concept.name().into(),
            when,
            start: f.span.start,
            ev: ev(
                f.concept.name(),
                supports,
                "finding",
                &f.text,
                f.span,
                f.episode,
                note,
            ),
            role,
        });
    }
    for pair in bp_pairs(ex) {
        if counts(
            pair.sbp.assertion,
            pair.sbp.temporality,
            pair.sbp.experiencer,
        ) != Counts::Present
        {
            continue;
        }
        let when = tl.when(
            pair.sbp.episode,
            pair.sbp.section,
            pair.sbp.span.start,
            pair.sbp.time_ref,
        );
        let ppp = pair.ppp();
        let narrow = pair.narrow();
        let note = format!(
            "proportional pulse pressure {} % from BP {}/{} ({} 25 %; Stevenson & Perloff 1989)",
            fmt_num(ppp * 100.0, 1),
            fmt_num(pair.s(), 0),
            fmt_num(pair.d(), 0),
            if narrow { "<" } else { ">=" }
        );
        mentions.push(Mention {
            key: "proportional_pulse_pressure".into(),
            when,
            start: pair.sbp.span.start,
            ev: ev(
                "proportional_pulse_pressure",
                if narrow { "cold" } else { "warm" },
                "derived",
                &pair.sbp.text,
                bp_span(&pair),
                pair.sbp.episode,
                note,
            ),
            role: if narrow {
                Role::Sign
            } else {
                Role::PulsePressure
            },
        });
    }
    for m in ex
        .measurements
        .iter()
        .filter(|m| m.concept == MeasureConcept::Lactate)
    {
        if counts(m.assertion, m.temporality, m.experiencer) != Counts::Present {
            continue;
        }
        let when = tl.when(m.episode, m.section, m.span.start, m.time_ref);
        let v = canonical(m);
        // A lower bound (`lactate >4`) above the threshold is raised; an upper bound
        // (`lactate <1`) below it is normal.
        let raised = v > LACTATE_RAISED_ABOVE;
        let note = format!(
            "lactate {} mmol/L ({} {} mmol/L)",
            fmt_num(v, 1),
            if raised { ">" } else { "<=" },
            fmt_num(LACTATE_RAISED_ABOVE, 0)
        );
        mentions.push(Mention {
            key: "lactate".into(),
            when,
            start: m.span.start,
            ev: ev(
                "lactate",
                if raised { "cold" } else { "warm" },
                "measurement",
                &m.text,
                m.span,
                m.episode,
                note,
            ),
            role: if raised {
                Role::Sign
            } else {
                Role::PulsePressure
            },
        });
    }
    for s in ex
        .statements
        .iter()
        .filter(|s| s.kind == StatementKind::Perfusion)
    {
        let cold = match s.value.as_str() {
            "cold" => true,
            "warm" => false,
            _ => continue,
        };
        let supports = if cold { "cold" } else { "warm" };
        match counts(s.assertion, s.temporality, s.experiencer) {
            Counts::Present => {}
            Counts::Absent => continue,
            Counts::No(why) => {
                not_counted.push(why);
                p.set_aside.push(ev(
                    "perfusion",
                    supports,
                    "statement",
                    &s.text,
                    s.span,
                    s.episode,
                    format!("perfusion {}: {why}", s.value),
                ));
                continue;
            }
        }
        let when = tl.when(s.episode, s.section, s.span.start, None);
        mentions.push(Mention {
            key: "perfusion".into(),
            when,
            start: s.span.start,
            ev: ev(
                "perfusion",
                supports,
                "statement",
                &s.text,
                s.span,
                s.episode,
                format!("stated {}", s.value),
            ),
            role: if cold {
                Role::StatedSign
            } else {
                Role::StatedNormal
            },
        });
    }

    let deciding = decide_latest(mentions, &mut p.set_aside);
    if deciding.is_empty() {
        let only_ppp = p
            .set_aside
            .iter()
            .any(|e| e.concept == "proportional_pulse_pressure");
        p.perfusion_reason = if only_ppp && not_counted.is_empty() {
            "pulse-pressure-only".into()
        } else {
            unknown_reason(&not_counted).into()
        };
        return Perfusion::Unknown;
    }
    let by = |r: Role| -> Vec<&Mention> { deciding.iter().filter(|m| m.role == r).collect() };
    let signs = by(Role::Sign);
    let normals = by(Role::Normal);
    let support: Vec<&Mention> = deciding
        .iter()
        .filter(|m| {
            m.role == Role::Support || (m.role == Role::PulsePressure && m.key == "lactate")
        })
        .collect();
    let ppp_normal: Vec<&Mention> = deciding
        .iter()
        .filter(|m| m.role == Role::PulsePressure && m.key == "proportional_pulse_pressure")
        .collect();
    let stated_cold = by(Role::StatedSign);
    let stated_warm = by(Role::StatedNormal);
    let evs = |ms: &[&Mention]| -> Vec<Evidence> { ms.iter().map(|m| m.ev.clone()).collect() };
    let texts = |ms: &[&Mention]| {
        ms.iter()
            .map(|m| m.ev.text.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    };

    if !signs.is_empty() {
        p.evidence.extend(evs(&signs));
        p.evidence.extend(evs(&normals));
        p.evidence.extend(evs(&support));
        p.evidence.extend(evs(&stated_cold));
        p.evidence.extend(evs(&stated_warm));
        if !stated_warm.is_empty() {
            p.conflicts.push(Conflict {
                axis: "perfusion",
                message: format!(
                    "stated {} but hypoperfusion signs are documented: {}",
                    texts(&stated_warm),
                    texts(&signs)
                ),
                stated: evs(&stated_warm),
                documented: evs(&signs),
                kind: "stated-vs-documented",
            });
        }
        if !normals.is_empty() {
            let mut documented = evs(&signs);
            documented.extend(evs(&normals));
            p.conflicts.push(Conflict {
                axis: "perfusion",
                message: format!(
                    "hypoperfusion signs ({}) beside normal perfusion findings ({}); cold is kept",
                    texts(&signs),
                    texts(&normals)
                ),
                stated: Vec::new(),
                documented,
                kind: "documented-both-ways",
            });
        }
        p.perfusion_reason = "signs-present".into();
        return Perfusion::Cold;
    }
    if !normals.is_empty() || (!support.is_empty() && !ppp_normal.is_empty()) {
        p.evidence.extend(evs(&normals));
        p.evidence.extend(evs(&support));
        p.evidence.extend(evs(&ppp_normal));
        p.evidence.extend(evs(&stated_warm));
        p.evidence.extend(evs(&stated_cold));
        if !stated_cold.is_empty() {
            p.conflicts.push(Conflict {
                axis: "perfusion",
                message: format!(
                    "stated {} but perfusion was documented normal: {}",
                    texts(&stated_cold),
                    texts(&normals)
                ),
                stated: evs(&stated_cold),
                documented: evs(&normals),
                kind: "stated-vs-documented",
            });
        }
        p.perfusion_reason = "signs-absent".into();
        return Perfusion::Warm;
    }
    if let Some(last) = stated_cold
        .iter()
        .chain(stated_warm.iter())
        .max_by_key(|m| m.start)
    {
        p.evidence.push(last.ev.clone());
        p.evidence.extend(evs(&support));
        p.perfusion_reason = "stated".into();
        return if last.role == Role::StatedSign {
            Perfusion::Cold
        } else {
            Perfusion::Warm
        };
    }
    for m in support.iter().chain(ppp_normal.iter()) {
        let mut e = m.ev.clone();
        e.note = format!("{}; not enough on its own for warm", e.note);
        p.set_aside.push(e);
    }
    p.perfusion_reason = "partial-assessment".into();
    Perfusion::Unknown
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{
        Assertion, Experiencer, FindingConcept as F, MeasureConcept as M, SectionKind,
        StatementKind as K, Temporality,
    };
    use crate::picture::testkit::Note;

    fn profile(n: &Note) -> Profile {
        crate::picture::build(&n.build()).profile
    }

    fn axes(p: &Profile) -> (Congestion, Perfusion, &str) {
        (p.congestion, p.perfusion, p.label.as_str())
    }

    // The P-cases are the profile check values of the domain reference (13-check-values.md,
    // after Nohria et al. 2003 and Stevenson & Perloff 1989); where the agreed gold semantics
    // (a single absent sign is an assessment) differ from the reference's design proposal,
    // the test says so.

    #[test]
    fn p01_warm_wet() {
        let mut n = Note::new("JVP +5 cm, bibasal creps, pitting oedema to knees. Peripheries warm, CRT <2s. BP 124/80");
        n.measure_in("JVP +5 cm", M::Jvp, 5.0, "cm", 5.0);
        n.present("bibasal creps", F::Crackles)
            .present("pitting oedema to knees", F::PeripheralEdema);
        n.absent("Peripheries warm", F::CoolPeripheries)
            .absent("CRT <2s", F::ProlongedCapRefill);
        n.bp("BP 124/80", 124.0, 80.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Wet, Perfusion::Warm, "warm-wet"));
        assert!(p.conflicts.is_empty());
        // JVP 5 cm above the sternal angle is raised (> 3 cm, Bates' Guide).
        assert!(p
            .evidence
            .iter()
            .any(|e| e.concept == "jvp" && e.supports == "wet"));
        assert!(p
            .evidence
            .iter()
            .any(|e| e.concept == "cool_peripheries" && e.supports == "warm"));
    }

    #[test]
    fn p02_warm_dry() {
        let mut n = Note::new(
            "JVP not raised, chest clear, no peripheral oedema. Warm and well perfused. BP 118/76",
        );
        n.absent("JVP not raised", F::RaisedJvp)
            .absent("chest clear", F::Crackles);
        n.absent("no peripheral oedema", F::PeripheralEdema);
        n.state("Warm and well perfused", K::Perfusion, "warm");
        n.bp("BP 118/76", 118.0, 76.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Warm, "warm-dry"));
        assert_eq!(p.congestion_reason, "signs-absent");
    }

    #[test]
    fn p03_cold_wet_with_narrow_pulse_pressure() {
        let mut n = Note::new("JVP to earlobes, ascites. Peripheries cool and mottled. BP 86/72");
        n.present("JVP to earlobes", F::RaisedJvp)
            .present("ascites", F::Ascites);
        n.present("Peripheries cool and mottled", F::CoolPeripheries);
        n.bp("BP 86/72", 86.0, 72.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Wet, Perfusion::Cold, "cold-wet"));
        // PPP 14/86 = 16.3 % < 25 % (Stevenson & Perloff 1989) is evidence too.
        let ppp = p
            .evidence
            .iter()
            .find(|e| e.concept == "proportional_pulse_pressure")
            .unwrap();
        assert_eq!(ppp.supports, "cold");
        assert!(ppp.note.contains("16.3"));
        assert_eq!(ppp.item, "derived");
    }

    #[test]
    fn p04_cold_dry() {
        let mut n =
            Note::new("JVP not raised, no oedema, chest clear. Cool peripheries, drowsy. BP 84/70");
        n.absent("JVP not raised", F::RaisedJvp)
            .absent("no oedema", F::PeripheralEdema)
            .absent("chest clear", F::Crackles);
        n.present("Cool peripheries", F::CoolPeripheries)
            .present("drowsy", F::AlteredMentation);
        n.bp("BP 84/70", 84.0, 70.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Cold, "cold-dry"));
    }

    #[test]
    fn p05_single_sign_and_pulse_pressure_only() {
        // The reference's design proposal calls one negative domain unknown; the agreed gold
        // semantics ("dry when every sign mentioned is absent") make it dry. Perfusion stays
        // unknown: a normal pulse pressure alone is not an assessment.
        let mut n = Note::new("Chest clear. BP 120/80.");
        n.absent("Chest clear", F::Crackles);
        n.bp("BP 120/80", 120.0, 80.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Unknown, "unknown"));
        assert_eq!(p.perfusion_reason, "pulse-pressure-only");
    }

    #[test]
    fn p06_possible_only_is_unknown() {
        let mut n = Note::new("?fluid overload - for CXR. ?S3");
        n.statement("?fluid overload", K::VolumeStatus, "overloaded")
            .assertion = Assertion::Possible;
        n.finding("?S3", F::S3, Assertion::Possible);
        let p = profile(&n);
        assert_eq!(
            axes(&p),
            (Congestion::Unknown, Perfusion::Unknown, "unknown")
        );
        assert_eq!(p.congestion_reason, "only-possible");
        assert_eq!(p.set_aside.len(), 2);
    }

    #[test]
    fn p07_hypothetical_is_unknown() {
        let mut n = Note::new("If JVP rises or oedema recurs, increase furosemide");
        n.finding("JVP rises", F::RaisedJvp, Assertion::Hypothetical);
        n.finding("oedema recurs", F::PeripheralEdema, Assertion::Hypothetical);
        let p = profile(&n);
        assert_eq!(
            axes(&p),
            (Congestion::Unknown, Perfusion::Unknown, "unknown")
        );
        assert_eq!(p.congestion_reason, "only-hypothetical");
        assert_eq!(p.perfusion_reason, "not-assessed");
    }

    #[test]
    fn p08_warm_peripheries_with_narrow_pulse_pressure_is_cold_with_conflict() {
        let mut n = Note::new("Warm peripheries. BP 90/72");
        n.absent("Warm peripheries", F::CoolPeripheries);
        n.bp("BP 90/72", 90.0, 72.0);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Unknown, Perfusion::Cold, "unknown"));
        assert_eq!(p.conflicts.len(), 1);
        let c = &p.conflicts[0];
        assert_eq!((c.axis, c.kind), ("perfusion", "documented-both-ways"));
        assert!(c.documented.iter().any(|e| e.supports == "warm"));
        assert!(c.documented.iter().any(|e| e.supports == "cold"));
    }

    #[test]
    fn p09_admission_signs_superseded_by_todays_examination() {
        let text = "History\nOn admission oedema to thighs, 3-pillow orthopnoea.\nExamination at discharge\nChest clear, no oedema, JVP not raised, WWP.";
        let mut n = Note::new(text);
        n.section(SectionKind::History, "History")
            .section(SectionKind::Examination, "Examination at discharge");
        n.rewind();
        n.present("oedema to thighs", F::PeripheralEdema)
            .present("3-pillow orthopnoea", F::Orthopnea);
        n.absent("Chest clear", F::Crackles)
            .absent("no oedema", F::PeripheralEdema)
            .absent("JVP not raised", F::RaisedJvp);
        n.absent("WWP", F::CoolPeripheries);
        let p = profile(&n);
        // Orthopnoea is not re-assessed at discharge, but the history is an earlier
        // assessment: the discharge examination decides.
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Warm, "warm-dry"));
        assert!(p
            .set_aside
            .iter()
            .any(|e| e.concept == "orthopnea" && e.note.starts_with("earlier assessment")));
    }

    #[test]
    fn p10_family_mention_does_not_count() {
        let mut n = Note::new("Mother had ankle swelling. Pt: chest clear");
        n.finding("ankle swelling", F::PeripheralEdema, Assertion::Present)
            .experiencer = Experiencer::Other;
        n.absent("chest clear", F::Crackles);
        let p = profile(&n);
        // The reference's proposal is unknown (one domain); the agreed semantics give dry.
        assert_eq!(p.congestion, Congestion::Dry);
        assert!(p
            .set_aside
            .iter()
            .any(|e| e.concept == "peripheral_edema" && e.note.contains("another person")));
        assert!(p.evidence.iter().all(|e| e.concept != "peripheral_edema"));
    }

    #[test]
    fn historical_and_family_signs_alone_leave_unknown() {
        let mut n = Note::new("PMH: pulmonary oedema with crackles 2024. FH: brother S3.");
        n.finding("crackles", F::Crackles, Assertion::Present)
            .temporality = Temporality::Historical;
        n.finding("S3", F::S3, Assertion::Present).experiencer = Experiencer::Other;
        let p = profile(&n);
        assert_eq!(p.congestion, Congestion::Unknown);
        assert_eq!(p.congestion_reason, "only-historical");
    }

    #[test]
    fn stated_euvolaemic_against_signs_is_wet_with_conflict() {
        let mut n = Note::new("3+ pitting oedema to thighs, bibasal crackles. Imp: euvolaemic.");
        n.present("3+ pitting oedema to thighs", F::PeripheralEdema)
            .present("bibasal crackles", F::Crackles);
        n.state("euvolaemic", K::VolumeStatus, "euvolemic");
        let pic = crate::picture::build(&n.build());
        let p = &pic.profile;
        assert_eq!(p.congestion, Congestion::Wet);
        assert_eq!(p.conflicts.len(), 1);
        let c = &p.conflicts[0];
        assert_eq!((c.axis, c.kind), ("congestion", "stated-vs-documented"));
        assert_eq!(c.stated[0].text, "euvolaemic");
        assert_eq!(c.documented.len(), 2);
        // Both sides stay in the evidence; the classification keeps the clinician's word.
        assert!(p
            .evidence
            .iter()
            .any(|e| e.supports == "dry" && e.item == "statement"));
        assert_eq!(
            pic.classifications.volume_status.as_deref(),
            Some("euvolemic")
        );
    }

    #[test]
    fn stated_overloaded_against_absent_signs_is_dry_with_conflict() {
        let mut n = Note::new("JVP not raised, chest clear, no oedema. Remains fluid overloaded.");
        n.absent("JVP not raised", F::RaisedJvp)
            .absent("chest clear", F::Crackles)
            .absent("no oedema", F::PeripheralEdema);
        n.state("fluid overloaded", K::VolumeStatus, "overloaded");
        let p = profile(&n);
        assert_eq!(p.congestion, Congestion::Dry);
        assert_eq!(p.conflicts.len(), 1);
        assert_eq!(p.conflicts[0].stated[0].supports, "wet");
    }

    #[test]
    fn a_statement_alone_decides() {
        let mut n = Note::new("Clinically euvolaemic.");
        n.state("euvolaemic", K::VolumeStatus, "euvolemic");
        let p = profile(&n);
        assert_eq!(
            (p.congestion, p.congestion_reason.as_str()),
            (Congestion::Dry, "stated")
        );
        assert_eq!(p.evidence.len(), 1);
        let mut n = Note::new("Fluid overloaded. Cold and clammy.");
        n.state("Fluid overloaded", K::VolumeStatus, "overloaded")
            .state("Cold", K::Perfusion, "cold");
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Wet, Perfusion::Cold, "cold-wet"));
        assert_eq!(p.perfusion_reason, "stated");
    }

    #[test]
    fn denied_overload_is_a_dry_statement() {
        // Domain reference 2.2: "no signs of fluid overload" is explicit dry evidence.
        let mut n = Note::new("No signs of fluid overload.");
        n.statement("fluid overload", K::VolumeStatus, "overloaded")
            .assertion = Assertion::Absent;
        let p = profile(&n);
        assert_eq!(
            (p.congestion, p.congestion_reason.as_str()),
            (Congestion::Dry, "stated")
        );
        let mut n = Note::new("Not euvolaemic yet.");
        n.statement("euvolaemic", K::VolumeStatus, "euvolemic")
            .assertion = Assertion::Absent;
        assert_eq!(profile(&n).congestion, Congestion::Unknown);
    }

    #[test]
    fn effusion_counts_only_with_overload() {
        let mut n = Note::new("CXR: small right effusion.");
        n.present("small right effusion", F::PleuralEffusion);
        let p = profile(&n);
        assert_eq!(
            (p.congestion, p.congestion_reason.as_str()),
            (Congestion::Unknown, "effusion-without-overload")
        );
        let mut n = Note::new("CXR: small right effusion. Oedema to ankles.");
        n.present("small right effusion", F::PleuralEffusion)
            .present("Oedema to ankles", F::PeripheralEdema);
        let p = profile(&n);
        assert_eq!(p.congestion, Congestion::Wet);
        assert!(p.evidence.iter().any(|e| e.concept == "pleural_effusion"));
        let mut n = Note::new("Effusion on CXR. JVP not raised.");
        n.present("Effusion", F::PleuralEffusion)
            .absent("JVP not raised", F::RaisedJvp);
        assert_eq!(profile(&n).congestion, Congestion::Dry);
    }

    #[test]
    fn a_later_effusion_alone_does_not_replace_the_examination() {
        let text = "12/11\nOedema to knees.\n13/11\nCXR: small effusion.\n";
        let mut n = Note::new(text);
        n.episode("12/11", Some("2026-11-12"))
            .episode("13/11", Some("2026-11-13"));
        n.rewind();
        n.present("Oedema to knees", F::PeripheralEdema)
            .present("small effusion", F::PleuralEffusion);
        let p = profile(&n);
        assert_eq!(p.congestion, Congestion::Wet);
        assert!(p
            .set_aside
            .iter()
            .any(|e| e.concept == "pleural_effusion" && e.note.starts_with("outside")));
    }

    #[test]
    fn breathlessness_alone_is_not_congestion() {
        let mut n = Note::new("More breathless on exertion. PND.");
        n.present("breathless", F::Dyspnea).present("PND", F::Pnd);
        let p = profile(&n);
        assert_eq!(
            (p.congestion, p.congestion_reason.as_str()),
            (Congestion::Unknown, "not-assessed")
        );
        assert_eq!(p.set_aside.len(), 2);
    }

    #[test]
    fn jvp_values_against_their_reference() {
        // Bates' Guide: raised above 3 cm over the sternal angle, or 8 cm over the right atrium.
        for (words, v, unit, wet) in [
            ("JVP 4 cm", 4.0, "cm", true),
            ("JVP 3 cm", 3.0, "cm", false),
            ("JVP 7 cmH2O", 7.0, "cm[H2O]", false),
            ("JVP 12 cmH2O", 12.0, "cm[H2O]", true),
        ] {
            let mut n = Note::new(words);
            n.measure_in(words, M::Jvp, v, unit, v);
            let want = if wet {
                Congestion::Wet
            } else {
                Congestion::Dry
            };
            assert_eq!(profile(&n).congestion, want, "{words}");
        }
    }

    #[test]
    fn lactate_threshold_is_strictly_above_two() {
        for (v, want) in [(3.8, Perfusion::Cold), (2.0, Perfusion::Unknown)] {
            let mut n = Note::new("Lactate x");
            n.measure("Lactate x", M::Lactate, v);
            assert_eq!(profile(&n).perfusion, want, "lactate {v}");
        }
    }

    #[test]
    fn mentation_needs_a_normal_pulse_pressure_for_warm() {
        let mut n = Note::new("Alert and orientated.");
        n.absent("Alert", F::AlteredMentation);
        let p = profile(&n);
        assert_eq!(
            (p.perfusion, p.perfusion_reason.as_str()),
            (Perfusion::Unknown, "partial-assessment")
        );
        let mut n = Note::new("Alert and orientated. BP 120/80");
        n.absent("Alert", F::AlteredMentation)
            .bp("BP 120/80", 120.0, 80.0);
        assert_eq!(profile(&n).perfusion, Perfusion::Warm);
        // A pulse rate or SpO2 alone is not a perfusion assessment.
        let mut n = Note::new("HR 80, SpO2 97%");
        n.measure("HR 80", M::HeartRate, 80.0);
        n.measure("SpO2 97%", M::Spo2, 97.0);
        let p = profile(&n);
        assert_eq!(
            (p.perfusion, p.perfusion_reason.as_str()),
            (Perfusion::Unknown, "not-assessed")
        );
    }

    #[test]
    fn cold_statement_against_warm_findings_keeps_the_signs() {
        let mut n = Note::new("Peripheries warm, CRT 1 s. Imp: cold.");
        n.absent("Peripheries warm", F::CoolPeripheries)
            .absent("CRT 1 s", F::ProlongedCapRefill);
        n.state("cold", K::Perfusion, "cold");
        let p = profile(&n);
        assert_eq!(p.perfusion, Perfusion::Warm);
        assert_eq!(p.conflicts[0].kind, "stated-vs-documented");
        assert_eq!(p.conflicts[0].axis, "perfusion");
    }

    #[test]
    fn nothing_assessed_is_unknown_on_both_axes() {
        let p = crate::picture::build(&Extraction::default()).profile;
        assert_eq!(
            axes(&p),
            (Congestion::Unknown, Perfusion::Unknown, "unknown")
        );
        assert_eq!(
            (p.congestion_reason.as_str(), p.perfusion_reason.as_str()),
            ("not-assessed", "not-assessed")
        );
    }

    #[test]
    fn wet_with_unknown_perfusion_keeps_the_partial_answer() {
        let mut n = Note::new("Oedema to knees.");
        n.present("Oedema to knees", F::PeripheralEdema);
        let p = profile(&n);
        assert_eq!(axes(&p), (Congestion::Wet, Perfusion::Unknown, "unknown"));
        assert!(p.axes_summary().contains("congestion wet"));
    }

    #[test]
    fn last_mention_in_the_assessment_decides_and_hypothetical_never_replaces() {
        let mut n = Note::new("Oedema to ankles on arrival to ward; now oedema resolved. Orthopnoea. If orthopnoea recurs, call.");
        n.present("Oedema to ankles", F::PeripheralEdema)
            .absent("oedema resolved", F::PeripheralEdema);
        n.present("Orthopnoea", F::Orthopnea);
        n.finding("orthopnoea recurs", F::Orthopnea, Assertion::Hypothetical);
        let p = profile(&n);
        assert_eq!(p.congestion, Congestion::Wet);
        assert!(p
            .evidence
            .iter()
            .any(|e| e.concept == "orthopnea" && e.supports == "wet"));
        assert!(p
            .evidence
            .iter()
            .any(|e| e.concept == "peripheral_edema" && e.supports == "dry"));
        assert!(p.set_aside.iter().any(|e| e.note.starts_with("superseded")));
    }

    /// A three-day ward record after the invented note 15 of the corpus.
    fn three_days(day3_perfusion: bool) -> Note {
        let text = "12/11 WR\nJVP +4. Mild bibasal creps. Warm, CRT <2s. BP 118/72\n\
13/11 WR\nJVP +6 cm. Peripheries cool-ish. BP 98/78\n\
14/11 WR\nJVP not raised, chest clear, no oedema. Cold peripheries, CRT 4 s. BP 84/70\n";
        let mut n = Note::new(text);
        n.episode("12/11 WR", Some("2026-11-12"))
            .episode("13/11 WR", Some("2026-11-13"))
            .episode("14/11 WR", Some("2026-11-14"));
        n.rewind();
        n.measure("JVP +4", M::Jvp, 4.0).unit = None;
        n.present("Mild bibasal creps", F::Crackles);
        n.absent("Warm", F::CoolPeripheries)
            .absent("CRT <2s", F::ProlongedCapRefill);
        n.bp("BP 118/72", 118.0, 72.0);
        n.measure_in("JVP +6 cm", M::Jvp, 6.0, "cm", 6.0);
        n.present("Peripheries cool-ish", F::CoolPeripheries);
        n.bp("BP 98/78", 98.0, 78.0);
        n.absent("JVP not raised", F::RaisedJvp)
            .absent("chest clear", F::Crackles)
            .absent("no oedema", F::PeripheralEdema);
        if day3_perfusion {
            n.present("Cold peripheries", F::CoolPeripheries)
                .present("CRT 4 s", F::ProlongedCapRefill);
            n.bp("BP 84/70", 84.0, 70.0);
        }
        n
    }

    #[test]
    fn multi_day_latest_day_decides() {
        let p = profile(&three_days(true));
        // Day 3 is dry and cold; days 1-2 were wet.
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Cold, "cold-dry"));
        assert!(p.evidence.iter().all(|e| e.episode == Some(2)));
        assert!(p
            .set_aside
            .iter()
            .any(|e| e.episode == Some(0) && e.concept == "crackles"));
    }

    #[test]
    fn multi_day_each_axis_uses_its_latest_assessment() {
        // Day 3 does not assess perfusion: day 2's cool peripheries (and PPP 20 %) decide.
        let p = profile(&three_days(false));
        assert_eq!(axes(&p), (Congestion::Dry, Perfusion::Cold, "cold-dry"));
        assert!(p
            .evidence
            .iter()
            .filter(|e| e.supports == "cold")
            .all(|e| e.episode == Some(1)));
    }

    #[test]
    fn episodes_written_out_of_order_use_the_latest_date() {
        let text = "14/11: oedema to knees.\n12/11: no oedema, chest clear.\n";
        let mut n = Note::new(text);
        n.episode("14/11:", Some("2026-11-14"))
            .episode("12/11:", Some("2026-11-12"));
        n.rewind();
        n.present("oedema to knees", F::PeripheralEdema);
        n.absent("no oedema", F::PeripheralEdema)
            .absent("chest clear", F::Crackles);
        assert_eq!(profile(&n).congestion, Congestion::Wet);
    }
}
