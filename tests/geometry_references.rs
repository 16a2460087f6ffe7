//! Path geometry and the Sun checked against independent references (fixtures/README.md says
//! where each file comes from).

mod common;

use chrono::{DateTime, NaiveDate, Utc};
use common::Csv;
use nearsky::domain::geo::{self, Direction};
use nearsky::domain::skywave::{Hop, chapman_foe_mhz};
use nearsky::domain::sun::{self, Daylight};
use nearsky::domain::{LatLon, Locator};

fn loc(s: &str) -> Locator {
    Locator::parse(s).unwrap()
}

fn utc(s: &str) -> DateTime<Utc> {
    DateTime::parse_from_rfc3339(s).unwrap().with_timezone(&Utc)
}

fn angle_diff(a: f64, b: f64) -> f64 {
    let d = (a - b).rem_euclid(360.0);
    d.min(360.0 - d)
}

/// Distances and bearings against Python `geographiclib` 2.1 (Karney 2013):
/// distance within 1 m, bearings within 0.001°.
#[test]
fn paths_match_geographiclib() {
    let csv = Csv::read("paths.csv");
    assert!(csv.provenance.contains("geographiclib 2.1"));
    let mut worst_m: f64 = 0.0;
    let mut worst_deg: f64 = 0.0;
    for r in csv.records() {
        let (a, b) = (loc(r.get("loc_a")), loc(r.get("loc_b")));
        let p = geo::path(a.centre(), b.centre());
        let err_m = (p.distance_km - r.f64("geod_km")).abs() * 1000.0;
        // The file gives km to 3 decimals, so the comparison carries 0.5 m of rounding.
        assert!(
            err_m <= 1.0,
            "{}: {} km vs {}",
            r.get("id"),
            p.distance_km,
            r.get("geod_km")
        );
        worst_m = worst_m.max(err_m);
        let note = r.get("note");
        match (r.opt_f64("azi1_deg"), p.bearing_deg) {
            (None, got) => assert_eq!(got, None, "{}", r.get("id")),
            (Some(_), None) => {
                assert!(note.contains("antipod"), "{}: no bearing", r.get("id"));
                assert_eq!(p.direction, Direction::Antipodal);
            }
            (Some(want), Some(got)) => {
                let d = angle_diff(want, got);
                assert!(d <= 0.001, "{}: bearing {got} vs {want}", r.get("id"));
                worst_deg = worst_deg.max(d);
                let back = (r.f64("azi2_deg") + 180.0).rem_euclid(360.0);
                let d = angle_diff(back, p.reverse_bearing_deg.unwrap());
                assert!(d <= 0.001, "{}: reverse bearing", r.get("id"));
            }
        }
        // The haversine column checks our spherical comparison formula too.
        let hav = geo::haversine_km(a.centre(), b.centre());
        assert!(
            (hav - r.f64("hav_km")).abs() <= 0.0011,
            "{} haversine",
            r.get("id")
        );
    }
    eprintln!("worst distance error {worst_m:.3} m, worst bearing error {worst_deg:.5} deg");
}

/// Coarse-locator distance ranges against `paths_uncertainty.csv` (geographiclib, both cells
/// sampled on an 11×11 grid). The grid contains the corners and edges, so our boundary search
/// must find at least the grid's extremes and not much beyond them.
#[test]
fn coarse_locator_ranges_cover_the_sampled_extremes() {
    let csv = Csv::read("paths_uncertainty.csv");
    for r in csv.records() {
        let (a, b) = (loc(r.get("loc_a")), loc(r.get("loc_b")));
        let p = geo::locator_path(&a, &b);
        let (min, max) = (r.f64("min_km"), r.f64("max_km"));
        assert!(
            (p.min_km - min).abs() <= 0.5,
            "{a}-{b}: min {} vs {min}",
            p.min_km
        );
        assert!(
            (p.max_km - max).abs() <= 0.5,
            "{a}-{b}: max {} vs {max}",
            p.max_km
        );
        assert!((p.centre.distance_km - r.f64("centre_km")).abs() < 0.001);
    }
}

/// Hop geometry against `nvis_geometry.csv` (closed form cross-checked there by a vector
/// construction).
#[test]
fn hop_geometry_matches_the_reference_table() {
    let csv = Csv::read("nvis_geometry.csv");
    for r in csv.records() {
        let hop = Hop::new(r.f64("ground_km"), r.f64("h_virtual_km"));
        let id = format!("{} km at {} km", r.get("ground_km"), r.get("h_virtual_km"));
        assert!(
            (hop.takeoff_deg - r.f64("elev_deg")).abs() < 1e-3,
            "{id}: {}",
            hop.takeoff_deg
        );
        assert!((hop.incidence_deg - r.f64("phi_deg")).abs() < 1e-3, "{id}");
        assert!(
            (hop.cos_incidence() - r.f64("cos_phi")).abs() < 2e-6,
            "{id}"
        );
        assert!(
            (hop.group_path_km - r.f64("group_path_km")).abs() < 2e-3,
            "{id}"
        );
        for (f, col) in [
            (3.5, "fc_min_3p5_MHz"),
            (5.36, "fc_min_5p36_MHz"),
            (7.1, "fc_min_7p1_MHz"),
        ] {
            let got = hop.critical_frequency_floor_mhz(f);
            assert!((got - r.f64(col)).abs() < 1e-4, "{id} {col}");
        }
    }
}

/// Sun elevation and azimuth against PyEphem 4.2.1 (no refraction): elevation within 0.02°,
/// azimuth within 0.1° where the Sun is below 85° and the place is not a pole.
#[test]
fn sun_positions_match_ephem() {
    let csv = Csv::read("sun.csv");
    assert!(csv.provenance.contains("PyEphem 4.2.1"));
    let mut worst: f64 = 0.0;
    for r in csv.records() {
        let at = LatLon {
            lat: r.f64("lat"),
            lon: r.f64("lon"),
        };
        let s = sun::position(at, utc(r.get("utc")));
        let want = r.f64("ephem_elev_deg");
        let id = r.get("id");
        assert!(
            (s.elevation_deg - want).abs() < 0.02,
            "{id}: {} vs {want}",
            s.elevation_deg
        );
        worst = worst.max((s.elevation_deg - want).abs());
        if want < 85.0 && at.lat.abs() < 89.99 {
            let d = angle_diff(s.azimuth_deg, r.f64("ephem_az_deg"));
            assert!(
                d < 0.1,
                "{id}: azimuth {} vs {}",
                s.azimuth_deg,
                r.get("ephem_az_deg")
            );
        }
        let label = match r.get("category") {
            "sun up" => Daylight::Day,
            "civil twilight" | "nautical twilight" => Daylight::Twilight,
            _ => Daylight::Night,
        };
        // Rows within 0.01° of a threshold could fall either way; the file has none.
        assert_eq!(Daylight::of(s.elevation_deg), label, "{id}");
    }
    assert!(worst < 0.01, "worst elevation error {worst}");
    eprintln!("worst sun elevation error {worst:.4} deg against ephem");
}

/// Sunrise, sunset and civil twilight against PyEphem 4.2.1 within 30 s; polar cases have no
/// event.
#[test]
fn sun_days_match_ephem() {
    let csv = Csv::read("sunrise.csv");
    let mut worst_s = 0;
    for r in csv.records() {
        let at = LatLon {
            lat: r.f64("lat"),
            lon: r.f64("lon"),
        };
        let date = NaiveDate::parse_from_str(r.get("date"), "%Y-%m-%d").unwrap();
        let d = sun::day(at, date);
        let id = format!("{} {}", r.get("place"), r.get("date"));
        for (col, ev) in [
            ("ephem_rise_utc", d.sunrise),
            ("ephem_set_utc", d.sunset),
            ("ephem_civil_dawn_utc", d.civil_dawn),
            ("ephem_civil_dusk_utc", d.civil_dusk),
        ] {
            match (r.get(col), ev.time()) {
                ("", None) => {}
                ("", Some(t)) => panic!("{id} {col}: reference has none, got {t}"),
                (want, None) => panic!("{id} {col}: want {want}, got {ev:?}"),
                (want, Some(t)) => {
                    let dt = (t - utc(want)).num_seconds().abs();
                    assert!(dt <= 30, "{id} {col}: {t} vs {want}");
                    worst_s = worst_s.max(dt);
                }
            }
        }
        if !r.get("ephem_transit_utc").is_empty() {
            let dt = (d.solar_noon - utc(r.get("ephem_transit_utc")))
                .num_seconds()
                .abs();
            assert!(dt <= 30, "{id} noon");
        }
    }
    eprintln!("worst rise/set/twilight error {worst_s} s against ephem");
}

/// Chapman-layer foE against `foe.csv` (the formula evaluated directly); beyond 85° zenith the
/// estimate is withheld.
#[test]
fn chapman_foe_matches_the_formula_table() {
    let csv = Csv::read("foe.csv");
    for r in csv.records() {
        let (chi, r12) = (r.f64("chi_deg"), r.f64("R12"));
        match chapman_foe_mhz(chi, r12) {
            Some(f) => assert!((f - r.f64("foE_MHz")).abs() < 1e-4, "{chi} {r12}"),
            None => assert!(chi > 85.0),
        }
    }
}

/// Wilson score intervals against `wilson.csv` (closed form, checked there by bisection; the
/// rows 81/263, 15/148, 0/20, 1/29 are the example counts of Newcombe 1998, Statistics in
/// Medicine 17:857–872; the same values as Python statsmodels `proportion_confint(method=
/// "wilson")`).
#[test]
fn wilson_intervals_match_the_reference_table() {
    use nearsky::domain::stats::wilson;
    let csv = Csv::read("wilson.csv");
    assert!(csv.provenance.contains("Newcombe 1998"));
    let mut checked = 0;
    for r in csv.records() {
        let (k, n, z) = (r.f64("k") as u64, r.f64("n") as u64, r.f64("z"));
        let (lo, hi) = wilson(k, n, z).unwrap();
        assert!(
            (lo - r.f64("wilson_lo")).abs() < 1e-6,
            "{k}/{n} at z {z}: lo {lo}"
        );
        assert!(
            (hi - r.f64("wilson_hi")).abs() < 1e-6,
            "{k}/{n} at z {z}: hi {hi}"
        );
        checked += 1;
    }
    assert!(checked >= 30);
    // propagation sheet §6: 3/5 → 0.2307–0.8824; Newcombe 1998 81/263 → 0.2553–0.3662.
    let (lo, hi) = wilson(3, 5, nearsky::domain::stats::Z95).unwrap();
    assert!((lo - 0.2307).abs() < 1e-4 && (hi - 0.8824).abs() < 1e-4);
}
