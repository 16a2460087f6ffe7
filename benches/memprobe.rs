//! Memory probe: resident memory before and after computing coverage from a 1,000,000-contact
//! logbook in a fresh process. Run: `cargo bench --bench memprobe`.

#[path = "common/mod.rs"]
mod common;

fn main() {
    let dir = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/bench-mem");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("million.db");
    if !path.exists() {
        drop(common::build(&path, 1_000_000, 20));
        println!("built; run again for a fresh process");
        return;
    }
    let book = nearsky::store::Logbook::open(&path).unwrap();
    println!("open: {:.1} MB", common::rss_mb());
    let mut n = 0u64;
    book.for_each_sighting(&Default::default(), |_| n += 1)
        .unwrap();
    println!("after streaming {n} sightings: {:.1} MB", common::rss_mb());
    let c = nearsky::app::review::load_coverage(&book, None, Default::default()).unwrap();
    println!(
        "after coverage ({} links): {:.1} MB",
        c.links.len(),
        common::rss_mb()
    );
    let c2 = nearsky::app::review::load_coverage(&book, None, Default::default()).unwrap();
    println!(
        "after a second coverage ({}): {:.1} MB",
        c2.observations,
        common::rss_mb()
    );
}
