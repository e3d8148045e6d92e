//! Template menus: a form line that offers options and records the answer after an arrow,
//! `JVP: raised / not raised / not seen  ->  raised`, `Confusion: Y / N -> N`. Only the
//! answer documents anything; the options are the form's own wording, so their words are
//! neither findings nor context cues. (Admission proformas are written this way when a
//! pick-list is pasted as text: common practice, no source.)

use std::ops::Range;
use std::sync::OnceLock;

use regex::Regex;

/// One menu line.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Menu {
    /// Where the menu's line starts.
    pub line_start: usize,
    /// The options, after the label's colon, up to the answer (the arrow included).
    pub options: Range<usize>,
    /// The answer, after the arrow, to the end of the line (trimmed).
    pub answer: Range<usize>,
}

/// Every menu line of `text`, in order. Linear: only lines with an arrow are tried.
pub fn find_menus(text: &str) -> Vec<Menu> {
    static MENU: OnceLock<Regex> = OnceLock::new();
    let re = MENU.get_or_init(|| {
        Regex::new(
            r"^[ \t]*[^:/\n]{1,40}?[:=][ \t]*([^\n]{0,200}?/[^\n]{0,200}?)[ \t]*(?:-{1,2}>|=>|→|⇒)[ \t]*(\S[^\n]{0,200}?)[ \t\r]*$",
        )
        .expect("valid regex")
    });
    let mut out = Vec::new();
    let mut line_start = 0;
    for line in text.split_inclusive('\n') {
        let body = line.trim_end_matches('\n');
        let has_arrow = body.contains("->") || body.contains("=>") || body.contains('→');
        if has_arrow && body.len() <= 600 {
            if let Some(c) = re.captures(body) {
                let worded = c
                    .get(1)
                    .is_some_and(|o| o.as_str().bytes().any(|b| b.is_ascii_alphabetic()));
                if let (Some(o), Some(a), true) = (c.get(1), c.get(2), worded) {
                    out.push(Menu {
                        line_start,
                        options: line_start + o.start()..line_start + a.start(),
                        answer: line_start + a.start()..line_start + a.end(),
                    });
                }
            }
        }
        line_start += line.len();
    }
    out
}

/// The menu whose line holds `offset`, if any.
pub fn menu_at(menus: &[Menu], offset: usize) -> Option<&Menu> {
    let i = menus.partition_point(|m| m.answer.end < offset);
    menus
        .get(i)
        .filter(|m| m.line_start <= offset && offset <= m.answer.end)
}

/// What an answer says of the label's sign, for answers that are not themselves a finding
/// term: `Some(true)` present, `Some(false)` absent, `None` nothing certain.
pub fn yes_no(answer: &str) -> Option<bool> {
    let a = answer
        .trim()
        .trim_end_matches(['.', ';', ','])
        .to_ascii_lowercase();
    const NO: &[&str] = &[
        "n",
        "no",
        "none",
        "nil",
        "neg",
        "negative",
        "absent",
        "not present",
        "not raised",
        "not elevated",
        "normal",
        "nad",
        "-",
        "0",
    ];
    const YES: &[&str] = &[
        "y", "yes", "present", "positive", "pos", "+", "raised", "elevated",
    ];
    if NO.contains(&a.as_str()) {
        Some(false)
    } else if YES.contains(&a.as_str()) {
        Some(true)
    } else {
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn options_and_answer_are_split_at_the_arrow() {
        let t = "Exam\n  JVP: raised / not raised / not seen  ->  raised\nChest clear\n";
        let m = find_menus(t);
        assert_eq!(m.len(), 1);
        // The options run from after the colon up to the answer, arrow included.
        assert_eq!(
            &t[m[0].options.clone()],
            "raised / not raised / not seen  ->  "
        );
        assert_eq!(&t[m[0].answer.clone()], "raised");
        assert!(menu_at(&m, t.find("JVP").unwrap()).is_some());
        assert!(menu_at(&m, t.find("Chest").unwrap()).is_none());
        assert!(menu_at(&m, t.find("Exam").unwrap()).is_none());
    }

    #[test]
    fn a_line_without_options_is_no_menu() {
        // A switch written with an arrow is not a pick-list: no slash before the arrow.
        assert!(find_menus("Plan: furosemide 40mg IV BD -> 40mg PO BD\n").is_empty());
        assert!(find_menus("Cr trending up 1.3 -> 1.8\n").is_empty());
        // Numbers on both sides are a change of value, not options.
        assert!(find_menus("BP: 120/80 -> 110/70\n").is_empty());
    }

    #[test]
    fn yes_and_no_answers() {
        assert_eq!(yes_no("N"), Some(false));
        assert_eq!(yes_no(" Y "), Some(true));
        assert_eq!(yes_no("raised"), Some(true));
        assert_eq!(yes_no("shin"), None);
    }
}
