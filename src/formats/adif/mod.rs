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
            &format!("{:.1}", paths.get(a, b).centre.distance_km),
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

fn parse_date(v: &str) -> Option<NaiveDate> {
    if v.len() != 8 || !v.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    let d = NaiveDate::parse_from_str(v, "%Y%m%d").ok()?;
    (d >= NaiveDate::from_ymd_opt(1930, 1, 1)?).then_some(d)
}

fn parse_time(v: &str) -> Option<NaiveTime> {
    if !v.bytes().all(|b| b.is_ascii_digit()) {
        return None;
    }
    match v.len() {
        4 => NaiveTime::parse_from_str(v, "%H%M").ok(),
        6 => NaiveTime::parse_from_str(v, "%H%M%S").ok(),
        _ => None,
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
    let at = |name: &str| rec.get_with_line(name);
    let bad = |name: &str, e: &dyn fmt::Display| {
        let (v, l) = at(name).unwrap_or(("", line));
        RecordError::field(l, name, v, e.to_string())
    };
    let required = |name: &str| {
        at(name)
            .map(|(v, _)| v)
            .ok_or_else(|| RecordError::record(line, &format!("field {name} is missing")))
    };

    let call = Callsign::parse(required("CALL")?).map_err(|e| bad("CALL", &e))?;
    let date = parse_date(required("QSO_DATE")?)
        .ok_or_else(|| bad("QSO_DATE", &"not a date YYYYMMDD from 1930 on"))?;
    let time_on = parse_time(required("TIME_ON")?)
        .ok_or_else(|| bad("TIME_ON", &"not a UTC time HHMM or HHMMSS"))?;
    let start = date.and_time(time_on).and_utc();
    let end = match at("TIME_OFF") {
        None => None,
        Some((v, _)) => {
            let t =
                parse_time(v).ok_or_else(|| bad("TIME_OFF", &"not a UTC time HHMM or HHMMSS"))?;
            let d = match at("QSO_DATE_OFF") {
                Some((dv, _)) => parse_date(dv)
                    .ok_or_else(|| bad("QSO_DATE_OFF", &"not a date YYYYMMDD from 1930 on"))?,
                None => date,
            };
            let mut e: DateTime<Utc> = d.and_time(t).and_utc();
            // Without QSO_DATE_OFF an end before the start means the next day (ADIF TIME_OFF).
            if at("QSO_DATE_OFF").is_none() && e < start {
                e += Duration::days(1);
            }
            Some(e)
        }
    };
    let frequency = at("FREQ")
        .map(|(v, _)| Frequency::parse(v).map_err(|e| bad("FREQ", &e)))
        .transpose()?;
    let band_field = at("BAND")
        .map(|(v, _)| Band::parse(v).map_err(|e| bad("BAND", &e)))
        .transpose()?;
    let band = match (frequency, band_field) {
        (Some(f), b) => {
            let derived = Band::containing(f).map_err(|e| bad("FREQ", &e))?;
            if let Some(b) = b
                && b != derived
            {
                return Err(bad(
                    "BAND",
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
    let mode_text = required("MODE")?;
    let mode = Mode::new(mode_text, rec.get("SUBMODE")).map_err(|e| bad("MODE", &e))?;
    let report = |name: &str| {
        rec.get(name)
            .map(|v| Report::parse(v).map_err(|e| bad(name, &e)))
            .transpose()
    };
    let sent = report("RST_SENT")?;
    let rcvd = report("RST_RCVD")?;
    let power = |name: &str| {
        rec.get(name)
            .map(|v| {
                v.trim()
                    .parse::<f64>()
                    .map_err(|_| bad(name, &"not a number of watts"))
                    .and_then(|w| Power::from_watts(w).map_err(|e| bad(name, &e)))
            })
            .transpose()
    };
    let own_power = power("TX_PWR")?;
    let other_power = power("RX_PWR")?;
    let locator = |base: &str, ext: &str| -> Result<Option<Locator>, RecordError> {
        let Some(g) = rec.get(base) else {
            return Ok(None);
        };
        let mut text = g.trim().to_string();
        if let Some(e) = rec.get(ext)
            && text.len() == 8
        {
            // Characters 9–10; anything after the 4th character of the extension is ignored.
            text.push_str(&e.trim().chars().take(2).collect::<String>());
        }
        Locator::parse(&text).map(Some).map_err(|e| bad(base, &e))
    };
    let other_locator = locator("GRIDSQUARE", "GRIDSQUARE_EXT")?;
    let mut own_locator = locator("MY_GRIDSQUARE", "MY_GRIDSQUARE_EXT")?;
    if rec.get("GRIDSQUARE").is_some_and(|g| g.trim().len() > 8) {
        warnings.push(format!(
            "line {line}: GRIDSQUARE holds more than 8 characters; read as locator and extension"
        ));
    }
    let station_field = rec
        .get("STATION_CALLSIGN")
        .map(|v| ("STATION_CALLSIGN", v))
        .or_else(|| rec.get("OPERATOR").map(|v| ("OPERATOR", v)));
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
    let operator = match rec.get("OPERATOR").or_else(|| rec.get("GUEST_OP")) {
        Some(v) => {
            let o = Callsign::parse(v).map_err(|e| bad("OPERATOR", &e))?;
            (o != own_call).then_some(o)
        }
        None => None,
    };
    if own_locator.is_none() {
        own_locator = (ctx.station_locator)(&own_call);
    }
    let outcome = match rec.get("APP_NEARSKY_OUTCOME") {
        Some(v) => Outcome::parse(v).map_err(|e| bad("APP_NEARSKY_OUTCOME", &e))?,
        None => match rec
            .get("QSO_COMPLETE")
            .map(|v| v.trim().to_ascii_uppercase())
        {
            None => Outcome::Worked,
            Some(v) => match v.as_str() {
                "Y" => Outcome::Worked,
                "N" | "?" => Outcome::Partial,
                "NIL" => Outcome::NoContact,
                _ => return Err(bad("QSO_COMPLETE", &"not Y, N, NIL or ?")),
            },
        },
    };
    let id = match rec.get("APP_NEARSKY_UUID") {
        Some(v) => {
            ContactId(uuid::Uuid::parse_str(v.trim()).map_err(|e| bad("APP_NEARSKY_UUID", &e))?)
        }
        None => new_id(),
    };
    let via = rec
        .get("APP_NEARSKY_VIA")
        .map(|v| Callsign::parse(v).map_err(|e| bad("APP_NEARSKY_VIA", &e)))
        .transpose()?;
    let drill = ctx
        .drill
        .map(str::to_string)
        .or_else(|| rec.get("APP_NEARSKY_DRILL").map(str::to_string));
    let note = rec
        .get("NOTES_INTL")
        .or_else(|| rec.get("NOTES"))
        .or_else(|| rec.get("COMMENT_INTL"))
        .or_else(|| rec.get("COMMENT"))
        .unwrap_or("")
        .replace("\r\n", "\n");
    let antenna = rec
        .get("MY_ANTENNA_INTL")
        .or_else(|| rec.get("MY_ANTENNA"))
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
    fn record_errors_name_line_field_and_value_visibly() {
        let e = RecordError::field(12, "RST_RCVD", "5\x1b[31m", "bad".into());
        assert_eq!(e.to_string(), "line 12: field RST_RCVD `5\\u{1b}[31m`: bad");
    }
}
