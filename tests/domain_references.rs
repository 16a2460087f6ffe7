//! The domain types checked against outside references: the `maidenhead` Python package's
//! locator centres and the ADIF 3.1.7 band table.

mod common;

use common::Csv;
use nearsky::domain::{Band, Frequency, LatLon, Locator, Precision};
use proptest::prelude::*;

/// Locator verdicts and centres from `fixtures/locators.csv`, produced with the Python
/// `maidenhead` 1.8.0 package (centre=True); the expected verdicts follow the strict Maidenhead
/// ranges (the package itself is lax, so its own verdict column is not used).
#[test]
fn locators_match_the_maidenhead_package_centres() {
    let csv = Csv::read("locators.csv");
    assert!(csv.provenance.contains("maidenhead 1.8.0"));
    let mut valid = 0;
    let mut invalid = 0;
    for r in csv.records() {
        let input = r.get("input");
        let parsed = Locator::parse(input);
        if r.get("expected_valid") == "true" {
            let l = parsed.unwrap_or_else(|e| panic!("{input}: {e}"));
            assert_eq!(l.as_str(), r.get("normalized"), "canonical form of {input}");
            let c = l.centre();
            assert!(
                (c.lat - r.f64("center_lat")).abs() < 1e-9,
                "{input} lat {}",
                c.lat
            );
            assert!(
                (c.lon - r.f64("center_lon")).abs() < 1e-9,
                "{input} lon {}",
                c.lon
            );
            let sw = l.south_west();
            assert!((sw.lat - r.f64("sw_lat")).abs() < 1e-9, "{input} sw lat");
            assert!((sw.lon - r.f64("sw_lon")).abs() < 1e-9, "{input} sw lon");
            let (dlat, dlon) = l.cell_size();
            assert!(
                (dlat - r.f64("cell_dlat_deg")).abs() < 1e-9,
                "{input} cell height"
            );
            assert!(
                (dlon - r.f64("cell_dlon_deg")).abs() < 1e-9,
                "{input} cell width"
            );
            valid += 1;
        } else {
            let e = match parsed {
                Ok(l) => panic!("{input:?} must be rejected, got {l}"),
                Err(e) => e.to_string(),
            };
            if !input.is_empty() {
                assert!(
                    e.contains(&format!("`{}`", input.trim())),
                    "{e} must quote {input}"
                );
            }
            invalid += 1;
        }
    }
    assert_eq!((valid, invalid), (49, 17));
}

/// Band edges against the ADIF 3.1.7 Band enumeration (`fixtures/adif-bands.csv`, the official
/// export as shipped in the PyPI package adif-mcp 2.1.0).
#[test]
fn band_edges_match_the_adif_band_table() {
    let csv = Csv::read("adif-bands.csv");
    assert!(csv.provenance.contains("ADIF 3.1.7"));
    let names: Vec<&str> = Band::all().map(Band::name).collect();
    let table: Vec<&str> = csv.rows.iter().map(|r| r[0].as_str()).collect();
    assert_eq!(names, table, "same bands in the same order");
    for r in csv.records() {
        let band = Band::parse(r.get("band")).unwrap();
        let (lo, hi) = band.edges();
        let lo_mhz = Frequency::parse(r.get("lower_mhz")).unwrap();
        let hi_mhz = Frequency::parse(r.get("upper_mhz")).unwrap();
        assert_eq!((lo, hi), (lo_mhz, hi_mhz), "{band}");
        assert_eq!(Band::containing(lo).unwrap(), band);
        assert_eq!(Band::containing(hi).unwrap(), band);
        if let Ok(below) = Frequency::from_hz(lo.hz() - 1) {
            assert_ne!(
                Band::containing(below).ok(),
                Some(band),
                "{band} lower edge is sharp"
            );
        }
        if let Ok(above) = Frequency::from_hz(hi.hz() + 1) {
            assert_ne!(
                Band::containing(above).ok(),
                Some(band),
                "{band} upper edge is sharp"
            );
        }
    }
}

fn locator_strategy() -> impl Strategy<Value = String> {
    let field = (0u8..18, 0u8..18);
    let digit = (0u8..10, 0u8..10);
    let sub = (0u8..24, 0u8..24);
    (1usize..=5, field, digit.clone(), sub.clone(), digit, sub).prop_map(
        |(pairs, f, d, s, e, x)| {
            let mut out = String::new();
            let push = |o: &mut String, base: u8, (a, b): (u8, u8)| {
                o.push(char::from(base + a));
                o.push(char::from(base + b));
            };
            push(&mut out, b'A', f);
            let rest = [(b'0', d), (b'a', s), (b'0', e), (b'a', x)];
            for (base, v) in rest.into_iter().take(pairs - 1) {
                push(&mut out, base, v);
            }
            out
        },
    )
}

proptest! {
    /// Any valid locator → its centre → a locator of the same precision gives it back.
    #[test]
    fn locators_round_trip_through_lat_lon(text in locator_strategy()) {
        let l = Locator::parse(&text).unwrap();
        let back = Locator::from_lat_lon(l.centre(), l.precision()).unwrap();
        prop_assert_eq!(back, l);
    }

    /// Any position lies inside the locator made from it, at every precision.
    #[test]
    fn positions_lie_in_their_locator(lat in -90.0f64..90.0, lon in -180.0f64..180.0) {
        for p in [Precision::Field, Precision::Square, Precision::Subsquare, Precision::Extended, Precision::ExtendedSubsquare] {
            let l = Locator::from_lat_lon(LatLon { lat, lon }, p).unwrap();
            let sw = l.south_west();
            let (dlat, dlon) = l.cell_size();
            prop_assert!(lat >= sw.lat - 1e-9 && lat < sw.lat + dlat + 1e-9, "{} lat", l);
            prop_assert!(lon >= sw.lon - 1e-9 && lon < sw.lon + dlon + 1e-9, "{} lon", l);
        }
    }
}
