//! A point on the Earth in degrees (WGS84 latitude and longitude).

use serde::{Deserialize, Serialize};

/// Why a pair of numbers is not a position.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum LatLonError {
    #[error("latitude {0} is outside -90..=90 degrees")]
    Latitude(f64),
    #[error("longitude {0} is outside -180..=180 degrees")]
    Longitude(f64),
}

/// Latitude (north positive) and longitude (east positive), in degrees.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LatLon {
    pub lat: f64,
    pub lon: f64,
}

impl LatLon {
    /// Checks the ranges; NaN is rejected as out of range.
    pub fn new(lat: f64, lon: f64) -> Result<Self, LatLonError> {
        if !(-90.0..=90.0).contains(&lat) {
            return Err(LatLonError::Latitude(lat));
        }
        if !(-180.0..=180.0).contains(&lon) {
            return Err(LatLonError::Longitude(lon));
        }
        Ok(Self { lat, lon })
    }
}

/// Wraps a longitude difference into (-180, 180].
pub fn wrap_lon_delta(d: f64) -> f64 {
    let mut x = (d + 180.0).rem_euclid(360.0) - 180.0;
    if x <= -180.0 {
        x += 360.0;
    }
    x
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_are_checked_and_named() {
        assert!(LatLon::new(47.0, 2.5).is_ok());
        assert_eq!(
            LatLon::new(91.0, 0.0).unwrap_err().to_string(),
            "latitude 91 is outside -90..=90 degrees"
        );
        assert!(
            LatLon::new(0.0, f64::NAN)
                .unwrap_err()
                .to_string()
                .contains("longitude NaN")
        );
    }

    #[test]
    fn longitude_differences_wrap() {
        assert!((wrap_lon_delta(350.0) - -10.0).abs() < 1e-12);
        assert!((wrap_lon_delta(-190.0) - 170.0).abs() < 1e-12);
        assert!((wrap_lon_delta(-180.0) - 180.0).abs() < 1e-12);
    }
}
