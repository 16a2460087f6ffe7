//! Profiling aid: coverage + plan of 1,000,000 in-memory contacts among 200 stations, with the
//! time of each stage. Run: `cargo bench --bench covprof`; `NEARSKY_COVPROF=10000,200` sets
//! the contacts and stations; `NEARSKY_COVPROF_DIGEST=1` also prints a digest of the result.
//! It also prints what a mere copy of the result costs: a floor for making it at all.

#[path = "common/mod.rs"]
mod common;

use std::time::Instant;

use nearsky::domain::coverage::{CoverageBuilder, CoverageConfig};
use nearsky::domain::plan::{PlanConfig, make_plan};

fn main() {
    let size = std::env::var("NEARSKY_COVPROF").unwrap_or_default();
    let mut size = size.split(',').map(|x| x.trim().parse::<u64>().ok());
    let (n, stations) = (
        size.next().flatten().unwrap_or(1_000_000),
        size.next().flatten().unwrap_or(200),
    );
    let contacts: Vec<_> = common::generated(n, stations as usize).collect();
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
    // What merely making the result costs: a copy of the coverage and the plan.
    let t = Instant::now();
    let copy = (c.clone(), p.clone());
    let copied = t.elapsed();
    let cells: usize = c
        .links
        .iter()
        .map(|l| {
            l.cells
                .values()
                .map(|row| row.iter().flatten().count())
                .sum::<usize>()
        })
        .sum();
    let candidates: usize = p.relays.iter().map(|r| r.candidates.len()).sum();
    println!(
        "copying the result alone {:.0} ms ({cells} link cells, {candidates} relay candidates)",
        copied.as_secs_f64() * 1e3
    );
    drop(copy);
    // A digest of the whole result, so that a speed change can be shown to change nothing:
    // FNV-1a over the JSON of the coverage and the plan.
    if std::env::var_os("NEARSKY_COVPROF_DIGEST").is_some() {
        let json = serde_json::to_vec(&(&c, &p)).unwrap();
        let digest = json.iter().fold(0xcbf2_9ce4_8422_2325u64, |h, b| {
            (h ^ u64::from(*b)).wrapping_mul(0x0100_0000_01b3)
        });
        println!("digest {digest:016x} over {} bytes of JSON", json.len());
    }
}
