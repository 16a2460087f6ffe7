//! The invented drill, generated from a seed: who calls whom, when, on which band, and what
//! came of it, following a simple model of NVIS propagation.
//!
//! Model (an illustration, not a forecast): the F2 critical frequency follows the Sun at the
//! net's centre, from about 4.6 MHz before dawn to about 8.0 MHz at midday (x-mode about
//! 0.7 MHz higher); a band works on a link when it is below the link's MUF = fxF2·sec φ
//! (propagation sheet §3), with D-region absorption that grows with the Sun's elevation and
//! hurts 80 m most, ground wave for stations a few km apart, and some luck. The result is the
//! pattern operators know: 40 m by day, 80 m by night, 60 m between and at twilight, and at
//! night 40 m skipping over the near stations while far ones still hear it.

use chrono::{DateTime, Duration, TimeZone, Utc};
use uuid::Uuid;

use super::STATIONS;
use crate::domain::geo::PathCache;
use crate::domain::skywave::{Hop, default_height_km};
use crate::domain::sun;
use crate::domain::{
    Band, Callsign, Contact, ContactId, ContactParts, Frequency, LatLon, Locator, Mode, Origin,
    Outcome, Power, Report, StationSnapshot,
};

/// A small deterministic generator (SplitMix64).
pub struct Rng(u64);

impl Rng {
    pub fn new(seed: u64) -> Self {
        Rng(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    pub fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    pub fn below(&mut self, n: u64) -> u64 {
        self.next_u64() % n.max(1)
    }
}

/// The drill's channels: (name, frequency, mode).
pub const CHANNELS: [(&str, &str, &str); 3] = [
    ("NVIS-80", "3.598", "LSB"),
    ("NVIS-60", "5.3625", "USB"),
    ("NVIS-40", "7.098", "LSB"),
];

/// A generated drill.
pub struct Scenario {
    pub start: DateTime<Utc>,
    pub hours: i64,
    pub contacts: Vec<Contact>,
    /// (time, band, station, text).
    pub notes: Vec<(DateTime<Utc>, Option<Band>, String, String)>,
    /// (station, time, new locator).
    pub moves: Vec<(String, DateTime<Utc>, Locator)>,
}

pub const DRILL_NAME: &str = "Loire flood exercise (invented)";

/// Index of the station that moves during the drill ("Mobile 1") and where it goes.
const MOVER: usize = 6;
const MOVE_TO: &str = "JN27bd";
const MOVE_AFTER_HOURS: i64 = 9;
/// A station whose clock runs 17 minutes fast for a few hours (contradictions to resolve).
const WRONG_CLOCK: usize = 9;

fn fo_f2_mhz(sun_elevation_deg: f64) -> f64 {
    // Smoothly from the night level to the day level as the Sun climbs from −18° to +30°.
    let x = ((sun_elevation_deg + 18.0) / 48.0).clamp(0.0, 1.0);
    4.6 + (8.0 - 4.6) * (x * x * (3.0 - 2.0 * x))
}

/// Probability that an attempt on `f_mhz` over `d_km` works, at a Sun elevation (net centre)
/// and the midpoint's.
fn chance(f_mhz: f64, d_km: f64, sun_centre: f64, sun_mid: f64, power_w: f64) -> f64 {
    let fx = fo_f2_mhz(sun_centre) + 0.7;
    let h = default_height_km(sun_mid);
    let muf = Hop::new(d_km.max(1.0), h).muf_mhz(fx);
    // Sky wave: works below the MUF, fading out just above it.
    let sky = 1.0 / (1.0 + ((f_mhz - muf) / 0.25).exp());
    // D-region absorption by day, worst at the lowest frequency.
    let absorption = (sun_mid.max(0.0) / 35.0).min(1.0) * (3.6 / f_mhz).powi(2) * 0.9;
    let power = (power_w / 50.0).powf(0.15);
    let mut p = sky * (1.0 - absorption) * power;
    // Ground wave between close stations, better on the lower bands.
    if d_km < 25.0 {
        p = p.max(0.9 * (3.6 / f_mhz));
    }
    p.clamp(0.005, 0.97)
}

fn report_for(p: f64, rng: &mut Rng) -> Report {
    let s = (3.0 + p * 6.0 + rng.unit() * 2.0).clamp(1.0, 9.0) as u8;
    let r = if p > 0.6 {
        5
    } else if p > 0.35 {
        4
    } else {
        3
    };
    Report::Rst {
        readability: r,
        strength: s,
        tone: None,
    }
}

struct Station {
    call: Callsign,
    locator: Locator,
    power: Power,
}

/// Generates the drill from a seed. Same seed, same drill.
pub fn generate(seed: u64) -> Scenario {
    let mut rng = Rng::new(seed);
    let start = Utc
        .with_ymd_and_hms(2025, 10, 4, 8, 0, 0)
        .single()
        .unwrap_or_default();
    let hours = 24;
    let stations: Vec<Station> = STATIONS
        .iter()
        .filter_map(|s| {
            Some(Station {
                call: Callsign::parse(s.call).ok()?,
                locator: Locator::parse(s.locator).ok()?,
                power: Power::from_watts(s.power_w).ok()?,
            })
        })
        .collect();
    let moved = Locator::parse(MOVE_TO).ok();
    let centre = {
        let n = stations.len().max(1) as f64;
        LatLon {
            lat: stations.iter().map(|s| s.locator.centre().lat).sum::<f64>() / n,
            lon: stations.iter().map(|s| s.locator.centre().lon).sum::<f64>() / n,
        }
    };
    let channels: Vec<(Frequency, Mode)> = CHANNELS
        .iter()
        .filter_map(|(_, f, m)| Some((Frequency::parse(f).ok()?, Mode::parse(m).ok()?)))
        .collect();
    let mut paths = PathCache::new();
    let mut contacts = Vec::new();
    // Contact ids: random-looking but fixed by the seed.
    let mut ids = Rng::new(seed ^ 0x01d5_0fc0_ffee);
    let mut next_uuid = move || Uuid::from_u64_pair(ids.next_u64(), ids.next_u64()).as_u128();
    let move_time = start + Duration::hours(MOVE_AFTER_HOURS);
    let where_is = |i: usize, t: DateTime<Utc>| {
        if i == MOVER && t >= move_time {
            moved.unwrap_or(stations[i].locator)
        } else {
            stations[i].locator
        }
    };

    let mut attempt = |from: usize,
                       to: usize,
                       t: DateTime<Utc>,
                       ch: usize,
                       rng: &mut Rng,
                       contacts: &mut Vec<Contact>| {
        let (a, b) = (where_is(from, t), where_is(to, t));
        let d = paths.centre(&a, &b).distance_km;
        let mid = crate::domain::geo::midpoint(a.centre(), b.centre());
        // The F2 layer lags the Sun by an hour or so: foF2 follows the Sun of 75 minutes ago.
        let sc = sun::position(centre, t - Duration::minutes(75)).elevation_deg;
        let sm = sun::position(mid, t).elevation_deg;
        let (freq, mode) = channels[ch].clone();
        let pw = stations[from].power.watts().min(stations[to].power.watts());
        let pr = chance(freq.mhz(), d, sc, sm, pw);
        let roll = rng.unit();
        let outcome = if roll < pr {
            Outcome::Worked
        } else if roll < pr + 0.12 * (1.0 - pr) {
            Outcome::Partial
        } else {
            Outcome::NoContact
        };
        let mk = |me: usize,
                  other: usize,
                  at: DateTime<Utc>,
                  outcome: Outcome,
                  id: u128,
                  rng: &mut Rng| {
            let id = Uuid::from_u128(id);
            let clock = if me == WRONG_CLOCK
                && (t - start).num_hours() >= 14
                && (t - start).num_hours() < 17
            {
                Duration::minutes(17)
            } else {
                Duration::zero()
            };
            let rcvd = match outcome {
                Outcome::Worked | Outcome::Partial if rng.unit() < 0.95 => {
                    Some(report_for(pr, rng))
                }
                _ => None,
            };
            let sent = if outcome == Outcome::Worked {
                Some(report_for(pr, rng))
            } else {
                None
            };
            let origin = if me == 0 {
                Origin::LoggedHere
            } else {
                Origin::Imported {
                    station: stations[me].call.clone(),
                    file: format!("{}.adi", stations[me].call.base().to_ascii_lowercase()),
                }
            };
            Contact::new(ContactParts {
                id: ContactId(id),
                drill: Some(DRILL_NAME.to_string()),
                own: StationSnapshot {
                    call: stations[me].call.clone(),
                    operator: None,
                    locator: Some(where_is(me, at)),
                    power: Some(stations[me].power),
                    antenna: Some("NVIS dipole at 6 m".into()),
                },
                call: stations[other].call.clone(),
                locator: Some(where_is(other, at)),
                start: at + clock,
                end: None,
                band: freq.band_of(),
                frequency: Some(freq),
                mode: mode.clone(),
                sent,
                rcvd,
                other_power: None,
                outcome,
                via: None,
                note: String::new(),
                origin,
            })
            .ok()
        };
        if let Some(c) = mk(from, to, t, outcome, next_uuid(), rng) {
            contacts.push(c);
        }
        // The called station logs it too when it heard the call (most operators do).
        let heard = outcome != Outcome::NoContact;
        if heard && rng.unit() < 0.8 {
            let lag = Duration::seconds(30 + rng.below(120) as i64);
            // Now and then the other side logs less than happened, or (rarely) nothing heard:
            // the contradictions a net controller has to resolve.
            let r = rng.unit();
            let their = match outcome {
                Outcome::Worked if r < 0.006 => Outcome::NoContact,
                Outcome::Worked if r < 0.08 => Outcome::Partial,
                o => o,
            };
            if let Some(c) = mk(to, from, t + lag, their, next_uuid(), rng) {
                contacts.push(c);
            }
        }
        outcome
    };

    for h in 0..hours {
        let hour = start + Duration::hours(h);
        // Roll call by net control on all three bands (a sounding drill): every station.
        for (ch, offset) in [(2usize, 0i64), (1, 18), (0, 36)] {
            for (k, to) in (1..stations.len()).enumerate() {
                let t = hour + Duration::minutes(offset) + Duration::seconds(k as i64 * 80);
                attempt(0, to, t, ch, &mut rng, &mut contacts);
            }
        }
        // Station-to-station checks on the band that worked best for net control.
        for _ in 0..6 {
            let from = 1 + rng.below(stations.len() as u64 - 1) as usize;
            let mut to = 1 + rng.below(stations.len() as u64 - 1) as usize;
            if to == from {
                to = 1 + (to % (stations.len() - 1));
            }
            if to == from {
                continue;
            }
            let t = hour + Duration::minutes(50) + Duration::seconds(rng.below(500) as i64);
            let ch = rng.below(3) as usize;
            attempt(from, to, t, ch, &mut rng, &mut contacts);
        }
    }
    // Two contradictions of other kinds, as operators produce them.
    if let Some(i) = contacts.iter().position(|c| {
        c.own.call == stations[4].call && c.call == stations[0].call && c.outcome == Outcome::Worked
    }) {
        let mut p = contacts[i].clone().into_parts();
        if let Some((f, _)) = channels.first() {
            p.frequency = Some(*f);
            p.band = f.band_of();
        }
        if let Ok(c) = Contact::new(p) {
            contacts[i] = c;
        }
    }
    contacts.sort_by_key(|c| c.start);
    let note = |h: i64, m: i64, band: Option<Band>, who: usize, text: &str| {
        (
            start + Duration::hours(h) + Duration::minutes(m),
            band,
            stations[who].call.to_string(),
            text.to_string(),
        )
    };
    let notes = vec![
        note(
            1,
            5,
            Some(Band::B80m),
            0,
            "80 m weak and noisy since mid-morning, 40 m strong",
        ),
        note(4, 40, Some(Band::B40m), 3, "40 m fine to net control, S9"),
        note(
            9,
            20,
            Some(Band::B40m),
            0,
            "40 m fading after sunset, moving roll call to 60 m",
        ),
        note(
            9,
            25,
            None,
            MOVER,
            "Mobile 1 relocated to the east staging area",
        ),
        note(
            13,
            10,
            Some(Band::B40m),
            0,
            "40 m: near stations gone, far ones still audible (skip)",
        ),
        note(
            19,
            0,
            Some(Band::B80m),
            5,
            "80 m quiet band, good copy all round",
        ),
        note(
            22,
            45,
            Some(Band::B60m),
            0,
            "60 m coming back after sunrise",
        ),
    ];
    let moves = moved
        .map(|l| vec![(stations[MOVER].call.to_string(), move_time, l)])
        .unwrap_or_default();
    Scenario {
        start,
        hours,
        contacts,
        notes,
        moves,
    }
}

/// The Frequency's band, for channels known to lie in one.
trait BandOf {
    fn band_of(&self) -> Band;
}

impl BandOf for Frequency {
    fn band_of(&self) -> Band {
        Band::containing(*self).unwrap_or(Band::B40m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_model_gives_the_known_pattern() {
        // Midday (Sun 35°): 40 m works on a 100 km link, 80 m suffers absorption.
        assert!(chance(7.1, 100.0, 35.0, 35.0, 50.0) > 0.7);
        assert!(chance(3.6, 100.0, 35.0, 35.0, 50.0) < 0.5);
        // Night (Sun −40°): 80 m works, 40 m fails.
        assert!(chance(3.6, 100.0, -40.0, -40.0, 50.0) > 0.8);
        assert!(chance(7.1, 80.0, -40.0, -40.0, 50.0) < 0.1);
        // Early night, foF2 still decaying (Sun an hour ago on the horizon): 40 m fails near but
        // works far — the skip zone.
        assert!(chance(7.1, 80.0, 0.0, -12.0, 50.0) < 0.2);
        assert!(chance(7.1, 340.0, 0.0, -12.0, 50.0) > 0.6);
    }
}
