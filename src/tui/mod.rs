//! The terminal UI: the only module that names ratatui and crossterm.
//!
//! The loop sleeps: it blocks on the next key (read by a thread) with a timeout to the next
//! clock second, and draws only when something changed (a key, a resize, the clock). The
//! terminal is restored on exit, on error (a guard) and on panic (ratatui's hook).

pub mod view;

use std::sync::mpsc::{self, RecvTimeoutError};
use std::time::Duration;

use chrono::{DateTime, Utc};
use ratatui::crossterm::event::{self, Event, KeyCode, KeyEvent, KeyEventKind, KeyModifiers};
use uuid::Uuid;

use crate::app::review::load_coverage;
use crate::app::ui::{AppState, Done, Effect, Key, Snapshot, radio_of};
use crate::domain::ContactId;
use crate::domain::coverage::CoverageConfig;
use crate::domain::plan::{PlanConfig, make_plan};
use crate::store::{ContactQuery, Logbook, Note, StationProfile, StoreError};

/// How many recent contacts the log screen keeps.
const RECENT: usize = 200;

/// Restores the terminal when dropped (also after an early `?` return).
struct Restore;

impl Drop for Restore {
    fn drop(&mut self) {
        ratatui::restore();
    }
}

/// Reads what the UI shows from the logbook.
pub fn snapshot(book: &Logbook, now: DateTime<Utc>) -> Result<Snapshot, StoreError> {
    let drill = book.current_drill()?;
    let station = book.current_station()?;
    let locator = match &station {
        Some(p) => book.station_locator_at(&p.call, now)?,
        None => None,
    };
    let q = ContactQuery {
        drill: drill.clone(),
        ..ContactQuery::default()
    };
    let (recent, _) = book.page(&q, RECENT, None)?;
    let (newest, _) = book.page(&ContactQuery::default(), 1, None)?;
    Ok(Snapshot {
        channels: match &drill {
            Some(d) => book.channels(d)?,
            None => Vec::new(),
        },
        schedule: match &drill {
            Some(d) => book.schedule(d)?,
            None => Vec::new(),
        },
        count: book.count(&q)?,
        drill,
        station,
        locator,
        roster: book.roster()?,
        recent: recent.into_iter().map(|s| s.contact).collect(),
        newest: newest.first().map(|s| s.contact.start),
        last_radio: newest.first().map(|s| radio_of(&s.contact)),
    })
}

/// Runs one effect against the logbook.
pub fn run_effect(book: &mut Logbook, e: Effect, now: DateTime<Utc>) -> Done {
    let fail = |e: StoreError| Done::Failed(e.to_string());
    match e {
        Effect::Add {
            contact,
            from_entry,
        } => match book.add_contact(&contact, 10) {
            Ok(d) => Done::Added {
                contact,
                duplicates: d.len(),
                from_entry,
            },
            Err(e) => fail(e),
        },
        Effect::Edit { contact, reason } => match book.edit_contact(&contact, &reason) {
            Ok(()) => Done::Edited(contact.id),
            Err(e) => fail(e),
        },
        Effect::Delete { id, reason } => match book.delete_contact(id, &reason) {
            Ok(()) => Done::Deleted(id),
            Err(e) => fail(e),
        },
        Effect::Note { text, band, at } => {
            let station = match book.current_station() {
                Ok(Some(p)) => p.call,
                Ok(None) => return Done::Failed("no own station yet".into()),
                Err(e) => return fail(e),
            };
            let drill = book.current_drill().ok().flatten();
            match book.add_note(&Note {
                id: Uuid::new_v4(),
                drill,
                at,
                band,
                station,
                text,
            }) {
                Ok(()) => Done::Noted,
                Err(e) => fail(e),
            }
        }
        Effect::Reload => match snapshot(book, now) {
            Ok(s) => Done::Loaded(Box::new(s)),
            Err(e) => fail(e),
        },
        Effect::LoadReview => review(book),
        Effect::SetStation { call, locator, at } => {
            let p = StationProfile {
                call: call.clone(),
                operator: None,
                usual_power: None,
                antenna: None,
                rig: None,
            };
            match book.set_station(&p, Some((locator, at))) {
                Ok(()) => Done::StationSet(call, locator),
                Err(e) => fail(e),
            }
        }
        Effect::SaveRosterOrder(calls) => match book.roster_reorder(&calls) {
            Ok(()) => Done::Noted,
            Err(e) => fail(e),
        },
    }
}

/// Turns a crossterm key into the UI's key.
pub fn key_of(k: KeyEvent) -> Option<Key> {
    let ctrl = k.modifiers.contains(KeyModifiers::CONTROL);
    Some(match k.code {
        KeyCode::Char(c) if ctrl => Key::Ctrl(c.to_ascii_lowercase()),
        KeyCode::Char(c) => Key::Char(c),
        KeyCode::Enter => Key::Enter,
        KeyCode::Esc => Key::Esc,
        KeyCode::Tab => Key::Tab,
        KeyCode::BackTab => Key::BackTab,
        KeyCode::Up => Key::Up,
        KeyCode::Down => Key::Down,
        KeyCode::Left => Key::Left,
        KeyCode::Right => Key::Right,
        KeyCode::Backspace => Key::Backspace,
        KeyCode::Delete => Key::Delete,
        KeyCode::Home => Key::Home,
        KeyCode::End => Key::End,
        KeyCode::PageUp => Key::PageUp,
        KeyCode::PageDown => Key::PageDown,
        KeyCode::F(n) => Key::F(n),
        _ => return None,
    })
}

/// Whether colour is wanted: not under `NO_COLOR` (any value).
pub fn theme() -> view::Theme {
    view::Theme {
        color: std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty()),
    }
}

/// What wakes the loop.
enum Msg {
    Input(Event),
    /// Coverage and plan, computed in the background.
    Review(Done),
}

/// Computes coverage in a thread with its own connection, so the review is ready before it is
/// asked for and a large logbook never blocks typing. Requests that pile up are merged.
fn review_worker(path: std::path::PathBuf, tx: mpsc::Sender<Msg>) -> mpsc::Sender<()> {
    let (req_tx, req_rx) = mpsc::channel::<()>();
    std::thread::spawn(move || {
        let Ok(book) = Logbook::open(&path) else {
            return;
        };
        while req_rx.recv().is_ok() {
            while req_rx.try_recv().is_ok() {}
            let d = review(&book);
            if tx.send(Msg::Review(d)).is_err() {
                break;
            }
        }
    });
    req_tx
}

/// Coverage and plan of the drill in use.
fn review(book: &Logbook) -> Done {
    let drill = book.current_drill().ok().flatten();
    match load_coverage(book, drill.as_deref(), CoverageConfig::default()) {
        Ok(c) => {
            let p = make_plan(&c, &PlanConfig::default());
            Done::Review(Box::new((c, p)))
        }
        Err(e) => Done::Failed(e.to_string()),
    }
}

/// Runs the UI on a logbook until the operator quits.
pub fn run(mut book: Logbook, start_screen: Option<crate::app::ui::Screen>) -> anyhow::Result<()> {
    let data = snapshot(&book, Utc::now())?;
    let mut state = AppState::new(data);
    let theme = theme();
    let mut terminal = ratatui::try_init()?;
    let _restore = Restore;
    // Keys come from a thread that blocks in `event::read`.
    let (tx, rx) = mpsc::channel();
    let keys = tx.clone();
    std::thread::spawn(move || {
        while let Ok(ev) = event::read() {
            if keys.send(Msg::Input(ev)).is_err() {
                break;
            }
        }
    });
    let worker = book
        .path()
        .map(|p| review_worker(p.to_path_buf(), tx.clone()));
    if let Some(w) = &worker {
        let _ = w.send(());
    }
    let mut new_id = || ContactId(Uuid::new_v4());
    // Runs effects; a review request goes to the worker when there is one.
    let run_all = |state: &mut AppState, book: &mut Logbook, mut effects: Vec<Effect>| -> bool {
        let mut redraw = false;
        while !effects.is_empty() {
            let e = effects.remove(0);
            let changes = matches!(
                e,
                Effect::Add { .. } | Effect::Edit { .. } | Effect::Delete { .. }
            );
            if let (Effect::LoadReview, Some(w)) = (&e, &worker) {
                let _ = w.send(());
                continue;
            }
            let d = run_effect(book, e, Utc::now());
            if changes
                && !matches!(d, Done::Failed(_))
                && let Some(w) = &worker
            {
                let _ = w.send(());
            }
            let more = state.done(d);
            redraw |= more.redraw;
            effects.extend(more.effects);
        }
        redraw
    };
    if let Some(s) = start_screen {
        let key = match s {
            crate::app::ui::Screen::Review => Key::Ctrl('v'),
            crate::app::ui::Screen::Map => Key::Ctrl('g'),
            crate::app::ui::Screen::RollCall => Key::Ctrl('r'),
            crate::app::ui::Screen::Log => Key::Ctrl('l'),
        };
        let u = state.key(key, Utc::now(), &mut new_id);
        run_all(&mut state, &mut book, u.effects);
    }
    let mut dirty = true;
    let mut last_second = Utc::now().timestamp();
    while !state.quit {
        if dirty {
            let now = Utc::now();
            terminal.draw(|f| view::draw(f, &state, now, theme))?;
            last_second = now.timestamp();
            dirty = false;
        }
        // Sleep until the next clock second, unless a key (or a result) comes first.
        let now = Utc::now();
        let to_next = 1000 - u64::from(now.timestamp_subsec_millis()).min(999);
        match rx.recv_timeout(Duration::from_millis(to_next)) {
            Ok(Msg::Input(Event::Key(k))) if k.kind != KeyEventKind::Release => {
                let Some(key) = key_of(k) else { continue };
                let u = state.key(key, Utc::now(), &mut new_id);
                dirty |= u.redraw;
                dirty |= run_all(&mut state, &mut book, u.effects);
            }
            Ok(Msg::Input(Event::Resize(..))) => dirty = true,
            Ok(Msg::Input(_)) => {}
            Ok(Msg::Review(d)) => {
                let u = state.done(d);
                dirty |= u.redraw;
            }
            Err(RecvTimeoutError::Timeout) => dirty |= Utc::now().timestamp() != last_second,
            Err(RecvTimeoutError::Disconnected) => break,
        }
    }
    Ok(())
}
