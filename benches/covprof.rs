//! Profiling aid: coverage + plan of 1,000,000 in-memory contacts among 200 stations, with the
//! time of each stage. Run: `cargo bench --bench covprof`; `NEARSKY_COVPROF=10000,200` sets
//! the contacts and stations.

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
}
