//! The terminal UI on a 1,000,000-contact logbook: first frame, key press to frame while
//! typing, and switching to the coverage view; resident memory. Drawn on ratatui's TestBackend
//! at 80×24 (the same drawing code as on a terminal, without the terminal's own output time).
//!
//! Run: `cargo bench --bench tui`. Targets: typing < 10 ms, coverage view < 200 ms, first
//! frame < 150 ms, resident memory < 60 MB. The idle CPU is measured by scripts/idle-cpu.sh.

#[path = "common/mod.rs"]
mod common;

use std::time::Instant;

use chrono::Utc;
use nearsky::app::ui::{AppState, Key};
use nearsky::domain::ContactId;
use nearsky::tui::{run_effect, snapshot, view};
use ratatui::Terminal;
use ratatui::backend::TestBackend;

fn main() {
    let dir = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-tui");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("million.db");
    {
        let mut book = common::build(&path, 1_000_000, 20);
        let p = nearsky::store::StationProfile {
            call: nearsky::domain::Callsign::parse("Q0AA").unwrap(),
            operator: None,
            usual_power: None,
            antenna: None,
            rig: None,
        };
        book.set_station(
            &p,
            nearsky::domain::Locator::parse("JN17ga")
                .ok()
                .map(|l| (l, Utc::now())),
        )
        .unwrap();
    }
    let rss_before = common::rss_mb();
    let theme = view::Theme { color: true };
    let t = Instant::now();
    let mut book = nearsky::store::Logbook::open(&path).unwrap();
    let mut state = AppState::new(snapshot(&book, Utc::now()).unwrap());
    let mut term = Terminal::new(TestBackend::new(80, 24)).unwrap();
    term.draw(|f| view::draw(f, &state, Utc::now(), theme))
        .unwrap();
    let first = t.elapsed();
    let rss_first = common::rss_mb();
    let mut id = || ContactId(uuid::Uuid::new_v4());
    let mut typing = Vec::new();
    for c in "Q4SHL".chars() {
        let t = Instant::now();
        let u = state.key(Key::Char(c), Utc::now(), &mut id);
        if u.redraw {
            term.draw(|f| view::draw(f, &state, Utc::now(), theme))
                .unwrap();
        }
        typing.push(t.elapsed());
    }
    typing.sort();
    // The UI computes coverage in a background thread right after start (and after each
    // save); time that, then the switch itself once it is there.
    let t = Instant::now();
    let d = run_effect(&mut book, nearsky::app::ui::Effect::LoadReview, Utc::now());
    let background = t.elapsed();
    let rss_review = common::rss_mb();
    state.done(d);
    let t = Instant::now();
    let u = state.key(Key::Ctrl('v'), Utc::now(), &mut id);
    assert!(u.effects.is_empty(), "coverage was ready");
    term.draw(|f| view::draw(f, &state, Utc::now(), theme))
        .unwrap();
    let review = t.elapsed();
    println!("1,000,000-contact logbook, 80x24:");
    println!(
        "  first frame (open, load, draw):   {:8.1} ms  (target < 150 ms)",
        first.as_secs_f64() * 1e3
    );
    println!(
        "  key press to frame while typing:  {:8.3} ms median, {:.3} ms worst  (target < 10 ms)",
        typing[typing.len() / 2].as_secs_f64() * 1e3,
        typing[typing.len() - 1].as_secs_f64() * 1e3
    );
    println!(
        "  coverage computed in the background: {:6.1} ms (typing stays live meanwhile)",
        background.as_secs_f64() * 1e3
    );
    println!(
        "  switch to the coverage view:      {:8.1} ms  (target < 200 ms)",
        review.as_secs_f64() * 1e3
    );
    println!(
        "  resident memory: {rss_before:.0} MB after building the logbook, {rss_first:.0} MB at the first frame, {rss_review:.0} MB after computing coverage, {:.0} MB at the end (target < 60 MB)",
        common::rss_mb()
    );
    let _ = std::fs::remove_dir_all(&dir);
}
