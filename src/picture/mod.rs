//! The clinical picture: bedside profile, classifications, patient facts, derived values and
//! trends, built from the extracted model alone.
//!
//! Every conclusion keeps the spans of the items that support it.

use serde::Serialize;

use crate::model::Extraction;
use crate::span::Span;

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

/// One item that moved an axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Evidence {
    /// Finding or measurement concept, or a statement kind (`volume_status`).
    pub concept: String,
    /// `wet`, `dry`, `warm` or `cold`.
    pub supports: &'static str,
    pub span: Span,
    pub note: String,
}

/// Evidence on both sides of one axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Conflict {
    /// `congestion` or `perfusion`.
    pub axis: &'static str,
    pub message: String,
    pub stated: Vec<Evidence>,
    pub documented: Vec<Evidence>,
}

/// The warm/cold wet/dry profile.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Profile {
    pub congestion: Congestion,
    pub perfusion: Perfusion,
    /// `warm-dry`, `warm-wet`, `cold-wet`, `cold-dry` or `unknown`.
    pub label: String,
    pub evidence: Vec<Evidence>,
    pub conflicts: Vec<Conflict>,
}

/// Where a classification came from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClassSource {
    /// `stated` in the text or `derived` from a value (hf_type from LVEF).
    pub basis: &'static str,
    pub text: String,
    pub span: Span,
}

/// The four classifications, as plain strings, with their sources beside them.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Classifications {
    pub nyha_class: Option<String>,
    pub hf_type: Option<String>,
    pub acuity: Option<String>,
    pub volume_status: Option<String>,
    pub sources: ClassSources,
}

#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct ClassSources {
    pub nyha_class: Option<ClassSource>,
    pub hf_type: Option<ClassSource>,
    pub acuity: Option<ClassSource>,
    pub volume_status: Option<ClassSource>,
}

/// Age and sex as written.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Patient {
    pub age: Option<u32>,
    pub sex: Option<String>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub spans: Vec<Span>,
}

/// Derived values (filled in by the picture stage).
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Derived {}

/// Trends (filled in by the picture stage).
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Trends {}

/// The whole picture of one document.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Picture {
    pub profile: Profile,
    pub classifications: Classifications,
    pub patient: Patient,
    pub derived: Derived,
    pub trends: Trends,
}

/// Build the picture from the extracted model.
pub fn build(_ex: &Extraction) -> Picture {
    Picture {
        profile: Profile {
            label: "unknown".into(),
            ..Profile::default()
        },
        ..Picture::default()
    }
}
