//! `nearsky path` and `nearsky sun`: the geometry layer on the command line.

use std::io::Write;

use chrono::{DateTime, NaiveDate, SecondsFormat, Utc};
use serde_json::json;

use super::args::{PathArgs, SunArgs, TextOrJson};
use super::{CliError, usage};
use crate::domain::geo::{self, Direction};
use crate::domain::skywave::{self, DAY_HEIGHT_KM, Hop, PathClass};
use crate::domain::sun::{self, Daylight, SunEvent};
use crate::domain::{Locator, parse_utc};

fn locator(text: &str, what: &str) -> Result<Locator, CliError> {
    Locator::parse(text).map_err(|e| usage(format!("{what}: {e}")))
}

fn time(text: &str, now: DateTime<Utc>) -> Result<DateTime<Utc>, CliError> {
    parse_utc(text, now.date_naive()).map_err(|e| usage(format!("--time: {e}")))
}

fn rfc3339(t: DateTime<Utc>) -> String {
    t.to_rfc3339_opts(SecondsFormat::Secs, true)
}

/// Runs `nearsky path`.
pub fn path(out: &mut impl Write, a: &PathArgs, now: DateTime<Utc>) -> Result<(), CliError> {
    let from = locator(&a.from, "first locator")?;
    let to = locator(&a.to, "second locator")?;
    let at = a.time.as_deref().map(|t| time(t, now)).transpose()?;
    if let Some(h) = a.height {
        skywave::check_height(h).map_err(|e| usage(format!("--height: {e}")))?;
    }
    let p = geo::locator_path(&from, &to);
    let d = p.centre.distance_km;
    let mid = geo::midpoint(from.centre(), to.centre());
    let mid_sun = at.map(|t| sun::position(mid, t).elevation_deg);
    let (height, height_why) = match (a.height, mid_sun) {
        (Some(h), _) => (h, "given"),
        (None, Some(e)) => (
            skywave::default_height_km(e),
            "default for the Sun at the midpoint",
        ),
        (None, None) => (DAY_HEIGHT_KM, "daytime default"),
    };
    let hop = Hop::new(d, height);
    let class = PathClass::of(d, height);
    let bearing = p.centre.bearing_deg;
    match a.format {
        TextOrJson::Json => {
            let v = json!({
                "from": from.as_str(),
                "to": to.as_str(),
                "distance_km": round(d, 3),
                "bearing_deg": bearing.map(|b| round(b, 3)),
                "reverse_bearing_deg": p.centre.reverse_bearing_deg.map(|b| round(b, 3)),
                "distance_min_km": round(p.min_km, 3),
                "distance_max_km": round(p.max_km, 3),
                "same_square": p.same_cell(),
                "too_coarse": p.too_coarse,
                "height_km": round(height, 1),
                "takeoff_deg": round(hop.takeoff_deg, 2),
                "incidence_deg": round(hop.incidence_deg, 2),
                "path_class": class.key(),
                "midpoint_sun_elevation_deg": mid_sun.map(|e| round(e, 2)),
                "time": at.map(rfc3339),
            });
            writeln!(
                out,
                "{}",
                serde_json::to_string_pretty(&v).map_err(anyhow::Error::from)?
            )
            .map_err(anyhow::Error::from)?;
        }
        TextOrJson::Text => {
            let mut w = |s: String| writeln!(out, "{s}").map_err(anyhow::Error::from);
            w(format!("{from} to {to}"))?;
            if p.too_coarse {
                w(
                    "warning: a 2-character locator is far too coarse for distance and bearing"
                        .into(),
                )?;
            }
            w(format!(
                "distance      {d:.1} km centre to centre; the cells allow {:.1}-{:.1} km",
                p.min_km, p.max_km
            ))?;
            match (p.centre.direction, bearing, p.centre.reverse_bearing_deg) {
                (Direction::Defined, Some(b), Some(r)) => {
                    w(format!("bearing       {b:.1} deg true, reverse {r:.1} deg"))?
                }
                (Direction::Antipodal, _, _) => w("bearing       antipodal, any direction".into())?,
                _ => w("bearing       same square: no bearing".into())?,
            }
            // The layer on a line of its own: with its reason it would pass 80 columns.
            w(format!(
                "take-off      {:.1} deg above the horizon",
                hop.takeoff_deg
            ))?;
            w(format!(
                "layer         {height:.0} km virtual height ({height_why})"
            ))?;
            w(format!("path class    {}", class.words()))?;
            if let (Some(t), Some(e)) = (at, mid_sun) {
                w(format!(
                    "midpoint sun  {e:.1} deg ({}) at {}",
                    Daylight::of(e).words(),
                    t.format("%Y-%m-%d %H:%M UTC")
                ))?;
            }
        }
    }
    Ok(())
}

/// Runs `nearsky sun`.
pub fn sun(out: &mut impl Write, a: &SunArgs, now: DateTime<Utc>) -> Result<(), CliError> {
    let place = locator(&a.locator, "locator")?;
    let at = a
        .time
        .as_deref()
        .map(|t| time(t, now))
        .transpose()?
        .unwrap_or(now);
    let date = match &a.date {
        Some(d) => NaiveDate::parse_from_str(d.trim(), "%Y-%m-%d")
            .map_err(|_| usage(format!("--date: `{d}` is not a date (YYYY-MM-DD)")))?,
        None => at.date_naive(),
    };
    let pos = sun::position(place.centre(), at);
    let day = sun::day(place.centre(), date);
    let ev = |e: SunEvent| e.time().map(rfc3339);
    match a.format {
        TextOrJson::Json => {
            let v = json!({
                "locator": place.as_str(),
                "time": rfc3339(at),
                "elevation_deg": round(pos.elevation_deg, 3),
                "azimuth_deg": round(pos.azimuth_deg, 3),
                "daylight": Daylight::of(pos.elevation_deg).words(),
                "date": date.to_string(),
                "sunrise": ev(day.sunrise),
                "sunset": ev(day.sunset),
                "civil_dawn": ev(day.civil_dawn),
                "civil_dusk": ev(day.civil_dusk),
                "solar_noon": rfc3339(day.solar_noon),
            });
            writeln!(
                out,
                "{}",
                serde_json::to_string_pretty(&v).map_err(anyhow::Error::from)?
            )
            .map_err(anyhow::Error::from)?;
        }
        TextOrJson::Text => {
            let show = |e: SunEvent| match e {
                SunEvent::At(t) => t.format("%Y-%m-%d %H:%M:%S UTC").to_string(),
                SunEvent::AlwaysAbove => "none: the Sun stays above all day".to_string(),
                SunEvent::AlwaysBelow => "none: the Sun stays below all day".to_string(),
            };
            let mut w = |s: String| writeln!(out, "{s}").map_err(anyhow::Error::from);
            w(format!(
                "Sun at {place} ({:.4}, {:.4})",
                place.centre().lat,
                place.centre().lon
            ))?;
            w(format!(
                "at {}: elevation {:.2} deg, azimuth {:.2} deg ({})",
                at.format("%Y-%m-%d %H:%M:%S UTC"),
                pos.elevation_deg,
                pos.azimuth_deg,
                Daylight::of(pos.elevation_deg).words()
            ))?;
            w(format!("on {date} (local solar day):"))?;
            w(format!("  civil dawn  {}", show(day.civil_dawn)))?;
            w(format!("  sunrise     {}", show(day.sunrise)))?;
            w(format!(
                "  solar noon  {}",
                day.solar_noon.format("%Y-%m-%d %H:%M:%S UTC")
            ))?;
            w(format!("  sunset      {}", show(day.sunset)))?;
            w(format!("  civil dusk  {}", show(day.civil_dusk)))?;
        }
    }
    Ok(())
}

fn round(x: f64, digits: i32) -> f64 {
    let m = 10f64.powi(digits);
    (x * m).round() / m
}
