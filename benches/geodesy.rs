//! Geodesic inverse against a spherical haversine, and what the locator-pair cache saves.
//!
//! Run: `cargo bench --bench geodesy`. Prints ns per pair, the ratio, and for a log where 20
//! stations make 1,000,000 contacts the time with and without the cache.

use std::hint::black_box;
use std::time::Instant;

use nearsky::domain::geo::{self, PathCache};
use nearsky::domain::{LatLon, Locator, Precision};

/// A small deterministic generator (SplitMix64), so every run measures the same inputs.
struct Rng(u64);
impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

fn main() {
    let mut rng = Rng(7);
    // Stations spread over a drill region (44–50° N, 0–6° E) at 6-character precision.
    let stations: Vec<Locator> = (0..20)
        .map(|_| {
            let p = LatLon {
                lat: 44.0 + 6.0 * rng.unit(),
                lon: 6.0 * rng.unit(),
            };
            Locator::from_lat_lon(p, Precision::Subsquare).unwrap()
        })
        .collect();
    let n = 200_000;
    let pairs: Vec<(LatLon, LatLon)> = (0..n)
        .map(|_| {
            let a = stations[(rng.next() % 20) as usize].centre();
            let b = LatLon {
                lat: 44.0 + 6.0 * rng.unit(),
                lon: 6.0 * rng.unit(),
            };
            (a, b)
        })
        .collect();

    let t = Instant::now();
    let mut sum = 0.0;
    for (a, b) in &pairs {
        sum += geo::path(*a, *b).distance_km;
    }
    black_box(sum);
    let geod_ns = t.elapsed().as_nanos() as f64 / n as f64;

    let t = Instant::now();
    let mut sum = 0.0;
    for (a, b) in &pairs {
        sum += geo::haversine_km(*a, *b);
    }
    black_box(sum);
    let hav_ns = t.elapsed().as_nanos() as f64 / n as f64;

    println!("geodesic inverse (Karney, WGS84): {geod_ns:8.1} ns per pair");
    println!("haversine (sphere, reference):    {hav_ns:8.1} ns per pair");
    println!("ratio geodesic / haversine:       {:8.1}", geod_ns / hav_ns);

    // A log of 1,000,000 contacts among the 20 stations.
    let contacts = 1_000_000;
    let log: Vec<(usize, usize)> = (0..contacts)
        .map(|_| {
            let a = (rng.next() % 20) as usize;
            let b = (a + 1 + (rng.next() % 19) as usize) % 20;
            (a, b)
        })
        .collect();

    let t = Instant::now();
    let mut cache = PathCache::new();
    let mut sum = 0.0;
    for (a, b) in &log {
        sum += cache.centre(&stations[*a], &stations[*b]).distance_km;
    }
    black_box(sum);
    let cached = t.elapsed();

    let t = Instant::now();
    let mut sum = 0.0;
    for (a, b) in &log {
        sum += geo::path(stations[*a].centre(), stations[*b].centre()).distance_km;
    }
    black_box(sum);
    let centre_only = t.elapsed();

    // A full locator path (centre plus cell-range search) per contact, as distances were
    // once computed; time a sample.
    let sample = 2_000;
    let t = Instant::now();
    for (a, b) in log.iter().take(sample) {
        black_box(geo::locator_path(&stations[*a], &stations[*b]));
    }
    let full_uncached = t.elapsed().as_secs_f64() * (contacts / sample) as f64;

    println!();
    println!(
        "1,000,000 contacts among 20 stations ({} distinct pairs):",
        cache.len()
    );
    println!(
        "  with PathCache (geodesic once per pair):              {:8.1} ms",
        cached.as_secs_f64() * 1e3
    );
    println!(
        "  centre geodesic per contact, no cache:                {:8.1} ms",
        centre_only.as_secs_f64() * 1e3
    );
    println!(
        "  full locator path per contact, no cache (from {sample}):  {:8.1} ms",
        full_uncached * 1e3
    );
    println!(
        "  saving: {:.0}x over the full path, {:.1}x over the bare geodesic",
        full_uncached / cached.as_secs_f64(),
        centre_only.as_secs_f64() / cached.as_secs_f64()
    );
}
