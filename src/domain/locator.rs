//! Maidenhead locators: a station's position as a grid cell.
//!
//! A locator names a cell, not a point: 2 characters (field, 20° × 10°), 4 (square, 2° × 1°),
//! 6 (subsquare, 5′ × 2.5′), 8 (extended square, 30″ × 15″) or 10 (extended subsquare,
//! 1.25″ × 0.625″). Pairs alternate longitude and latitude and count from the south-west corner
//! (−180°, −90°). Ranges are strict: field `A`–`R`, square `0`–`9`, subsquare `a`–`x`,
//! extended `0`–`9`, extended subsquare `a`–`x`. Input is case-insensitive; display is
//! canonical (`JN58td25ab`). Source: the Maidenhead system as described in the project's
//! propagation sheet §1 (IARU Region 1 locator).

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

use super::latlon::{LatLon, LatLonError};

/// Finest longitude unit: 1.25″ = 1/2880°. Finest latitude unit: 0.625″ = 1/5760°.
const LON_UNITS_PER_DEG: f64 = 2880.0;
const LAT_UNITS_PER_DEG: f64 = 5760.0;
/// Cell widths in finest units, per pair (field, square, subsquare, extended, ext. subsquare).
const LON_CELL_UNITS: [u32; 5] = [20 * 2880, 2 * 2880, 240, 24, 1];
const LAT_CELL_UNITS: [u32; 5] = [10 * 5760, 5760, 240, 24, 1];

/// How fine a locator is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Precision {
    /// 2 characters: 20° × 10°. Far too coarse for distance or bearing.
    Field,
    /// 4 characters: 2° × 1° (about 158 × 111 km at 45° N).
    Square,
    /// 6 characters: 5′ × 2.5′ (about 6.6 × 4.6 km at 45° N).
    Subsquare,
    /// 8 characters: 30″ × 15″ (about 660 × 460 m at 45° N).
    Extended,
    /// 10 characters: 1.25″ × 0.625″ (about 27 × 19 m at 45° N).
    ExtendedSubsquare,
}

impl Precision {
    /// Number of characters of a locator of this precision.
    pub fn chars(self) -> usize {
        2 * self.pairs()
    }

    fn pairs(self) -> usize {
        match self {
            Self::Field => 1,
            Self::Square => 2,
            Self::Subsquare => 3,
            Self::Extended => 4,
            Self::ExtendedSubsquare => 5,
        }
    }

    /// The precision of a locator with this many characters.
    pub fn from_chars(n: usize) -> Option<Self> {
        match n {
            2 => Some(Self::Field),
            4 => Some(Self::Square),
            6 => Some(Self::Subsquare),
            8 => Some(Self::Extended),
            10 => Some(Self::ExtendedSubsquare),
            _ => None,
        }
    }

    /// Cell size in degrees: (latitude height, longitude width).
    pub fn cell_degrees(self) -> (f64, f64) {
        let i = self.pairs() - 1;
        (
            f64::from(LAT_CELL_UNITS[i]) / LAT_UNITS_PER_DEG,
            f64::from(LON_CELL_UNITS[i]) / LON_UNITS_PER_DEG,
        )
    }
}

/// Why a text is not a locator, quoting the text as given.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LocatorError {
    #[error("locator is empty")]
    Empty,
    #[error("locator `{0}` contains a space")]
    Space(String),
    #[error("locator `{text}` has {len} characters; a locator has 2, 4, 6, 8 or 10")]
    Length { text: String, len: usize },
    #[error("locator `{text}`: character {pos} `{ch}` must be {expected}")]
    Character {
        text: String,
        pos: usize,
        ch: char,
        expected: &'static str,
    },
    #[error("cannot make a locator from that position: {0}")]
    Position(#[from] LatLonError),
}

/// A checked Maidenhead locator, stored in canonical case.
#[derive(Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Locator {
    bytes: [u8; 10],
    len: u8,
}

impl Locator {
    /// Parses a locator of 2, 4, 6, 8 or 10 characters (case-insensitive; surrounding blanks
    /// are ignored, inner ones are not).
    pub fn parse(input: &str) -> Result<Self, LocatorError> {
        let text = input.trim();
        if text.is_empty() {
            return Err(LocatorError::Empty);
        }
        if text.chars().any(char::is_whitespace) {
            return Err(LocatorError::Space(text.to_string()));
        }
        let len = text.chars().count();
        if Precision::from_chars(len).is_none() {
            return Err(LocatorError::Length {
                text: text.to_string(),
                len,
            });
        }
        let mut bytes = [0u8; 10];
        for (pos, ch) in text.chars().enumerate() {
            let pair = pos / 2;
            let (ok, canonical, expected) = match pair {
                0 => (
                    ('A'..='R').contains(&ch.to_ascii_uppercase()),
                    ch.to_ascii_uppercase(),
                    "a letter A-R (field)",
                ),
                1 => (ch.is_ascii_digit(), ch, "a digit 0-9 (square)"),
                2 => (
                    ('a'..='x').contains(&ch.to_ascii_lowercase()),
                    ch.to_ascii_lowercase(),
                    "a letter a-x (subsquare)",
                ),
                3 => (ch.is_ascii_digit(), ch, "a digit 0-9 (extended square)"),
                _ => (
                    ('a'..='x').contains(&ch.to_ascii_lowercase()),
                    ch.to_ascii_lowercase(),
                    "a letter a-x (extended subsquare)",
                ),
            };
            if !ok {
                return Err(LocatorError::Character {
                    text: text.to_string(),
                    pos: pos + 1,
                    ch,
                    expected,
                });
            }
            // Checked above: `canonical` is ASCII.
            bytes[pos] = canonical as u8;
        }
        // `len` is at most 10 here.
        Ok(Self {
            bytes,
            len: len as u8,
        })
    }

    /// The locator of the given precision that contains a position. Latitude +90° is clamped
    /// into the top row and longitude +180° wraps to −180° (common practice, no source).
    pub fn from_lat_lon(pos: LatLon, precision: Precision) -> Result<Self, LocatorError> {
        let pos = LatLon::new(pos.lat, pos.lon)?;
        let lon_total = 360 * 2880;
        let lat_total = 180 * 5760;
        let x = ((pos.lon + 180.0) * LON_UNITS_PER_DEG).floor() as i64;
        let x = x.rem_euclid(lon_total) as u32;
        let y = ((pos.lat + 90.0) * LAT_UNITS_PER_DEG).floor() as i64;
        let y = y.clamp(0, lat_total - 1) as u32;
        let mut bytes = [0u8; 10];
        for pair in 0..precision.pairs() {
            let wrap = |units: &[u32; 5], v: u32| {
                let outer = if pair == 0 { u32::MAX } else { units[pair - 1] };
                (v % outer) / units[pair]
            };
            let xi = wrap(&LON_CELL_UNITS, x) as u8;
            let yi = wrap(&LAT_CELL_UNITS, y) as u8;
            let base = match pair {
                0 => b'A',
                2 | 4 => b'a',
                _ => b'0',
            };
            bytes[2 * pair] = base + xi;
            bytes[2 * pair + 1] = base + yi;
        }
        Ok(Self {
            bytes,
            len: precision.chars() as u8,
        })
    }

    /// The canonical text, e.g. `JN58td`.
    pub fn as_str(&self) -> &str {
        // Only ASCII bytes are ever stored.
        std::str::from_utf8(&self.bytes[..usize::from(self.len)]).unwrap_or("")
    }

    pub fn precision(&self) -> Precision {
        Precision::from_chars(usize::from(self.len)).unwrap_or(Precision::Field)
    }

    /// A 2-character field is accepted (files carry them) but says nothing useful about
    /// distance: its cell is about 1500 × 1100 km.
    pub fn is_too_coarse_for_distance(&self) -> bool {
        self.precision() == Precision::Field
    }

    /// Index (0-based) of each pair's longitude and latitude character.
    fn pair_values(&self, pair: usize) -> (u32, u32) {
        let base = match pair {
            0 => b'A',
            2 | 4 => b'a',
            _ => b'0',
        };
        (
            u32::from(self.bytes[2 * pair] - base),
            u32::from(self.bytes[2 * pair + 1] - base),
        )
    }

    /// The south-west corner of the cell.
    pub fn south_west(&self) -> LatLon {
        let (mut x, mut y) = (0u32, 0u32);
        for pair in 0..self.precision().pairs() {
            let (xi, yi) = self.pair_values(pair);
            x += xi * LON_CELL_UNITS[pair];
            y += yi * LAT_CELL_UNITS[pair];
        }
        LatLon {
            lat: f64::from(y) / LAT_UNITS_PER_DEG - 90.0,
            lon: f64::from(x) / LON_UNITS_PER_DEG - 180.0,
        }
    }

    /// The centre of the cell: the point to use for distance and bearing. For 4 characters and
    /// more this is computed by the `maidenhead` crate once the ranges have been checked here
    /// (the crate itself accepts letters beyond `R` and `x`).
    pub fn centre(&self) -> LatLon {
        let (dlat, dlon) = self.cell_size();
        if self.precision() != Precision::Field
            && let Ok((lon, lat)) = maidenhead::grid_to_longlat(self.as_str())
        {
            return LatLon { lat, lon };
        }
        let sw = self.south_west();
        LatLon {
            lat: sw.lat + dlat / 2.0,
            lon: sw.lon + dlon / 2.0,
        }
    }

    /// Cell size in degrees: (latitude height, longitude width).
    pub fn cell_size(&self) -> (f64, f64) {
        self.precision().cell_degrees()
    }

    /// The four corners, counter-clockwise from the south-west.
    pub fn corners(&self) -> [LatLon; 4] {
        let sw = self.south_west();
        let (dlat, dlon) = self.cell_size();
        [
            sw,
            LatLon {
                lat: sw.lat,
                lon: sw.lon + dlon,
            },
            LatLon {
                lat: sw.lat + dlat,
                lon: sw.lon + dlon,
            },
            LatLon {
                lat: sw.lat + dlat,
                lon: sw.lon,
            },
        ]
    }

    /// True when this locator lies inside `coarser` (`JN17ga` lies in `JN17`).
    pub fn lies_in(&self, coarser: &Locator) -> bool {
        coarser.len <= self.len
            && self.bytes[..usize::from(coarser.len)] == coarser.bytes[..usize::from(coarser.len)]
    }

    /// Truncates to a coarser precision (no-op when already that coarse).
    pub fn truncated(&self, precision: Precision) -> Locator {
        let mut out = *self;
        let n = precision.chars().min(usize::from(self.len));
        out.bytes[n..].fill(0);
        out.len = n as u8;
        out
    }
}

impl fmt::Display for Locator {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

impl fmt::Debug for Locator {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Locator({})", self.as_str())
    }
}

impl FromStr for Locator {
    type Err = LocatorError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

impl Serialize for Locator {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.as_str())
    }
}

impl<'de> Deserialize<'de> for Locator {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = String::deserialize(d)?;
        Self::parse(&s).map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn err(s: &str) -> String {
        match Locator::parse(s) {
            Ok(l) => panic!("`{s}` should be rejected, got {l}"),
            Err(e) => e.to_string(),
        }
    }

    #[test]
    fn canonical_case_is_upper_digits_lower() {
        assert_eq!(Locator::parse("jn58TD").unwrap().as_str(), "JN58td");
        assert_eq!(Locator::parse("io91WM41Xx").unwrap().as_str(), "IO91wm41xx");
        assert_eq!(Locator::parse(" JN58 ").unwrap().as_str(), "JN58");
    }

    #[test]
    fn edge_locators_are_valid() {
        for s in ["AA00aa", "RR99xx", "AA", "RR", "AA00aa00aa", "RR99xx99xx"] {
            assert!(Locator::parse(s).is_ok(), "{s}");
        }
    }

    #[test]
    fn invalid_locators_name_value_position_and_rule() {
        assert_eq!(
            err("SS00"),
            "locator `SS00`: character 1 `S` must be a letter A-R (field)"
        );
        assert_eq!(
            err("JN58ty"),
            "locator `JN58ty`: character 6 `y` must be a letter a-x (subsquare)"
        );
        assert_eq!(
            err("5N58"),
            "locator `5N58`: character 1 `5` must be a letter A-R (field)"
        );
        assert_eq!(
            err("JN5"),
            "locator `JN5` has 3 characters; a locator has 2, 4, 6, 8 or 10"
        );
        assert_eq!(
            err("JN58td25ab12"),
            "locator `JN58td25ab12` has 12 characters; a locator has 2, 4, 6, 8 or 10"
        );
        assert_eq!(err("JN 58"), "locator `JN 58` contains a space");
        assert_eq!(
            err("JNA8"),
            "locator `JNA8`: character 3 `A` must be a digit 0-9 (square)"
        );
        assert_eq!(
            err("JN58td2a"),
            "locator `JN58td2a`: character 8 `a` must be a digit 0-9 (extended square)"
        );
        assert_eq!(
            err("JN58td25zz"),
            "locator `JN58td25zz`: character 9 `z` must be a letter a-x (extended subsquare)"
        );
        assert_eq!(err(""), "locator is empty");
        assert!(err("JNé8").contains("character 3 `é`"));
    }

    #[test]
    fn a_field_is_accepted_but_flagged_coarse() {
        let l = Locator::parse("jn").unwrap();
        assert_eq!(l.as_str(), "JN");
        assert!(l.is_too_coarse_for_distance());
        assert!(!Locator::parse("JN58").unwrap().is_too_coarse_for_distance());
        let c = l.centre();
        assert!((c.lat - 45.0).abs() < 1e-12 && (c.lon - 10.0).abs() < 1e-12);
    }

    #[test]
    fn square_centre_is_a_subsquare_corner() {
        // propagation sheet §1: the centre of JN17 (47.5 N, 3.0 E) is a corner of ll/lm/ml/mm.
        let c = Locator::parse("JN17").unwrap().centre();
        assert!((c.lat - 47.5).abs() < 1e-12 && (c.lon - 3.0).abs() < 1e-12);
        let mm = Locator::parse("JN17mm").unwrap().south_west();
        assert!((mm.lat - 47.5).abs() < 1e-12 && (mm.lon - 3.0).abs() < 1e-12);
    }

    #[test]
    fn nesting_and_truncation() {
        let fine = Locator::parse("JN17ga").unwrap();
        let coarse = Locator::parse("JN17").unwrap();
        assert!(fine.lies_in(&coarse));
        assert!(!coarse.lies_in(&fine));
        assert_eq!(fine.truncated(Precision::Square), coarse);
    }

    #[test]
    fn poles_and_antimeridian_are_clamped_and_wrapped() {
        let top = Locator::from_lat_lon(
            LatLon {
                lat: 90.0,
                lon: 180.0,
            },
            Precision::Subsquare,
        )
        .unwrap();
        assert_eq!(top.as_str(), "AR09ax");
        let e = Locator::from_lat_lon(
            LatLon {
                lat: 95.0,
                lon: 0.0,
            },
            Precision::Square,
        )
        .unwrap_err();
        assert!(e.to_string().contains("latitude 95"));
    }
}
