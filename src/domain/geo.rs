//! Distance and bearing between stations.
//!
//! Geodesics on the WGS84 ellipsoid by Karney's method (C. F. F. Karney, "Algorithms for
//! geodesics", J. Geodesy 87:43–55, 2013), through the `geographiclib-rs` crate. Distances in
//! km, bearings in degrees clockwise from true north in [0, 360). Between locators the centres
//! are used, and the range the cells allow is given beside the centre figure.

use geographiclib_rs::{DirectGeodesic, Geodesic, InverseGeodesic};
use serde::Serialize;

use super::hashing::FxMap;
use super::latlon::LatLon;
use super::locator::Locator;

/// Mean Earth radius for the spherical comparison formula (km).
pub const SPHERE_RADIUS_KM: f64 = 6371.0;

/// Paths shorter than this have no meaningful bearing (km): 1 m.
const SAME_SPOT_KM: f64 = 0.001;
/// Arc length (degrees) from which two points count as antipodal: every route is then about
/// equally short and the azimuth is not unique.
const ANTIPODAL_ARC_DEG: f64 = 179.999;

/// What kind of answer a bearing is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Direction {
    /// An ordinary path with a unique initial bearing.
    Defined,
    /// Both ends at the same place (or in the same locator cell): no bearing.
    SameSpot,
    /// Antipodal: every direction is (almost) equally short.
    Antipodal,
}

/// The geodesic between two points.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Path {
    pub distance_km: f64,
    /// Initial bearing at A; `None` unless `direction` is `Defined`.
    pub bearing_deg: Option<f64>,
    /// Bearing from B back to A (forward azimuth at B + 180°, not initial + 180°).
    pub reverse_bearing_deg: Option<f64>,
    pub direction: Direction,
}

fn normalise_deg(a: f64) -> f64 {
    let x = a.rem_euclid(360.0);
    if x >= 360.0 { 0.0 } else { x }
}

/// The WGS84 geodesic from `a` to `b`.
pub fn path(a: LatLon, b: LatLon) -> Path {
    let g = Geodesic::wgs84();
    let (s12, azi1, azi2, a12): (f64, f64, f64, f64) = g.inverse(a.lat, a.lon, b.lat, b.lon);
    let distance_km = s12 / 1000.0;
    let direction = if distance_km < SAME_SPOT_KM {
        Direction::SameSpot
    } else if a12 >= ANTIPODAL_ARC_DEG {
        Direction::Antipodal
    } else {
        Direction::Defined
    };
    let defined = direction == Direction::Defined;
    Path {
        distance_km,
        bearing_deg: defined.then(|| normalise_deg(azi1)),
        reverse_bearing_deg: defined.then(|| normalise_deg(azi2 + 180.0)),
        direction,
    }
}

/// Distance on a sphere of radius 6371 km (haversine). For comparison only: on drill paths it
/// is up to about 0.3 % off the ellipsoid.
pub fn haversine_km(a: LatLon, b: LatLon) -> f64 {
    let (p1, p2) = (a.lat.to_radians(), b.lat.to_radians());
    let dp = p2 - p1;
    let dl = (b.lon - a.lon).to_radians();
    let h = (dp / 2.0).sin().powi(2) + p1.cos() * p2.cos() * (dl / 2.0).sin().powi(2);
    2.0 * SPHERE_RADIUS_KM * h.sqrt().min(1.0).asin()
}

/// The point half-way along the geodesic: where a one-hop signal comes down from the layer.
pub fn midpoint(a: LatLon, b: LatLon) -> LatLon {
    let g = Geodesic::wgs84();
    let (s12, azi1, _azi2, _a12): (f64, f64, f64, f64) = g.inverse(a.lat, a.lon, b.lat, b.lon);
    let (lat, lon): (f64, f64) = g.direct(a.lat, a.lon, azi1, s12 / 2.0);
    LatLon { lat, lon }
}

/// [`midpoint`] of `a` and the end of `p`, a path already computed from `a`: one geodesic
/// problem (the direct one) instead of two.
pub fn midpoint_along(a: LatLon, p: &Path, b: LatLon) -> LatLon {
    match p.bearing_deg {
        Some(azi1) => {
            let (lat, lon): (f64, f64) =
                Geodesic::wgs84().direct(a.lat, a.lon, azi1, p.distance_km * 500.0);
            LatLon { lat, lon }
        }
        None => midpoint(a, b),
    }
}

/// The geodesic from the centre of one locator to the centre of the other: one geodesic
/// problem, where [`locator_path`] also searches the cells' edges (thousands). For cells
/// that overlap the direction is `SameSpot`, with no bearing.
pub fn centre_path(a: &Locator, b: &Locator) -> Path {
    centre_path_from(a, b, a.centre(), b.centre())
}

/// [`centre_path`] with the two centres already known.
fn centre_path_from(a: &Locator, b: &Locator, ca: LatLon, cb: LatLon) -> Path {
    let mut p = path(ca, cb);
    if a.lies_in(b) || b.lies_in(a) {
        p.direction = Direction::SameSpot;
        p.bearing_deg = None;
        p.reverse_bearing_deg = None;
    }
    p
}

/// The path between two locators: centre to centre, with the range of distances the two cells
/// allow.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LocatorPath {
    /// Centre-to-centre geodesic. For cells that overlap (`JN17` and `JN17mm`), the direction is
    /// `SameSpot`: "same square", no bearing.
    pub centre: Path,
    /// Shortest and longest distance between any point of one cell and any of the other.
    pub min_km: f64,
    pub max_km: f64,
    /// A 2-character locator is at one end: the figures say almost nothing.
    pub too_coarse: bool,
}

impl LocatorPath {
    /// Whether both locators name (or contain) the same cell.
    pub fn same_cell(&self) -> bool {
        self.centre.direction == Direction::SameSpot
    }
}

/// Points sampled per cell edge to find the extreme distances (corners included). The nearest
/// and farthest points of two small cells lie on their boundaries; 9 points per edge keep the
/// error far below the cell size.
const EDGE_SAMPLES: usize = 9;

fn boundary(l: &Locator) -> Vec<LatLon> {
    let sw = l.south_west();
    let (dlat, dlon) = l.cell_size();
    let n = EDGE_SAMPLES - 1;
    let mut pts = Vec::with_capacity(4 * n);
    for i in 0..n {
        let t = i as f64 / n as f64;
        pts.push(LatLon {
            lat: sw.lat,
            lon: sw.lon + t * dlon,
        });
        pts.push(LatLon {
            lat: sw.lat + t * dlat,
            lon: sw.lon + dlon,
        });
        pts.push(LatLon {
            lat: sw.lat + dlat,
            lon: sw.lon + (1.0 - t) * dlon,
        });
        pts.push(LatLon {
            lat: sw.lat + (1.0 - t) * dlat,
            lon: sw.lon,
        });
    }
    pts.iter()
        .map(|p| LatLon {
            lat: p.lat.clamp(-90.0, 90.0),
            lon: p.lon,
        })
        .collect()
}

fn cells_touch(a: &Locator, b: &Locator) -> bool {
    let (sa, sb) = (a.south_west(), b.south_west());
    let (ha, wa) = a.cell_size();
    let (hb, wb) = b.cell_size();
    let lat_overlap = sa.lat <= sb.lat + hb && sb.lat <= sa.lat + ha;
    // Work in longitude relative to a's west edge, wrapped, so cells across ±180° are seen.
    let rel = (sb.lon - sa.lon).rem_euclid(360.0);
    let lon_overlap = rel <= wa || rel + wb >= 360.0;
    lat_overlap && lon_overlap
}

/// Distance, bearings and the distance range between two locators.
pub fn locator_path(a: &Locator, b: &Locator) -> LocatorPath {
    let centre = centre_path(a, b);
    let (pa, pb) = (boundary(a), boundary(b));
    let g = Geodesic::wgs84();
    let mut min_km = f64::INFINITY;
    let mut max_km: f64 = 0.0;
    for p in &pa {
        for q in &pb {
            let (s12, _a12): (f64, f64) = g.inverse(p.lat, p.lon, q.lat, q.lon);
            min_km = min_km.min(s12 / 1000.0);
            max_km = max_km.max(s12 / 1000.0);
        }
    }
    if cells_touch(a, b) {
        min_km = 0.0;
    }
    LocatorPath {
        centre,
        min_km,
        max_km: max_km.max(centre.distance_km),
        too_coarse: a.is_too_coarse_for_distance() || b.is_too_coarse_for_distance(),
    }
}

/// Centre-to-centre paths computed once per pair. Coverage and exports over a large log meet
/// the same few hundred station pairs again and again; the geodesic is done once each.
#[derive(Debug, Default)]
pub struct PathCache {
    centres: FxMap<(Locator, Locator), Path>,
    points: FxMap<Locator, LatLon>,
}

impl PathCache {
    pub fn new() -> Self {
        Self::default()
    }

    /// The centre-to-centre geodesic only (no cell range): what coverage needs, at the cost of
    /// one geodesic per pair.
    pub fn centre(&mut self, a: &Locator, b: &Locator) -> Path {
        let (key, flipped) = if a <= b {
            ((*a, *b), false)
        } else {
            ((*b, *a), true)
        };
        let p = match self.centres.get(&key) {
            Some(p) => *p,
            None => {
                let (ca, cb) = (self.point(&key.0), self.point(&key.1));
                let p = centre_path_from(&key.0, &key.1, ca, cb);
                self.centres.insert(key, p);
                p
            }
        };
        if flipped {
            Path {
                bearing_deg: p.reverse_bearing_deg,
                reverse_bearing_deg: p.bearing_deg,
                ..p
            }
        } else {
            p
        }
    }

    /// The centre of a locator's cell, computed once per locator.
    pub fn point(&mut self, l: &Locator) -> LatLon {
        *self.points.entry(*l).or_insert_with(|| l.centre())
    }

    /// Number of distinct pairs computed so far.
    pub fn len(&self) -> usize {
        self.centres.len()
    }

    pub fn is_empty(&self) -> bool {
        self.centres.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn loc(s: &str) -> Locator {
        Locator::parse(s).unwrap()
    }

    #[test]
    fn the_midpoint_along_a_cached_path_is_the_midpoint() {
        let mut cache = PathCache::new();
        for (x, y) in [
            ("JN17ga", "JN26le"),
            ("JN26le", "JN17ga"),
            ("IN97oi", "JN28qu"),
            ("JN17ga", "JN17gb"),
            ("JN17ga", "JN17ga"),
            ("AA00aa", "RR99xx"),
        ] {
            let (a, b) = (loc(x), loc(y));
            let p = cache.centre(&a, &b);
            let m = midpoint_along(a.centre(), &p, b.centre());
            let want = midpoint(a.centre(), b.centre());
            assert!(
                (m.lat - want.lat).abs() < 1e-9 && (m.lon - want.lon).abs() < 1e-9,
                "{x}-{y}: {m:?} vs {want:?}"
            );
        }
    }

    #[test]
    fn identical_and_nested_locators_are_the_same_square() {
        let p = locator_path(&loc("JN17ga"), &loc("JN17ga"));
        assert!(p.same_cell());
        assert_eq!(p.centre.bearing_deg, None);
        assert_eq!(p.min_km, 0.0);
        let p = locator_path(&loc("JN17"), &loc("JN17mm"));
        assert!(p.same_cell());
    }

    #[test]
    fn the_cache_returns_reversed_bearings_for_the_reversed_pair() {
        let mut cache = PathCache::new();
        let ab = cache.centre(&loc("JN17ga"), &loc("IN76qi"));
        let ba = cache.centre(&loc("IN76qi"), &loc("JN17ga"));
        assert_eq!(cache.len(), 1);
        assert_eq!(ab.bearing_deg, ba.reverse_bearing_deg);
        assert_eq!(ab.distance_km, ba.distance_km);
        let direct = centre_path(&loc("IN76qi"), &loc("JN17ga"));
        let (x, y) = (direct.bearing_deg.unwrap(), ba.bearing_deg.unwrap());
        assert!((x - y).abs() < 1e-9);
    }

    #[test]
    fn a_field_is_flagged_too_coarse() {
        assert!(locator_path(&loc("JN"), &loc("JN17ga")).too_coarse);
    }
}
