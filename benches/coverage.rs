//! Coverage + plan speed on generated logbooks, against a plain SQLite GROUP BY over the same
//! rows (a floor: SQLite counting without cross-checking, geometry or statistics).
//!
//! Run: `cargo bench --bench coverage`. Targets: 10,000 contacts < 20 ms; 1,000,000 < 0.5 s;
//! memory bounded by links and bins (resident memory is printed after each size).

use std::path::PathBuf;
use std::time::Instant;

use chrono::{DateTime, Utc};
use nearsky::app::review::load_coverage;
use nearsky::domain::coverage::{CoverageBuilder, CoverageConfig};
use nearsky::domain::plan::{PlanConfig, make_plan};
use nearsky::domain::*;
use nearsky::store::{ContactQuery, Logbook};
use uuid::Uuid;

fn rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| s.lines().find(|l| l.starts_with("VmRSS:")).and_then(|l| l.split_whitespace().nth(1).and_then(|v| v.parse::<f64>().ok())))
        .map_or(0.0, |kb| kb / 1024.0)
}

struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        self.0
    }
}

fn build(path: &std::path::Path, contacts: u64, stations: usize) -> Logbook {
    let mut book = Logbook::open(path).unwrap();
    let mut rng = Rng(0x5eed ^ contacts);
    let calls: Vec<Callsign> = (0..stations).map(|i| Callsign::parse(&format!("Q{}{}{}", i % 10, char::from(b'A' + (i / 10 % 26) as u8), char::from(b'A' + (i / 260) as u8))).unwrap()).collect();
    let grids: Vec<Locator> = (0..stations)
        .map(|i| Locator::from_lat_lon(LatLon { lat: 44.0 + (i * 37 % 60) as f64 / 10.0, lon: (i * 53 % 60) as f64 / 10.0 }, Precision::Subsquare).unwrap())
        .collect();
    let bands = [(Band::B80m, 3_600_000u64), (Band::B60m, 5_362_500), (Band::B40m, 7_100_000)];
    let mode = Mode::parse("LSB").unwrap();
    let t0 = DateTime::<Utc>::from_timestamp(1_759_536_000, 0).unwrap();
    let mut batch = Vec::with_capacity(100_000);
    for i in 0..contacts {
        let a = (rng.next() % stations as u64) as usize;
        let b = (a + 1 + (rng.next() % (stations as u64 - 1)) as usize) % stations;
        let (band, hz) = bands[(rng.next() % 3) as usize];
        let outcome = [Outcome::Worked, Outcome::Partial, Outcome::NoContact][(rng.next() % 3) as usize];
        let c = Contact::new(ContactParts {
            id: ContactId(Uuid::from_u64_pair(contacts, i)),
            drill: None,
            own: StationSnapshot { call: calls[a].clone(), operator: None, locator: Some(grids[a]), power: None, antenna: None },
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
        .unwrap();
        batch.push(c);
        if batch.len() == 100_000 {
            book.add_contacts(&batch).unwrap();
            batch.clear();
        }
    }
    book.add_contacts(&batch).unwrap();
    book
}

fn main() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-coverage");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    for (contacts, stations) in [(10_000u64, 20usize), (10_000, 200), (1_000_000, 20), (1_000_000, 200)] {
        let path = dir.join(format!("c{contacts}-s{stations}.db"));
        let book = build(&path, contacts, stations);
        // The floor: the same counts straight from SQLite.
        let conn = rusqlite::Connection::open(&path).unwrap();
        let t = Instant::now();
        let groups: i64 = conn
            .query_row(
                "SELECT count(*) FROM (SELECT band, (start_utc % 86400) / 3600 AS bin, own_call, call, outcome, count(*) FROM contact GROUP BY 1, 2, 3, 4, 5)",
                [],
                |r| r.get(0),
            )
            .unwrap();
        let floor = t.elapsed().as_secs_f64();
        let t = Instant::now();
        let c = load_coverage(&book, None, CoverageConfig::default()).unwrap();
        let p = make_plan(&c, &PlanConfig::default());
        let ours = t.elapsed().as_secs_f64();
        let rss = rss_mb();
        // The pure part alone, on contacts already in memory (no SQLite, no row checks).
        let mut all = Vec::with_capacity(contacts as usize);
        book.for_each_contact(&ContactQuery::default(), |s| {
            all.push(s.contact.clone());
            Ok(())
        })
        .unwrap();
        let t = Instant::now();
        let mut b = CoverageBuilder::new(CoverageConfig::default()).unwrap();
        for x in &all {
            b.add(x);
        }
        let c2 = b.finish(&[]);
        let p2 = make_plan(&c2, &PlanConfig::default());
        let pure = t.elapsed().as_secs_f64();
        drop(all);
        assert_eq!(c.observations, c2.observations);
        assert_eq!(p.bins.len(), p2.bins.len());
        println!(
            "{contacts:>9} contacts, {stations:>3} stations: coverage+plan from the logbook {:8.1} ms, in memory {:8.1} ms; SQLite GROUP BY {:7.1} ms ({groups} groups); ratio {:.1}x; {} links; RSS {:.0} MB",
            ours * 1e3,
            pure * 1e3,
            floor * 1e3,
            ours / floor,
            c.links.len(),
            rss
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
