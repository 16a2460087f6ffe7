//! Profiling aid: coverage + plan of 1,000,000 in-memory contacts among 200 stations, with the
//! time of each stage. Run: `cargo bench --bench covprof`.

use std::time::Instant;

use chrono::{DateTime, Utc};
use nearsky::domain::coverage::{CoverageBuilder, CoverageConfig};
use nearsky::domain::plan::{PlanConfig, make_plan};
use nearsky::domain::*;
use uuid::Uuid;

fn main() {
    let stations = 200usize;
    let n = 1_000_000u64;
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
    let t0 = DateTime::<Utc>::from_timestamp(1_759_536_000, 0).unwrap();
    let mut x = 88172645463325252u64;
    let mut next = || {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        x
    };
    let mode = Mode::parse("LSB").unwrap();
    let contacts: Vec<Contact> = (0..n)
        .map(|i| {
            let a = (next() % stations as u64) as usize;
            let b = (a + 1 + (next() % (stations as u64 - 1)) as usize) % stations;
            let f = [3_600_000u64, 5_362_500, 7_100_000][(next() % 3) as usize];
            let fr = Frequency::from_hz(f).unwrap();
            Contact::new(ContactParts {
                id: ContactId(Uuid::from_u64_pair(1, i)),
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
                start: t0 + chrono::Duration::milliseconds(i as i64 * 86_400_000 / n as i64),
                end: None,
                band: Band::containing(fr).unwrap(),
                frequency: Some(fr),
                mode: mode.clone(),
                sent: None,
                rcvd: None,
                other_power: None,
                outcome: [Outcome::Worked, Outcome::Partial, Outcome::NoContact]
                    [(next() % 3) as usize],
                via: None,
                note: String::new(),
                origin: Origin::LoggedHere,
            })
            .unwrap()
        })
        .collect();
    let t = Instant::now();
    let mut b = CoverageBuilder::new(CoverageConfig::default()).unwrap();
    for c in &contacts {
        b.add(c);
    }
    let added = t.elapsed();
    let t = Instant::now();
    let c = b.finish(&[]);
    let finished = t.elapsed();
    let t = Instant::now();
    let p = make_plan(&c, &PlanConfig::default());
    let planned = t.elapsed();
    println!(
        "add {:.0} ms, finish {:.0} ms, plan {:.0} ms ({} relay needs, {} links)",
        added.as_secs_f64() * 1e3,
        finished.as_secs_f64() * 1e3,
        planned.as_secs_f64() * 1e3,
        p.relays.len(),
        c.links.len()
    );
}
