//! The HTML handover page rendered in a real headless browser (Debian's chromium, which
//! `.ci/run` installs): it loads with no console message (so nothing was blocked by its
//! content security policy and nothing failed), the browser's own DOM holds the charts and
//! no script element, and it prints to a PDF.
//!
//! The browser is `TIDEMARK_CHROMIUM` or `/usr/bin/chromium` or `chromium` on the PATH.
//! Without one the test fails, unless `TIDEMARK_SKIP_BROWSER=1` says to skip it.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

use tidemark::handover::{self, patients::Matcher};

fn chromium() -> Option<PathBuf> {
    if let Some(p) = std::env::var_os("TIDEMARK_CHROMIUM") {
        return Some(PathBuf::from(p));
    }
    let fixed = Path::new("/usr/bin/chromium");
    if fixed.exists() {
        return Some(fixed.to_path_buf());
    }
    std::env::var_os("PATH").and_then(|paths| {
        std::env::split_paths(&paths)
            .map(|d| d.join("chromium"))
            .find(|p| p.exists())
    })
}

fn run(browser: &Path, profile: &Path, args: &[String]) -> (String, String) {
    let out = Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-dev-shm-usage",
            "--no-first-run",
            "--disable-extensions",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .output()
        .expect("browser runs");
    (
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn html_sheet_renders_in_a_headless_browser() {
    let Some(browser) = chromium() else {
        if std::env::var_os("TIDEMARK_SKIP_BROWSER").is_some() {
            eprintln!("skipped: no chromium and TIDEMARK_SKIP_BROWSER is set");
            return;
        }
        panic!("no chromium found: install Debian's chromium (.ci/run does) or set TIDEMARK_SKIP_BROWSER=1");
    };
    let sheet = handover::build_sheet(&common::ward(), &Matcher::default());
    let mut html = Vec::new();
    handover::html::write(&mut html, &sheet).expect("render");

    let dir = std::env::temp_dir().join(format!("tidemark-browser-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let page = dir.join("handover.html");
    std::fs::write(&page, &html).expect("write page");
    let url = format!("file://{}", page.display());

    let (dom, log) = run(
        &browser,
        &dir.join("profile-dom"),
        &["--dump-dom".into(), url.clone()],
    );
    let console: Vec<&str> = log.lines().filter(|l| l.contains(":CONSOLE")).collect();
    assert!(console.is_empty(), "console messages: {console:#?}");
    assert!(
        dom.contains("<section class=\"card\">"),
        "no cards in {dom}"
    );
    // Charts as the browser parsed them: two for bed 5, one for bed 9.
    assert_eq!(dom.matches("<svg").count(), 3, "{dom}");
    assert!(dom.contains("<polyline"));
    assert!(dom.contains("class=\"bar negative\""));
    // The injected script is text, not an element.
    assert!(!dom.to_lowercase().contains("<script"));
    assert!(dom.contains("&lt;script&gt;alert('x')&lt;/script&gt;"));

    let pdf = dir.join("handover.pdf");
    let (_, log) = run(
        &browser,
        &dir.join("profile-pdf"),
        &[
            format!("--print-to-pdf={}", pdf.display()),
            "--no-pdf-header-footer".into(),
            url,
        ],
    );
    let bytes = std::fs::read(&pdf).unwrap_or_else(|e| panic!("no PDF ({e}); log: {log}"));
    assert!(bytes.starts_with(b"%PDF"), "not a PDF");
    assert!(
        bytes.len() > 2000,
        "PDF suspiciously small: {} bytes",
        bytes.len()
    );
    let _ = std::fs::remove_dir_all(&dir);
}
