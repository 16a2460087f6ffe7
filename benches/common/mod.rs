//! Helpers shared by the benchmarks.
#![allow(dead_code)]

use chrono::{DateTime, Utc};
use nearsky::domain::*;
use nearsky::store::Logbook;
use uuid::Uuid;

/// Resident memory of this process, from /proc (MB).
pub fn rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines().find(|l| l.starts_with("VmRSS:")).and_then(|l| {
                l.split_whitespace()
                    .nth(1)
                    .and_then(|v| v.parse::<f64>().ok())
            })
        })
        .map_or(0.0, |kb| kb / 1024.0)
}

pub struct Rng(pub u64);
impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
}

/// `contacts` generated contacts among `stations` stations spread over a 6° × 6° region,
/// over one day, on 80, 60 and 40 m, with random outcomes (deterministic).
pub fn generated(contacts: u64, stations: usize) -> impl Iterator<Item = Contact> {
    let mut rng = Rng(0x5eed ^ contacts);
    let calls: Vec<Callsign> = (0..stations)
        .map(|i| {
            Callsign::parse(&format!(
                "Q{}{}{}",
                i % 10,
                char::from(b'A' + (i / 10 % 26) as u8),
                char::from(b'A' + (i / 260) as u8)
            ))
            .unwrap()
        })
        .collect();
    let grids: Vec<Locator> = (0..stations)
        .map(|i| {
            Locator::from_lat_lon(
                LatLon {
                    lat: 44.0 + (i * 37 % 60) as f64 / 10.0,
                    lon: (i * 53 % 60) as f64 / 10.0,
                },
                Precision::Subsquare,
            )
            .unwrap()
        })
        .collect();
    let bands = [
        (Band::B80m, 3_600_000u64),
        (Band::B60m, 5_362_500),
        (Band::B40m, 7_100_000),
    ];
    let mode = Mode::parse("LSB").unwrap();
    let t0 = DateTime::<Utc>::from_timestamp(1_759_536_000, 0).unwrap();
    (0..contacts).map(move |i| {
        let a = (rng.next() % stations as u64) as usize;
        let b = (a + 1 + (rng.next() % (stations as u64 - 1)) as usize) % stations;
        let (band, hz) = bands[(rng.next() % 3) as usize];
        let outcome =
            [Outcome::Worked, Outcome::Partial, Outcome::NoContact][(rng.next() % 3) as usize];
        Contact::new(ContactParts {
            id: ContactId(Uuid::from_u64_pair(contacts, i)),
            drill: None,
            own: StationSnapshot {
                call: calls[a].clone(),
                operator: None,
                locator: Some(grids[a]),
                power: None,
                antenna: None,
            },
            call: calls[b].clone(),
            locator: Some(grids[b]),
            start: t0 + chrono::Duration::milliseconds((i as i64) * 86_400_000 / contacts as i64),
            end: None,
            band,
            frequency: Frequency::from_hz(hz).ok(),
            mode: mode.clone(),
            sent: None,
            rcvd: None,
            other_power: None,
            outcome,
            via: None,
            note: String::new(),
            origin: Origin::LoggedHere,
        })
        .unwrap()
    })
}

/// A logbook at `path` holding [`generated`] contacts, written in batches of 100,000.
pub fn build(path: &std::path::Path, contacts: u64, stations: usize) -> Logbook {
    let mut book = Logbook::open(path).unwrap();
    let mut batch = Vec::with_capacity(100_000);
    for c in generated(contacts, stations) {
        batch.push(c);
        if batch.len() == 100_000 {
            book.add_contacts(&batch).unwrap();
            batch.clear();
        }
    }
    book.add_contacts(&batch).unwrap();
    book
}
