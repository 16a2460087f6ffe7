//! The after-action report: a self-contained HTML page with every section, parsed with an HTML
//! parser (the `tl` crate) and loaded in a real browser (headless Chromium) when one is there.

mod common;

use std::path::Path;
use std::process::Command;

use common::nearsky;

fn demo_report(dir: &Path) -> (std::path::PathBuf, String) {
    let db = dir.join("demo.db");
    let d = db.to_str().unwrap();
    assert_eq!(nearsky(&["--db", d, "demo", "--no-ui"]).0, 0);
    let html = dir.join("report.html");
    let (code, out, err) = nearsky(&["--db", d, "report", "-o", html.to_str().unwrap()]);
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("wrote the report"));
    let (code, _, err) = nearsky(&["--db", d, "report", "-o", html.to_str().unwrap()]);
    assert_eq!(
        code, 2,
        "an existing report is not overwritten without --force"
    );
    assert!(err.contains("--force"));
    let text = std::fs::read_to_string(&html).unwrap();
    (html, text)
}

#[test]
fn the_report_parses_and_holds_every_section() {
    let dir = tempfile::tempdir().unwrap();
    let (_, text) = demo_report(dir.path());
    let dom = tl::parse(&text, tl::ParserOptions::default()).unwrap();
    let parser = dom.parser();
    for id in [
        "title",
        "summary",
        "heatmap",
        "map",
        "links",
        "evidence",
        "plan",
        "contradictions",
        "cautions",
    ] {
        assert!(dom.get_element_by_id(id).is_some(), "section #{id}");
    }
    let count = |sel: &str| dom.query_selector(sel).map_or(0, |q| q.count());
    assert_eq!(count("svg"), 3, "a map per band");
    assert!(count("table") >= 5, "heatmap, three link tables, plan");
    let heat = dom
        .query_selector("table.heat")
        .unwrap()
        .next()
        .unwrap()
        .get(parser)
        .unwrap()
        .inner_text(parser);
    assert!(heat.contains("80m") && heat.contains("40m"), "{heat}");
    let plan = dom
        .get_element_by_id("plan")
        .unwrap()
        .get(parser)
        .unwrap()
        .inner_text(parser);
    assert!(
        plan.contains("80m") && plan.contains("40m") && plan.contains("Wilson"),
        "{plan}"
    );
    let cautions = dom
        .get_element_by_id("cautions")
        .unwrap()
        .get(parser)
        .unwrap()
        .inner_text(parser);
    assert!(
        cautions.contains("power line")
            && cautions.contains("60 m")
            && cautions.contains("licence")
    );
    // Self-contained: no scripts, no external stylesheets, images or fonts.
    assert_eq!(count("script"), 0);
    assert_eq!(count("link"), 0);
    assert_eq!(count("img"), 0);
    let without_ns = text.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
    assert!(
        !without_ns.contains("http://") && !without_ns.contains("https://"),
        "no network references"
    );
    assert!(text.contains("@media print"), "print CSS");
}

/// Headless Chromium (Debian's `chromium`; `.ci/run` installs it) loads the page: the DOM after
/// loading holds the sections, and a screenshot is written as a PNG.
#[test]
fn the_report_renders_in_a_real_browser() {
    let Some(chromium) = ["chromium", "chromium-browser"].into_iter().find(|c| {
        Command::new(c)
            .arg("--version")
            .output()
            .is_ok_and(|o| o.status.success())
    }) else {
        eprintln!("no chromium: skipping the browser check (.ci/run installs it)");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let (html, _) = demo_report(dir.path());
    let url = format!("file://{}", html.display());
    let profile = dir.path().join("profile");
    let base = [
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
    ];
    let prof = format!("--user-data-dir={}", profile.display());
    let dom = Command::new(chromium)
        .args(base)
        .arg(&prof)
        .arg("--dump-dom")
        .arg(&url)
        .output()
        .unwrap();
    let dom = String::from_utf8_lossy(&dom.stdout);
    for id in [
        "summary",
        "heatmap",
        "map",
        "plan",
        "contradictions",
        "cautions",
    ] {
        assert!(
            dom.contains(&format!("id=\"{id}\"")),
            "the browser's DOM has #{id}"
        );
    }
    assert!(dom.contains("<svg"), "maps rendered as SVG");
    let png = dir.path().join("report.png");
    let shot = Command::new(chromium)
        .args(base)
        .arg(&prof)
        .arg("--window-size=1200,2000")
        .arg(format!("--screenshot={}", png.display()))
        .arg(&url)
        .output()
        .unwrap();
    assert!(
        shot.status.success(),
        "{}",
        String::from_utf8_lossy(&shot.stderr)
    );
    let bytes = std::fs::read(&png).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert!(
        bytes.len() > 50_000,
        "a page with content, not a blank one: {} bytes",
        bytes.len()
    );
}
