//! Properties that hold for every input: extraction never panics, and every span slices the
//! source to exactly the item's text.

use proptest::prelude::*;
use tidemark::config::ExtractOptions;
use tidemark::extract::extract;

fn check_spans(text: &str) {
    let e = extract(text, &ExtractOptions::default());
    for m in &e.measurements {
        assert_eq!(&text[m.span.range()], m.text, "measurement span");
    }
    for f in &e.findings {
        assert_eq!(&text[f.span.range()], f.text, "finding span");
    }
    for s in &e.statements {
        assert_eq!(&text[s.span.range()], s.text, "statement span");
    }
    for s in &e.sections {
        assert!(
            text.get(s.span.range()).is_some(),
            "section span on char boundaries"
        );
    }
}

/// Fragments of note language, so that random strings exercise the grammar and the
/// context rules rather than only the scanner.
fn fragment() -> impl Strategy<Value = String> {
    prop::sample::select(vec![
        "BP ",
        "98/60",
        " HR ",
        "112",
        " wt ",
        "82.4",
        "kg",
        " lb",
        " (yesterday ",
        ")",
        "->",
        " no ",
        "?",
        "JVP ",
        "+4cm",
        " to earlobes",
        " creps",
        " oedema ",
        "2+",
        " to knees",
        "\n",
        "\r\n",
        "\t",
        ": ",
        ", ",
        ". ",
        "°C",
        "µmol/L",
        " Cr ",
        "1.7",
        " EF ",
        "35-40%",
        " if ",
        " mother ",
        " PMH: ",
        "Plan:",
        "01/06/2026",
        " 12/06 ",
        "😀",
        "é",
        "—",
        "(",
        "[",
        " st ",
        " 11",
        " lbs",
        " net ",
        "-1.4 L",
        " I/O ",
        "1.2L/2.6L",
        "NYHA ",
        "III",
        " T ",
        "99999999999999999999",
        " sats ",
        "91%",
        " on 2L",
        " GCS ",
        "13",
        " CRT ",
        "4s",
    ])
    .prop_map(str::to_string)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, .. ProptestConfig::default() })]

    #[test]
    fn spans_slice_the_source_on_note_like_text(parts in prop::collection::vec(fragment(), 0..40)) {
        check_spans(&parts.concat());
    }

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,300}") {
        check_spans(&text);
    }

    #[test]
    fn arbitrary_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..400)) {
        let text = String::from_utf8_lossy(&bytes);
        check_spans(&text);
    }
}

#[test]
fn hostile_shapes_do_not_panic() {
    let long_number = format!("Wt {} kg", "9".repeat(400));
    let brackets = format!("Cr 141 {}", "(".repeat(5000));
    let negations = "no orthopnoea, ".repeat(2000);
    let one_line = "BP 120/80 HR 80 ".repeat(5000);
    for t in [
        long_number.as_str(),
        brackets.as_str(),
        negations.as_str(),
        one_line.as_str(),
        "",
        "\u{0}",
    ] {
        check_spans(t);
    }
}
