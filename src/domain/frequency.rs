//! Frequencies (integer hertz), the ADIF band plan, and the band segment a station uses.

use std::fmt;
use std::str::FromStr;

use serde::{Deserialize, Serialize};

/// Highest frequency accepted: the upper edge of the ADIF `submm` band, 7 500 000 MHz.
const MAX_HZ: u64 = 7_500_000_000_000;

/// Why a text is not a frequency.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum FrequencyError {
    #[error("frequency is empty")]
    Empty,
    #[error("frequency `{0}` is not a number (examples: 5.3625, 5.3625MHz, 5362.5kHz, 5362500Hz)")]
    NotANumber(String),
    #[error("frequency `{0}` is finer than 1 Hz")]
    TooFine(String),
    #[error("frequency `{0}` must be above zero")]
    Zero(String),
    #[error("frequency `{0}` is above 7 500 000 MHz, the top of the ADIF band plan")]
    TooHigh(String),
}

/// A radio frequency, stored as an integer number of hertz.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(transparent)]
pub struct Frequency(u64);

impl Frequency {
    /// A frequency from hertz; zero and values above the band plan are refused.
    pub fn from_hz(hz: u64) -> Result<Self, FrequencyError> {
        match hz {
            0 => Err(FrequencyError::Zero(format!("{hz} Hz"))),
            h if h > MAX_HZ => Err(FrequencyError::TooHigh(format!("{hz} Hz"))),
            h => Ok(Self(h)),
        }
    }

    /// Parses `5.3625` or `5.3625MHz` (MHz), `5362.5kHz` or `5362500Hz`; case and blanks
    /// between number and unit do not matter. Decimal arithmetic is exact: no float rounding.
    pub fn parse(input: &str) -> Result<Self, FrequencyError> {
        let text = input.trim();
        if text.is_empty() {
            return Err(FrequencyError::Empty);
        }
        let lower = text.to_ascii_lowercase();
        let (number, scale_digits) = if let Some(n) = lower.strip_suffix("mhz") {
            (n, 6)
        } else if let Some(n) = lower.strip_suffix("khz") {
            (n, 3)
        } else if let Some(n) = lower.strip_suffix("hz") {
            (n, 0)
        } else {
            (lower.as_str(), 6)
        };
        let hz = decimal_to_scaled(number.trim(), scale_digits).map_err(|e| match e {
            DecimalError::Syntax => FrequencyError::NotANumber(text.to_string()),
            DecimalError::TooFine => FrequencyError::TooFine(text.to_string()),
            DecimalError::Overflow => FrequencyError::TooHigh(text.to_string()),
        })?;
        match hz {
            0 => Err(FrequencyError::Zero(text.to_string())),
            h if h > MAX_HZ => Err(FrequencyError::TooHigh(text.to_string())),
            h => Ok(Self(h)),
        }
    }

    pub fn hz(self) -> u64 {
        self.0
    }

    /// The frequency in MHz, for display and ADIF (exact for every HF frequency).
    pub fn mhz(self) -> f64 {
        self.0 as f64 / 1e6
    }

    /// MHz with no trailing zeros beyond the kHz digits: `7.1`, `5.3625`, `3.5865`.
    pub fn mhz_text(self) -> String {
        let whole = self.0 / 1_000_000;
        let frac = self.0 % 1_000_000;
        if frac == 0 {
            return format!("{whole}");
        }
        let s = format!("{frac:06}");
        format!("{whole}.{}", s.trim_end_matches('0'))
    }
}

impl fmt::Display for Frequency {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{} MHz", self.mhz_text())
    }
}

impl FromStr for Frequency {
    type Err = FrequencyError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

enum DecimalError {
    Syntax,
    TooFine,
    Overflow,
}

/// `"5362.5"` with 3 scale digits → 5 362 500. Plain ASCII digits with at most one point.
fn decimal_to_scaled(s: &str, scale_digits: u32) -> Result<u64, DecimalError> {
    let (int_part, frac_part) = s.split_once('.').unwrap_or((s, ""));
    let digits_ok = |p: &str| p.bytes().all(|b| b.is_ascii_digit());
    if (int_part.is_empty() && frac_part.is_empty())
        || !digits_ok(int_part)
        || !digits_ok(frac_part)
    {
        return Err(DecimalError::Syntax);
    }
    let frac_trimmed = frac_part.trim_end_matches('0');
    if frac_trimmed.len() > scale_digits as usize {
        return Err(DecimalError::TooFine);
    }
    let mut value: u64 = 0;
    for b in int_part.bytes() {
        value = value
            .checked_mul(10)
            .and_then(|v| v.checked_add(u64::from(b - b'0')))
            .ok_or(DecimalError::Overflow)?;
    }
    value = value
        .checked_mul(10u64.pow(scale_digits))
        .ok_or(DecimalError::Overflow)?;
    let mut frac_value: u64 = 0;
    for b in frac_trimmed.bytes() {
        frac_value = frac_value * 10 + u64::from(b - b'0');
    }
    // frac_trimmed.len() <= scale_digits, checked above.
    let frac_scale = 10u64.pow(scale_digits - frac_trimmed.len() as u32);
    value
        .checked_add(frac_value * frac_scale)
        .ok_or(DecimalError::Overflow)
}

/// The ADIF 3.1.7 band enumeration with its edges (inclusive, in Hz).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Band {
    B2190m,
    B630m,
    B560m,
    B160m,
    B80m,
    B60m,
    B40m,
    B30m,
    B20m,
    B17m,
    B15m,
    B12m,
    B10m,
    B8m,
    B6m,
    B5m,
    B4m,
    B2m,
    B1_25m,
    B70cm,
    B33cm,
    B23cm,
    B13cm,
    B9cm,
    B6cm,
    B3cm,
    B1_25cm,
    B6mm,
    B4mm,
    B2_5mm,
    B2mm,
    B1mm,
    Submm,
}

/// (band, ADIF name, lower edge Hz, upper edge Hz) in frequency order. Source: ADIF 3.1.7 Band
/// enumeration (`fixtures/adif-bands.csv`); the test below checks every row against that file.
const BANDS: [(Band, &str, u64, u64); 33] = [
    (Band::B2190m, "2190m", 135_700, 137_800),
    (Band::B630m, "630m", 472_000, 479_000),
    (Band::B560m, "560m", 501_000, 504_000),
    (Band::B160m, "160m", 1_800_000, 2_000_000),
    (Band::B80m, "80m", 3_500_000, 4_000_000),
    (Band::B60m, "60m", 5_060_000, 5_450_000),
    (Band::B40m, "40m", 7_000_000, 7_300_000),
    (Band::B30m, "30m", 10_100_000, 10_150_000),
    (Band::B20m, "20m", 14_000_000, 14_350_000),
    (Band::B17m, "17m", 18_068_000, 18_168_000),
    (Band::B15m, "15m", 21_000_000, 21_450_000),
    (Band::B12m, "12m", 24_890_000, 24_990_000),
    (Band::B10m, "10m", 28_000_000, 29_700_000),
    (Band::B8m, "8m", 40_000_000, 45_000_000),
    (Band::B6m, "6m", 50_000_000, 54_000_000),
    (Band::B5m, "5m", 54_000_001, 69_900_000),
    (Band::B4m, "4m", 70_000_000, 71_000_000),
    (Band::B2m, "2m", 144_000_000, 148_000_000),
    (Band::B1_25m, "1.25m", 222_000_000, 225_000_000),
    (Band::B70cm, "70cm", 420_000_000, 450_000_000),
    (Band::B33cm, "33cm", 902_000_000, 928_000_000),
    (Band::B23cm, "23cm", 1_240_000_000, 1_300_000_000),
    (Band::B13cm, "13cm", 2_300_000_000, 2_450_000_000),
    (Band::B9cm, "9cm", 3_300_000_000, 3_500_000_000),
    (Band::B6cm, "6cm", 5_650_000_000, 5_925_000_000),
    (Band::B3cm, "3cm", 10_000_000_000, 10_500_000_000),
    (Band::B1_25cm, "1.25cm", 24_000_000_000, 24_250_000_000),
    (Band::B6mm, "6mm", 47_000_000_000, 47_200_000_000),
    (Band::B4mm, "4mm", 75_500_000_000, 81_000_000_000),
    (Band::B2_5mm, "2.5mm", 119_980_000_000, 123_000_000_000),
    (Band::B2mm, "2mm", 134_000_000_000, 149_000_000_000),
    (Band::B1mm, "1mm", 241_000_000_000, 250_000_000_000),
    (Band::Submm, "submm", 300_000_000_000, 7_500_000_000_000),
];

/// Why a band could not be found.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum BandError {
    #[error("band `{0}` is not an ADIF band name (examples: 80m, 60m, 40m)")]
    UnknownName(String),
    #[error("frequency {freq} is in no amateur band; nearest: {near}")]
    OutsideBands { freq: Frequency, near: String },
    #[error("frequency {freq} is not in the {band} band ({lower}–{upper} MHz)")]
    NotInBand {
        freq: Frequency,
        band: Band,
        lower: String,
        upper: String,
    },
}

impl Band {
    fn row(self) -> &'static (Band, &'static str, u64, u64) {
        // BANDS lists every variant in declaration order.
        &BANDS[self as usize]
    }

    /// Every ADIF band, lowest first.
    pub fn all() -> impl Iterator<Item = Band> {
        BANDS.iter().map(|r| r.0)
    }

    /// The ADIF name, lower case: `40m`.
    pub fn name(self) -> &'static str {
        self.row().1
    }

    /// Lower and upper edge, inclusive.
    pub fn edges(self) -> (Frequency, Frequency) {
        let r = self.row();
        (Frequency(r.2), Frequency(r.3))
    }

    pub fn contains(self, f: Frequency) -> bool {
        let r = self.row();
        (r.2..=r.3).contains(&f.0)
    }

    /// The band a frequency lies in; outside every band the error names the nearest bands.
    pub fn containing(f: Frequency) -> Result<Band, BandError> {
        if let Some(r) = BANDS.iter().find(|r| (r.2..=r.3).contains(&f.0)) {
            return Ok(r.0);
        }
        let below = BANDS.iter().rev().find(|r| r.3 < f.0);
        let above = BANDS.iter().find(|r| r.2 > f.0);
        let describe = |r: &(Band, &str, u64, u64)| {
            format!(
                "{} ({}–{} MHz)",
                r.1,
                Frequency(r.2).mhz_text(),
                Frequency(r.3).mhz_text()
            )
        };
        let near = match (below, above) {
            (Some(b), Some(a)) => format!("{} below, {} above", describe(b), describe(a)),
            (Some(b), None) => format!("{} below", describe(b)),
            (None, Some(a)) => format!("{} above", describe(a)),
            (None, None) => String::from("none"),
        };
        Err(BandError::OutsideBands { freq: f, near })
    }

    /// Parses an ADIF band name, case-insensitively (`40M` is `40m`).
    pub fn parse(input: &str) -> Result<Band, BandError> {
        // The drill bands, as nearsky writes them, first.
        match input {
            "80m" => return Ok(Band::B80m),
            "60m" => return Ok(Band::B60m),
            "40m" => return Ok(Band::B40m),
            _ => {}
        }
        let t = input.trim();
        BANDS
            .iter()
            .find(|r| r.1.eq_ignore_ascii_case(t))
            .map(|r| r.0)
            .ok_or_else(|| BandError::UnknownName(t.to_string()))
    }

    /// Checks that a frequency lies in this band.
    pub fn check(self, f: Frequency) -> Result<(), BandError> {
        if self.contains(f) {
            return Ok(());
        }
        let (lo, hi) = self.edges();
        Err(BandError::NotInBand {
            freq: f,
            band: self,
            lower: lo.mhz_text(),
            upper: hi.mhz_text(),
        })
    }
}

impl fmt::Display for Band {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Band {
    type Err = BandError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        Self::parse(s)
    }
}

impl Serialize for Band {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(self.name())
    }
}

impl<'de> Deserialize<'de> for Band {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let s = String::deserialize(d)?;
        Self::parse(&s).map_err(serde::de::Error::custom)
    }
}

/// Where within a band a station is: anywhere, a frequency, or a drill's named channel.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Spot {
    /// Only the band is known.
    Anywhere,
    /// A dial frequency inside the band.
    Frequency(Frequency),
    /// A channel of the drill, by name (`NVIS-2`), with its frequency.
    Channel { name: String, frequency: Frequency },
}

/// The band segment in use: the band and, within it, the frequency or named channel.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct BandSegment {
    band: Band,
    spot: Spot,
}

impl BandSegment {
    /// The whole band.
    pub fn band(band: Band) -> Self {
        Self {
            band,
            spot: Spot::Anywhere,
        }
    }

    /// A frequency; its band is derived.
    pub fn frequency(f: Frequency) -> Result<Self, BandError> {
        Ok(Self {
            band: Band::containing(f)?,
            spot: Spot::Frequency(f),
        })
    }

    /// A named channel; the name must not be blank and the frequency must lie in a band.
    pub fn channel(name: &str, f: Frequency) -> Result<Self, BandError> {
        let band = Band::containing(f)?;
        Ok(Self {
            band,
            spot: Spot::Channel {
                name: name.trim().to_string(),
                frequency: f,
            },
        })
    }

    pub fn band_of(&self) -> Band {
        self.band
    }

    pub fn spot(&self) -> &Spot {
        &self.spot
    }

    /// The frequency, when one is known.
    pub fn frequency_of(&self) -> Option<Frequency> {
        match &self.spot {
            Spot::Anywhere => None,
            Spot::Frequency(f) | Spot::Channel { frequency: f, .. } => Some(*f),
        }
    }
}

impl fmt::Display for BandSegment {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.spot {
            Spot::Anywhere => write!(f, "{}", self.band),
            Spot::Frequency(q) => write!(f, "{} {}", self.band, q),
            Spot::Channel { name, frequency } => {
                write!(f, "{} {} ({})", self.band, name, frequency)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn hz(s: &str) -> u64 {
        Frequency::parse(s).unwrap().hz()
    }

    #[test]
    fn all_written_forms_parse_exactly() {
        assert_eq!(hz("5.3625"), 5_362_500);
        assert_eq!(hz("5.3625MHz"), 5_362_500);
        assert_eq!(hz("5.3625 mhz"), 5_362_500);
        assert_eq!(hz("5362.5kHz"), 5_362_500);
        assert_eq!(hz("5362500Hz"), 5_362_500);
        assert_eq!(hz("7"), 7_000_000);
        assert_eq!(hz(".5"), 500_000);
        assert_eq!(hz("3.586500"), 3_586_500);
        assert_eq!(hz("14.074000"), 14_074_000);
    }

    #[test]
    fn bad_frequencies_name_the_value() {
        let e = |s: &str| Frequency::parse(s).unwrap_err().to_string();
        assert!(e("seven").starts_with("frequency `seven` is not a number"));
        assert!(e("7,1").contains("`7,1` is not a number"));
        assert!(e("1.2.3").contains("`1.2.3`"));
        assert!(e("-7.1").contains("`-7.1` is not a number"));
        assert_eq!(e("5.36251234"), "frequency `5.36251234` is finer than 1 Hz");
        assert_eq!(e("0"), "frequency `0` must be above zero");
        assert!(e("99999999999").contains("above 7 500 000 MHz"));
        assert!(e("999999999999999999999999").contains("above 7 500 000 MHz"));
        assert_eq!(e("  "), "frequency is empty");
        assert!(e("MHz").contains("not a number"));
    }

    #[test]
    fn mhz_text_trims_trailing_zeros() {
        assert_eq!(Frequency::from_hz(7_100_000).unwrap().mhz_text(), "7.1");
        assert_eq!(Frequency::from_hz(3_586_500).unwrap().mhz_text(), "3.5865");
        assert_eq!(Frequency::from_hz(7_000_000).unwrap().to_string(), "7 MHz");
    }

    #[test]
    fn band_edges_are_inclusive() {
        let f = |h| Frequency::from_hz(h).unwrap();
        assert_eq!(Band::containing(f(7_000_000)).unwrap(), Band::B40m);
        assert_eq!(Band::containing(f(7_300_000)).unwrap(), Band::B40m);
        assert_eq!(Band::containing(f(54_000_000)).unwrap(), Band::B6m);
        assert_eq!(Band::containing(f(54_000_001)).unwrap(), Band::B5m);
        assert_eq!(Band::containing(f(5_362_500)).unwrap(), Band::B60m);
    }

    #[test]
    fn a_frequency_between_bands_names_its_neighbours() {
        let e = Band::containing(Frequency::from_hz(8_000_000).unwrap()).unwrap_err();
        assert_eq!(
            e.to_string(),
            "frequency 8 MHz is in no amateur band; nearest: 40m (7–7.3 MHz) below, 30m (10.1–10.15 MHz) above"
        );
        let e = Band::containing(Frequency::from_hz(100_000).unwrap()).unwrap_err();
        assert!(e.to_string().ends_with("2190m (0.1357–0.1378 MHz) above"));
    }

    #[test]
    fn band_names_are_case_insensitive() {
        assert_eq!(Band::parse("40M").unwrap(), Band::B40m);
        assert_eq!(Band::parse("1.25cm").unwrap(), Band::B1_25cm);
        assert_eq!(Band::parse("SUBMM").unwrap(), Band::Submm);
        assert_eq!(
            Band::parse("41m").unwrap_err().to_string(),
            "band `41m` is not an ADIF band name (examples: 80m, 60m, 40m)"
        );
    }

    #[test]
    fn band_rows_are_in_declaration_order() {
        for (i, r) in BANDS.iter().enumerate() {
            assert_eq!(r.0 as usize, i, "{}", r.1);
        }
    }

    #[test]
    fn segments_derive_and_check_the_band() {
        let f = Frequency::parse("5.3625").unwrap();
        let s = BandSegment::channel("NVIS-2", f).unwrap();
        assert_eq!(s.band_of(), Band::B60m);
        assert_eq!(s.frequency_of(), Some(f));
        assert_eq!(s.to_string(), "60m NVIS-2 (5.3625 MHz)");
        let e = Band::B80m.check(f).unwrap_err();
        assert_eq!(
            e.to_string(),
            "frequency 5.3625 MHz is not in the 80m band (3.5–4 MHz)"
        );
        assert_eq!(BandSegment::band(Band::B40m).frequency_of(), None);
    }
}
