//! The contact: one attempt to reach another station, worked or not, with everything a net
//! controller needs afterwards.

use std::fmt;

use chrono::{DateTime, NaiveDate, Utc};
use serde::{Deserialize, Serialize};
pub use uuid::Uuid;

use super::callsign::Callsign;
use super::frequency::{Band, Frequency};
use super::locator::Locator;
use super::mode::Mode;
use super::outcome::Outcome;
use super::power::Power;
use super::report::Report;
use super::utc::parse_utc;

/// Longest free text kept in a note or description (characters): common practice, no source.
pub const MAX_TEXT: usize = 2000;

/// A contact's stable identity, kept across edits, exports and merges.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(transparent)]
pub struct ContactId(pub Uuid);

impl ContactId {
    /// The first 8 characters of the UUID: how lists show a contact, and enough to find it
    /// again (`nearsky edit 3f2a91c0`).
    pub fn short(&self) -> String {
        let mut s = self.0.to_string();
        s.truncate(8);
        s
    }
}

impl fmt::Display for ContactId {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.0.fmt(f)
    }
}

/// The logging station as it was when the contact was logged.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StationSnapshot {
    pub call: Callsign,
    pub operator: Option<Callsign>,
    pub locator: Option<Locator>,
    pub power: Option<Power>,
    pub antenna: Option<String>,
}

/// Where a record came from.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Origin {
    /// Typed into this logbook.
    LoggedHere,
    /// Read from another station's file.
    Imported { station: Callsign, file: String },
}

/// The parts of a contact, as plain typed data. [`Contact::new`] checks how they fit together.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ContactParts {
    pub id: ContactId,
    pub drill: Option<String>,
    pub own: StationSnapshot,
    pub call: Callsign,
    pub locator: Option<Locator>,
    pub start: DateTime<Utc>,
    pub end: Option<DateTime<Utc>>,
    pub band: Band,
    pub frequency: Option<Frequency>,
    pub mode: Mode,
    pub sent: Option<Report>,
    pub rcvd: Option<Report>,
    pub other_power: Option<Power>,
    pub outcome: Outcome,
    pub via: Option<Callsign>,
    pub note: String,
    pub origin: Origin,
}

/// A field of a contact, named as an operator would name it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Field {
    Call,
    Locator,
    Time,
    EndTime,
    Band,
    Frequency,
    Mode,
    Sent,
    Rcvd,
    Power,
    OtherPower,
    Outcome,
    Via,
    Note,
    Drill,
    Antenna,
}

impl Field {
    pub fn label(self) -> &'static str {
        match self {
            Self::Call => "call",
            Self::Locator => "locator",
            Self::Time => "time",
            Self::EndTime => "end time",
            Self::Band => "band",
            Self::Frequency => "frequency",
            Self::Mode => "mode",
            Self::Sent => "report sent",
            Self::Rcvd => "report received",
            Self::Power => "power",
            Self::OtherPower => "their power",
            Self::Outcome => "outcome",
            Self::Via => "relayed via",
            Self::Note => "note",
            Self::Drill => "drill",
            Self::Antenna => "antenna",
        }
    }
}

impl fmt::Display for Field {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.label())
    }
}

/// One problem with one field.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{field}: {message}")]
pub struct FieldError {
    pub field: Field,
    pub message: String,
}

impl FieldError {
    pub fn new(field: Field, message: impl fmt::Display) -> Self {
        Self {
            field,
            message: message.to_string(),
        }
    }
}

/// Every problem found in a contact, at least one.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ContactError(pub Vec<FieldError>);

impl fmt::Display for ContactError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let parts: Vec<String> = self.0.iter().map(ToString::to_string).collect();
        f.write_str(&parts.join("; "))
    }
}

impl std::error::Error for ContactError {}

/// A checked contact. Its parts fit together: the frequency lies in the band, the end is not
/// before the start, a contact that was not made carries no received report, and the other
/// station is not the logging station.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "ContactParts", into = "ContactParts")]
pub struct Contact(ContactParts);

impl Contact {
    pub fn new(parts: ContactParts) -> Result<Self, ContactError> {
        let mut errors = Vec::new();
        if let Some(f) = parts.frequency
            && let Err(e) = parts.band.check(f)
        {
            errors.push(FieldError::new(Field::Frequency, e));
        }
        if let Some(end) = parts.end
            && end < parts.start
        {
            errors.push(FieldError::new(
                Field::EndTime,
                format!(
                    "end {} is before start {}",
                    end.format("%Y-%m-%d %H:%M:%S"),
                    parts.start.format("%Y-%m-%d %H:%M:%S")
                ),
            ));
        }
        if parts.outcome == Outcome::NoContact
            && let Some(r) = parts.rcvd
        {
            errors.push(FieldError::new(
                Field::Rcvd,
                format!("report `{r}` received, but the outcome is no contact"),
            ));
        }
        if parts.call.base() == parts.own.call.base() {
            errors.push(FieldError::new(
                Field::Call,
                format!("`{}` is the logging station's own call", parts.call),
            ));
        }
        if let Some(v) = &parts.via
            && (v.base() == parts.call.base() || v.base() == parts.own.call.base())
        {
            errors.push(FieldError::new(
                Field::Via,
                format!("relay `{v}` must be a third station, not one end of the contact"),
            ));
        }
        check_text(&mut errors, Field::Note, &parts.note);
        if let Some(d) = &parts.drill {
            check_text(&mut errors, Field::Drill, d);
        }
        if let Some(a) = &parts.own.antenna {
            check_text(&mut errors, Field::Antenna, a);
        }
        if errors.is_empty() {
            Ok(Self(parts))
        } else {
            Err(ContactError(errors))
        }
    }

    pub fn into_parts(self) -> ContactParts {
        self.0
    }
}

fn check_text(errors: &mut Vec<FieldError>, field: Field, text: &str) {
    let n = text.chars().count();
    if n > MAX_TEXT {
        errors.push(FieldError::new(
            field,
            format!("{n} characters, at most {MAX_TEXT} are kept"),
        ));
    }
}

impl std::ops::Deref for Contact {
    type Target = ContactParts;
    fn deref(&self) -> &ContactParts {
        &self.0
    }
}

impl TryFrom<ContactParts> for Contact {
    type Error = ContactError;
    fn try_from(p: ContactParts) -> Result<Self, Self::Error> {
        Self::new(p)
    }
}

impl From<Contact> for ContactParts {
    fn from(c: Contact) -> Self {
        c.0
    }
}

/// A contact as typed: every field a string, as an entry screen or command line holds it.
/// Nothing typed is lost when validation fails.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct ContactForm {
    pub call: String,
    pub locator: String,
    pub time: String,
    pub end_time: String,
    pub band: String,
    pub frequency: String,
    pub mode: String,
    pub sent: String,
    pub rcvd: String,
    pub power: String,
    pub other_power: String,
    pub outcome: String,
    pub via: String,
    pub note: String,
}

/// What a form needs besides what was typed.
#[derive(Debug, Clone)]
pub struct FormContext {
    pub id: ContactId,
    pub own: StationSnapshot,
    pub drill: Option<String>,
    /// The date a bare time of day (`1405`) falls on.
    pub today: NaiveDate,
    pub origin: Origin,
}

impl ContactForm {
    /// Checks every field and returns the contact, or every problem found (one per field at
    /// least, so an entry screen can mark them all at once).
    pub fn validate(&self, ctx: &FormContext) -> Result<Contact, ContactError> {
        let mut errors = Vec::new();
        let call = take_field(
            &mut errors,
            Field::Call,
            Callsign::parse(&self.call).map_err(|e| e.to_string()),
        );
        let locator = take_field(
            &mut errors,
            Field::Locator,
            optional(&self.locator, Locator::parse),
        );
        let start = take_field(
            &mut errors,
            Field::Time,
            parse_utc(&self.time, ctx.today).map_err(|e| e.to_string()),
        );
        let end = take_field(
            &mut errors,
            Field::EndTime,
            optional(&self.end_time, |s| parse_utc(s, ctx.today)),
        );
        let frequency = take_field(
            &mut errors,
            Field::Frequency,
            optional(&self.frequency, Frequency::parse),
        );
        let band_typed = take_field(&mut errors, Field::Band, optional(&self.band, Band::parse));
        let mode = take_field(
            &mut errors,
            Field::Mode,
            Mode::parse(&self.mode).map_err(|e| e.to_string()),
        );
        let sent = take_field(
            &mut errors,
            Field::Sent,
            optional(&self.sent, Report::parse),
        );
        let rcvd = take_field(
            &mut errors,
            Field::Rcvd,
            optional(&self.rcvd, Report::parse),
        );
        let power = take_field(
            &mut errors,
            Field::Power,
            optional(&self.power, Power::parse),
        );
        let other_power = take_field(
            &mut errors,
            Field::OtherPower,
            optional(&self.other_power, Power::parse),
        );
        let outcome = take_field(
            &mut errors,
            Field::Outcome,
            Outcome::parse(&self.outcome).map_err(|e| e.to_string()),
        );
        let via = take_field(
            &mut errors,
            Field::Via,
            optional(&self.via, Callsign::parse),
        );
        let band = match (frequency.flatten(), band_typed.flatten()) {
            (Some(f), typed) => take_field(
                &mut errors,
                Field::Frequency,
                Band::containing(f)
                    .map_err(|e| e.to_string())
                    .and_then(|b| match typed {
                        Some(t) if t != b => Err(format!("{f} is in the {b} band, not {t}")),
                        _ => Ok(b),
                    }),
            ),
            (None, Some(b)) => Some(b),
            (None, None) if band_typed.is_some() && frequency.is_some() => take_field(
                &mut errors,
                Field::Band,
                Err("give a band or a frequency".to_string()),
            ),
            (None, None) => None,
        };
        let (Some(call), Some(locator), Some(start), Some(end), Some(band), Some(mode)) =
            (call, locator, start, end, band, mode)
        else {
            return Err(ContactError(errors));
        };
        let (Some(sent), Some(rcvd), Some(power), Some(other_power), Some(outcome), Some(via)) =
            (sent, rcvd, power, other_power, outcome, via)
        else {
            return Err(ContactError(errors));
        };
        if !errors.is_empty() {
            return Err(ContactError(errors));
        }
        let mut own = ctx.own.clone();
        if power.is_some() {
            own.power = power;
        }
        Contact::new(ContactParts {
            id: ctx.id,
            drill: ctx.drill.clone(),
            own,
            call,
            locator,
            start,
            end,
            band,
            frequency: frequency.flatten(),
            mode,
            sent,
            rcvd,
            other_power,
            outcome,
            via,
            note: self.note.trim().to_string(),
            origin: ctx.origin.clone(),
        })
    }
}

/// Keeps a parsed value, or records why it failed.
fn take_field<T>(errors: &mut Vec<FieldError>, field: Field, r: Result<T, String>) -> Option<T> {
    match r {
        Ok(v) => Some(v),
        Err(m) => {
            errors.push(FieldError::new(field, m));
            None
        }
    }
}

/// An empty field is `None`; anything else must parse.
fn optional<T, E: fmt::Display>(
    text: &str,
    parse: impl Fn(&str) -> Result<T, E>,
) -> Result<Option<T>, String> {
    if text.trim().is_empty() {
        Ok(None)
    } else {
        parse(text).map(Some).map_err(|e| e.to_string())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ctx() -> FormContext {
        FormContext {
            id: ContactId(Uuid::from_u128(1)),
            own: StationSnapshot {
                call: Callsign::parse("Q3NET").unwrap(),
                operator: None,
                locator: Some(Locator::parse("JN17ga").unwrap()),
                power: Some(Power::from_watts(50.0).unwrap()),
                antenna: Some("80/40 m link dipole, 40 m links open".into()),
            },
            drill: Some("Autumn exercise".into()),
            today: NaiveDate::from_ymd_opt(2026, 12, 1).unwrap(),
            origin: Origin::LoggedHere,
        }
    }

    fn form() -> ContactForm {
        ContactForm {
            call: "q4shl".into(),
            locator: "jn17ha".into(),
            time: "1405".into(),
            frequency: "7.1".into(),
            mode: "lsb".into(),
            sent: "59".into(),
            rcvd: "5/7".into(),
            outcome: "worked".into(),
            ..ContactForm::default()
        }
    }

    fn fields(e: &ContactError) -> Vec<Field> {
        e.0.iter().map(|f| f.field).collect()
    }

    #[test]
    fn a_complete_form_gives_a_contact() {
        let c = form().validate(&ctx()).unwrap();
        assert_eq!(c.call.as_str(), "Q4SHL");
        assert_eq!(c.band, Band::B40m);
        assert_eq!(c.frequency.unwrap().hz(), 7_100_000);
        assert_eq!(c.mode.to_string(), "SSB/LSB");
        assert_eq!(c.start.to_rfc3339(), "2026-12-01T14:05:00+00:00");
        assert_eq!(c.own.power.unwrap().watts(), 50.0);
        assert_eq!(c.rcvd.unwrap().to_string(), "57");
    }

    #[test]
    fn every_bad_field_is_reported_at_once_by_name() {
        let mut f = form();
        f.call = "Q4 SHL".into();
        f.locator = "JN58ty".into();
        f.frequency = "8.0".into();
        f.rcvd = "69".into();
        let e = f.validate(&ctx()).unwrap_err();
        assert_eq!(
            fields(&e),
            vec![Field::Call, Field::Locator, Field::Rcvd, Field::Frequency]
        );
        let text = e.to_string();
        assert!(
            text.contains("call: call sign `Q4 SHL` contains a space"),
            "{text}"
        );
        assert!(text.contains("report received: report `69`"), "{text}");
        assert!(
            text.contains("frequency: frequency 8 MHz is in no amateur band"),
            "{text}"
        );
    }

    #[test]
    fn band_and_frequency_must_agree() {
        let mut f = form();
        f.band = "80m".into();
        let e = f.validate(&ctx()).unwrap_err();
        assert_eq!(
            e.to_string(),
            "frequency: 7.1 MHz is in the 40m band, not 80m"
        );
        f.frequency.clear();
        assert_eq!(f.validate(&ctx()).unwrap().band, Band::B80m);
        f.band.clear();
        let e = f.validate(&ctx()).unwrap_err();
        assert_eq!(e.to_string(), "band: give a band or a frequency");
    }

    #[test]
    fn cross_field_rules_are_enforced() {
        let mut f = form();
        f.outcome = "none".into();
        let e = f.validate(&ctx()).unwrap_err();
        assert_eq!(
            e.to_string(),
            "report received: report `57` received, but the outcome is no contact"
        );
        let mut f = form();
        f.call = "Q3NET/P".into();
        assert!(
            f.validate(&ctx())
                .unwrap_err()
                .to_string()
                .contains("`Q3NET/P` is the logging station's own call")
        );
        let mut f = form();
        f.via = "Q4SHL".into();
        assert!(
            f.validate(&ctx())
                .unwrap_err()
                .to_string()
                .contains("relayed via: relay `Q4SHL`")
        );
        let mut f = form();
        f.end_time = "1400".into();
        assert!(
            f.validate(&ctx())
                .unwrap_err()
                .to_string()
                .contains("end time: end 2026-12-01 14:00:00 is before")
        );
        let mut f = form();
        f.note = "x".repeat(MAX_TEXT + 1);
        assert!(
            f.validate(&ctx())
                .unwrap_err()
                .to_string()
                .starts_with("note: 2001 characters")
        );
    }

    #[test]
    fn a_failed_attempt_needs_no_reports() {
        let mut f = form();
        f.outcome = "none".into();
        f.rcvd.clear();
        f.sent.clear();
        let c = f.validate(&ctx()).unwrap();
        assert_eq!(c.outcome, Outcome::NoContact);
    }

    #[test]
    fn contacts_serialise_and_revalidate() {
        let c = form().validate(&ctx()).unwrap();
        let json = serde_json::to_string(&c).unwrap();
        let back: Contact = serde_json::from_str(&json).unwrap();
        assert_eq!(back, c);
    }
}
