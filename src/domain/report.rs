//! Signal reports: RST (`59`, `599`, spoken `5/9`) and dB reports of digital modes (`-12`).

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// Widest dB report accepted (digital modes report about −30 to +30 dB): common practice, no
/// source.
const DB_LIMIT: i8 = 60;

/// Why a text is not a report.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ReportError {
    #[error("report is empty")]
    Empty,
    #[error("report `{0}` is neither RST (59, 599, 5/9) nor a signed dB figure (-12, +05)")]
    Form(String),
    #[error("report `{text}`: readability {value} must be 1-5")]
    Readability { text: String, value: u8 },
    #[error("report `{text}`: strength {value} must be 1-9")]
    Strength { text: String, value: u8 },
    #[error("report `{text}`: tone {value} must be 1-9")]
    Tone { text: String, value: u8 },
    #[error("report `{text}`: {value} dB is outside -60..=+60 dB")]
    Db { text: String, value: i32 },
}

/// A signal report.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Report {
    /// Readability 1–5, strength 1–9 and, for CW and digital, tone 1–9.
    Rst {
        readability: u8,
        strength: u8,
        tone: Option<u8>,
    },
    /// Signal-to-noise in dB as digital modes report it; always written with a sign.
    Db(i8),
}

impl Report {
    pub fn parse(input: &str) -> Result<Self, ReportError> {
        let text = input.trim();
        if text.is_empty() {
            return Err(ReportError::Empty);
        }
        let form = || ReportError::Form(text.to_string());
        if let Some(rest) = text.strip_prefix(['+', '-']) {
            if rest.is_empty() || rest.len() > 3 || !rest.bytes().all(|b| b.is_ascii_digit()) {
                return Err(form());
            }
            let magnitude: i32 = rest.parse().map_err(|_| form())?;
            let value = if text.starts_with('-') {
                -magnitude
            } else {
                magnitude
            };
            if value.abs() > i32::from(DB_LIMIT) {
                return Err(ReportError::Db {
                    text: text.to_string(),
                    value,
                });
            }
            // |value| <= 60, so it fits an i8.
            return Ok(Self::Db(value as i8));
        }
        let b = text.as_bytes();
        let d = |i: usize| b.get(i).filter(|c| c.is_ascii_digit()).map(|c| c - b'0');
        let (r, s, t) = match (b.len(), text.split_once('/')) {
            (3, Some((x, y))) if x.len() == 1 && y.len() == 1 => {
                (digit(text, x)?, digit(text, y)?, None)
            }
            (_, Some(_)) => return Err(form()),
            (2, None) => (d(0).ok_or_else(form)?, d(1).ok_or_else(form)?, None),
            (3, None) => (
                d(0).ok_or_else(form)?,
                d(1).ok_or_else(form)?,
                Some(d(2).ok_or_else(form)?),
            ),
            _ => return Err(form()),
        };
        if !(1..=5).contains(&r) {
            return Err(ReportError::Readability {
                text: text.to_string(),
                value: r,
            });
        }
        if !(1..=9).contains(&s) {
            return Err(ReportError::Strength {
                text: text.to_string(),
                value: s,
            });
        }
        if let Some(t) = t
            && !(1..=9).contains(&t)
        {
            return Err(ReportError::Tone {
                text: text.to_string(),
                value: t,
            });
        }
        Ok(Self::Rst {
            readability: r,
            strength: s,
            tone: t,
        })
    }

    /// Readability, where the form has it.
    pub fn readability(&self) -> Option<u8> {
        match self {
            Self::Rst { readability, .. } => Some(*readability),
            Self::Db(_) => None,
        }
    }

    /// Strength, where the form has it.
    pub fn strength(&self) -> Option<u8> {
        match self {
            Self::Rst { strength, .. } => Some(*strength),
            Self::Db(_) => None,
        }
    }

    /// A number for "best report" comparisons within one form: higher is better. RST ranks by
    /// readability then strength; dB by value. Forms are not comparable with each other.
    pub fn rank(&self) -> (u8, i32) {
        match self {
            Self::Rst {
                readability,
                strength,
                ..
            } => (1, i32::from(*readability) * 10 + i32::from(*strength)),
            Self::Db(d) => (0, i32::from(*d)),
        }
    }
}

/// One digit of the spoken `5/9` form.
fn digit(text: &str, part: &str) -> Result<u8, ReportError> {
    part.chars()
        .next()
        .and_then(|c| c.to_digit(10))
        .map(|d| d as u8)
        .ok_or_else(|| ReportError::Form(text.to_string()))
}

impl fmt::Display for Report {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Rst {
                readability,
                strength,
                tone: Some(t),
            } => write!(f, "{readability}{strength}{t}"),
            Self::Rst {
                readability,
                strength,
                tone: None,
            } => write!(f, "{readability}{strength}"),
            Self::Db(d) => write!(f, "{d:+03}"),
        }
    }
}

impl FromStr for Report {
    type Err = ReportError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

impl Serialize for Report {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.to_string())
    }
}

impl<'de> Deserialize<'de> for Report {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = String::deserialize(d)?;
        Self::parse(&s).map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn e(s: &str) -> String {
        Report::parse(s).unwrap_err().to_string()
    }

    #[test]
    fn rst_forms_expose_readability_and_strength() {
        let r = Report::parse("59").unwrap();
        assert_eq!((r.readability(), r.strength()), (Some(5), Some(9)));
        assert_eq!(r.to_string(), "59");
        let r = Report::parse("599").unwrap();
        assert_eq!(
            r,
            Report::Rst {
                readability: 5,
                strength: 9,
                tone: Some(9)
            }
        );
        let r = Report::parse("5/7").unwrap();
        assert_eq!(r.to_string(), "57");
        assert_eq!(Report::parse("11").unwrap().strength(), Some(1));
    }

    #[test]
    fn db_reports_keep_their_sign() {
        assert_eq!(Report::parse("-12").unwrap(), Report::Db(-12));
        assert_eq!(Report::parse("+05").unwrap().to_string(), "+05");
        assert_eq!(Report::parse("-3").unwrap().to_string(), "-03");
        assert_eq!(Report::parse("-12").unwrap().readability(), None);
    }

    #[test]
    fn bad_reports_name_the_value_and_the_part() {
        assert_eq!(e("69"), "report `69`: readability 6 must be 1-5");
        assert_eq!(e("50"), "report `50`: strength 0 must be 1-9");
        assert_eq!(e("590"), "report `590`: tone 0 must be 1-9");
        assert_eq!(e("-99"), "report `-99`: -99 dB is outside -60..=+60 dB");
        assert!(e("loud").starts_with("report `loud` is neither RST"));
        assert!(e("5999").contains("`5999`"));
        assert!(e("5/").contains("`5/`"));
        assert!(e("-").contains("`-`"));
        assert_eq!(e(""), "report is empty");
    }

    #[test]
    fn ranks_order_within_a_form() {
        assert!(Report::parse("59").unwrap().rank() > Report::parse("57").unwrap().rank());
        assert!(Report::parse("-3").unwrap().rank() > Report::parse("-12").unwrap().rank());
    }
}
