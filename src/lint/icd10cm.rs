//! The ICD-10-CM heart-failure codes the coding messages name.
//!
//! Codes and titles are those of the CDC/NCHS ICD-10-CM Tabular List, chapter 9, category
//! I50 (FY2026 release, effective 1 October 2025), checked against secondary reproductions of
//! the tabular text. Suggestions in messages are documentation hints for a coder, never
//! assigned codes.

/// The release the titles below were checked against.
pub const EDITION: &str = "ICD-10-CM FY2026";

/// `(code, title)` of every code a message can name.
pub const CODES: &[(&str, &str)] = &[
    ("I50.9", "Heart failure, unspecified"),
    ("I50.20", "Unspecified systolic (congestive) heart failure"),
    ("I50.21", "Acute systolic (congestive) heart failure"),
    ("I50.22", "Chronic systolic (congestive) heart failure"),
    (
        "I50.23",
        "Acute on chronic systolic (congestive) heart failure",
    ),
    ("I50.30", "Unspecified diastolic (congestive) heart failure"),
    ("I50.31", "Acute diastolic (congestive) heart failure"),
    ("I50.32", "Chronic diastolic (congestive) heart failure"),
    (
        "I50.33",
        "Acute on chronic diastolic (congestive) heart failure",
    ),
    (
        "I50.40",
        "Unspecified combined systolic (congestive) and diastolic (congestive) heart failure",
    ),
    (
        "I50.41",
        "Acute combined systolic (congestive) and diastolic (congestive) heart failure",
    ),
    (
        "I50.42",
        "Chronic combined systolic (congestive) and diastolic (congestive) heart failure",
    ),
    (
        "I50.43",
        "Acute on chronic combined systolic (congestive) and diastolic (congestive) heart failure",
    ),
    // Hypertension combination codes (category I11 and I13; domain reference 08-icd10cm.md
    // §8.2, which gives these titles).
    ("I11.0", "Hypertensive heart disease with heart failure"),
    (
        "I13.0",
        "Hypertensive heart and chronic kidney disease with heart failure and stage 1 through \
         stage 4 chronic kidney disease, or unspecified chronic kidney disease",
    ),
    (
        "I13.2",
        "Hypertensive heart and chronic kidney disease with heart failure and with stage 5 \
         chronic kidney disease, or end stage renal disease",
    ),
    // Chronic kidney disease stages (category N18; codes from the domain reference §8.2,
    // titles from memory of the tabular list, for a coder to confirm).
    ("N18.1", "Chronic kidney disease, stage 1"),
    ("N18.2", "Chronic kidney disease, stage 2 (mild)"),
    ("N18.30", "Chronic kidney disease, stage 3 unspecified"),
    ("N18.31", "Chronic kidney disease, stage 3a"),
    ("N18.32", "Chronic kidney disease, stage 3b"),
    ("N18.4", "Chronic kidney disease, stage 4 (severe)"),
    ("N18.5", "Chronic kidney disease, stage 5"),
    ("N18.6", "End stage renal disease"),
    ("N18.9", "Chronic kidney disease, unspecified"),
];

/// The N18 code of a documented CKD stage (`3a`, `4`, `unstaged`; `esrd` for end-stage
/// wording). Stage and ESRD together give N18.6 only (ICD-10-CM Official Guidelines
/// I.C.14.a, domain reference 08-icd10cm.md).
pub fn ckd_code(stage: &str) -> Option<&'static str> {
    Some(match stage.trim().to_ascii_lowercase().as_str() {
        "1" | "i" => "N18.1",
        "2" | "ii" => "N18.2",
        "3" | "iii" => "N18.30",
        "3a" | "iiia" => "N18.31",
        "3b" | "iiib" => "N18.32",
        "4" | "iv" => "N18.4",
        "5" | "v" => "N18.5",
        "esrd" => "N18.6",
        "unstaged" | "" => "N18.9",
        _ => return None,
    })
}

/// The title of a code in [`CODES`].
pub fn title(code: &str) -> Option<&'static str> {
    CODES.iter().find(|(c, _)| *c == code).map(|(_, t)| *t)
}

/// `I50.9 Heart failure, unspecified`.
pub fn code_and_title(code: &str) -> String {
    match title(code) {
        Some(t) => format!("{code} {t}"),
        None => code.to_string(),
    }
}

/// The I50 subcategory (`I50.2`, `I50.3`, `I50.4`) a stated type documents, when the type
/// alone decides it. HFmrEF goes to systolic by the coding advice reported for it (a coder
/// confirms); HFimpEF depends on the current EF and is left to the coder.
pub fn family_of_type(hf_type: &str) -> Option<&'static str> {
    match hf_type {
        "hfref" | "hfmref" | "systolic" => Some("I50.2"),
        "hfpef" | "diastolic" => Some("I50.3"),
        "combined" => Some("I50.4"),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Expected titles copied from the CDC/NCHS ICD-10-CM Tabular List, FY2026 release,
    // category I50 (verified against secondary reproductions of the tabular text).
    #[test]
    fn titles_match_the_tabular_list() {
        assert_eq!(title("I50.9"), Some("Heart failure, unspecified"));
        assert_eq!(
            title("I50.23"),
            Some("Acute on chronic systolic (congestive) heart failure")
        );
        assert_eq!(
            title("I50.32"),
            Some("Chronic diastolic (congestive) heart failure")
        );
        assert_eq!(
            title("I50.41"),
            Some("Acute combined systolic (congestive) and diastolic (congestive) heart failure")
        );
    }

    #[test]
    fn each_family_has_four_acuity_codes() {
        // Tabular list: fifth character 0 unspecified, 1 acute, 2 chronic, 3 acute on chronic.
        for fam in ["I50.2", "I50.3", "I50.4"] {
            for digit in 0..4 {
                let code = format!("{fam}{digit}");
                let t = title(&code).unwrap_or_else(|| panic!("{code} missing"));
                let expected_word = ["Unspecified", "Acute", "Chronic", "Acute on chronic"][digit];
                assert!(t.starts_with(expected_word), "{code}: {t}");
            }
        }
        assert_eq!(family_of_type("hfpef"), Some("I50.3"));
        assert_eq!(family_of_type("hfimpef"), None);
    }
}
