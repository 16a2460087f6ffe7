//! The Sun's position and the day's rise, set and twilight times.
//!
//! NOAA solar-calculator method, after Meeus, *Astronomical Algorithms* (low-precision solar
//! coordinates), as written out step by step in the propagation sheet §5. Stated accuracy
//! about ±0.0167° within ±72° latitude. Elevations are geometric (no refraction): that is what
//! propagation logic needs.

use chrono::{DateTime, Duration, NaiveDate, Utc};
use serde::Serialize;

use super::latlon::LatLon;

/// Zenith angle of sunrise and sunset: 90° + 34′ refraction + 16′ semi-diameter.
pub const ZENITH_RISE_SET_DEG: f64 = 90.833;
/// Zenith angle of civil dawn and dusk.
pub const ZENITH_CIVIL_DEG: f64 = 96.0;

/// Where the Sun is, seen from a place.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SunPosition {
    /// Degrees above the geometric horizon (negative below).
    pub elevation_deg: f64,
    /// Degrees clockwise from true north.
    pub azimuth_deg: f64,
}

impl SunPosition {
    pub fn zenith_deg(&self) -> f64 {
        90.0 - self.elevation_deg
    }
}

/// Light at a place, for propagation: the ionosphere answers to the Sun.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Daylight {
    /// Sun's centre above −0.833°.
    Day,
    /// Sun between −0.833° and −12° (civil and nautical twilight).
    Twilight,
    /// Sun more than 12° below the horizon.
    Night,
}

impl Daylight {
    pub fn of(elevation_deg: f64) -> Daylight {
        if elevation_deg >= 90.0 - ZENITH_RISE_SET_DEG {
            Daylight::Day
        } else if elevation_deg >= -12.0 {
            Daylight::Twilight
        } else {
            Daylight::Night
        }
    }

    pub fn words(self) -> &'static str {
        match self {
            Self::Day => "day",
            Self::Twilight => "twilight",
            Self::Night => "night",
        }
    }
}

/// Julian centuries since J2000.0 for a UTC instant (ΔT ignored, as in the NOAA method).
fn julian_century(t: DateTime<Utc>) -> f64 {
    let unix = t.timestamp() as f64 + f64::from(t.timestamp_subsec_nanos()) * 1e-9;
    let jd = 2_440_587.5 + unix / 86_400.0;
    (jd - 2_451_545.0) / 36_525.0
}

/// Declination (degrees) and equation of time (minutes) at Julian century `t` (steps 1–6).
fn declination_and_eot(t: f64) -> (f64, f64) {
    let l0 = (280.46646 + t * (36000.76983 + t * 0.0003032)).rem_euclid(360.0);
    let m = 357.52911 + t * (35999.05029 - 0.0001537 * t);
    let e = 0.016708634 - t * (0.000042037 + 0.0000001267 * t);
    let mr = m.to_radians();
    let c = mr.sin() * (1.914602 - t * (0.004817 + 0.000014 * t))
        + (2.0 * mr).sin() * (0.019993 - 0.000101 * t)
        + (3.0 * mr).sin() * 0.000289;
    let true_long = l0 + c;
    let omega = (125.04 - 1934.136 * t).to_radians();
    let app_long = true_long - 0.00569 - 0.00478 * omega.sin();
    let eps0 = 23.0 + (26.0 + (21.448 - t * (46.815 + t * (0.00059 - t * 0.001813))) / 60.0) / 60.0;
    let eps = eps0 + 0.00256 * omega.cos();
    let decl = (eps.to_radians().sin() * app_long.to_radians().sin())
        .asin()
        .to_degrees();
    let y = (eps.to_radians() / 2.0).tan().powi(2);
    let l0r = l0.to_radians();
    let eot = 4.0
        * (y * (2.0 * l0r).sin() - 2.0 * e * mr.sin() + 4.0 * e * y * mr.sin() * (2.0 * l0r).cos()
            - 0.5 * y * y * (4.0 * l0r).sin()
            - 1.25 * e * e * (2.0 * mr).sin())
        .to_degrees();
    (decl, eot)
}

/// The Sun's geometric elevation and azimuth at a place and instant (steps 7–8).
pub fn position(at: LatLon, t: DateTime<Utc>) -> SunPosition {
    let (h, lat, d, cos_zen) = SunAt::new(t).hour_angle_and_zenith(at);
    let elevation_deg = 90.0 - cos_zen.acos().to_degrees();
    let az = h
        .sin()
        .atan2(h.cos() * lat.sin() - d.tan() * lat.cos())
        .to_degrees()
        + 180.0;
    SunPosition {
        elevation_deg,
        azimuth_deg: az.rem_euclid(360.0),
    }
}

/// What the Sun's position at an instant depends on besides the place: for many places at one
/// instant, computed once.
#[derive(Debug, Clone, Copy)]
pub struct SunAt {
    decl_deg: f64,
    eot_minutes: f64,
    minutes: f64,
}

impl SunAt {
    pub fn new(t: DateTime<Utc>) -> Self {
        let (decl_deg, eot_minutes) = declination_and_eot(julian_century(t));
        Self {
            decl_deg,
            eot_minutes,
            minutes: minutes_of_day(t),
        }
    }

    /// The elevation at a place: the same figure as [`position`] gives.
    pub fn elevation_deg(&self, at: LatLon) -> f64 {
        let (_, _, _, cos_zen) = self.hour_angle_and_zenith(at);
        90.0 - cos_zen.acos().to_degrees()
    }

    /// Hour angle, latitude and declination (radians) and the cosine of the zenith angle.
    fn hour_angle_and_zenith(&self, at: LatLon) -> (f64, f64, f64, f64) {
        let tst = (self.minutes + self.eot_minutes + 4.0 * at.lon).rem_euclid(1440.0);
        let h = (tst / 4.0 - 180.0).to_radians();
        let (lat, d) = (at.lat.to_radians(), self.decl_deg.to_radians());
        let cos_zen = (lat.sin() * d.sin() + lat.cos() * d.cos() * h.cos()).clamp(-1.0, 1.0);
        (h, lat, d, cos_zen)
    }
}

/// Minutes since 00:00 UTC, with fractions.
fn minutes_of_day(t: DateTime<Utc>) -> f64 {
    use chrono::Timelike;
    let secs = f64::from(t.num_seconds_from_midnight()) + f64::from(t.nanosecond()) * 1e-9;
    secs / 60.0
}

/// What the Sun does on a day at a place.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SunEvent {
    /// The event happens at this instant.
    At(DateTime<Utc>),
    /// The Sun stays above the event's zenith all day (polar day, or twilight all night).
    AlwaysAbove,
    /// The Sun stays below it all day (polar night).
    AlwaysBelow,
}

impl SunEvent {
    pub fn time(&self) -> Option<DateTime<Utc>> {
        match self {
            Self::At(t) => Some(*t),
            _ => None,
        }
    }
}

/// Rise, set and civil twilight for one local solar day.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct SunDay {
    pub sunrise: SunEvent,
    pub sunset: SunEvent,
    pub civil_dawn: SunEvent,
    pub civil_dusk: SunEvent,
    pub solar_noon: DateTime<Utc>,
}

fn at_minutes(date: NaiveDate, minutes: f64) -> DateTime<Utc> {
    let midnight = date.and_hms_opt(0, 0, 0).unwrap_or_default().and_utc();
    midnight + Duration::milliseconds((minutes * 60_000.0).round() as i64)
}

/// One event (rise when `rising`, else set) for the zenith angle, iterated twice on δ and E
/// (step 9). `date` is the UTC date whose local solar day is meant: the event may fall on the
/// previous or next UTC date for places far from Greenwich.
fn event(at: LatLon, date: NaiveDate, zenith_deg: f64, rising: bool) -> SunEvent {
    let mut minutes = 720.0 - 4.0 * at.lon;
    let mut result = SunEvent::AlwaysBelow;
    for _ in 0..3 {
        let (decl, eot) = declination_and_eot(julian_century(at_minutes(date, minutes)));
        let (lat, d) = (at.lat.to_radians(), decl.to_radians());
        let cos_h0 = zenith_deg.to_radians().cos() / (lat.cos() * d.cos()) - lat.tan() * d.tan();
        if !cos_h0.is_finite() || cos_h0 > 1.0 {
            return SunEvent::AlwaysBelow;
        }
        if cos_h0 < -1.0 {
            return SunEvent::AlwaysAbove;
        }
        let h0 = cos_h0.acos().to_degrees();
        let noon = 720.0 - 4.0 * at.lon - eot;
        minutes = if rising {
            noon - 4.0 * h0
        } else {
            noon + 4.0 * h0
        };
        result = SunEvent::At(at_minutes(date, minutes));
    }
    result
}

/// Sunrise, sunset and civil twilight for the local solar day of `date` at a place.
pub fn day(at: LatLon, date: NaiveDate) -> SunDay {
    let (_, eot) = declination_and_eot(julian_century(at_minutes(date, 720.0 - 4.0 * at.lon)));
    SunDay {
        sunrise: event(at, date, ZENITH_RISE_SET_DEG, true),
        sunset: event(at, date, ZENITH_RISE_SET_DEG, false),
        civil_dawn: event(at, date, ZENITH_CIVIL_DEG, true),
        civil_dusk: event(at, date, ZENITH_CIVIL_DEG, false),
        solar_noon: at_minutes(date, 720.0 - 4.0 * at.lon - eot),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_instant_for_many_places_gives_the_same_elevations() {
        let t = NaiveDate::from_ymd_opt(2026, 3, 20)
            .unwrap()
            .and_hms_opt(11, 35, 0)
            .unwrap()
            .and_utc();
        let sun = SunAt::new(t);
        for (lat, lon) in [(48.1, 11.6), (-33.9, 151.2), (69.6, 18.9), (0.0, -170.0)] {
            let at = LatLon { lat, lon };
            assert_eq!(sun.elevation_deg(at), position(at, t).elevation_deg);
        }
    }

    #[test]
    fn meeus_example_25a_declination() {
        // Meeus, Astronomical Algorithms (2nd ed.), Example 25.a: 1992 October 13.0 TD, apparent
        // declination of the Sun δ = −7°47′06″ = −7.78500° (low-precision method gives
        // −7.78507°). 0h TD ≈ 0h UTC minus ΔT (about 59 s in 1992, from memory): negligible.
        let t = NaiveDate::from_ymd_opt(1992, 10, 13)
            .unwrap()
            .and_hms_opt(0, 0, 0)
            .unwrap()
            .and_utc();
        let (decl, _) = declination_and_eot(julian_century(t));
        assert!((decl - -7.78507).abs() < 0.001, "{decl}");
    }

    #[test]
    fn daylight_labels_follow_the_thresholds() {
        assert_eq!(Daylight::of(10.0), Daylight::Day);
        assert_eq!(Daylight::of(-0.5), Daylight::Day);
        assert_eq!(Daylight::of(-1.0), Daylight::Twilight);
        assert_eq!(Daylight::of(-11.9), Daylight::Twilight);
        assert_eq!(Daylight::of(-12.1), Daylight::Night);
    }

    #[test]
    fn polar_day_and_night_have_no_rise_or_set() {
        let svalbard = LatLon {
            lat: 78.2232,
            lon: 15.6267,
        };
        let june = day(svalbard, NaiveDate::from_ymd_opt(2025, 6, 21).unwrap());
        assert_eq!(june.sunrise, SunEvent::AlwaysAbove);
        assert_eq!(june.sunset.time(), None);
        let dec = day(svalbard, NaiveDate::from_ymd_opt(2025, 12, 21).unwrap());
        assert_eq!(dec.sunrise, SunEvent::AlwaysBelow);
        assert_eq!(dec.civil_dawn, SunEvent::AlwaysBelow);
    }
}
