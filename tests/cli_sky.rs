//! `nearsky path` and `nearsky sun` run as a user runs them.

mod common;

use common::nearsky;

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = nearsky(args);
    assert_eq!(code, 0, "{err}");
    serde_json::from_str(&out).unwrap()
}

#[test]
fn path_json_has_the_documented_keys_and_reference_values() {
    // NCS-S21 of fixtures/paths.csv (geographiclib 2.1): 553.023 km, 264.920°, back 79.703°.
    let v = json(&[
        "path",
        "JN17ga",
        "IN76qi",
        "--time",
        "2025-10-04T12:00:00Z",
        "--format",
        "json",
    ]);
    assert!((v["distance_km"].as_f64().unwrap() - 553.023).abs() < 0.001);
    assert!((v["bearing_deg"].as_f64().unwrap() - 264.920).abs() < 0.001);
    assert!((v["reverse_bearing_deg"].as_f64().unwrap() - 79.703).abs() < 0.001);
    for key in [
        "distance_min_km",
        "distance_max_km",
        "takeoff_deg",
        "midpoint_sun_elevation_deg",
    ] {
        assert!(v[key].is_number(), "{key}");
    }
    assert_eq!(v["path_class"], "short_skip");
}

#[test]
fn a_coarse_pair_shows_its_range_and_a_same_square_pair_no_bearing() {
    // paths_uncertainty.csv (geographiclib, 11×11 grid): JN07–JN19 111.2–445.6 km.
    let v = json(&["path", "JN07", "JN19", "--format", "json"]);
    assert!((v["distance_min_km"].as_f64().unwrap() - 111.2).abs() < 0.5);
    assert!((v["distance_max_km"].as_f64().unwrap() - 445.6).abs() < 0.5);
    let v = json(&["path", "JN17ga", "jn17GA", "--format", "json"]);
    assert!(v["bearing_deg"].is_null());
    assert_eq!(v["same_square"], true);
    let (_, text, _) = nearsky(&["path", "JN17ga", "JN17ga"]);
    assert!(text.contains("same square"), "{text}");
}

#[test]
fn a_100_km_nvis_path_reads_as_such() {
    // JN17ga–JN16hc is 102 km (paths.csv). Common practice: NVIS, take-off well above 70°.
    let v = json(&[
        "path", "JN17ga", "JN16hc", "--height", "300", "--format", "json",
    ]);
    assert_eq!(v["path_class"], "nvis");
    assert!(v["takeoff_deg"].as_f64().unwrap() > 70.0);
}

#[test]
fn bad_input_is_a_usage_error_naming_the_value() {
    let (code, _, err) = nearsky(&["path", "JN58ty", "JN17"]);
    assert_eq!(code, 2);
    assert!(
        err.contains("`JN58ty`") && err.contains("character 6"),
        "{err}"
    );
    let (code, _, err) = nearsky(&["path", "JN17", "JN18", "--time", "25:99"]);
    assert_eq!(code, 2);
    assert!(err.contains("`25:99`"), "{err}");
    let (code, _, err) = nearsky(&["path", "JN17", "JN18", "--height", "5"]);
    assert_eq!(code, 2);
    assert!(err.contains("5 km"), "{err}");
    let (code, _, err) = nearsky(&["sun", "JN17", "--date", "2026-13-01"]);
    assert_eq!(code, 2);
    assert!(err.contains("`2026-13-01`"), "{err}");
}

#[test]
fn sun_json_matches_ephem_and_handles_polar_night() {
    // sunrise.csv (PyEphem 4.2.1): DRILL 2025-10-04 rise 05:52:51, set 17:23:19 UTC.
    let v = json(&[
        "sun",
        "JN17ga",
        "--time",
        "2025-10-04T12:00:00Z",
        "--format",
        "json",
    ]);
    let secs = |key: &str, want: &str| {
        let got = chrono::DateTime::parse_from_rfc3339(v[key].as_str().unwrap()).unwrap();
        let want = chrono::DateTime::parse_from_rfc3339(want).unwrap();
        (got - want).num_seconds().abs()
    };
    assert!(secs("sunrise", "2025-10-04T05:52:51Z") <= 30);
    assert!(secs("sunset", "2025-10-04T17:23:19Z") <= 30);
    // sun.csv (PyEphem): 12:00 UTC elevation 38.2015°.
    assert!((v["elevation_deg"].as_f64().unwrap() - 38.2015).abs() < 0.02);
    let v = json(&[
        "sun",
        "JP99",
        "--date",
        "2025-12-21",
        "--time",
        "2025-12-21T12:00Z",
        "--format",
        "json",
    ]);
    // Near Tromsø (JP99) at the December solstice the Sun stays below the horizon but rises
    // above −6°: no sunrise, yet a civil dawn.
    assert!(v["sunrise"].is_null() && v["sunset"].is_null() && v["civil_dawn"].is_string());
}

#[test]
fn path_and_sun_read_in_80_columns() {
    for args in [
        vec!["path", "JN17ga", "JN26le"],
        vec!["path", "JN17ga", "JN26le", "--time", "2026-12-01T12:00Z"],
        vec!["path", "JN17ga", "JN26le", "--time", "2026-12-01T23:00Z"],
        vec!["path", "JN07", "JN19", "--height", "300"],
        vec![
            "sun",
            "JN17ga",
            "--date",
            "2026-12-21",
            "--time",
            "2026-12-21T12:00Z",
        ],
    ] {
        let (code, text, err) = nearsky(&args);
        assert_eq!(code, 0, "{err}");
        for l in text.lines() {
            assert!(l.chars().count() <= 80, "{args:?}: `{l}`");
        }
    }
    let (_, text, _) = nearsky(&["path", "JN17ga", "JN26le", "--time", "2026-12-01T12:00Z"]);
    assert!(
        text.contains("layer         250 km virtual height (default for the Sun at the midpoint)"),
        "{text}"
    );
}
