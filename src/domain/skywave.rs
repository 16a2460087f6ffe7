//! Single-hop sky-wave geometry over a spherical Earth, and what a worked contact says about
//! the ionosphere.
//!
//! Model (propagation sheet §3): Earth radius R = 6371 km, a mirror at virtual height h′ above
//! the path midpoint, ground distance d, half central angle θ = d/2R.
//! - take-off angle β = atan2(cos θ − R/(R+h′), sin θ)
//! - angle of incidence at the layer φ = 90° − β − θ
//! - secant law: a wave at f is reflected where a vertical wave of f·cos φ would be, so a
//!   worked sky-wave contact at f proves a critical frequency fc ≥ f·cos φ (Martyn's theorem,
//!   flat-Earth form, used with the curved-Earth φ; see Davies, *Ionospheric Radio*, 1990).

use serde::Serialize;

/// Earth radius of the sky-wave model (km).
pub const EARTH_RADIUS_KM: f64 = 6371.0;
/// Daytime F-region virtual height default (km), used when the Sun at the path midpoint is at or
/// above the horizon. An engineering choice (propagation sheet §3), not from a source.
pub const DAY_HEIGHT_KM: f64 = 250.0;
/// Night-time default (km), used when the Sun is 12° or more below the horizon.
pub const NIGHT_HEIGHT_KM: f64 = 300.0;
/// E-region reflection height (km), as used for E modes in ITU-R P.533 (from memory).
pub const E_HEIGHT_KM: f64 = 110.0;
/// Take-off angle from which a path counts as near-vertical incidence: 60°, the lower edge of
/// the usual 60–90° NVIS elevation band (propagation sheet §3; Witvliet et al., IEEE Antennas
/// Propag. Mag. 57(1), 2015, describe NVIS as very high elevation angles).
pub const NVIS_MIN_TAKEOFF_DEG: f64 = 60.0;
/// Below this ground distance ground wave is possible at drill powers: common practice, no
/// source (5–100 W on 3.5–7 MHz with low horizontal wires reach some 10–30 km by ground wave).
pub const GROUND_WAVE_KM: f64 = 30.0;
/// Beyond this fraction of the longest single hop, a path is taken as multi-hop.
const MULTI_HOP_FRACTION: f64 = 0.9;

/// Why a reflection height was refused.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum HeightError {
    #[error("reflection height {0} km must be between 50 and 1000 km")]
    OutOfRange(f64),
}

/// Checks a user-given virtual height.
pub fn check_height(h_km: f64) -> Result<f64, HeightError> {
    if (50.0..=1000.0).contains(&h_km) {
        Ok(h_km)
    } else {
        Err(HeightError::OutOfRange(h_km))
    }
}

/// The geometry of one hop.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Hop {
    pub ground_km: f64,
    pub height_km: f64,
    /// Take-off (elevation) angle at either end, degrees above the horizon.
    pub takeoff_deg: f64,
    /// Angle of incidence at the layer, degrees from the vertical.
    pub incidence_deg: f64,
    /// Length of the triangular path up and down (Breit–Tuve group path), km.
    pub group_path_km: f64,
}

impl Hop {
    /// The hop over `ground_km` reflected at `height_km`.
    pub fn new(ground_km: f64, height_km: f64) -> Hop {
        let r = EARTH_RADIUS_KM;
        let theta = ground_km / (2.0 * r);
        let beta = (theta.cos() - r / (r + height_km)).atan2(theta.sin());
        let incidence = std::f64::consts::FRAC_PI_2 - beta - theta;
        let slant =
            (r * r + (r + height_km).powi(2) - 2.0 * r * (r + height_km) * theta.cos()).sqrt();
        Hop {
            ground_km,
            height_km,
            takeoff_deg: beta.to_degrees(),
            incidence_deg: incidence.to_degrees(),
            group_path_km: 2.0 * slant,
        }
    }

    /// cos φ: the ratio of the vertical-incidence frequency to the oblique one.
    pub fn cos_incidence(&self) -> f64 {
        self.incidence_deg.to_radians().cos()
    }

    /// Lower bound on the reflecting layer's critical frequency implied by a sky-wave contact
    /// that worked at `f_mhz` over this hop (secant law): fc ≥ f·cos φ.
    pub fn critical_frequency_floor_mhz(&self, f_mhz: f64) -> f64 {
        f_mhz * self.cos_incidence()
    }

    /// The highest frequency this hop carries when the layer's critical frequency is `fc_mhz`
    /// (MUF ≈ fc·sec φ, curvature factor k ≈ 1 at NVIS ranges).
    pub fn muf_mhz(&self, fc_mhz: f64) -> f64 {
        fc_mhz / self.cos_incidence()
    }
}

/// Longest single hop (take-off angle 0°) for a layer at `height_km`: 2R·arccos(R/(R+h′)).
pub fn longest_hop_km(height_km: f64) -> f64 {
    let r = EARTH_RADIUS_KM;
    2.0 * r * (r / (r + height_km)).acos()
}

/// Default F-region virtual height from the Sun's elevation at the path midpoint: 250 km by
/// day (Sun ≥ 0°), 300 km at night (Sun ≤ −12°), linear in between (propagation sheet §3,
/// an engineering choice; user-overridable).
pub fn default_height_km(midpoint_sun_elevation_deg: f64) -> f64 {
    let e = midpoint_sun_elevation_deg.clamp(-12.0, 0.0);
    DAY_HEIGHT_KM + (NIGHT_HEIGHT_KM - DAY_HEIGHT_KM) * (-e / 12.0)
}

/// How a path most likely propagates, in the trade's terms.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PathClass {
    /// Short enough for ground wave at drill powers (sky wave may arrive as well).
    GroundWave,
    /// Near-vertical incidence sky wave: take-off angle ≥ 60°.
    Nvis,
    /// One hop at a lower angle.
    ShortSkip,
    /// Too long for one hop.
    MultiHop,
}

impl PathClass {
    /// Classifies a path of `ground_km` for a layer at `height_km`.
    pub fn of(ground_km: f64, height_km: f64) -> PathClass {
        if ground_km < GROUND_WAVE_KM {
            PathClass::GroundWave
        } else if ground_km >= MULTI_HOP_FRACTION * longest_hop_km(height_km) {
            PathClass::MultiHop
        } else if Hop::new(ground_km, height_km).takeoff_deg >= NVIS_MIN_TAKEOFF_DEG {
            PathClass::Nvis
        } else {
            PathClass::ShortSkip
        }
    }

    pub fn words(self) -> &'static str {
        match self {
            Self::GroundWave => "ground wave possible",
            Self::Nvis => "NVIS",
            Self::ShortSkip => "short skip",
            Self::MultiHop => "multi-hop",
        }
    }

    /// The key used in JSON and files.
    pub fn key(self) -> &'static str {
        match self {
            Self::GroundWave => "ground_wave",
            Self::Nvis => "nvis",
            Self::ShortSkip => "short_skip",
            Self::MultiHop => "multi_hop",
        }
    }
}

/// Chapman-layer estimate of the E-region critical frequency (MHz):
/// foE ≈ 0.9·[(180 + 1.44·R12)·cos χ]^¼, R12 the 12-month smoothed sunspot number, χ the
/// solar zenith angle. Coefficients as widely attributed to Davies, *Ionospheric Radio* (1990)
/// and CCIR practice (not checked against the primary text). Meaningful by day only: `None`
/// for χ beyond 85°, where the plane-Earth cos χ fails and foE falls to a night residual.
pub fn chapman_foe_mhz(zenith_deg: f64, sunspot_r12: f64) -> Option<f64> {
    if !(0.0..=85.0).contains(&zenith_deg.abs()) || sunspot_r12 < 0.0 {
        return None;
    }
    let c = zenith_deg.to_radians().cos();
    Some(0.9 * ((180.0 + 1.44 * sunspot_r12) * c).powf(0.25))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flat_earth_limit_matches_the_right_triangle() {
        // By hand: for d much smaller than R the hop is a right triangle with legs d/2 and h',
        // so tan φ = d/(2h') (propagation sheet §3, flat-Earth limit). d = 20 km, h' = 300 km:
        // φ = atan(10/300) = 1.9092°, β = 88.09°; Earth curvature moves β by θ = 0.09° only.
        let hop = Hop::new(20.0, 300.0);
        let flat_phi = (10.0f64 / 300.0).atan().to_degrees();
        assert!(
            (hop.incidence_deg - flat_phi).abs() < 0.01,
            "{}",
            hop.incidence_deg
        );
        assert!(
            (hop.takeoff_deg + hop.incidence_deg + 20.0 / (2.0 * EARTH_RADIUS_KM) * 57.29578
                - 90.0)
                .abs()
                < 1e-9
        );
    }

    #[test]
    fn curved_earth_case_checked_by_hand() {
        // By hand (formula β = atan2(cos θ − R/(R+h'), sin θ), propagation sheet §3):
        // d = 500 km, h' = 300 km: θ = 500/12742 = 0.039241 rad; cos θ = 0.999230,
        // R/(R+h') = 6371/6671 = 0.955029; numerator 0.044201; sin θ = 0.039231;
        // β = atan(1.12669) = 48.41°; φ = 90 − 48.41 − 2.248 = 39.34°, sec φ 1.293.
        let hop = Hop::new(500.0, 300.0);
        assert!(
            (hop.takeoff_deg - 48.41).abs() < 0.01,
            "{}",
            hop.takeoff_deg
        );
        assert!((1.0 / hop.cos_incidence() - 1.293).abs() < 0.001);
    }

    #[test]
    fn a_100_km_path_at_f_layer_heights_is_nvis() {
        // Common practice, no source: a 100 km path via a 250–300 km layer is NVIS, take-off
        // angle well above 70°.
        for h in [250.0, 275.0, 300.0] {
            assert!(Hop::new(100.0, h).takeoff_deg > 70.0);
            assert_eq!(PathClass::of(100.0, h), PathClass::Nvis);
        }
    }

    #[test]
    fn classes_follow_the_thresholds() {
        assert_eq!(PathClass::of(10.0, 250.0), PathClass::GroundWave);
        assert_eq!(PathClass::of(270.0, 250.0), PathClass::Nvis);
        assert_eq!(PathClass::of(290.0, 250.0), PathClass::ShortSkip);
        assert_eq!(PathClass::of(3300.0, 250.0), PathClass::MultiHop);
    }

    #[test]
    fn longest_hop_matches_the_sheet() {
        // propagation sheet §3 [calc]: 2351 km (110 km), 3513 km (250), 3836 km (300).
        assert!((longest_hop_km(110.0) - 2351.0).abs() < 1.0);
        assert!((longest_hop_km(250.0) - 3513.0).abs() < 1.0);
        assert!((longest_hop_km(300.0) - 3836.0).abs() < 1.0);
    }

    #[test]
    fn default_height_runs_from_day_to_night() {
        assert_eq!(default_height_km(30.0), 250.0);
        assert_eq!(default_height_km(-6.0), 275.0);
        assert_eq!(default_height_km(-40.0), 300.0);
        assert!(
            check_height(20.0)
                .unwrap_err()
                .to_string()
                .contains("20 km")
        );
    }

    #[test]
    fn the_critical_frequency_floor_of_the_sheet_example() {
        // propagation sheet §4: 7.1 MHz over 100 km at h' 250 km → fc ≥ 6.96 MHz.
        let f = Hop::new(100.0, 250.0).critical_frequency_floor_mhz(7.1);
        assert!((f - 6.96).abs() < 0.005, "{f}");
        assert!((Hop::new(100.0, 250.0).muf_mhz(f) - 7.1).abs() < 1e-9);
    }
}
