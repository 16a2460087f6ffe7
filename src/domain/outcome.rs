//! What came of a call: worked, partial, or no contact.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// The outcome of one attempt to reach a station. Failed attempts are logged as carefully as
/// contacts: they are half of the evidence about which band works when.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Both sides copied calls and reports: a complete contact.
    Worked,
    /// One-way copy or an incomplete exchange.
    Partial,
    /// Called, nothing heard.
    NoContact,
}

#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("outcome `{0}` is not one of: worked, partial, none")]
pub struct OutcomeError(pub String);

impl Outcome {
    /// The stable key used in storage and on the command line.
    pub fn key(self) -> &'static str {
        match self {
            Self::Worked => "worked",
            Self::Partial => "partial",
            Self::NoContact => "none",
        }
    }

    /// Words for a screen or report.
    pub fn words(self) -> &'static str {
        match self {
            Self::Worked => "worked",
            Self::Partial => "partial",
            Self::NoContact => "no contact",
        }
    }

    /// Whether a contact was actually made (worked or partial).
    pub fn made_contact(self) -> bool {
        !matches!(self, Self::NoContact)
    }

    /// Parses `worked`/`w`, `partial`/`p`, `none`/`n`/`no contact` (any case).
    pub fn parse(input: &str) -> Result<Self, OutcomeError> {
        // The stored keys themselves first: the store reads one per contact.
        match input {
            "worked" => return Ok(Self::Worked),
            "partial" => return Ok(Self::Partial),
            "none" => return Ok(Self::NoContact),
            _ => {}
        }
        match input.trim().to_ascii_lowercase().as_str() {
            "worked" | "w" => Ok(Self::Worked),
            "partial" | "p" => Ok(Self::Partial),
            "none" | "n" | "no contact" | "nocontact" | "no_contact" => Ok(Self::NoContact),
            _ => Err(OutcomeError(input.trim().to_string())),
        }
    }
}

impl fmt::Display for Outcome {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.words())
    }
}

impl FromStr for Outcome {
    type Err = OutcomeError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_round_trip() {
        for o in [Outcome::Worked, Outcome::Partial, Outcome::NoContact] {
            assert_eq!(Outcome::parse(o.key()).unwrap(), o);
        }
        assert_eq!(Outcome::parse("No Contact").unwrap(), Outcome::NoContact);
        assert!(!Outcome::NoContact.made_contact());
        assert!(Outcome::Partial.made_contact());
    }

    #[test]
    fn unknown_outcomes_name_the_value() {
        assert_eq!(
            Outcome::parse("maybe").unwrap_err().to_string(),
            "outcome `maybe` is not one of: worked, partial, none"
        );
    }
}
