//! Transmitter power in watts.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// Highest power accepted as plausible. Common practice, no source: above what amateur
/// licences allow anywhere the authors know of (from memory: 1.5 kW in the USA), so a larger
/// figure is a typing slip.
pub const MAX_WATTS: f64 = 5000.0;

/// Why a text is not a power.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PowerError {
    #[error("power is empty")]
    Empty,
    #[error("power `{0}` is not a number of watts (examples: 5, 50W, 0.5 W)")]
    NotANumber(String),
    #[error("power `{0}` must be above 0 W")]
    NotPositive(String),
    #[error("power `{0}` is above the {MAX_WATTS} W sanity limit")]
    TooHigh(String),
}

/// Power in watts: more than zero, at most [`MAX_WATTS`].
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Serialize, Deserialize)]
#[serde(try_from = "f64", into = "f64")]
pub struct Power(f64);

impl Power {
    pub fn from_watts(w: f64) -> Result<Self, PowerError> {
        if w.is_nan() {
            return Err(PowerError::NotANumber(format!("{w}")));
        }
        if w <= 0.0 {
            return Err(PowerError::NotPositive(format!("{w} W")));
        }
        if w > MAX_WATTS {
            return Err(PowerError::TooHigh(format!("{w} W")));
        }
        Ok(Self(w))
    }

    /// Parses `50`, `50W`, `0.5 w`.
    pub fn parse(input: &str) -> Result<Self, PowerError> {
        let text = input.trim();
        if text.is_empty() {
            return Err(PowerError::Empty);
        }
        let number = text.strip_suffix(['W', 'w']).unwrap_or(text).trim();
        let plain = !number.is_empty() && number.bytes().all(|b| b.is_ascii_digit() || b == b'.');
        let w: f64 = if plain { number.parse().ok() } else { None }
            .ok_or_else(|| PowerError::NotANumber(text.to_string()))?;
        Self::from_watts(w).map_err(|e| match e {
            PowerError::NotPositive(_) => PowerError::NotPositive(text.to_string()),
            PowerError::TooHigh(_) => PowerError::TooHigh(text.to_string()),
            other => other,
        })
    }

    pub fn watts(self) -> f64 {
        self.0
    }
}

impl fmt::Display for Power {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} W", self.0)
    }
}

impl FromStr for Power {
    type Err = PowerError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

impl TryFrom<f64> for Power {
    type Error = PowerError;
    fn try_from(w: f64) -> Result<Self, Self::Error> {
        Self::from_watts(w)
    }
}

impl From<Power> for f64 {
    fn from(p: Power) -> Self {
        p.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn watts_parse_with_or_without_unit() {
        assert_eq!(Power::parse("50").unwrap().watts(), 50.0);
        assert_eq!(Power::parse("50W").unwrap().watts(), 50.0);
        assert_eq!(Power::parse(" 0.5 w ").unwrap().watts(), 0.5);
        assert_eq!(Power::parse("5").unwrap().to_string(), "5 W");
    }

    #[test]
    fn bad_powers_name_the_value() {
        let e = |s: &str| Power::parse(s).unwrap_err().to_string();
        assert_eq!(e("0"), "power `0` must be above 0 W");
        assert_eq!(e("6000W"), "power `6000W` is above the 5000 W sanity limit");
        assert_eq!(
            e("-5"),
            "power `-5` is not a number of watts (examples: 5, 50W, 0.5 W)"
        );
        assert!(e("lots").contains("`lots`"));
        assert!(e("1e3").contains("`1e3`"));
        assert!(e("inf").contains("`inf`"));
        assert!(Power::from_watts(f64::NAN).is_err());
    }
}
