//! Call signs: the identity of every station in a drill.
//!
//! A call sign is normalised to upper case and checked for structure only: a base call of
//! letters and digits (at least one of each), optionally preceded by a prefix designator
//! (`EA8/Q3NET`, operating from another country or area) and followed by one suffix such as
//! `/P` (portable), `/M` (mobile), `/MM`, `/AM`, `/QRP`, `/A` or a call-area digit (`/3`).
//! No prefix-to-country table is used: drills use fictional `Q` calls anyway.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// Shortest and longest base call accepted (common practice, no source: real base calls run
/// from 3 characters such as `Q1A` to about 7; special-event calls are longer).
const BASE_LEN: std::ops::RangeInclusive<usize> = 3..=10;
/// Longest prefix designator (`VP2E`, `3D2`): common practice, no source.
const PREFIX_MAX: usize = 4;
/// Suffixes with a meaning in the trade; a single call-area digit is accepted as well.
const SUFFIXES: [&str; 6] = ["P", "M", "MM", "AM", "QRP", "A"];

/// Why a text is not a call sign. Every message quotes the text as typed.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum CallsignError {
    #[error("call sign is empty")]
    Empty,
    #[error("call sign `{0}` contains a space")]
    Space(String),
    #[error("call sign `{text}` contains `{ch}`: only letters, digits and `/` are allowed")]
    BadCharacter { text: String, ch: char },
    #[error("call sign `{0}` has an empty part between `/` separators")]
    EmptyPart(String),
    #[error("call sign `{0}` has too many `/` parts (at most PREFIX/BASE/SUFFIX)")]
    TooManyParts(String),
    #[error("call sign `{text}`: base call `{base}` must be {min} to {max} characters long")]
    BaseLength {
        text: String,
        base: String,
        min: usize,
        max: usize,
    },
    #[error("call sign `{text}`: base call `{base}` needs at least one digit")]
    NoDigit { text: String, base: String },
    #[error("call sign `{text}`: base call `{base}` needs at least one letter")]
    NoLetter { text: String, base: String },
    #[error(
        "call sign `{text}`: `{suffix}` is not a known suffix (use P, M, MM, AM, QRP, A or one digit)"
    )]
    UnknownSuffix { text: String, suffix: String },
    #[error(
        "call sign `{text}`: prefix designator `{prefix}` must be 1 to {PREFIX_MAX} letters/digits with a letter"
    )]
    BadPrefix { text: String, prefix: String },
}

/// A checked, upper-case call sign with its parts.
#[derive(Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub struct Callsign {
    text: String,
    base_start: u8,
    base_end: u8,
}

impl Callsign {
    /// Parses and normalises a call sign (surrounding blanks are ignored).
    pub fn parse(input: &str) -> Result<Self, CallsignError> {
        let trimmed = input.trim();
        if trimmed.is_empty() {
            return Err(CallsignError::Empty);
        }
        let text = trimmed.to_ascii_uppercase();
        if let Some(ch) = text
            .chars()
            .find(|c| !c.is_ascii_alphanumeric() && *c != '/')
        {
            return Err(if ch.is_whitespace() {
                CallsignError::Space(trimmed.to_string())
            } else {
                CallsignError::BadCharacter {
                    text: trimmed.to_string(),
                    ch,
                }
            });
        }
        // At most three parts; a fourth is an error. No allocation for the split.
        let mut parts: [&str; 4] = [""; 4];
        let mut n = 0;
        for p in text.split('/') {
            if n == 4 {
                return Err(CallsignError::TooManyParts(trimmed.to_string()));
            }
            parts[n] = p;
            n += 1;
        }
        let parts = &parts[..n];
        if parts.iter().any(|p| p.is_empty()) {
            return Err(CallsignError::EmptyPart(trimmed.to_string()));
        }
        let (prefix, base, suffix) = match parts {
            [base] => (None, *base, None),
            [first, second] if is_suffix(second) => (None, *first, Some(*second)),
            [first, second] if first.len() <= PREFIX_MAX && second.len() > first.len() => {
                (Some(*first), *second, None)
            }
            [_, second] => {
                return Err(CallsignError::UnknownSuffix {
                    text: trimmed.to_string(),
                    suffix: (*second).to_string(),
                });
            }
            [prefix, base, suffix] => (Some(*prefix), *base, Some(*suffix)),
            _ => return Err(CallsignError::TooManyParts(trimmed.to_string())),
        };
        if let Some(prefix) = prefix {
            let ok = prefix.len() <= PREFIX_MAX && prefix.chars().any(|c| c.is_ascii_alphabetic());
            if !ok {
                return Err(CallsignError::BadPrefix {
                    text: trimmed.to_string(),
                    prefix: prefix.to_string(),
                });
            }
        }
        check_base(trimmed, base)?;
        if let Some(suffix) = suffix
            && !is_suffix(suffix)
        {
            return Err(CallsignError::UnknownSuffix {
                text: trimmed.to_string(),
                suffix: suffix.to_string(),
            });
        }
        let base_start = prefix.map_or(0, |p| p.len() + 1);
        // Lengths are bounded above (base <= 10, prefix <= 4, suffix <= 3), so they fit in u8.
        let base_start = u8::try_from(base_start).unwrap_or(u8::MAX);
        let base_end = base_start.saturating_add(u8::try_from(base.len()).unwrap_or(u8::MAX));
        Ok(Self {
            text,
            base_start,
            base_end,
        })
    }

    /// The whole call as used on the air, e.g. `EA8/Q3NET/P`.
    pub fn as_str(&self) -> &str {
        &self.text
    }

    /// The base call without prefix designator or suffix, e.g. `Q3NET`.
    pub fn base(&self) -> &str {
        &self.text[usize::from(self.base_start)..usize::from(self.base_end)]
    }

    /// The prefix designator, if any (`EA8` in `EA8/Q3NET`).
    pub fn prefix(&self) -> Option<&str> {
        (self.base_start > 0).then(|| &self.text[..usize::from(self.base_start) - 1])
    }

    /// The suffix, if any (`P` in `Q3NET/P`).
    pub fn suffix(&self) -> Option<&str> {
        let end = usize::from(self.base_end);
        (end < self.text.len()).then(|| &self.text[end + 1..])
    }
}

/// The base call of a call sign that was already checked (as stored): `EA8/Q3NET/P` →
/// `Q3NET`, without allocating. Follows the same rules as [`Callsign::parse`].
pub fn base_of(checked: &str) -> &str {
    // Most calls have no `/` at all.
    if !checked.as_bytes().contains(&b'/') {
        return checked;
    }
    let mut parts = checked.split('/');
    let first = parts.next().unwrap_or(checked);
    match (parts.next(), parts.next()) {
        (None, _) => first,
        (Some(second), None) if is_suffix(second) => first,
        (Some(second), None) => second,
        (Some(middle), Some(_)) => middle,
    }
}

fn is_suffix(part: &str) -> bool {
    SUFFIXES.contains(&part) || (part.len() == 1 && part.as_bytes()[0].is_ascii_digit())
}

fn check_base(text: &str, base: &str) -> Result<(), CallsignError> {
    if !BASE_LEN.contains(&base.len()) {
        return Err(CallsignError::BaseLength {
            text: text.to_string(),
            base: base.to_string(),
            min: *BASE_LEN.start(),
            max: *BASE_LEN.end(),
        });
    }
    if !base.chars().any(|c| c.is_ascii_digit()) {
        return Err(CallsignError::NoDigit {
            text: text.to_string(),
            base: base.to_string(),
        });
    }
    if !base.chars().any(|c| c.is_ascii_alphabetic()) {
        return Err(CallsignError::NoLetter {
            text: text.to_string(),
            base: base.to_string(),
        });
    }
    Ok(())
}

impl fmt::Display for Callsign {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.text)
    }
}

impl FromStr for Callsign {
    type Err = CallsignError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

impl TryFrom<String> for Callsign {
    type Error = CallsignError;
    fn try_from(s: String) -> Result<Self, Self::Error> {
        Self::parse(&s)
    }
}

impl From<Callsign> for String {
    fn from(c: Callsign) -> Self {
        c.text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(s: &str) -> String {
        match Callsign::parse(s) {
            Ok(c) => panic!("`{s}` should be rejected, got {c}"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn plain_calls_are_upper_cased() {
        let c = Callsign::parse(" q3net ").unwrap();
        assert_eq!(c.as_str(), "Q3NET");
        assert_eq!(c.base(), "Q3NET");
        assert_eq!(c.prefix(), None);
        assert_eq!(c.suffix(), None);
    }

    #[test]
    fn suffixes_and_prefixes_are_split_into_parts() {
        let c = Callsign::parse("Q3NET/P").unwrap();
        assert_eq!((c.base(), c.suffix()), ("Q3NET", Some("P")));
        let c = Callsign::parse("q7ab/qrp").unwrap();
        assert_eq!((c.base(), c.suffix()), ("Q7AB", Some("QRP")));
        let c = Callsign::parse("Q7AB/3").unwrap();
        assert_eq!(c.suffix(), Some("3"));
        let c = Callsign::parse("EA8/Q3NET").unwrap();
        assert_eq!(
            (c.prefix(), c.base(), c.suffix()),
            (Some("EA8"), "Q3NET", None)
        );
        let c = Callsign::parse("EA8/Q3NET/MM").unwrap();
        assert_eq!(
            (c.prefix(), c.base(), c.suffix()),
            (Some("EA8"), "Q3NET", Some("MM"))
        );
        for s in ["Q3NET/M", "Q3NET/AM", "Q3NET/A"] {
            assert!(Callsign::parse(s).is_ok(), "{s}");
        }
    }

    #[test]
    fn base_of_agrees_with_parse() {
        for s in [
            "Q3NET",
            "Q3NET/P",
            "EA8/Q3NET",
            "EA8/Q3NET/MM",
            "Q7AB/3",
            "Q1/Q3NET",
        ] {
            assert_eq!(base_of(s), Callsign::parse(s).unwrap().base(), "{s}");
        }
    }

    #[test]
    fn a_space_is_named_in_the_message() {
        assert_eq!(err("Q3 NET"), "call sign `Q3 NET` contains a space");
    }

    #[test]
    fn invalid_calls_name_the_value_and_the_problem() {
        assert_eq!(err(""), "call sign is empty");
        assert!(err("Q3-NET").contains("`Q3-NET` contains `-`"));
        assert!(err("Q3NET//P").contains("empty part"));
        assert!(err("QNET").contains("`QNET` needs at least one digit"));
        assert!(err("123").contains("`123` needs at least one letter"));
        assert!(err("Q3").contains("must be 3 to 10 characters"));
        assert!(err("Q3NETQ3NETQ3NET").contains("`Q3NETQ3NETQ3NET` must be 3 to 10"));
        assert!(err("Q3NET/XYZW").contains("`XYZW` is not a known suffix"));
        assert!(err("Q3NET/PP/P").contains("prefix designator `Q3NET`"));
        assert!(err("A/B/C/D").contains("too many"));
        assert!(err("Q3NËT").contains("contains `Ë`"));
    }

    #[test]
    fn serde_round_trips_through_the_text() {
        let c = Callsign::parse("Q3NET/P").unwrap();
        let json = serde_json::to_string(&c).unwrap();
        assert_eq!(json, "\"Q3NET/P\"");
        let back: Callsign = serde_json::from_str(&json).unwrap();
        assert_eq!(back, c);
        assert!(serde_json::from_str::<Callsign>("\"Q3 NET\"").is_err());
    }
}
