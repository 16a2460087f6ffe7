//! ADIF: contacts to and from the open standard (ADI tagged text and ADX XML).
//!
//! Field mapping (ADIF 3.1.7; units as the standard says): CALL, QSO_DATE/TIME_ON,
//! QSO_DATE_OFF/TIME_OFF (UTC), BAND, FREQ (MHz), MODE/SUBMODE, RST_SENT/RST_RCVD, TX_PWR and
//! RX_PWR (W), STATION_CALLSIGN and OPERATOR, GRIDSQUARE/MY_GRIDSQUARE with their _EXT for
//! 10-character locators, DISTANCE (km), MY_ANTENNA, NOTES, and QSO_COMPLETE for the outcome
//! (worked `Y`, partial `N`, no contact `NIL`; `?` reads as partial). What ADIF has no field
//! for goes into nearsky's application fields: APP_NEARSKY_OUTCOME, APP_NEARSKY_UUID,
//! APP_NEARSKY_DRILL, APP_NEARSKY_VIA.

pub mod adi;
pub mod adx;

use std::fmt;

use chrono::{DateTime, Duration, NaiveDate, NaiveTime, Utc};

pub use adi::{AdiReader, Next, RawRecord};

use crate::domain::geo::PathCache;
use crate::domain::text::visible;
use crate::domain::{
    Band, Callsign, Contact, ContactId, ContactParts, Frequency, Locator, Mode, Origin, Outcome,
    Power, Report, StationSnapshot,
};

/// ADIF version written in headers.
pub const ADIF_VERSION: &str = "3.1.7";
/// Program id in headers and in application field names.
pub const PROGRAM_ID: &str = "nearsky";

/// A record that could not be read or used: where, which field, which value, and why.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RecordError {
    pub line: u32,
    pub field: Option<String>,
    pub value: Option<String>,
    pub message: String,
}

impl RecordError {
    pub fn field(line: u32, field: &str, value: &str, message: String) -> Self {
        Self {
            line,
            field: Some(field.to_string()),
            value: Some(value.to_string()),
            message,
        }
    }

    pub fn record(line: u32, message: &str) -> Self {
        Self {
            line,
            field: None,
            value: None,
            message: message.to_string(),
        }
    }
}

impl fmt::Display for RecordError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.field, &self.value) {
            (Some(field), Some(v)) if !v.is_empty() => {
                let shown: String = v.chars().take(60).collect();
                write!(
                    f,
                    "line {}: field {field} `{}`: {}",
                    self.line,
                    visible(&shown),
                    self.message
                )
            }
            (Some(field), _) => write!(f, "line {}: field {field}: {}", self.line, self.message),
            _ => write!(f, "line {}: {}", self.line, self.message),
        }
    }
}

impl std::error::Error for RecordError {}

fn qso_complete(o: Outcome) -> &'static str {
    match o {
        Outcome::Worked => "Y",
        Outcome::Partial => "N",
        Outcome::NoContact => "NIL",
    }
}

/// Text for ADI, which is ASCII only: common accented Latin letters lose their accents, other
/// characters become `?`, and control characters become spaces (line breaks become CR LF
/// where `multiline`).
pub fn ascii_text(s: &str, multiline: bool) -> String {
    let mut out = String::with_capacity(s.len());
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '\r' if multiline && chars.peek() == Some(&'\n') => {}
            '\n' if multiline => out.push_str("\r\n"),
            c if c.is_ascii_control() => out.push(' '),
            c if c.is_ascii() => out.push(c),
            c => out.push(fold(c)),
        }
    }
    out
}

fn fold(c: char) -> char {
    const FROM: &str = "ÀÁÂÃÄÅàáâãäåÇçÈÉÊËèéêëÌÍÎÏìíîïÑñÒÓÔÕÖØòóôõöøÙÚÛÜùúûüÝýÿ";
    const TO: &str = "AAAAAAaaaaaaCcEEEEeeeeIIIIiiiiNnOOOOOOooooooUUUUuuuuYyy";
    FROM.chars()
        .position(|f| f == c)
        .and_then(|i| TO.chars().nth(i))
        .unwrap_or('?')
}

fn watts(p: Power) -> String {
    let w = p.watts();
    if w.fract() == 0.0 {
        format!("{w:.0}")
    } else {
        format!("{w}")
    }
}

/// Formats into a reused buffer and lends it out.
fn scratch<'a>(buf: &'a mut String, args: std::fmt::Arguments<'_>) -> &'a str {
    use std::fmt::Write as _;
    buf.clear();
    let _ = buf.write_fmt(args);
    buf
}

/// Text as ADI or ADX needs it: unchanged unless ADI needs it folded to ASCII.
fn adi_text(s: &str, multi: bool, ascii: bool) -> std::borrow::Cow<'_, str> {
    let plain = s.bytes().all(|b| (0x20..0x7f).contains(&b));
    if ascii && !plain {
        std::borrow::Cow::Owned(ascii_text(s, multi))
    } else {
        std::borrow::Cow::Borrowed(s)
    }
}

/// `YYYYMMDD` and `HHMMSS` of a UTC time (digits written directly: this runs for every record
/// of an export).
fn adif_date_time(t: DateTime<Utc>) -> (String, String) {
    use chrono::{Datelike, Timelike};
    let mut d = String::with_capacity(8);
    let mut h = String::with_capacity(6);
    let push2 = |s: &mut String, v: u32| {
        s.push(char::from(b'0' + (v / 10 % 10) as u8));
        s.push(char::from(b'0' + (v % 10) as u8));
    };
    let y = t.year().max(0) as u32;
    push2(&mut d, y / 100);
    push2(&mut d, y % 100);
    push2(&mut d, t.month());
    push2(&mut d, t.day());
    push2(&mut h, t.hour());
    push2(&mut h, t.minute());
    push2(&mut h, t.second());
    (d, h)
}

/// Calls `f(name, value)` for every ADIF field of a contact, in a fixed order. `ascii` folds
/// text for ADI; ADX keeps it whole. `paths` caches distances per locator pair.
pub fn for_each_field(
    c: &Contact,
    ascii: bool,
    paths: &mut PathCache,
    mut f: impl FnMut(&str, &str) -> std::io::Result<()>,
) -> std::io::Result<()> {
    // One buffer for the formatted values of this record.
    let mut buf = String::with_capacity(32);
    f("CALL", c.call.as_str())?;
    let (date, time) = adif_date_time(c.start);
    f("QSO_DATE", &date)?;
    f("TIME_ON", &time)?;
    if let Some(end) = c.end {
        let (date, time) = adif_date_time(end);
        f("QSO_DATE_OFF", &date)?;
        f("TIME_OFF", &time)?;
    }
    f("BAND", c.band.name())?;
    if let Some(q) = c.frequency {
        f("FREQ", &q.mhz_text())?;
    }
    f("MODE", c.mode.mode())?;
    if let Some(s) = c.mode.submode() {
        f("SUBMODE", s)?;
    }
    if let Some(r) = c.sent {
        f("RST_SENT", scratch(&mut buf, format_args!("{r}")))?;
    }
    if let Some(r) = c.rcvd {
        f("RST_RCVD", scratch(&mut buf, format_args!("{r}")))?;
    }
    if let Some(p) = c.own.power {
        f("TX_PWR", &watts(p))?;
    }
    if let Some(p) = c.other_power {
        f("RX_PWR", &watts(p))?;
    }
    f("STATION_CALLSIGN", c.own.call.as_str())?;
    if let Some(o) = &c.own.operator {
        f("OPERATOR", o.as_str())?;
    }
    let grid = |l: &Locator| {
        let s = l.as_str();
        if s.len() > 8 {
            (s[..8].to_string(), Some(s[8..].to_string()))
        } else {
            (s.to_string(), None)
        }
    };
    if let Some(l) = &c.locator {
        let (g, ext) = grid(l);
        f("GRIDSQUARE", &g)?;
        if let Some(e) = ext {
            f("GRIDSQUARE_EXT", &e)?;
        }
    }
    if let Some(l) = &c.own.locator {
        let (g, ext) = grid(l);
        f("MY_GRIDSQUARE", &g)?;
        if let Some(e) = ext {
            f("MY_GRIDSQUARE_EXT", &e)?;
        }
    }
    if let (Some(a), Some(b)) = (&c.own.locator, &c.locator)
        && !a.is_too_coarse_for_distance()
        && !b.is_too_coarse_for_distance()
    {
        f(
            "DISTANCE",
            &format!("{:.1}", paths.centre(a, b).distance_km),
        )?;
    }
    if let Some(a) = &c.own.antenna {
        f("MY_ANTENNA", &adi_text(a, false, ascii))?;
    }
    if !c.note.is_empty() {
        f("NOTES", &adi_text(&c.note, true, ascii))?;
    }
    f("QSO_COMPLETE", qso_complete(c.outcome))?;
    f("APP_NEARSKY_OUTCOME", c.outcome.key())?;
    let mut id = [0u8; 36];
    f(
        "APP_NEARSKY_UUID",
        c.id.0.hyphenated().encode_lower(&mut id),
    )?;
    if let Some(d) = &c.drill {
        f("APP_NEARSKY_DRILL", &adi_text(d, false, ascii))?;
    }
    if let Some(v) = &c.via {
        f("APP_NEARSKY_VIA", v.as_str())?;
    }
    Ok(())
}

/// What an import needs besides the record.
pub struct ImportContext<'a> {
    /// The logging station, when the file does not say (STATION_CALLSIGN / OPERATOR).
    pub station: Option<&'a Callsign>,
    /// The drill to put records in (overrides APP_NEARSKY_DRILL).
    pub drill: Option<&'a str>,
    /// The drill for records that name none (no APP_NEARSKY_DRILL): the drill in use.
    pub default_drill: Option<&'a str>,
    /// The file's name, kept as the records' origin.
    pub file: &'a str,
    /// Where the logging station was, when the record lacks MY_GRIDSQUARE.
    pub station_locator: &'a dyn Fn(&Callsign) -> Option<Locator>,
}

/// A record turned into a contact, with what was tolerated on the way.
pub struct Imported {
    pub contact: Contact,
    pub warnings: Vec<String>,
}

/// The number written by ASCII digits (at most 9 of them), or None.
fn digits(b: &[u8]) -> Option<u32> {
    b.iter().try_fold(0u32, |n, d| {
        d.is_ascii_digit().then(|| n * 10 + u32::from(d - b'0'))
    })
}

fn parse_date(v: &str) -> Option<NaiveDate> {
    let b = v.as_bytes();
    if b.len() != 8 {
        return None;
    }
    let d = NaiveDate::from_ymd_opt(
        i32::try_from(digits(&b[..4])?).ok()?,
        digits(&b[4..6])?,
        digits(&b[6..])?,
    )?;
    (d >= NaiveDate::from_ymd_opt(1930, 1, 1)?).then_some(d)
}

fn parse_time(v: &str) -> Option<NaiveTime> {
    let b = v.as_bytes();
    let (h, m) = (digits(b.get(..2)?)?, digits(b.get(2..4)?)?);
    let s = match b.len() {
        4 => 0,
        6 => digits(&b[4..])?,
        _ => return None,
    };
    // A leap second (60) is not a UTC time chrono builds from parts; it is refused as before.
    NaiveTime::from_hms_opt(h, m, s)
}

/// The field names [`to_contact`] reads, so that one pass over a record finds them all.
macro_rules! known_fields {
    ($($name:ident),* $(,)?) => {
        #[allow(non_camel_case_types, clippy::upper_case_acronyms)]
        #[derive(Clone, Copy)]
        enum K {
            $($name),*
        }
        const KNOWN: &[&str] = &[$(stringify!($name)),*];
    };
}
known_fields!(
    CALL,
    QSO_DATE,
    TIME_ON,
    TIME_OFF,
    QSO_DATE_OFF,
    FREQ,
    BAND,
    MODE,
    SUBMODE,
    RST_SENT,
    RST_RCVD,
    TX_PWR,
    RX_PWR,
    GRIDSQUARE,
    GRIDSQUARE_EXT,
    MY_GRIDSQUARE,
    MY_GRIDSQUARE_EXT,
    STATION_CALLSIGN,
    OPERATOR,
    GUEST_OP,
    APP_NEARSKY_OUTCOME,
    QSO_COMPLETE,
    APP_NEARSKY_UUID,
    APP_NEARSKY_VIA,
    APP_NEARSKY_DRILL,
    NOTES_INTL,
    NOTES,
    COMMENT_INTL,
    COMMENT,
    MY_ANTENNA_INTL,
    MY_ANTENNA,
);

/// The known fields of one record, with their lines.
struct Known<'r>([Option<(&'r str, u32)>; KNOWN.len()]);

impl<'r> Known<'r> {
    fn of(rec: &'r RawRecord) -> Self {
        let mut slots = [None; KNOWN.len()];
        for (name, value, line) in rec.fields() {
            // Lengths first: most names are told apart without comparing their text.
            if let Some(i) = KNOWN
                .iter()
                .position(|k| k.len() == name.len() && *k == name)
            {
                slots[i] = Some((value, line));
            }
        }
        Self(slots)
    }

    fn at(&self, k: K) -> Option<(&'r str, u32)> {
        self.0[k as usize]
    }

    fn get(&self, k: K) -> Option<&'r str> {
        self.at(k).map(|(v, _)| v)
    }
}

/// Turns one record into a contact, checking every field with the core types. `new_id` gives
/// an id to records without APP_NEARSKY_UUID.
pub fn to_contact(
    rec: &RawRecord,
    ctx: &ImportContext<'_>,
    new_id: impl FnOnce() -> ContactId,
) -> Result<Imported, RecordError> {
    let mut warnings = rec.warnings.clone();
    let line = rec.line;
    let known = Known::of(rec);
    let at = |k: K| known.at(k);
    let bad = |k: K, e: &dyn fmt::Display| {
        let (v, l) = at(k).unwrap_or(("", line));
        RecordError::field(l, KNOWN[k as usize], v, e.to_string())
    };
    let required = |k: K| {
        known.get(k).ok_or_else(|| {
            RecordError::record(line, &format!("field {} is missing", KNOWN[k as usize]))
        })
    };

    let call = Callsign::parse(required(K::CALL)?).map_err(|e| bad(K::CALL, &e))?;
    let date = parse_date(required(K::QSO_DATE)?)
        .ok_or_else(|| bad(K::QSO_DATE, &"not a date YYYYMMDD from 1930 on"))?;
    let time_on = parse_time(required(K::TIME_ON)?)
        .ok_or_else(|| bad(K::TIME_ON, &"not a UTC time HHMM or HHMMSS"))?;
    let start = date.and_time(time_on).and_utc();
    let end = match at(K::TIME_OFF) {
        None => None,
        Some((v, _)) => {
            let t =
                parse_time(v).ok_or_else(|| bad(K::TIME_OFF, &"not a UTC time HHMM or HHMMSS"))?;
            let d = match at(K::QSO_DATE_OFF) {
                Some((dv, _)) => parse_date(dv)
                    .ok_or_else(|| bad(K::QSO_DATE_OFF, &"not a date YYYYMMDD from 1930 on"))?,
                None => date,
            };
            let mut e: DateTime<Utc> = d.and_time(t).and_utc();
            // Without QSO_DATE_OFF an end before the start means the next day (ADIF TIME_OFF).
            if at(K::QSO_DATE_OFF).is_none() && e < start {
                e += Duration::days(1);
            }
            Some(e)
        }
    };
    let frequency = at(K::FREQ)
        .map(|(v, _)| Frequency::parse(v).map_err(|e| bad(K::FREQ, &e)))
        .transpose()?;
    let band_field = at(K::BAND)
        .map(|(v, _)| Band::parse(v).map_err(|e| bad(K::BAND, &e)))
        .transpose()?;
    let band = match (frequency, band_field) {
        (Some(f), b) => {
            let derived = Band::containing(f).map_err(|e| bad(K::FREQ, &e))?;
            if let Some(b) = b
                && b != derived
            {
                return Err(bad(
                    K::BAND,
                    &format!(
                        "disagrees with FREQ {f}, which is in the {derived} band; not changed, fix one of them"
                    ),
                ));
            }
            derived
        }
        (None, Some(b)) => b,
        (None, None) => return Err(RecordError::record(line, "neither BAND nor FREQ is given")),
    };
    let mode_text = required(K::MODE)?;
    let mode = Mode::new(mode_text, known.get(K::SUBMODE)).map_err(|e| bad(K::MODE, &e))?;
    let report = |k: K| {
        known
            .get(k)
            .map(|v| Report::parse(v).map_err(|e| bad(k, &e)))
            .transpose()
    };
    let sent = report(K::RST_SENT)?;
    let rcvd = report(K::RST_RCVD)?;
    let power = |k: K| {
        known
            .get(k)
            .map(|v| {
                v.trim()
                    .parse::<f64>()
                    .map_err(|_| bad(k, &"not a number of watts"))
                    .and_then(|w| Power::from_watts(w).map_err(|e| bad(k, &e)))
            })
            .transpose()
    };
    let own_power = power(K::TX_PWR)?;
    let other_power = power(K::RX_PWR)?;
    let locator = |base: K, ext: K| -> Result<Option<Locator>, RecordError> {
        let Some(g) = known.get(base) else {
            return Ok(None);
        };
        let g = g.trim();
        let parsed = match known.get(ext) {
            Some(e) if g.len() == 8 => {
                // Characters 9–10; anything after the 4th character of the extension is
                // ignored.
                let mut text = g.to_string();
                text.extend(e.trim().chars().take(2));
                Locator::parse(&text)
            }
            _ => Locator::parse(g),
        };
        parsed.map(Some).map_err(|e| bad(base, &e))
    };
    let other_locator = locator(K::GRIDSQUARE, K::GRIDSQUARE_EXT)?;
    let mut own_locator = locator(K::MY_GRIDSQUARE, K::MY_GRIDSQUARE_EXT)?;
    if known.get(K::GRIDSQUARE).is_some_and(|g| g.trim().len() > 8) {
        warnings.push(format!(
            "line {line}: GRIDSQUARE holds more than 8 characters; read as locator and extension"
        ));
    }
    let station_field = known
        .get(K::STATION_CALLSIGN)
        .map(|v| (K::STATION_CALLSIGN, v))
        .or_else(|| known.get(K::OPERATOR).map(|v| (K::OPERATOR, v)));
    let own_call = match (station_field, ctx.station) {
        (Some((name, v)), _) => Callsign::parse(v).map_err(|e| bad(name, &e))?,
        (None, Some(s)) => s.clone(),
        (None, None) => {
            return Err(RecordError::record(
                line,
                "no STATION_CALLSIGN or OPERATOR says who logged this; give --station CALL",
            ));
        }
    };
    let operator = match known.get(K::OPERATOR).or_else(|| known.get(K::GUEST_OP)) {
        Some(v) => {
            let o = Callsign::parse(v).map_err(|e| bad(K::OPERATOR, &e))?;
            (o != own_call).then_some(o)
        }
        None => None,
    };
    if own_locator.is_none() {
        own_locator = (ctx.station_locator)(&own_call);
    }
    let outcome = match known.get(K::APP_NEARSKY_OUTCOME) {
        Some(v) => Outcome::parse(v).map_err(|e| bad(K::APP_NEARSKY_OUTCOME, &e))?,
        None => match known
            .get(K::QSO_COMPLETE)
            .map(|v| v.trim().to_ascii_uppercase())
        {
            None => Outcome::Worked,
            Some(v) => match v.as_str() {
                "Y" => Outcome::Worked,
                "N" | "?" => Outcome::Partial,
                "NIL" => Outcome::NoContact,
                _ => return Err(bad(K::QSO_COMPLETE, &"not Y, N, NIL or ?")),
            },
        },
    };
    let id = match known.get(K::APP_NEARSKY_UUID) {
        Some(v) => {
            ContactId(uuid::Uuid::parse_str(v.trim()).map_err(|e| bad(K::APP_NEARSKY_UUID, &e))?)
        }
        None => new_id(),
    };
    let via = known
        .get(K::APP_NEARSKY_VIA)
        .map(|v| Callsign::parse(v).map_err(|e| bad(K::APP_NEARSKY_VIA, &e)))
        .transpose()?;
    let drill = ctx
        .drill
        .map(str::to_string)
        .or_else(|| known.get(K::APP_NEARSKY_DRILL).map(str::to_string))
        .or_else(|| ctx.default_drill.map(str::to_string));
    let note = known
        .get(K::NOTES_INTL)
        .or_else(|| known.get(K::NOTES))
        .or_else(|| known.get(K::COMMENT_INTL))
        .or_else(|| known.get(K::COMMENT))
        .unwrap_or("")
        .replace("\r\n", "\n");
    let antenna = known
        .get(K::MY_ANTENNA_INTL)
        .or_else(|| known.get(K::MY_ANTENNA))
        .map(str::to_string);
    let parts = ContactParts {
        id,
        drill,
        own: StationSnapshot {
            call: own_call.clone(),
            operator,
            locator: own_locator,
            power: own_power,
            antenna,
        },
        call,
        locator: other_locator,
        start,
        end,
        band,
        frequency,
        mode,
        sent,
        rcvd,
        other_power,
        outcome,
        via,
        note,
        origin: Origin::Imported {
            station: own_call,
            file: ctx.file.to_string(),
        },
    };
    let contact = Contact::new(parts).map_err(|e| {
        let first = e.0.first();
        RecordError::record(
            line,
            &first.map_or_else(|| e.to_string(), ToString::to_string),
        )
    })?;
    Ok(Imported { contact, warnings })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ascii_text_folds_accents_and_line_breaks() {
        assert_eq!(ascii_text("José\nÅsa ∑", true), "Jose\r\nAsa ?");
        assert_eq!(ascii_text("a\tb\x1bc", false), "a b c");
    }

    #[test]
    fn dates_and_times_are_read_as_the_standard_writes_them() {
        // ADIF 3.1.7 Date: YYYYMMDD, from 1930-01-01; Time: HHMM or HHMMSS, UTC.
        assert_eq!(parse_date("20251004"), NaiveDate::from_ymd_opt(2025, 10, 4));
        assert_eq!(parse_date("19300101"), NaiveDate::from_ymd_opt(1930, 1, 1));
        for bad in [
            "19291231",
            "20250230",
            "2025104",
            "2025-10-4",
            "２０２５１００４",
            "",
        ] {
            assert_eq!(parse_date(bad), None, "{bad}");
        }
        assert_eq!(parse_time("0959"), NaiveTime::from_hms_opt(9, 59, 0));
        assert_eq!(parse_time("235959"), NaiveTime::from_hms_opt(23, 59, 59));
        for bad in [
            "2400", "0960", "123", "12345", "1234567", "12:34", "+123", "",
        ] {
            assert_eq!(parse_time(bad), None, "{bad}");
        }
    }

    #[test]
    fn record_errors_name_line_field_and_value_visibly() {
        let e = RecordError::field(12, "RST_RCVD", "5\x1b[31m", "bad".into());
        assert_eq!(e.to_string(), "line 12: field RST_RCVD `5\\u{1b}[31m`: bad");
    }
}
