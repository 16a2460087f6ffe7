//! Coverage + plan speed on generated logbooks, against a plain SQLite GROUP BY over the same
//! rows (a floor: SQLite counting without cross-checking, geometry or statistics).
//!
//! Run: `cargo bench --bench coverage`. Targets: 10,000 contacts < 20 ms; 1,000,000 < 0.5 s;
//! memory bounded by links and bins (resident memory is printed after each size).
//! `NEARSKY_BENCH_ONLY=10000` runs one size of logbook only; `NEARSKY_BENCH_KEEP=1` keeps the
//! generated logbooks in `target/bench-coverage`. Figures are medians of 7 runs (3 on 1M).

#[path = "common/mod.rs"]
mod common;

use std::path::PathBuf;
use std::time::Instant;

use common::{build, rss_mb};
use nearsky::app::review::load_coverage;
use nearsky::domain::coverage::{CoverageBuilder, CoverageConfig};
use nearsky::domain::plan::{PlanConfig, make_plan};
use nearsky::store::ContactQuery;

fn main() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-coverage");
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    for (contacts, stations) in [
        (10_000u64, 20usize),
        (10_000, 200),
        (1_000_000, 20),
        (1_000_000, 200),
    ] {
        // NEARSKY_BENCH_ONLY=N runs the sizes of N contacts only (for profiling).
        if let Ok(only) = std::env::var("NEARSKY_BENCH_ONLY")
            && only.parse::<u64>().ok() != Some(contacts)
        {
            continue;
        }
        let path = dir.join(format!("c{contacts}-s{stations}.db"));
        let book = build(&path, contacts, stations);
        // Each figure is the median of several runs (7 on the small logbooks, 3 on the large),
        // taken in turn so that a slow spell of the machine touches all of them alike.
        let runs = if contacts <= 10_000 { 7 } else { 3 };
        let conn = rusqlite::Connection::open(&path).unwrap();
        let (mut floors, mut reads, mut ourss) = (Vec::new(), Vec::new(), Vec::new());
        let mut steps = Vec::new();
        let mut groups = 0i64;
        let mut last = None;
        for _ in 0..runs {
            // The floor: the same counts straight from SQLite.
            let t = Instant::now();
            groups = conn
                .query_row(
                    "SELECT count(*) FROM (SELECT band, (start_utc % 86400) / 3600 AS bin, own_call, call, outcome, count(*) FROM contact GROUP BY 1, 2, 3, 4, 5)",
                    [],
                    |r| r.get(0),
                )
                .unwrap();
            floors.push(t.elapsed().as_secs_f64());
            // SQLite handing over the columns coverage reads, in a plain table scan, with
            // nothing done with them: what any reader of this table must spend.
            let t = Instant::now();
            let mut stmt = conn
                .prepare_cached(
                    "SELECT uuid, own_call, own_locator, call, locator, start_utc, band, freq_hz, outcome, rst_rcvd FROM contact",
                )
                .unwrap();
            let mut rows = stmt.query([]).unwrap();
            let mut n = 0u64;
            while let Some(r) = rows.next().unwrap() {
                for i in 0..10 {
                    n += u64::from(r.get_ref(i).is_ok());
                }
            }
            drop(rows);
            steps.push(t.elapsed().as_secs_f64());
            assert_eq!(n, contacts * 10);
            // The store's part alone: reading the rows coverage needs, doing nothing with them.
            let t = Instant::now();
            let mut read = 0u64;
            book.for_each_sighting(&ContactQuery::default(), |_| read += 1)
                .unwrap();
            reads.push(t.elapsed().as_secs_f64());
            assert_eq!(read, contacts);
            drop(last.take());
            let t = Instant::now();
            let c = load_coverage(&book, None, CoverageConfig::default()).unwrap();
            let p = make_plan(&c, &PlanConfig::default());
            ourss.push(t.elapsed().as_secs_f64());
            last = Some((c, p));
        }
        let Some((c, p)) = last else { return };
        let (floor, read_only, ours) =
            (median(&mut floors), median(&mut reads), median(&mut ourss));
        let step = median(&mut steps);
        let fastest = ourss[0];
        let rss = rss_mb();
        // The pure part alone, on contacts already in memory (no SQLite, no row checks).
        let mut all = Vec::with_capacity(contacts as usize);
        book.for_each_contact(&ContactQuery::default(), |s| {
            all.push(s.contact);
            Ok(())
        })
        .unwrap();
        let mut pures = Vec::new();
        let mut last = None;
        for _ in 0..runs {
            drop(last.take());
            let t = Instant::now();
            let mut b = CoverageBuilder::new(CoverageConfig::default()).unwrap();
            for x in &all {
                b.add(x);
            }
            let c2 = b.finish(&[]);
            let p2 = make_plan(&c2, &PlanConfig::default());
            pures.push(t.elapsed().as_secs_f64());
            last = Some((c2, p2));
        }
        let Some((c2, p2)) = last else { return };
        let pure = median(&mut pures);
        drop(all);
        assert_eq!(c.observations, c2.observations);
        assert_eq!(p.bins.len(), p2.bins.len());
        println!(
            "{contacts:>9} contacts, {stations:>3} stations: coverage+plan from the logbook {:7.1} ms (fastest {:7.1} ms; reading alone {:7.1} ms, SQLite's bare scan of those columns {:7.1} ms), in memory {:8.1} ms; SQLite GROUP BY {:7.1} ms ({groups} groups); ratio {:.1}x; {} links; RSS {:.0} MB",
            ours * 1e3,
            fastest * 1e3,
            read_only * 1e3,
            step * 1e3,
            pure * 1e3,
            floor * 1e3,
            ours / floor,
            c.links.len(),
            rss
        );
    }
    // NEARSKY_BENCH_KEEP keeps the generated logbooks (for looking at them with SQLite).
    if std::env::var_os("NEARSKY_BENCH_KEEP").is_none() {
        let _ = std::fs::remove_dir_all(&dir);
    }
}

/// The median of some timings (sorts them: the fastest is then first).
fn median(xs: &mut [f64]) -> f64 {
    xs.sort_by(f64::total_cmp);
    xs[xs.len() / 2]
}
