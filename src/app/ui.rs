//! The terminal UI's state and its update function: keys in, state changes and effects out.
//! No terminal, no clock, no I/O: the loop in `tui` reads keys and the clock, runs the effects
//! against the logbook, and feeds their results back.

use std::collections::HashMap;

use chrono::{DateTime, Duration, NaiveDate, Timelike, Utc};

use crate::domain::coverage::Coverage;
use crate::domain::geo;
use crate::domain::plan::{Plan, ScheduleSlot};
use crate::domain::{
    Band, Callsign, Contact, ContactForm, ContactId, Field, FormContext, Frequency, Locator, Mode,
    Origin, Outcome, Power, Report, StationSnapshot, parse_utc,
};
use crate::store::{Channel, RosterEntry, StationProfile};

/// The release date of this version: a system clock earlier than this is certainly wrong.
pub const RELEASE_DATE: (i32, u32, u32) = (2026, 12, 1);

/// A key, as the UI understands it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Key {
    Char(char),
    Ctrl(char),
    Enter,
    Esc,
    Tab,
    BackTab,
    Up,
    Down,
    Left,
    Right,
    Backspace,
    Delete,
    Home,
    End,
    PageUp,
    PageDown,
    F(u8),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Screen {
    Log,
    RollCall,
    Review,
    Map,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReviewTab {
    Hours,
    Links,
    Rings,
    Evidence,
    Plan,
}

impl ReviewTab {
    pub const ALL: [ReviewTab; 5] = [
        Self::Hours,
        Self::Links,
        Self::Rings,
        Self::Evidence,
        Self::Plan,
    ];

    pub fn title(self) -> &'static str {
        match self {
            Self::Hours => "band x hour",
            Self::Links => "links",
            Self::Rings => "rings",
            Self::Evidence => "evidence",
            Self::Plan => "next plan",
        }
    }
}

/// The entry form's fields, in screen order.
pub const FIELDS: [(Field, &str); 11] = [
    (Field::Call, "Call"),
    (Field::Locator, "Grid"),
    (Field::Time, "UTC"),
    (Field::Frequency, "MHz"),
    (Field::Band, "Band"),
    (Field::Mode, "Mode"),
    (Field::Sent, "Sent"),
    (Field::Rcvd, "Rcvd"),
    (Field::Power, "My W"),
    (Field::Via, "Via"),
    (Field::Note, "Note"),
];

/// The entry form: what was typed, never lost on a failed check.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry {
    pub values: [String; FIELDS.len()],
    pub focus: usize,
    pub outcome: Outcome,
    /// Fields filled in by nearsky rather than typed (they follow the call as it changes).
    pub auto: [bool; FIELDS.len()],
    /// The contact being corrected (as stored), when editing.
    pub editing: Option<Box<Contact>>,
    /// Per-field problems found while typing.
    pub problems: [Option<String>; FIELDS.len()],
}

impl Default for Entry {
    fn default() -> Self {
        Self {
            values: Default::default(),
            focus: 0,
            outcome: Outcome::Worked,
            auto: [false; FIELDS.len()],
            editing: None,
            problems: Default::default(),
        }
    }
}

impl Entry {
    fn idx(f: Field) -> usize {
        FIELDS.iter().position(|(x, _)| *x == f).unwrap_or(0)
    }

    pub fn get(&self, f: Field) -> &str {
        &self.values[Self::idx(f)]
    }

    fn set_auto(&mut self, f: Field, v: String) {
        let i = Self::idx(f);
        if self.values[i].is_empty() || self.auto[i] {
            self.values[i] = v;
            self.auto[i] = true;
        }
    }

    fn form(&self) -> ContactForm {
        ContactForm {
            call: self.get(Field::Call).to_string(),
            locator: self.get(Field::Locator).to_string(),
            time: self.get(Field::Time).to_string(),
            end_time: String::new(),
            band: self.get(Field::Band).to_string(),
            frequency: self.get(Field::Frequency).to_string(),
            mode: self.get(Field::Mode).to_string(),
            sent: self.get(Field::Sent).to_string(),
            rcvd: self.get(Field::Rcvd).to_string(),
            power: self.get(Field::Power).to_string(),
            other_power: String::new(),
            outcome: self.outcome.key().to_string(),
            via: self.get(Field::Via).to_string(),
            note: self.get(Field::Note).to_string(),
        }
    }

    /// Keeps band and frequency consistent when one of them is typed: a suggested value of
    /// the other follows (or is cleared).
    fn follow_radio(&mut self, typed: Field) {
        let (fi, bi) = (Self::idx(Field::Frequency), Self::idx(Field::Band));
        match typed {
            Field::Frequency => {
                if let Ok(b) = Frequency::parse(&self.values[fi]).and_then(|f| {
                    Band::containing(f).map_err(|_| crate::domain::FrequencyError::Empty)
                }) && (self.auto[bi] || self.values[bi].is_empty())
                {
                    self.values[bi] = b.to_string();
                    self.auto[bi] = true;
                }
            }
            Field::Band if self.auto[fi] => {
                let same = Band::parse(&self.values[bi])
                    .ok()
                    .zip(Frequency::parse(&self.values[fi]).ok())
                    .is_some_and(|(b, f)| b.contains(f));
                if !same {
                    self.values[fi].clear();
                    self.auto[fi] = false;
                }
            }
            _ => {}
        }
    }

    /// Checks the focused field alone, for inline messages.
    fn check_field(&mut self, i: usize) {
        let v = self.values[i].trim();
        let problem = if v.is_empty() {
            None
        } else {
            match FIELDS[i].0 {
                Field::Call | Field::Via => Callsign::parse(v).err().map(|e| e.to_string()),
                Field::Locator => Locator::parse(v).err().map(|e| e.to_string()),
                Field::Frequency => {
                    Frequency::parse(v)
                        .err()
                        .map(|e| e.to_string())
                        .or_else(|| {
                            Frequency::parse(v)
                                .ok()
                                .and_then(|f| Band::containing(f).err())
                                .map(|e| e.to_string())
                        })
                }
                Field::Band => Band::parse(v).err().map(|e| e.to_string()),
                Field::Mode => Mode::parse(v).err().map(|e| e.to_string()),
                Field::Sent | Field::Rcvd => Report::parse(v).err().map(|e| e.to_string()),
                Field::Power => Power::parse(v).err().map(|e| e.to_string()),
                Field::Time => parse_utc(v, NaiveDate::default())
                    .err()
                    .map(|e| e.to_string()),
                _ => None,
            }
        };
        self.problems[i] = problem;
    }
}

/// A line of the recent-contacts list.
#[derive(Debug, Clone, PartialEq)]
pub struct Recent {
    pub contact: Contact,
    pub distance_km: Option<f64>,
    pub bearing_deg: Option<f64>,
}

/// A roll-call line: the station, its distance and bearing, how it did last on the band.
pub type RollLine = (RosterEntry, Option<(f64, Option<f64>)>, Option<Outcome>);

/// A question the UI is asking (typing goes to it until Enter or Esc).
#[derive(Debug, Clone, PartialEq)]
pub enum Prompt {
    /// A propagation note.
    Note(String),
    /// Why a contact is corrected or deleted.
    Reason { action: ReasonFor, text: String },
    /// The UTC time to use for entries when the system clock is wrong.
    SetClock(String),
    /// The report received in a roll call answered "worked".
    Report { roster: usize, text: String },
    /// The own station's call sign and locator, asked for at the first save into a logbook
    /// that has none yet.
    Station(String),
}

#[derive(Debug, Clone, PartialEq)]
pub enum ReasonFor {
    Edit(Box<Contact>),
    Delete(ContactId),
}

/// Something for the loop to do.
#[derive(Debug, Clone, PartialEq)]
pub enum Effect {
    /// Store a new contact (the entry is cleared when it succeeds).
    Add {
        contact: Box<Contact>,
        from_entry: bool,
    },
    Edit {
        contact: Box<Contact>,
        reason: String,
    },
    Delete {
        id: ContactId,
        reason: String,
    },
    Note {
        text: String,
        band: Option<Band>,
        at: DateTime<Utc>,
    },
    /// Reload the recent contacts and counts.
    Reload,
    /// Compute coverage and plan for the review screens.
    LoadReview,
    /// Make this the own station, at `locator` from `at` on.
    SetStation {
        call: Callsign,
        locator: Locator,
        at: DateTime<Utc>,
    },
    SaveRosterOrder(Vec<Callsign>),
}

/// What an effect came to.
#[derive(Debug, Clone, PartialEq)]
pub enum Done {
    Added {
        contact: Box<Contact>,
        duplicates: usize,
        from_entry: bool,
    },
    Edited(ContactId),
    Deleted(ContactId),
    Noted,
    StationSet(Callsign, Locator),
    Failed(String),
    Loaded(Box<Snapshot>),
    Review(Box<(Coverage, Plan)>),
}

/// The band, frequency and mode a contact was made with.
pub fn radio_of(c: &Contact) -> (Band, Option<Frequency>, Mode) {
    (c.band, c.frequency, c.mode.clone())
}

/// What the logbook holds that the UI shows; loaded by the loop.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Snapshot {
    pub drill: Option<String>,
    pub station: Option<StationProfile>,
    pub locator: Option<Locator>,
    pub roster: Vec<RosterEntry>,
    pub channels: Vec<Channel>,
    pub schedule: Vec<ScheduleSlot>,
    pub recent: Vec<Contact>,
    pub count: u64,
    pub newest: Option<DateTime<Utc>>,
    /// Band, frequency and mode of the newest contact in the whole logbook, whatever its
    /// drill: a new drill starts with the radio as it was left.
    pub last_radio: Option<(Band, Option<Frequency>, Mode)>,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Message {
    Info(String),
    Warning(String),
    Error(String),
}

/// The whole UI state: plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct AppState {
    pub screen: Screen,
    pub entry: Entry,
    pub recent: Vec<Recent>,
    /// Selected line of the recent list, when the list has the focus.
    pub recent_sel: Option<usize>,
    pub data: Snapshot,
    pub prompt: Option<Prompt>,
    pub message: Option<Message>,
    pub help: bool,
    /// Added to the system clock for entries (set by hand when the clock is wrong).
    pub clock_offset: Duration,
    pub clock_set_by_hand: bool,
    /// Contacts saved, corrected or deleted since start, and how many of those the review
    /// screens' coverage includes: opening Review or Map again recomputes it when they differ.
    pub changes: u64,
    pub review_changes: u64,
    /// The prompt's text is a suggestion (the time now, report 59): the first character
    /// typed replaces it, as in the entry form.
    pub prompt_suggested: bool,
    pub roll_sel: usize,
    pub roll_band: Band,
    pub review_tab: ReviewTab,
    pub review_band: usize,
    pub review_scroll: usize,
    pub review: Option<Box<(Coverage, Plan)>>,
    pub map_bin: usize,
    pub quit: bool,
    /// The system clock at the last key (for screen changes that need the hour).
    pub last_now: DateTime<Utc>,
}

/// Whether the screen must be drawn again, and what to do.
#[derive(Debug, Default, PartialEq)]
pub struct Update {
    pub redraw: bool,
    pub effects: Vec<Effect>,
}

impl Update {
    fn redraw() -> Self {
        Self {
            redraw: true,
            effects: Vec::new(),
        }
    }

    fn with(effect: Effect) -> Self {
        Self {
            redraw: true,
            effects: vec![effect],
        }
    }
}

impl AppState {
    pub fn new(data: Snapshot) -> Self {
        let mut s = AppState {
            screen: Screen::Log,
            entry: Entry::default(),
            recent: Vec::new(),
            recent_sel: None,
            data: Snapshot::default(),
            prompt: None,
            message: None,
            help: false,
            clock_offset: Duration::zero(),
            clock_set_by_hand: false,
            prompt_suggested: false,
            changes: 0,
            review_changes: 0,
            roll_sel: 0,
            roll_band: Band::B80m,
            review_tab: ReviewTab::Hours,
            review_band: 0,
            review_scroll: 0,
            review: None,
            map_bin: 12,
            quit: false,
            last_now: DateTime::<Utc>::default(),
        };
        s.load(data);
        s
    }

    fn load(&mut self, data: Snapshot) {
        let home = data.locator;
        let own = data.station.as_ref().map(|p| p.call.base().to_string());
        // The log screen shows what this station logged (a merged logbook holds the others' too).
        self.recent = data
            .recent
            .iter()
            .filter(|c| own.as_deref().is_none_or(|o| c.own.call.base() == o))
            .map(|c| {
                let from = c.own.locator.or(home);
                let (d, b) = match (from, c.locator) {
                    (Some(a), Some(b)) => {
                        let p = geo::centre_path(&a, &b);
                        (Some(p.distance_km), p.bearing_deg)
                    }
                    _ => (None, None),
                };
                Recent {
                    contact: c.clone(),
                    distance_km: d,
                    bearing_deg: b,
                }
            })
            .collect();
        self.data = data;
        if self.roll_sel >= self.data.roster.len() {
            self.roll_sel = 0;
        }
    }

    /// The time used for entries: the system clock, corrected by hand if it was wrong.
    pub fn entry_time(&self, now: DateTime<Utc>) -> DateTime<Utc> {
        now + self.clock_offset
    }

    /// Why the clock looks wrong, if it does.
    pub fn clock_warning(&self, now: DateTime<Utc>) -> Option<String> {
        if self.clock_set_by_hand {
            return None;
        }
        let release = NaiveDate::from_ymd_opt(RELEASE_DATE.0, RELEASE_DATE.1, RELEASE_DATE.2)?
            .and_hms_opt(0, 0, 0)?
            .and_utc();
        if now < release {
            return Some(format!(
                "CLOCK WRONG: system time {} is before this program was released",
                now.format("%Y-%m-%d %H:%M")
            ));
        }
        match self.data.newest {
            Some(n) if now + Duration::minutes(1) < n => Some(format!(
                "CLOCK WRONG: system time {} is before the newest contact ({})",
                now.format("%Y-%m-%d %H:%M"),
                n.format("%Y-%m-%d %H:%M")
            )),
            _ => None,
        }
    }

    /// The drill's scheduled band for a time, when a schedule exists.
    pub fn scheduled(&self, t: DateTime<Utc>) -> Option<&ScheduleSlot> {
        let minute = (t.hour() * 60 + t.minute()) as u16;
        self.data.schedule.iter().find(|s| s.covers(minute))
    }

    pub fn own_snapshot(&self) -> Option<StationSnapshot> {
        let p = self.data.station.as_ref()?;
        Some(StationSnapshot {
            call: p.call.clone(),
            operator: p.operator.clone(),
            locator: self.data.locator,
            power: p.usual_power,
            antenna: p.antenna.clone(),
        })
    }

    /// Band, frequency and mode for a new entry: the drill's scheduled channel for this hour,
    /// else what was used last.
    fn radio_defaults(&self, t: DateTime<Utc>) -> (Option<Band>, Option<Frequency>, Option<Mode>) {
        if let Some(band) = self.scheduled(t).and_then(|s| s.primary) {
            let ch = self.data.channels.iter().find(|c| c.band == band);
            let mode = ch
                .map(|c| c.mode.clone())
                .or_else(|| self.last_radio().map(|r| r.2));
            return (Some(band), ch.map(|c| c.frequency), mode);
        }
        match self.last_radio() {
            Some((band, freq, mode)) => (Some(band), freq, Some(mode)),
            None => (None, None, None),
        }
    }

    /// Band, frequency and mode last used: in this drill, else anywhere in the logbook.
    fn last_radio(&self) -> Option<(Band, Option<Frequency>, Mode)> {
        match self.recent.first() {
            Some(r) => Some(radio_of(&r.contact)),
            None => self.data.last_radio.clone(),
        }
    }

    /// Fills what is known once a call is typed: roster locator, last band and mode used with
    /// that station, the time (frozen now), the usual power.
    fn fill_from_call(&mut self, now: DateTime<Utc>) {
        let call = self.entry.get(Field::Call).trim().to_string();
        if call.is_empty() {
            return;
        }
        let t = self.entry_time(now);
        if self.entry.get(Field::Time).is_empty() {
            self.entry
                .set_auto(Field::Time, t.format("%Y-%m-%d %H:%M:%S").to_string());
        }
        let parsed = Callsign::parse(&call).ok();
        let roster = parsed
            .as_ref()
            .and_then(|c| self.data.roster.iter().find(|e| e.call.base() == c.base()));
        let grid = roster
            .and_then(|e| e.locator)
            .map(|l| l.to_string())
            .unwrap_or_default();
        self.entry.set_auto(Field::Locator, grid);
        let last_with = parsed.as_ref().and_then(|c| {
            self.recent
                .iter()
                .find(|r| r.contact.call.base() == c.base())
        });
        let (band, freq, mode) = match last_with {
            Some(r) if self.scheduled(t).is_none() => (
                Some(r.contact.band),
                r.contact.frequency,
                Some(r.contact.mode.clone()),
            ),
            _ => self.radio_defaults(t),
        };
        if let Some(f) = freq {
            self.entry.set_auto(Field::Frequency, f.mhz_text());
        }
        if let Some(b) = band {
            self.entry.set_auto(Field::Band, b.to_string());
        }
        if let Some(m) = mode {
            self.entry.set_auto(Field::Mode, m.as_typed());
        }
        if let Some(w) = self.data.station.as_ref().and_then(|p| p.usual_power) {
            self.entry.set_auto(Field::Power, w.watts().to_string());
        }
    }

    /// Tactical name and path of the call being typed, for the form's header.
    pub fn entry_hint(&self) -> Option<String> {
        let call = Callsign::parse(self.entry.get(Field::Call)).ok()?;
        let e = self
            .data
            .roster
            .iter()
            .find(|e| e.call.base() == call.base());
        let loc = Locator::parse(self.entry.get(Field::Locator)).ok();
        let path = match (self.data.locator, loc) {
            (Some(a), Some(b)) => {
                let p = geo::centre_path(&a, &b);
                match p.bearing_deg {
                    Some(brg) => format!("{:.0} km {brg:.0} deg", p.distance_km),
                    None => "same square".to_string(),
                }
            }
            _ => String::new(),
        };
        let name = e.map(|e| e.tactical.clone()).unwrap_or_default();
        Some(format!("{name} {path}").trim().to_string())
    }

    /// Asks for the own station (nothing can be saved without it).
    fn ask_station(&mut self) -> Update {
        self.prompt = Some(Prompt::Station(String::new()));
        self.message = Some(Message::Info(
            "no own station yet: type your call sign and locator, e.g. Q3NET JN17ga".into(),
        ));
        Update::redraw()
    }

    fn build_contact(&mut self, now: DateTime<Utc>, id: ContactId) -> Result<Contact, String> {
        let original = self.entry.editing.clone();
        let (own, drill, origin) = match &original {
            // A correction keeps the station as it was then (its locator before a move, its
            // power and antenna), the drill and where the record came from.
            Some(o) => (o.own.clone(), o.drill.clone(), o.origin.clone()),
            None => match self.own_snapshot() {
                Some(own) => (own, self.data.drill.clone(), Origin::LoggedHere),
                None => {
                    return Err(
                        "no own station yet: set it with `nearsky station set` first".into(),
                    );
                }
            },
        };
        let ctx = FormContext {
            id,
            own,
            drill,
            today: self.entry_time(now).date_naive(),
            origin,
        };
        let mut form = self.entry.form();
        if form.time.trim().is_empty() {
            form.time = self.entry_time(now).format("%Y-%m-%d %H:%M:%S").to_string();
        }
        let c = form.validate(&ctx).map_err(|e| {
            // Focus the first bad field in screen order.
            if let Some(i) = e.0.iter().map(|f| Entry::idx(f.field)).min() {
                self.entry.focus = i;
            }
            e.to_string()
        })?;
        let Some(o) = original else {
            return Ok(c);
        };
        // What the form does not show stays as it was; the end moves with the start.
        let mut parts = c.into_parts();
        parts.end = o.end.map(|end| end + (parts.start - o.start));
        parts.other_power = o.other_power;
        Contact::new(parts).map_err(|e| e.to_string())
    }

    /// Applies the result of an effect.
    pub fn done(&mut self, d: Done) -> Update {
        match d {
            Done::Added {
                contact,
                duplicates,
                from_entry,
            } => {
                if from_entry {
                    let keep = [Field::Frequency, Field::Band, Field::Mode, Field::Power];
                    let mut fresh = Entry::default();
                    for f in keep {
                        fresh.values[Entry::idx(f)] = self.entry.get(f).to_string();
                        fresh.auto[Entry::idx(f)] = true;
                    }
                    self.entry = fresh;
                }
                let dup = if duplicates > 0 {
                    format!(" — possible duplicate of {duplicates} earlier contact(s), kept")
                } else {
                    String::new()
                };
                // The first caution only: the message line is short.
                let caution = crate::domain::caution::transmit_cautions(
                    contact.band,
                    contact.frequency,
                    contact.own.power,
                )
                .into_iter()
                .next()
                .map_or(String::new(), |c| format!(" — caution: {c}"));
                let text = format!(
                    "saved {} {} {}{dup}{caution}",
                    contact.call,
                    contact.band,
                    contact.outcome.words()
                );
                self.changes += 1;
                self.message = Some(if duplicates > 0 || !caution.is_empty() {
                    Message::Warning(text)
                } else {
                    Message::Info(text)
                });
                Update::with(Effect::Reload)
            }
            Done::Edited(_) => {
                self.changes += 1;
                self.entry = Entry::default();
                self.message = Some(Message::Info(
                    "correction saved; the previous version is kept".into(),
                ));
                Update::with(Effect::Reload)
            }
            Done::Deleted(_) => {
                self.changes += 1;
                self.recent_sel = None;
                self.message = Some(Message::Info(
                    "deleted (kept in the file, marked deleted)".into(),
                ));
                Update::with(Effect::Reload)
            }
            Done::Noted => {
                self.message = Some(Message::Info("propagation note saved".into()));
                Update::redraw()
            }
            Done::StationSet(call, locator) => {
                self.message = Some(Message::Info(format!(
                    "own station {call} at {locator}; Enter saves the contact"
                )));
                Update::with(Effect::Reload)
            }
            Done::Failed(e) => {
                self.message = Some(Message::Error(format!("not saved: {e}")));
                Update::redraw()
            }
            Done::Loaded(s) => {
                self.load(*s);
                Update::redraw()
            }
            Done::Review(r) => {
                self.review = Some(r);
                Update::redraw()
            }
        }
    }

    /// Handles one key. `now` is the system clock; `new_id` gives ids to new contacts.
    pub fn key(
        &mut self,
        k: Key,
        now: DateTime<Utc>,
        new_id: &mut dyn FnMut() -> ContactId,
    ) -> Update {
        self.last_now = now;
        if matches!(k, Key::Ctrl('c') | Key::Ctrl('q')) {
            self.quit = true;
            return Update::redraw();
        }
        if self.help {
            if matches!(k, Key::F(1) | Key::Esc | Key::Ctrl('h') | Key::Char('?')) {
                self.help = false;
                return Update::redraw();
            }
            return Update::default();
        }
        if matches!(k, Key::F(1))
            || (k == Key::Char('?') && self.screen != Screen::Log && self.prompt.is_none())
        {
            self.help = true;
            return Update::redraw();
        }
        if self.prompt.is_some() {
            return self.prompt_key(k, now, new_id);
        }
        match k {
            Key::Ctrl('l') => return self.go(Screen::Log),
            Key::Ctrl('r') => return self.go(Screen::RollCall),
            Key::Ctrl('v') => return self.go(Screen::Review),
            Key::Ctrl('g') => return self.go(Screen::Map),
            Key::Ctrl('t') => {
                self.prompt = Some(Prompt::Note(String::new()));
                return Update::redraw();
            }
            Key::Ctrl('k') => {
                self.prompt = Some(Prompt::SetClock(
                    self.entry_time(now).format("%Y-%m-%d %H:%M").to_string(),
                ));
                self.prompt_suggested = true;
                return Update::redraw();
            }
            _ => {}
        }
        match self.screen {
            Screen::Log => self.log_key(k, now, new_id),
            Screen::RollCall => self.roll_key(k, now, new_id),
            Screen::Review => self.review_key(k),
            Screen::Map => self.map_key(k),
        }
    }

    fn load_review(&mut self) -> Update {
        self.review_changes = self.changes;
        Update::with(Effect::LoadReview)
    }

    fn go(&mut self, s: Screen) -> Update {
        self.screen = s;
        self.message = None;
        // The last coverage stays on screen until the new one arrives.
        if matches!(s, Screen::Review | Screen::Map)
            && (self.review.is_none() || self.review_changes != self.changes)
        {
            return self.load_review();
        }
        if s == Screen::RollCall
            && let Some(b) = self
                .scheduled(self.entry_time(self.last_now))
                .and_then(|x| x.primary)
        {
            self.roll_band = b;
        }
        Update::redraw()
    }

    fn prompt_key(
        &mut self,
        k: Key,
        now: DateTime<Utc>,
        new_id: &mut dyn FnMut() -> ContactId,
    ) -> Update {
        let Some(p) = self.prompt.as_mut() else {
            return Update::default();
        };
        let text = match p {
            Prompt::Note(t) | Prompt::SetClock(t) | Prompt::Station(t) => t,
            Prompt::Reason { text, .. } | Prompt::Report { text, .. } => text,
        };
        match k {
            Key::Esc => {
                self.prompt = None;
                self.message = Some(Message::Info("cancelled".into()));
                return Update::redraw();
            }
            Key::Char(c) => {
                if std::mem::take(&mut self.prompt_suggested) {
                    text.clear();
                }
                text.push(c);
                return Update::redraw();
            }
            Key::Backspace => {
                self.prompt_suggested = false;
                text.pop();
                return Update::redraw();
            }
            Key::Enter => self.prompt_suggested = false,
            _ => return Update::default(),
        }
        let Some(p) = self.prompt.take() else {
            return Update::default();
        };
        match p {
            Prompt::Note(t) if t.trim().is_empty() => Update::redraw(),
            Prompt::Note(t) => {
                // The band in front of the operator: the roll call's, else the entry's.
                let band = if self.screen == Screen::RollCall {
                    Some(self.roll_band)
                } else {
                    Band::parse(self.entry.get(Field::Band)).ok()
                }
                .or_else(|| self.last_radio().map(|r| r.0));
                Update::with(Effect::Note {
                    text: t,
                    band,
                    at: self.entry_time(now),
                })
            }
            Prompt::SetClock(t) => match parse_utc(&t, now.date_naive()) {
                Ok(at) => {
                    self.clock_offset = at - now;
                    self.clock_set_by_hand = true;
                    self.message = Some(Message::Warning(format!(
                        "entry time set by hand: now {} UTC",
                        at.format("%Y-%m-%d %H:%M")
                    )));
                    Update::redraw()
                }
                Err(e) => {
                    self.message = Some(Message::Error(e.to_string()));
                    self.prompt = Some(Prompt::SetClock(t));
                    Update::redraw()
                }
            },
            Prompt::Station(t) => match own_station(&t) {
                Ok((call, locator)) => Update::with(Effect::SetStation {
                    call,
                    locator,
                    at: self.entry_time(now),
                }),
                Err(e) => {
                    self.message = Some(Message::Error(e));
                    self.prompt = Some(Prompt::Station(t));
                    Update::redraw()
                }
            },
            Prompt::Reason { action, text } if text.trim().is_empty() => {
                self.message = Some(Message::Error("a reason is required".into()));
                self.prompt = Some(Prompt::Reason { action, text });
                Update::redraw()
            }
            Prompt::Reason {
                action: ReasonFor::Edit(c),
                text,
            } => Update::with(Effect::Edit {
                contact: c,
                reason: text,
            }),
            Prompt::Reason {
                action: ReasonFor::Delete(id),
                text,
            } => Update::with(Effect::Delete { id, reason: text }),
            Prompt::Report { roster, text } => match (text.trim().is_empty(), Report::parse(&text))
            {
                (false, Err(e)) => {
                    self.message = Some(Message::Error(e.to_string()));
                    self.prompt = Some(Prompt::Report { roster, text });
                    Update::redraw()
                }
                (_, r) => self.roll_save(roster, Outcome::Worked, r.ok(), now, new_id),
            },
        }
    }

    fn log_key(
        &mut self,
        k: Key,
        now: DateTime<Utc>,
        new_id: &mut dyn FnMut() -> ContactId,
    ) -> Update {
        if let Some(sel) = self.recent_sel {
            return self.recent_key(k, sel);
        }
        let i = self.entry.focus;
        match k {
            Key::Tab | Key::Down => self.entry.focus = (i + 1) % FIELDS.len(),
            Key::BackTab | Key::Up => self.entry.focus = (i + FIELDS.len() - 1) % FIELDS.len(),
            Key::PageUp if !self.recent.is_empty() => self.recent_sel = Some(0),
            Key::Ctrl('y') => self.entry.outcome = Outcome::Worked,
            Key::Ctrl('p') => self.entry.outcome = Outcome::Partial,
            Key::Ctrl('n') => self.entry.outcome = Outcome::NoContact,
            Key::Esc => {
                self.entry = Entry::default();
                self.message = Some(Message::Info("entry cleared".into()));
            }
            Key::Backspace => {
                self.entry.values[i].pop();
                self.entry.auto[i] = false;
                self.entry.check_field(i);
            }
            Key::Char(c) => {
                let c = if matches!(FIELDS[i].0, Field::Call | Field::Via) {
                    c.to_ascii_uppercase()
                } else {
                    c
                };
                // A value nearsky filled in is a suggestion: typing replaces it.
                if self.entry.auto[i] {
                    self.entry.values[i].clear();
                }
                self.entry.values[i].push(c);
                self.entry.auto[i] = false;
                self.entry.check_field(i);
                if FIELDS[i].0 == Field::Call {
                    self.fill_from_call(now);
                }
                self.entry.follow_radio(FIELDS[i].0);
            }
            Key::Enter => {
                if self.entry.get(Field::Call).trim().is_empty() {
                    self.message = Some(Message::Error(
                        "call: type the other station's call first".into(),
                    ));
                    return Update::redraw();
                }
                if self.data.station.is_none() {
                    return self.ask_station();
                }
                let id = match &self.entry.editing {
                    Some(o) => o.id,
                    None => new_id(),
                };
                return match self.build_contact(now, id) {
                    Err(e) => {
                        self.message = Some(Message::Error(e));
                        Update::redraw()
                    }
                    Ok(c) if self.entry.editing.as_deref() == Some(&c) => {
                        self.entry = Entry::default();
                        self.message = Some(Message::Info(
                            "nothing changed: the contact stays as it was".into(),
                        ));
                        Update::redraw()
                    }
                    Ok(c) if self.entry.editing.is_some() => {
                        self.prompt = Some(Prompt::Reason {
                            action: ReasonFor::Edit(Box::new(c)),
                            text: String::new(),
                        });
                        Update::redraw()
                    }
                    Ok(c) => Update::with(Effect::Add {
                        contact: Box::new(c),
                        from_entry: true,
                    }),
                };
            }
            _ => return Update::default(),
        }
        Update::redraw()
    }

    fn recent_key(&mut self, k: Key, sel: usize) -> Update {
        match k {
            Key::Up => self.recent_sel = Some(sel.saturating_sub(1)),
            Key::Down => self.recent_sel = Some((sel + 1).min(self.recent.len().saturating_sub(1))),
            Key::Esc | Key::PageDown | Key::Tab => self.recent_sel = None,
            Key::Enter | Key::Char('e') => {
                if let Some(r) = self.recent.get(sel) {
                    let c = &r.contact;
                    let mut e = Entry {
                        editing: Some(Box::new(c.clone())),
                        outcome: c.outcome,
                        ..Entry::default()
                    };
                    let set = |e: &mut Entry, f: Field, v: String| e.values[Entry::idx(f)] = v;
                    set(&mut e, Field::Call, c.call.to_string());
                    set(
                        &mut e,
                        Field::Locator,
                        c.locator.map(|l| l.to_string()).unwrap_or_default(),
                    );
                    set(
                        &mut e,
                        Field::Time,
                        c.start.format("%Y-%m-%d %H:%M:%S").to_string(),
                    );
                    set(
                        &mut e,
                        Field::Frequency,
                        c.frequency.map(|f| f.mhz_text()).unwrap_or_default(),
                    );
                    set(
                        &mut e,
                        Field::Band,
                        if c.frequency.is_some() {
                            String::new()
                        } else {
                            c.band.to_string()
                        },
                    );
                    set(&mut e, Field::Mode, c.mode.as_typed());
                    set(
                        &mut e,
                        Field::Sent,
                        c.sent.map(|r| r.to_string()).unwrap_or_default(),
                    );
                    set(
                        &mut e,
                        Field::Rcvd,
                        c.rcvd.map(|r| r.to_string()).unwrap_or_default(),
                    );
                    set(
                        &mut e,
                        Field::Power,
                        c.own
                            .power
                            .map(|p| p.watts().to_string())
                            .unwrap_or_default(),
                    );
                    set(
                        &mut e,
                        Field::Via,
                        c.via.as_ref().map(|v| v.to_string()).unwrap_or_default(),
                    );
                    set(&mut e, Field::Note, c.note.clone());
                    self.entry = e;
                    self.recent_sel = None;
                    self.message = Some(Message::Info(
                        "correcting a contact: change fields, Enter, then give a reason".into(),
                    ));
                }
            }
            Key::Delete | Key::Char('d') => {
                if let Some(r) = self.recent.get(sel) {
                    self.prompt = Some(Prompt::Reason {
                        action: ReasonFor::Delete(r.contact.id),
                        text: String::new(),
                    });
                }
            }
            _ => return Update::default(),
        }
        Update::redraw()
    }

    fn roll_save(
        &mut self,
        roster: usize,
        outcome: Outcome,
        rcvd: Option<Report>,
        now: DateTime<Utc>,
        new_id: &mut dyn FnMut() -> ContactId,
    ) -> Update {
        let Some(e) = self.data.roster.get(roster).cloned() else {
            return Update::default();
        };
        let Some(own) = self.own_snapshot() else {
            return self.ask_station();
        };
        let ch = self.data.channels.iter().find(|c| c.band == self.roll_band);
        let mode = ch
            .map(|c| c.mode.clone())
            .or_else(|| self.last_radio().map(|r| r.2))
            .or_else(|| Mode::parse("SSB").ok());
        let Some(mode) = mode else {
            return Update::default();
        };
        let parts = crate::domain::ContactParts {
            id: new_id(),
            drill: self.data.drill.clone(),
            own,
            call: e.call.clone(),
            locator: e.locator,
            start: self.entry_time(now),
            end: None,
            band: self.roll_band,
            frequency: ch.map(|c| c.frequency),
            mode,
            sent: None,
            rcvd,
            other_power: None,
            outcome,
            via: None,
            note: "roll call".into(),
            origin: Origin::LoggedHere,
        };
        match Contact::new(parts) {
            Ok(c) => {
                self.roll_sel = (roster + 1).min(self.data.roster.len().saturating_sub(1));
                Update::with(Effect::Add {
                    contact: Box::new(c),
                    from_entry: false,
                })
            }
            Err(e) => {
                self.message = Some(Message::Error(e.to_string()));
                Update::redraw()
            }
        }
    }

    fn roll_key(
        &mut self,
        k: Key,
        now: DateTime<Utc>,
        new_id: &mut dyn FnMut() -> ContactId,
    ) -> Update {
        let n = self.data.roster.len();
        match k {
            Key::Up => self.roll_sel = self.roll_sel.saturating_sub(1),
            Key::Down => self.roll_sel = (self.roll_sel + 1).min(n.saturating_sub(1)),
            Key::Char('w') => {
                self.prompt = Some(Prompt::Report {
                    roster: self.roll_sel,
                    text: "59".into(),
                });
                self.prompt_suggested = true;
            }
            Key::Char('p') => {
                return self.roll_save(self.roll_sel, Outcome::Partial, None, now, new_id);
            }
            Key::Char('n') => {
                return self.roll_save(self.roll_sel, Outcome::NoContact, None, now, new_id);
            }
            Key::Char('b') | Key::Right => self.roll_band = next_band(self.roll_band, 1),
            Key::Char('B') | Key::Left => self.roll_band = next_band(self.roll_band, -1),
            Key::Char('r') => {
                self.roll_sel = 0;
                self.message = Some(Message::Info(format!(
                    "roll call again from the top on {}",
                    self.roll_band
                )));
            }
            Key::Char('[') | Key::Char(']') if n > 1 => {
                let i = self.roll_sel;
                let j = if k == Key::Char('[') {
                    i.checked_sub(1)
                } else {
                    (i + 1 < n).then_some(i + 1)
                };
                if let Some(j) = j {
                    self.data.roster.swap(i, j);
                    self.roll_sel = j;
                    return Update::with(Effect::SaveRosterOrder(
                        self.data.roster.iter().map(|e| e.call.clone()).collect(),
                    ));
                }
            }
            Key::Esc => return self.go(Screen::Log),
            _ => return Update::default(),
        }
        Update::redraw()
    }

    /// How a station did last time on a band (from the recent contacts).
    pub fn last_on_band(&self, call: &Callsign, band: Band) -> Option<Outcome> {
        self.recent
            .iter()
            .find(|r| r.contact.band == band && r.contact.call.base() == call.base())
            .map(|r| r.contact.outcome)
    }

    fn review_key(&mut self, k: Key) -> Update {
        let tabs = ReviewTab::ALL;
        let i = tabs.iter().position(|t| *t == self.review_tab).unwrap_or(0);
        match k {
            Key::Right | Key::Tab => self.review_tab = tabs[(i + 1) % tabs.len()],
            Key::Left | Key::BackTab => self.review_tab = tabs[(i + tabs.len() - 1) % tabs.len()],
            Key::Char('b') => self.review_band += 1,
            Key::Down => self.review_scroll += 1,
            Key::Up => self.review_scroll = self.review_scroll.saturating_sub(1),
            Key::PageDown => self.review_scroll += 10,
            Key::PageUp => self.review_scroll = self.review_scroll.saturating_sub(10),
            Key::Char('u') => return self.load_review(),
            Key::Esc => return self.go(Screen::Log),
            _ => return Update::default(),
        }
        if !matches!(k, Key::Down | Key::Up | Key::PageDown | Key::PageUp) {
            self.review_scroll = 0;
        }
        Update::redraw()
    }

    fn map_key(&mut self, k: Key) -> Update {
        match k {
            Key::Right => self.map_bin = (self.map_bin + 1) % 24,
            Key::Left => self.map_bin = (self.map_bin + 23) % 24,
            Key::Char('b') => self.review_band += 1,
            Key::Esc => return self.go(Screen::Log),
            _ => return Update::default(),
        }
        Update::redraw()
    }

    /// The band the review and map show.
    pub fn shown_band(&self) -> Option<Band> {
        let bands = &self.review.as_ref()?.0.bands;
        (!bands.is_empty()).then(|| bands[self.review_band % bands.len()])
    }

    /// Outcomes per roster call on the roll-call band, newest first.
    pub fn roll_lines(&self) -> Vec<RollLine> {
        let home = self.data.locator;
        self.data
            .roster
            .iter()
            .map(|e| {
                let path = match (home, e.locator) {
                    (Some(a), Some(b)) => {
                        let p = geo::centre_path(&a, &b);
                        Some((p.distance_km, p.bearing_deg))
                    }
                    _ => None,
                };
                (e.clone(), path, self.last_on_band(&e.call, self.roll_band))
            })
            .collect()
    }

    /// Counts of contacts per outcome in the recent list (for the status line).
    pub fn recent_counts(&self) -> HashMap<Outcome, usize> {
        let mut m = HashMap::new();
        for r in &self.recent {
            *m.entry(r.contact.outcome).or_insert(0) += 1;
        }
        m
    }
}

fn next_band(b: Band, step: i32) -> Band {
    let bands = [Band::B80m, Band::B60m, Band::B40m];
    let i = bands.iter().position(|x| *x == b).unwrap_or(0) as i32;
    bands[((i + step).rem_euclid(3)) as usize]
}

/// `CALL LOCATOR`, as typed at the own-station prompt.
fn own_station(text: &str) -> Result<(Callsign, Locator), String> {
    let mut words = text.split_whitespace();
    let (Some(call), Some(locator), None) = (words.next(), words.next(), words.next()) else {
        return Err(format!(
            "own station `{text}`: type the call sign and the locator, e.g. Q3NET JN17ga"
        ));
    };
    let call = Callsign::parse(call).map_err(|e| format!("own station: {e}"))?;
    let locator = Locator::parse(locator).map_err(|e| format!("own station: {e}"))?;
    Ok((call, locator))
}

#[cfg(test)]
mod tests {
    use super::*;
    use chrono::TimeZone;

    fn snapshot() -> Snapshot {
        Snapshot {
            drill: Some("D".into()),
            station: Some(StationProfile {
                call: Callsign::parse("Q3NET").unwrap(),
                operator: None,
                usual_power: Power::from_watts(50.0).ok(),
                antenna: None,
                rig: None,
            }),
            locator: Locator::parse("JN17ga").ok(),
            roster: vec![RosterEntry {
                call: Callsign::parse("Q4SHL").unwrap(),
                tactical: "Shelter 1".into(),
                locator: Locator::parse("JN17wm").ok(),
                role: String::new(),
            }],
            channels: vec![],
            schedule: vec![],
            recent: vec![],
            count: 0,
            newest: None,
            last_radio: None,
        }
    }

    fn now() -> DateTime<Utc> {
        Utc.with_ymd_and_hms(2026, 12, 2, 14, 5, 0).unwrap()
    }

    fn typed(s: &mut AppState, text: &str) {
        let mut id = || ContactId(uuid::Uuid::from_u128(9));
        for c in text.chars() {
            s.key(Key::Char(c), now(), &mut id);
        }
    }

    #[test]
    fn a_logbook_without_an_own_station_asks_for_it_at_the_first_save() {
        let mut s = AppState::new(Snapshot {
            station: None,
            locator: None,
            ..snapshot()
        });
        let mut id = || ContactId(uuid::Uuid::from_u128(9));
        typed(&mut s, "Q4SHL");
        let u = s.key(Key::Enter, now(), &mut id);
        assert!(u.effects.is_empty());
        assert_eq!(s.prompt, Some(Prompt::Station(String::new())));
        // A bad answer keeps the prompt and says what is wrong.
        typed(&mut s, "Q3NET JN17");
        for _ in 0.."JN17".len() {
            s.key(Key::Backspace, now(), &mut id);
        }
        typed(&mut s, "XX99");
        s.key(Key::Enter, now(), &mut id);
        assert_eq!(s.prompt, Some(Prompt::Station("Q3NET XX99".into())));
        assert!(
            matches!(&s.message, Some(Message::Error(e)) if e.contains("XX99")),
            "{:?}",
            s.message
        );
        for _ in 0.."XX99".len() {
            s.key(Key::Backspace, now(), &mut id);
        }
        typed(&mut s, "jn17ga");
        let u = s.key(Key::Enter, now(), &mut id);
        assert_eq!(
            u.effects,
            vec![Effect::SetStation {
                call: Callsign::parse("Q3NET").unwrap(),
                locator: Locator::parse("JN17ga").unwrap(),
                at: now(),
            }]
        );
        assert_eq!(s.prompt, None);
        // What was typed for the contact is still there.
        assert_eq!(s.entry.get(Field::Call), "Q4SHL");
        assert_eq!(
            own_station("Q3NET"),
            Err(
                "own station `Q3NET`: type the call sign and the locator, e.g. Q3NET JN17ga".into()
            )
        );
    }

    #[test]
    fn a_save_on_60_m_above_the_limit_is_kept_and_cautioned() {
        let mut s = AppState::new(snapshot());
        let mut id = || ContactId(uuid::Uuid::from_u128(9));
        typed(&mut s, "Q4SHL");
        s.entry.values[Entry::idx(Field::Frequency)] = "5.3625".into();
        s.entry.values[Entry::idx(Field::Band)] = "60m".into();
        s.entry.values[Entry::idx(Field::Mode)] = "USB".into();
        let u = s.key(Key::Enter, now(), &mut id);
        let [Effect::Add { contact, .. }] = &u.effects[..] else {
            panic!("{:?} {:?}", u.effects, s.message);
        };
        // The snapshot's usual power is 50 W: above 15 W e.i.r.p. (ITU RR 5.133B).
        let added = Done::Added {
            contact: contact.clone(),
            duplicates: 0,
            from_entry: true,
        };
        s.done(added);
        assert!(
            matches!(&s.message, Some(Message::Warning(m)) if m.starts_with("saved Q4SHL 60m worked — caution: 60 m: 50 W")),
            "{:?}",
            s.message
        );
    }

    #[test]
    fn a_new_drill_starts_with_the_radio_as_the_last_contact_left_it() {
        let last = (
            Band::B60m,
            Frequency::from_hz(5_363_000).ok(),
            Mode::parse("USB").unwrap(),
        );
        let mut s = AppState::new(Snapshot {
            last_radio: Some(last),
            ..snapshot()
        });
        typed(&mut s, "Q4SHL");
        assert_eq!(s.entry.get(Field::Band), "60m");
        assert_eq!(s.entry.get(Field::Frequency), "5.363");
        assert_eq!(s.entry.get(Field::Mode), "USB");
        // Without any contact anywhere, nothing is guessed.
        let mut s = AppState::new(snapshot());
        typed(&mut s, "Q4SHL");
        assert_eq!(s.entry.get(Field::Mode), "");
    }

    #[test]
    fn typing_a_call_fills_in_what_is_known_and_freezes_the_time() {
        let mut s = AppState::new(snapshot());
        typed(&mut s, "q4shl");
        assert_eq!(s.entry.get(Field::Call), "Q4SHL");
        assert_eq!(s.entry.get(Field::Locator), "JN17wm");
        assert_eq!(s.entry.get(Field::Time), "2026-12-02 14:05:00");
        assert_eq!(s.entry.get(Field::Power), "50");
        assert!(s.entry_hint().unwrap().starts_with("Shelter 1 115 km"));
    }

    #[test]
    fn enter_commits_only_a_valid_entry_and_keeps_what_was_typed() {
        let mut s = AppState::new(snapshot());
        let mut id = || ContactId(uuid::Uuid::from_u128(9));
        typed(&mut s, "Q4SHL");
        s.entry.focus = 3;
        typed(&mut s, "8.2");
        assert!(
            s.entry.problems[3]
                .as_ref()
                .unwrap()
                .contains("no amateur band")
        );
        let u = s.key(Key::Enter, now(), &mut id);
        assert!(u.effects.is_empty());
        assert!(matches!(&s.message, Some(Message::Error(e)) if e.contains("frequency")));
        assert_eq!(
            s.entry.get(Field::Frequency),
            "8.2",
            "nothing typed is lost"
        );
        assert_eq!(s.entry.focus, 3, "focus on the bad field");
        for _ in 0..3 {
            s.key(Key::Backspace, now(), &mut id);
        }
        typed(&mut s, "7.1");
        s.entry.focus = 5;
        typed(&mut s, "LSB");
        s.key(Key::Ctrl('n'), now(), &mut id);
        let u = s.key(Key::Enter, now(), &mut id);
        let Some(Effect::Add {
            contact,
            from_entry: true,
        }) = u.effects.first()
        else {
            panic!("{u:?}")
        };
        assert_eq!(
            (contact.band, contact.outcome),
            (Band::B40m, Outcome::NoContact)
        );
        s.done(Done::Added {
            contact: contact.clone(),
            duplicates: 0,
            from_entry: true,
        });
        assert_eq!(
            s.entry.get(Field::Call),
            "",
            "cleared after the store confirmed"
        );
        assert_eq!(s.entry.get(Field::Frequency), "7.1", "radio settings kept");
    }

    #[test]
    fn a_failed_commit_keeps_the_entry() {
        let mut s = AppState::new(snapshot());
        typed(&mut s, "Q4SHL");
        s.done(Done::Failed("disk full".into()));
        assert_eq!(s.entry.get(Field::Call), "Q4SHL");
        assert!(matches!(&s.message, Some(Message::Error(e)) if e.contains("disk full")));
    }

    #[test]
    fn unmapped_keys_do_not_redraw() {
        let mut s = AppState::new(snapshot());
        let mut id = || ContactId(uuid::Uuid::nil());
        s.screen = Screen::Review;
        assert_eq!(s.key(Key::F(9), now(), &mut id), Update::default());
    }

    #[test]
    fn roll_call_records_one_key_per_station() {
        let mut s = AppState::new(snapshot());
        let mut id = || ContactId(uuid::Uuid::from_u128(5));
        s.key(Key::Ctrl('r'), now(), &mut id);
        assert_eq!(s.screen, Screen::RollCall);
        let u = s.key(Key::Char('n'), now(), &mut id);
        let Some(Effect::Add { contact, .. }) = u.effects.first() else {
            panic!()
        };
        assert_eq!(
            (contact.call.as_str(), contact.outcome, contact.band),
            ("Q4SHL", Outcome::NoContact, Band::B80m)
        );
        s.key(Key::Char('b'), now(), &mut id);
        assert_eq!(s.roll_band, Band::B60m, "the next band, straight away");
        s.key(Key::Char('w'), now(), &mut id);
        assert!(matches!(s.prompt, Some(Prompt::Report { .. })));
        let u = s.key(Key::Enter, now(), &mut id);
        let Some(Effect::Add { contact, .. }) = u.effects.first() else {
            panic!()
        };
        assert_eq!(
            (contact.outcome, contact.rcvd.map(|r| r.to_string())),
            (Outcome::Worked, Some("59".into()))
        );
        // The suggested 59 is replaced by what is typed, not added to.
        s.key(Key::Char('w'), now(), &mut id);
        typed(&mut s, "57");
        assert_eq!(
            s.prompt,
            Some(Prompt::Report {
                roster: 0,
                text: "57".into()
            })
        );
        // Once typing started, keys edit.
        s.key(Key::Backspace, now(), &mut id);
        typed(&mut s, "5");
        let u = s.key(Key::Enter, now(), &mut id);
        let Some(Effect::Add { contact, .. }) = u.effects.first() else {
            panic!("{:?}", s.message)
        };
        assert_eq!(contact.rcvd.map(|r| r.to_string()), Some("55".into()));
        // A propagation note taken during the roll call is on the roll call's band.
        s.key(Key::Ctrl('t'), now(), &mut id);
        typed(&mut s, "fading");
        let u = s.key(Key::Enter, now(), &mut id);
        assert!(
            matches!(
                u.effects.first(),
                Some(Effect::Note {
                    band: Some(Band::B60m),
                    ..
                })
            ),
            "{:?}",
            u.effects
        );
    }

    #[test]
    fn a_wrong_clock_is_noticed_and_can_be_set_by_hand() {
        let mut data = snapshot();
        data.newest = Some(now() + Duration::days(3));
        let mut s = AppState::new(data);
        assert!(s.clock_warning(now()).unwrap().starts_with("CLOCK WRONG"));
        let early = Utc.with_ymd_and_hms(2020, 1, 1, 0, 0, 0).unwrap();
        assert!(s.clock_warning(early).unwrap().contains("released"));
        let mut id = || ContactId(uuid::Uuid::nil());
        s.key(Key::Ctrl('k'), now(), &mut id);
        // The time now is suggested; typing replaces it.
        assert_eq!(s.prompt, Some(Prompt::SetClock("2026-12-02 14:05".into())));
        for c in "2026-12-06 10:00".chars() {
            s.key(Key::Char(c), now(), &mut id);
        }
        s.key(Key::Enter, now(), &mut id);
        assert_eq!(
            s.entry_time(now()),
            Utc.with_ymd_and_hms(2026, 12, 6, 10, 0, 0).unwrap()
        );
        assert_eq!(s.clock_warning(now()), None);
    }

    #[test]
    fn a_correction_changes_only_what_was_corrected() {
        // A record logged from where the station was before it moved, with the power and
        // antenna of then, an end time and the other side's power: none of which the form
        // shows.
        let start = Utc.with_ymd_and_hms(2026, 12, 1, 9, 0, 0).unwrap();
        let original = Contact::new(crate::domain::ContactParts {
            id: ContactId(uuid::Uuid::from_u128(7)),
            drill: Some("Spring net".into()),
            own: crate::domain::StationSnapshot {
                call: Callsign::parse("Q3NET").unwrap(),
                operator: Callsign::parse("Q4OPR").ok(),
                locator: Locator::parse("JN27ab").ok(),
                power: Power::from_watts(10.0).ok(),
                antenna: Some("inverted V".into()),
            },
            call: Callsign::parse("Q7HSP").unwrap(),
            locator: Locator::parse("JN17ig").ok(),
            start,
            end: Some(start + Duration::minutes(4)),
            band: Band::B80m,
            frequency: Frequency::from_hz(3_598_000).ok(),
            mode: Mode::parse("LSB").unwrap(),
            sent: Report::parse("57").ok(),
            rcvd: Report::parse("55").ok(),
            other_power: Power::from_watts(40.0).ok(),
            outcome: Outcome::Worked,
            via: None,
            note: "weak".into(),
            origin: Origin::LoggedHere,
        })
        .unwrap();
        let open = || {
            let mut s = AppState::new(Snapshot {
                recent: vec![original.clone()],
                ..snapshot()
            });
            let mut id = || ContactId(uuid::Uuid::nil());
            s.key(Key::PageUp, now(), &mut id);
            s.key(Key::Char('e'), now(), &mut id);
            s
        };
        let mut id = || ContactId(uuid::Uuid::nil());
        // Enter with nothing changed: no revision, no reason asked.
        let mut s = open();
        let u = s.key(Key::Enter, now(), &mut id);
        assert!(u.effects.is_empty());
        assert_eq!(s.prompt, None);
        assert!(s.entry.editing.is_none());
        assert!(
            matches!(&s.message, Some(Message::Info(m)) if m.contains("nothing changed")),
            "{:?}",
            s.message
        );
        // A later start and another report: the rest stays, the end keeps its 4 minutes.
        let mut s = open();
        s.entry.values[Entry::idx(Field::Time)] = "2026-12-01 09:10:00".into();
        s.entry.values[Entry::idx(Field::Rcvd)] = "59".into();
        s.key(Key::Enter, now(), &mut id);
        let Some(Prompt::Reason {
            action: ReasonFor::Edit(c),
            ..
        }) = &s.prompt
        else {
            panic!("a reason is asked: {:?}", s.prompt);
        };
        let mut want = original.clone().into_parts();
        want.start = start + Duration::minutes(10);
        want.end = Some(start + Duration::minutes(14));
        want.rcvd = Report::parse("59").ok();
        assert_eq!(c.as_ref().clone().into_parts(), want);
    }

    #[test]
    fn edits_and_deletes_ask_for_a_reason() {
        let mut data = snapshot();
        let mut s0 = AppState::new(snapshot());
        typed(&mut s0, "Q4SHL");
        s0.entry.values[3] = "7.1".into();
        s0.entry.values[5] = "LSB".into();
        let c = s0
            .build_contact(now(), ContactId(uuid::Uuid::from_u128(3)))
            .unwrap();
        data.recent = vec![c.clone()];
        let mut s = AppState::new(data);
        let mut id = || ContactId(uuid::Uuid::nil());
        s.key(Key::PageUp, now(), &mut id);
        s.key(Key::Char('d'), now(), &mut id);
        assert!(matches!(
            s.prompt,
            Some(Prompt::Reason {
                action: ReasonFor::Delete(_),
                ..
            })
        ));
        let u = s.key(Key::Enter, now(), &mut id);
        assert!(u.effects.is_empty(), "no reason, no delete");
        for ch in "dup".chars() {
            s.key(Key::Char(ch), now(), &mut id);
        }
        let u = s.key(Key::Enter, now(), &mut id);
        assert_eq!(
            u.effects,
            vec![Effect::Delete {
                id: c.id,
                reason: "dup".into()
            }]
        );
        // `e` opens the contact with its mode written as a new entry takes it.
        let mut s = AppState::new(Snapshot {
            recent: vec![c.clone()],
            ..snapshot()
        });
        s.key(Key::PageUp, now(), &mut id);
        s.key(Key::Char('e'), now(), &mut id);
        assert_eq!(s.entry.get(Field::Mode), "LSB");
        assert_eq!(s.entry.get(Field::Call), "Q4SHL");
    }
}
