//! The extracted model: what a note documents, with spans and assertion context.
//!
//! This is the typed interface between extraction and everything after it. The clinical
//! picture, the lint rules and the renderers read these types only; none of them sees the
//! grammar or the text scanners.

use serde::Serialize;

use crate::span::Span;

/// Measurement concepts of the output contract, each with one canonical UCUM unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MeasureConcept {
    SystolicBp,
    DiastolicBp,
    HeartRate,
    RespiratoryRate,
    Spo2,
    Temperature,
    Weight,
    Height,
    Jvp,
    FluidBalance,
    UrineOutput,
    Lvef,
    Bnp,
    NtProbnp,
    Creatinine,
    Urea,
    Sodium,
    Potassium,
    Lactate,
    Hemoglobin,
}

impl MeasureConcept {
    pub const ALL: [MeasureConcept; 20] = [
        Self::SystolicBp,
        Self::DiastolicBp,
        Self::HeartRate,
        Self::RespiratoryRate,
        Self::Spo2,
        Self::Temperature,
        Self::Weight,
        Self::Height,
        Self::Jvp,
        Self::FluidBalance,
        Self::UrineOutput,
        Self::Lvef,
        Self::Bnp,
        Self::NtProbnp,
        Self::Creatinine,
        Self::Urea,
        Self::Sodium,
        Self::Potassium,
        Self::Lactate,
        Self::Hemoglobin,
    ];

    /// The contract name (`systolic_bp`, ...).
    pub fn name(self) -> &'static str {
        match self {
            Self::SystolicBp => "systolic_bp",
            Self::DiastolicBp => "diastolic_bp",
            Self::HeartRate => "heart_rate",
            Self::RespiratoryRate => "respiratory_rate",
            Self::Spo2 => "spo2",
            Self::Temperature => "temperature",
            Self::Weight => "weight",
            Self::Height => "height",
            Self::Jvp => "jvp",
            Self::FluidBalance => "fluid_balance",
            Self::UrineOutput => "urine_output",
            Self::Lvef => "lvef",
            Self::Bnp => "bnp",
            Self::NtProbnp => "nt_probnp",
            Self::Creatinine => "creatinine",
            Self::Urea => "urea",
            Self::Sodium => "sodium",
            Self::Potassium => "potassium",
            Self::Lactate => "lactate",
            Self::Hemoglobin => "hemoglobin",
        }
    }

    /// Human label for summaries.
    pub fn label(self) -> &'static str {
        match self {
            Self::SystolicBp => "systolic BP",
            Self::DiastolicBp => "diastolic BP",
            Self::HeartRate => "heart rate",
            Self::RespiratoryRate => "respiratory rate",
            Self::Spo2 => "SpO2",
            Self::Temperature => "temperature",
            Self::Weight => "weight",
            Self::Height => "height",
            Self::Jvp => "JVP",
            Self::FluidBalance => "fluid balance",
            Self::UrineOutput => "urine output",
            Self::Lvef => "LVEF",
            Self::Bnp => "BNP",
            Self::NtProbnp => "NT-proBNP",
            Self::Creatinine => "creatinine",
            Self::Urea => "urea",
            Self::Sodium => "sodium",
            Self::Potassium => "potassium",
            Self::Lactate => "lactate",
            Self::Hemoglobin => "haemoglobin",
        }
    }

    /// The canonical UCUM unit every value of this concept is normalised to.
    pub fn canonical_unit(self) -> &'static str {
        match self {
            Self::SystolicBp | Self::DiastolicBp => "mm[Hg]",
            Self::HeartRate | Self::RespiratoryRate => "/min",
            Self::Spo2 | Self::Lvef => "%",
            Self::Temperature => "Cel",
            Self::Weight => "kg",
            Self::Height => "cm",
            Self::Jvp => "cm[H2O]",
            Self::FluidBalance => "mL",
            Self::UrineOutput => "mL",
            Self::Bnp | Self::NtProbnp => "pg/mL",
            Self::Creatinine => "umol/L",
            Self::Urea | Self::Sodium | Self::Potassium | Self::Lactate => "mmol/L",
            Self::Hemoglobin => "g/L",
        }
    }

    /// Whether the concept is a laboratory value (as opposed to a bedside observation).
    pub fn is_lab(self) -> bool {
        matches!(
            self,
            Self::Bnp
                | Self::NtProbnp
                | Self::Creatinine
                | Self::Urea
                | Self::Sodium
                | Self::Potassium
                | Self::Lactate
                | Self::Hemoglobin
        )
    }
}

/// Finding concepts of the output contract.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FindingConcept {
    Dyspnea,
    Orthopnea,
    Pnd,
    Crackles,
    PeripheralEdema,
    RaisedJvp,
    HepatojugularReflux,
    Ascites,
    PleuralEffusion,
    S3,
    CoolPeripheries,
    ProlongedCapRefill,
    AlteredMentation,
    Oliguria,
    Hypotension,
}

impl FindingConcept {
    pub const ALL: [FindingConcept; 15] = [
        Self::Dyspnea,
        Self::Orthopnea,
        Self::Pnd,
        Self::Crackles,
        Self::PeripheralEdema,
        Self::RaisedJvp,
        Self::HepatojugularReflux,
        Self::Ascites,
        Self::PleuralEffusion,
        Self::S3,
        Self::CoolPeripheries,
        Self::ProlongedCapRefill,
        Self::AlteredMentation,
        Self::Oliguria,
        Self::Hypotension,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Self::Dyspnea => "dyspnea",
            Self::Orthopnea => "orthopnea",
            Self::Pnd => "pnd",
            Self::Crackles => "crackles",
            Self::PeripheralEdema => "peripheral_edema",
            Self::RaisedJvp => "raised_jvp",
            Self::HepatojugularReflux => "hepatojugular_reflux",
            Self::Ascites => "ascites",
            Self::PleuralEffusion => "pleural_effusion",
            Self::S3 => "s3",
            Self::CoolPeripheries => "cool_peripheries",
            Self::ProlongedCapRefill => "prolonged_cap_refill",
            Self::AlteredMentation => "altered_mentation",
            Self::Oliguria => "oliguria",
            Self::Hypotension => "hypotension",
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Self::Dyspnea => "breathlessness",
            Self::Orthopnea => "orthopnoea",
            Self::Pnd => "PND",
            Self::Crackles => "crackles",
            Self::PeripheralEdema => "peripheral oedema",
            Self::RaisedJvp => "raised JVP",
            Self::HepatojugularReflux => "hepatojugular reflux",
            Self::Ascites => "ascites",
            Self::PleuralEffusion => "pleural effusion",
            Self::S3 => "S3",
            Self::CoolPeripheries => "cool peripheries",
            Self::ProlongedCapRefill => "prolonged capillary refill",
            Self::AlteredMentation => "altered mentation",
            Self::Oliguria => "oliguria",
            Self::Hypotension => "symptomatic hypotension",
        }
    }

    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|c| c.name() == name)
    }
}

/// Whether a mention is affirmed, denied, uncertain or only conditional.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Assertion {
    #[default]
    Present,
    Absent,
    Possible,
    Hypothetical,
}

impl Assertion {
    pub fn name(self) -> &'static str {
        match self {
            Self::Present => "present",
            Self::Absent => "absent",
            Self::Possible => "possible",
            Self::Hypothetical => "hypothetical",
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Temporality {
    #[default]
    Current,
    Historical,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Experiencer {
    #[default]
    Patient,
    Other,
}

/// The assertion context of one mention, with the cue that set each non-default value.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct Context {
    pub assertion: Assertion,
    pub temporality: Temporality,
    pub experiencer: Experiencer,
    /// Cues that moved a value away from its default (`no`, `?`, `if`, `FH:` ...).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub cues: Vec<Cue>,
}

impl Context {
    /// Present, current and about the patient: the only mentions a profile counts as signs.
    pub fn is_current_present(&self) -> bool {
        self.assertion == Assertion::Present
            && self.temporality == Temporality::Current
            && self.experiencer == Experiencer::Patient
    }

    /// Denied, current and about the patient: the only mentions that count as absent.
    pub fn is_current_absent(&self) -> bool {
        self.assertion == Assertion::Absent
            && self.temporality == Temporality::Current
            && self.experiencer == Experiencer::Patient
    }
}

/// A context cue found in the text.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Cue {
    /// `negation`, `possibility`, `hypothetical`, `historical`, `experiencer`, `section`.
    pub family: &'static str,
    pub text: String,
    pub span: Span,
}

/// A number with its UCUM unit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Quantity {
    pub value: f64,
    pub unit: &'static str,
}

/// How a written value relates to the true one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Qualifier {
    /// `~80 kg`, `c. 3 L`, `approx`.
    Approximate,
    /// `EF <20%`: the true value is below.
    UpperBound,
    /// `NT-proBNP >35000`: the true value is above.
    LowerBound,
}

/// When, relative to the note, a value was taken, where the text says so.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TimeRef {
    Admission,
    Yesterday,
    Baseline,
    Previous,
    Discharge,
    Today,
}

/// One measured value documented in the note.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Measurement {
    pub concept: MeasureConcept,
    /// The number as written (the midpoint for a range).
    pub value: f64,
    /// The UCUM unit as written, or as inferred when `unit_inferred`.
    pub unit: Option<&'static str>,
    /// The value in the concept's canonical unit, when a unit is known.
    pub normalized: Option<Quantity>,
    pub unit_inferred: bool,
    /// ISO date (`YYYY-MM-DD`) when the value is dated in the text.
    pub date: Option<String>,
    /// Clock time (`HH:MM`) when a row or line gives one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time: Option<String>,
    pub assertion: Assertion,
    pub temporality: Temporality,
    pub experiencer: Experiencer,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub time_ref: Option<TimeRef>,
    /// Low and high ends of a written range (`LVEF 35-40%`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub range: Option<(f64, f64)>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub qualifier: Option<Qualifier>,
    /// The unit text as written, when there was one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit_text: Option<String>,
    pub text: String,
    pub span: Span,
    /// Index into [`Extraction::sections`] of the section holding the value.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub section: Option<usize>,
    /// Index of the documented day (a dated entry) the value belongs to, 0 = first.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub episode: Option<usize>,
}

/// Attributes some findings carry.
#[derive(Debug, Clone, PartialEq, Default, Serialize)]
pub struct FindingDetail {
    /// Oedema grade 1-4 (`2+`, `++`), 0.5 for trace.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub grade: Option<f64>,
    /// Extent: `ankles`, `mid-shin`, `knees`, `thighs`, `sacrum`, `bases`, `mid-zones` ...
    #[serde(skip_serializing_if = "Option::is_none")]
    pub level: Option<String>,
    /// Pillow count for orthopnoea.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub pillows: Option<u32>,
    /// Capillary refill time in seconds, GCS score and similar numbers.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub number: Option<f64>,
    /// Trend words: `improving`, `worse`, `resolved`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trend: Option<String>,
}

/// One exam finding or symptom documented in the note.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    pub concept: FindingConcept,
    pub assertion: Assertion,
    pub experiencer: Experiencer,
    pub temporality: Temporality,
    pub text: String,
    pub span: Span,
    #[serde(skip_serializing_if = "is_default_detail")]
    pub detail: FindingDetail,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub cues: Vec<Cue>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub section: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub episode: Option<usize>,
}

fn is_default_detail(d: &FindingDetail) -> bool {
    *d == FindingDetail::default()
}

/// Kinds of statement that carry classification-level meaning.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StatementKind {
    /// Heart failure named (`HF`, `CCF`, `heart failure`, `HFrEF` ...).
    HeartFailure,
    /// A stated type: value `hfref`, `hfmref`, `hfpef`, `hfimpef`.
    HfType,
    /// A stated acuity: value `acute`, `chronic`, `acute_on_chronic`, or `decompensated`
    /// (worsening of known HF; acute on chronic when chronic HF is documented).
    Acuity,
    /// The clinician's stated volume status: `overloaded`, `euvolemic`, `depleted`.
    VolumeStatus,
    /// A global perfusion statement: `warm` or `cold` (`warm and well perfused`).
    Perfusion,
    /// NYHA class: `I`..`IV` (a range gives the higher class; `range` keeps both).
    Nyha,
    /// Patient age in years.
    Age,
    /// Patient sex: `female` or `male`.
    Sex,
    /// Target or dry weight in kg.
    TargetWeight,
    /// Hypertension named (for coding linkage).
    Hypertension,
    /// Chronic kidney disease named; value is the stage when written (`3a`, `4`, `unstaged`).
    Ckd,
    /// A qualitative LV function statement (`severely impaired LV function`).
    LvFunction,
}

/// A classification-bearing statement, with its context.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Statement {
    pub kind: StatementKind,
    pub value: String,
    pub assertion: Assertion,
    pub temporality: Temporality,
    pub experiencer: Experiencer,
    pub text: String,
    pub span: Span,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub section: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub episode: Option<usize>,
}

/// Section kinds recognised from headers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SectionKind {
    Diagnosis,
    PresentingComplaint,
    History,
    PastHistory,
    FamilyHistory,
    SocialHistory,
    Medications,
    Allergies,
    Examination,
    Observations,
    Labs,
    Imaging,
    Assessment,
    Plan,
    DischargeMedications,
    DischargeInstructions,
    FollowUp,
    Subjective,
    Objective,
    Other,
}

impl SectionKind {
    pub fn name(self) -> &'static str {
        match self {
            Self::Diagnosis => "diagnosis",
            Self::PresentingComplaint => "presenting_complaint",
            Self::History => "history",
            Self::PastHistory => "past_history",
            Self::FamilyHistory => "family_history",
            Self::SocialHistory => "social_history",
            Self::Medications => "medications",
            Self::Allergies => "allergies",
            Self::Examination => "examination",
            Self::Observations => "observations",
            Self::Labs => "labs",
            Self::Imaging => "imaging",
            Self::Assessment => "assessment",
            Self::Plan => "plan",
            Self::DischargeMedications => "discharge_medications",
            Self::DischargeInstructions => "discharge_instructions",
            Self::FollowUp => "follow_up",
            Self::Subjective => "subjective",
            Self::Objective => "objective",
            Self::Other => "other",
        }
    }
}

/// A section of the note: its header and the text it governs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Section {
    pub kind: SectionKind,
    /// The header as written, e.g. `O/E:`.
    pub title: String,
    pub header: Span,
    /// From the header to the next header or the end of the document.
    pub span: Span,
}

/// A dated entry within a multi-day note (a review entry, a day of a table).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Episode {
    pub date: Option<String>,
    pub time: Option<String>,
    pub span: Span,
}

/// Medication classes relevant to heart failure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DrugClass {
    LoopDiuretic,
    ThiazideDiuretic,
    Mra,
    AceInhibitor,
    Arb,
    Arni,
    BetaBlocker,
    Sglt2Inhibitor,
    Digoxin,
    Anticoagulant,
    PotassiumSupplement,
    Other,
}

/// A change to a medication written in the note.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MedChange {
    Started,
    Stopped,
    Increased,
    Reduced,
    Held,
    Continued,
    /// This regime was replaced by the one written after it (`X -> Y`, `X switched to Y`).
    Switched,
}

/// One medication mention.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Medication {
    /// Generic name (INN), lower case.
    pub drug: String,
    pub class: DrugClass,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dose: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub unit: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub route: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub frequency: Option<String>,
    /// Administrations per day implied by the frequency, when it is regular.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub per_day: Option<f64>,
    /// Total amount per day in `unit` (without any `/h`): dose × per day, the sum of split
    /// doses, or an infusion rate × 24 h.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub daily_dose: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub change: Option<MedChange>,
    /// When the change is written for a later day ("from tomorrow", "from Monday"), that
    /// day as written; the regime in force today is then the one before the change.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub starts: Option<String>,
    pub assertion: Assertion,
    /// How a dose was read, when that is not obvious (split doses, infusion rates, pairs).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
    pub text: String,
    pub span: Span,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub section: Option<usize>,
}

/// A problem with the input itself, reported with the document and the run goes on.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InputWarning {
    /// `empty`, `invalid-utf8`, `binary`, `unreadable`, `too-large`, `nul-bytes` ...
    pub code: &'static str,
    pub message: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub offset: Option<usize>,
}

/// Everything extracted from one document.
#[derive(Debug, Clone, Default, Serialize)]
pub struct Extraction {
    pub sections: Vec<Section>,
    pub episodes: Vec<Episode>,
    pub measurements: Vec<Measurement>,
    pub findings: Vec<Finding>,
    pub statements: Vec<Statement>,
    pub medications: Vec<Medication>,
    /// The date of the note itself, when its header gives one.
    pub note_date: Option<String>,
}
