//! The terminal UI: every screen drawn on ratatui's TestBackend at 80×24 and at a large size,
//! escape sequences from imported logs kept off the terminal, and the real binary driven in
//! tmux (type a contact, quit, find it; kill it with SIGKILL and find every committed one).

use std::path::Path;
use std::process::Command;
use std::time::Duration;

use chrono::{TimeZone, Utc};
use nearsky::app::ui::{AppState, Effect, Key, Message, ReviewTab};
use nearsky::domain::ContactId;
use nearsky::store::{ContactQuery, Logbook};
use nearsky::tui::{run_effect, snapshot, view};
use ratatui::Terminal;
use ratatui::backend::TestBackend;

fn demo_state() -> (Logbook, AppState) {
    let mut book = Logbook::open_in_memory().unwrap();
    nearsky::demo::install(&mut book, nearsky::demo::SEED).unwrap();
    let now = Utc.with_ymd_and_hms(2025, 10, 5, 9, 0, 0).unwrap();
    let s = AppState::new(snapshot(&book, now).unwrap());
    (book, s)
}

fn now() -> chrono::DateTime<Utc> {
    Utc.with_ymd_and_hms(2025, 10, 5, 9, 0, 0).unwrap()
}

fn render(s: &AppState, w: u16, h: u16, color: bool) -> String {
    let mut t = Terminal::new(TestBackend::new(w, h)).unwrap();
    t.draw(|f| view::draw(f, s, now(), view::Theme { color }))
        .unwrap();
    let buf = t.backend().buffer().clone();
    let mut out = String::new();
    for y in 0..h {
        for x in 0..w {
            out.push_str(buf[(x, y)].symbol());
        }
        out.push('\n');
    }
    out
}

fn press(book: &mut Logbook, s: &mut AppState, k: Key) {
    let mut id = || ContactId(uuid::Uuid::new_v4());
    let mut u = s.key(k, now(), &mut id);
    while !u.effects.is_empty() {
        let e: Effect = u.effects.remove(0);
        let d = run_effect(book, e, now());
        let more = s.done(d);
        u.effects.extend(more.effects);
    }
}

#[test]
fn every_screen_draws_at_80x24_and_at_a_large_size() {
    let (mut book, mut s) = demo_state();
    for (w, h) in [(80, 24), (160, 50)] {
        let log = render(&s, w, h, false);
        assert!(
            log.contains("New contact") && log.contains("Recent"),
            "{log}"
        );
        assert!(
            log.contains("Q3NET JN17ga") && log.contains("UTC"),
            "status line: {log}"
        );
        assert!(log.contains("Loire flood"), "drill in the status line");
    }
    press(&mut book, &mut s, Key::Ctrl('r'));
    let roll = render(&s, 80, 24, false);
    assert!(
        roll.contains("Roll call on 80m (11 stations)") && roll.contains("Shelter 1"),
        "{roll}"
    );
    press(&mut book, &mut s, Key::Ctrl('v'));
    assert!(s.review.is_some());
    let hours = render(&s, 80, 24, false);
    assert!(
        hours.contains("80m") && hours.contains("40m") && hours.contains("# >=80%"),
        "{hours}"
    );
    for tab in ["links", "rings", "evidence", "next plan"] {
        press(&mut book, &mut s, Key::Right);
        for (w, h) in [(80, 24), (160, 50)] {
            let out = render(&s, w, h, w > 100);
            assert!(
                out.contains(&format!("Review: {tab}")),
                "{tab} at {w}x{h}: {out}"
            );
        }
    }
    let plan = render(&s, 160, 50, false);
    assert!(plan.contains("primary") && plan.contains("80m"), "{plan}");
    press(&mut book, &mut s, Key::Ctrl('g'));
    let map = render(&s, 80, 24, false);
    assert!(
        map.contains("Map: 80m at 12:00 UTC") && map.contains("Q2SCH") && map.contains('@'),
        "{map}"
    );
    // Every call on the map is whole: labels do not run into each other.
    let calls: Vec<String> = book
        .roster()
        .unwrap()
        .iter()
        .map(|e| e.call.to_string())
        .chain(["Q3NET".to_string()])
        .collect();
    let chars: Vec<char> = map.chars().collect();
    let mut seen = 0;
    for i in 0..chars.len().saturating_sub(1) {
        if chars[i] == 'Q' && chars[i + 1].is_ascii_digit() {
            let token: String = chars[i..]
                .iter()
                .take_while(|c| c.is_ascii_uppercase() || c.is_ascii_digit())
                .collect();
            assert!(calls.contains(&token), "`{token}` on the map: {map}");
            seen += 1;
        }
    }
    assert!(seen >= 8, "{map}");
    press(&mut book, &mut s, Key::F(1));
    let help = render(&s, 80, 24, false);
    assert!(
        help.contains("Cautions") && help.contains("60 m") && help.contains("power lines"),
        "{help}"
    );
    // Small terminals do not panic.
    render(&s, 40, 12, false);
}

#[test]
fn the_heatmap_reads_without_colour() {
    let (mut book, mut s) = demo_state();
    press(&mut book, &mut s, Key::Ctrl('v'));
    let out = render(&s, 80, 24, false);
    // Each band row carries glyphs and the per cent worked under them.
    let row80 = out.lines().find(|l| l.contains("│80m")).unwrap();
    assert!(row80.contains('#'), "{row80}");
    let numbers = out
        .lines()
        .skip_while(|l| !l.contains("│80m"))
        .nth(1)
        .unwrap();
    assert!(
        numbers.chars().filter(|c| c.is_ascii_digit()).count() > 30,
        "{numbers}"
    );
}

/// The last line of a rendered screen (the key hints), without trailing blanks.
fn hints_line(out: &str) -> String {
    out.lines().last().unwrap_or("").trim_end().to_string()
}

#[test]
fn nothing_is_cut_off_at_80_columns() {
    let (mut book, mut s) = demo_state();
    // The key hints of every screen fit: the same at 80 columns as at 160.
    for k in [
        Key::Ctrl('l'),
        Key::Ctrl('r'),
        Key::Ctrl('v'),
        Key::Ctrl('g'),
    ] {
        press(&mut book, &mut s, k);
        let (narrow, wide) = (render(&s, 80, 24, false), render(&s, 160, 24, false));
        assert_eq!(hints_line(&narrow), hints_line(&wide), "{narrow}");
        assert!(!hints_line(&narrow).is_empty());
    }
    press(&mut book, &mut s, Key::Ctrl('l'));
    // The keys that switch screens are on the screen, not only in the help (the tab line,
    // which a clock warning would cover; `now` here is before the release date).
    s.clock_set_by_hand = true;
    let log = render(&s, 80, 24, false);
    assert!(
        log.contains("Roll call ^R") && log.contains("Map ^G"),
        "{log}"
    );
    // A message longer than a line takes two rows instead of losing its end.
    let long = "time `2026-12-02 01:0525:99` is not a UTC time (examples: 2026-12-01 14:05, 2026-12-01T14:05:00Z, 14:05, 1405)";
    s.message = Some(Message::Error(long.into()));
    let out = render(&s, 80, 24, false);
    let rows: Vec<&str> = out.lines().collect();
    let shown = format!("{} {}", rows[21].trim_end(), rows[22].trim_end());
    assert_eq!(shown, format!("error: {long}"), "{out}");
    assert!(
        rows[20].starts_with('└'),
        "the body ends above the message: {out}"
    );
    // The longest message the log screen makes: a save with a caution.
    let caution = nearsky::domain::caution::transmit_cautions(
        nearsky::domain::Band::B60m,
        nearsky::domain::Frequency::from_hz(5_330_500).ok(),
        None,
    );
    let long = format!("saved Q4SHL 60m worked — caution: {}", caution[0]);
    s.message = Some(Message::Warning(long.clone()));
    let out = render(&s, 80, 24, false);
    let rows: Vec<&str> = out.lines().collect();
    let border = rows.iter().rposition(|l| l.starts_with('└')).unwrap();
    let shown: Vec<&str> = rows[border + 1..23].iter().map(|l| l.trim()).collect();
    assert_eq!(shown.join(" "), format!("warning: {long}"), "{out}");
}

#[test]
fn the_recent_list_follows_the_pick_and_marks_the_day() {
    let (mut book, mut s) = demo_state();
    let out = render(&s, 80, 24, false);
    assert!(
        out.contains("UTC   call      band   RST"),
        "column header: {out}"
    );
    // The demo's contacts are from today: no date line.
    assert!(!out.contains("── 2025-10-05 ──"), "{out}");
    // A day later, a date line heads them.
    s.clock_offset = chrono::Duration::days(1);
    s.clock_set_by_hand = true;
    let out = render(&s, 80, 24, false);
    assert!(out.contains("── 2025-10-05 ──"), "{out}");
    press(&mut book, &mut s, Key::PageUp);
    for _ in 0..40 {
        press(&mut book, &mut s, Key::Down);
    }
    assert_eq!(s.recent_sel, Some(40));
    let picked = &s.recent[40].contact;
    let want = format!(
        "{} {:<9} {:<4}",
        picked.start.format("%H:%M"),
        picked.call.as_str(),
        picked.band.name()
    );
    let out = render(&s, 80, 24, false);
    assert!(
        out.contains(&want),
        "the picked contact ({want}) is on the screen: {out}"
    );
    assert!(
        !out.contains("── 2025-10-05 ──"),
        "scrolled past the top: {out}"
    );
}

#[test]
fn the_plan_view_wraps_its_evidence_under_its_own_column() {
    let (mut book, mut s) = demo_state();
    press(&mut book, &mut s, Key::Ctrl('v'));
    while s.review_tab != ReviewTab::Plan {
        press(&mut book, &mut s, Key::Right);
    }
    let out = render(&s, 80, 24, false);
    let body: Vec<&str> = out
        .lines()
        .filter_map(|l| l.strip_prefix('│').and_then(|l| l.strip_suffix('│')))
        .collect();
    assert!(body.len() > 5, "{out}");
    let continued = body
        .iter()
        .filter(|l| l.starts_with(&" ".repeat(30)))
        .count();
    assert!(
        continued > 0,
        "long notes go on under the evidence column: {out}"
    );
    for l in &body[1..] {
        let starts_hour = l.len() > 5 && l.as_bytes()[2] == b':';
        assert!(
            starts_hour || l.starts_with(' '),
            "a line neither a bin nor a continuation: `{l}`"
        );
    }
}

#[test]
fn escape_sequences_from_an_imported_log_never_reach_the_terminal() {
    let dir = tempfile::tempdir().unwrap();
    let file = dir.path().join("evil.adi");
    let evil = "\u{1b}[2J\u{1b}]0;owned\u{7}";
    let note = format!("<NOTES:{}>{evil}", evil.len());
    std::fs::write(&file, format!("x<EOH><CALL:5>Q2ABC<QSO_DATE:8>20251005<TIME_ON:4>0850<BAND:3>40m<MODE:3>SSB<STATION_CALLSIGN:5>Q3NET{note}<EOR>")).unwrap();
    let mut book = Logbook::open(&dir.path().join("log.db")).unwrap();
    book.set_station(
        &nearsky::store::StationProfile {
            call: nearsky::domain::Callsign::parse("Q3NET").unwrap(),
            operator: None,
            usual_power: None,
            antenna: None,
            rig: None,
        },
        None,
    )
    .unwrap();
    book.roster_put(&nearsky::store::RosterEntry {
        call: nearsky::domain::Callsign::parse("Q2ABC").unwrap(),
        tactical: format!("Shelter {evil}"),
        locator: None,
        role: String::new(),
    })
    .unwrap();
    let r = nearsky::app::transfer::import_file(&mut book, &file, &Default::default(), &mut |_| {})
        .unwrap();
    assert_eq!(r.imported, 1);
    let mut s = AppState::new(snapshot(&book, now()).unwrap());
    press(&mut book, &mut s, Key::PageUp);
    press(&mut book, &mut s, Key::Char('e'));
    s.entry.focus = 10;
    let out = render(&s, 80, 24, false);
    assert!(
        !out.contains('\u{1b}') && !out.contains('\u{7}'),
        "raw control characters on screen"
    );
    assert!(out.contains("\\u{1b}[2J"), "shown visibly: {out}");
    press(&mut book, &mut s, Key::Esc);
    press(&mut book, &mut s, Key::Ctrl('r'));
    let out = render(&s, 80, 24, false);
    assert!(
        !out.contains('\u{1b}') && out.contains("Shelter \\u{1b}"),
        "{out}"
    );
}

fn tmux() -> bool {
    Command::new("tmux")
        .arg("-V")
        .output()
        .is_ok_and(|o| o.status.success())
}

fn tmux_cmd(args: &[&str]) -> String {
    let o = Command::new("tmux").args(args).output().unwrap();
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn wait_for(session: &str, text: &str) -> String {
    for _ in 0..100 {
        let screen = tmux_cmd(&["capture-pane", "-p", "-t", session]);
        if screen.contains(text) {
            return screen;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    panic!(
        "`{text}` never appeared:\n{}",
        tmux_cmd(&["capture-pane", "-p", "-t", session])
    );
}

fn count(db: &Path) -> u64 {
    Logbook::open(db)
        .unwrap()
        .count(&ContactQuery::default())
        .unwrap()
}

/// The real binary in a real terminal: log a contact by typing, see it, quit, find it on
/// disk; then log more and SIGKILL the process: every committed contact is there.
#[test]
fn the_binary_in_tmux_logs_what_is_typed_and_survives_sigkill() {
    if !tmux() {
        eprintln!("tmux is not installed: skipping (.ci/run installs it)");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("log.db");
    let bin = env!("CARGO_BIN_EXE_nearsky");
    let ok = |args: &[&str]| {
        assert!(
            Command::new(bin)
                .arg("--db")
                .arg(&db)
                .args(args)
                .status()
                .unwrap()
                .success()
        )
    };
    ok(&[
        "station", "set", "--call", "Q3NET", "--grid", "JN17ga", "--power", "20",
    ]);
    ok(&[
        "roster",
        "add",
        "Q4SHL",
        "--name",
        "Shelter 1",
        "--grid",
        "JN17wm",
    ]);
    let session = format!("nearsky-test-{}", std::process::id());
    let cmd = format!("{bin} --db {}", db.display());
    tmux_cmd(&[
        "new-session",
        "-d",
        "-s",
        &session,
        "-x",
        "80",
        "-y",
        "24",
        &cmd,
    ]);
    wait_for(&session, "New contact");
    tmux_cmd(&[
        "send-keys",
        "-t",
        &session,
        "q4shl",
        "Tab",
        "Tab",
        "Tab",
        "7.1",
        "Tab",
        "Tab",
        "LSB",
        "Tab",
        "59",
        "Tab",
        "57",
        "Enter",
    ]);
    let screen = wait_for(&session, "saved Q4SHL 40m worked");
    assert!(screen.contains("Q4SHL     40m  W 59/57"), "{screen}");
    tmux_cmd(&["send-keys", "-t", &session, "C-q"]);
    for _ in 0..50 {
        if !tmux_cmd(&["list-sessions"]).contains(&session) {
            break;
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    assert_eq!(count(&db), 1);
    // Again, then SIGKILL in the middle of the session.
    tmux_cmd(&[
        "new-session",
        "-d",
        "-s",
        &session,
        "-x",
        "80",
        "-y",
        "24",
        &cmd,
    ]);
    wait_for(&session, "New contact");
    for (i, call) in ["Q7HSP", "Q2FIR", "Q5SHL"].iter().enumerate() {
        tmux_cmd(&[
            "send-keys",
            "-t",
            &session,
            call,
            "Tab",
            "Tab",
            "Tab",
            "3.6",
            "C-n",
            "Enter",
        ]);
        wait_for(&session, &format!("saved {call} 80m no contact"));
        assert_eq!(count(&db), 2 + i as u64);
    }
    tmux_cmd(&["send-keys", "-t", &session, "Q9RLY"]);
    let pid = tmux_cmd(&["display-message", "-p", "-t", &session, "#{pane_pid}"]);
    assert!(
        Command::new("kill")
            .args(["-9", pid.trim()])
            .status()
            .unwrap()
            .success()
    );
    std::thread::sleep(Duration::from_millis(300));
    let _ = tmux_cmd(&["kill-session", "-t", &session]);
    let book = Logbook::open(&db).unwrap();
    assert_eq!(book.check().unwrap(), Vec::<String>::new());
    assert_eq!(
        book.count(&ContactQuery::default()).unwrap(),
        4,
        "every committed contact, nothing of the unfinished one"
    );
    let (page, _) = book.page(&ContactQuery::default(), 10, None).unwrap();
    assert!(page.iter().any(|c| c.contact.call.as_str() == "Q4SHL"
        && c.contact.rcvd.map(|r| r.to_string()) == Some("57".into())));
}

#[test]
fn a_new_logbook_asks_for_the_own_station_and_then_logs() {
    let mut book = Logbook::open_in_memory().unwrap();
    let mut s = AppState::new(snapshot(&book, now()).unwrap());
    for c in "Q4SHL".chars() {
        press(&mut book, &mut s, Key::Char(c));
    }
    press(&mut book, &mut s, Key::Enter);
    let out = render(&s, 80, 24, false);
    assert!(out.contains("Own station: call sign and locator"), "{out}");
    for c in "Q3NET JN17ga".chars() {
        press(&mut book, &mut s, Key::Char(c));
    }
    press(&mut book, &mut s, Key::Enter);
    let own = book.current_station().unwrap().unwrap();
    assert_eq!(own.call.as_str(), "Q3NET");
    let out = render(&s, 80, 24, false);
    assert!(out.contains("Q3NET JN17ga"), "status line: {out}");
    // The contact typed before is still in the form; mode and band, then Enter.
    s.entry.values[4] = "40m".into();
    s.entry.values[5] = "SSB".into();
    press(&mut book, &mut s, Key::Enter);
    assert_eq!(count_in(&book), 1, "{:?}", s.message);
    let out = render(&s, 80, 24, false);
    assert!(out.contains("1 contact |"), "{out}");
}

fn count_in(book: &Logbook) -> u64 {
    book.count(&ContactQuery::default()).unwrap()
}

#[test]
fn the_review_includes_what_was_logged_since_it_was_last_opened() {
    let (mut book, mut s) = demo_state();
    press(&mut book, &mut s, Key::Ctrl('v'));
    let before = s.review.as_ref().unwrap().0.observations;
    press(&mut book, &mut s, Key::Ctrl('l'));
    for c in "Q4SHL".chars() {
        press(&mut book, &mut s, Key::Char(c));
    }
    s.entry.values[3] = "7.1".into();
    s.entry.values[4] = "40m".into();
    s.entry.values[5] = "LSB".into();
    press(&mut book, &mut s, Key::Enter);
    assert!(
        matches!(&s.message, Some(Message::Info(m)) if m.starts_with("saved Q4SHL 40m")),
        "{:?}",
        s.message
    );
    press(&mut book, &mut s, Key::Ctrl('v'));
    assert_eq!(s.review.as_ref().unwrap().0.observations, before + 1);
    // Nothing new: switching back and forth keeps the coverage as it is.
    assert_eq!(s.review_changes, s.changes);
}
