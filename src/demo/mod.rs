//! The demo drill: an invented scenario for trying nearsky out.
//!
//! Everything here is fiction: the call signs use the prefix `Q`, from which the ITU allocates
//! no call signs, and the stations, names and events are made up. The region (central France,
//! around Maidenhead square JN17) was chosen only because it gives a realistic spread of NVIS
//! distances.

pub mod scenario;

use std::io::Write;

use crate::domain::geo;
use crate::domain::skywave::{DAY_HEIGHT_KM, PathClass};
use crate::domain::{Band, Callsign, Frequency, Locator, Mode, Power};
use crate::store::{Channel, Drill, Logbook, Note, RosterEntry, StationProfile, StoreError};

/// One station of the invented net.
#[derive(Debug, Clone)]
pub struct DemoStation {
    pub call: &'static str,
    pub tactical: &'static str,
    pub locator: &'static str,
    pub role: &'static str,
    pub power_w: f64,
}

/// The net: net control first. Distances from net control run from about 5 to 340 km.
pub const STATIONS: [DemoStation; 12] = [
    DemoStation {
        call: "Q3NET",
        tactical: "Net Control",
        locator: "JN17ga",
        role: "net control",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q4SHL",
        tactical: "Shelter 1",
        locator: "JN17gb",
        role: "shelter",
        power_w: 20.0,
    },
    DemoStation {
        call: "Q7HSP",
        tactical: "Hospital",
        locator: "JN17ig",
        role: "hospital",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q2FIR",
        tactical: "Fire Station",
        locator: "JN06wu",
        role: "emergency services",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q5SHL",
        tactical: "Shelter 2",
        locator: "JN17ap",
        role: "shelter",
        power_w: 10.0,
    },
    DemoStation {
        call: "Q8WTR",
        tactical: "Water Works",
        locator: "JN16hc",
        role: "utility",
        power_w: 20.0,
    },
    DemoStation {
        call: "Q6MOB",
        tactical: "Mobile 1",
        locator: "JN17wm",
        role: "mobile",
        power_w: 20.0,
    },
    DemoStation {
        call: "Q1CTY",
        tactical: "City Hall",
        locator: "JN18io",
        role: "authority",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q9RLY",
        tactical: "Relay Hill",
        locator: "JN26le",
        role: "relay",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q3RED",
        tactical: "Aid Post",
        locator: "IN97oi",
        role: "aid",
        power_w: 30.0,
    },
    DemoStation {
        call: "Q4AIR",
        tactical: "Airfield",
        locator: "JN28qu",
        role: "logistics",
        power_w: 50.0,
    },
    DemoStation {
        call: "Q2SCH",
        tactical: "School",
        locator: "JN14xc",
        role: "shelter",
        power_w: 5.0,
    },
];

/// The seed of the demo drill: the same seed gives the same logbook.
pub const SEED: u64 = 20_251_004;

/// Writes the demo drill into an empty logbook: the net control's own station, the roster,
/// the channels, every station's log (net control's own records, the others' as imported
/// files), the operators' notes, and a moved station.
pub fn install(book: &mut Logbook, seed: u64) -> Result<scenario::Scenario, StoreError> {
    let s = scenario::generate(seed);
    let invalid = |e: String| StoreError::Invalid(e);
    book.add_drill(&Drill {
        name: scenario::DRILL_NAME.to_string(),
        starts_at: Some(s.start),
        ends_at: Some(s.start + chrono::Duration::hours(s.hours)),
        net_control: Callsign::parse(STATIONS[0].call).ok(),
        description: "Invented demo drill: a 24-hour NVIS sounding exercise of a flood-response net. Every call sign, name and event is fictional.".into(),
    })?;
    book.use_drill(scenario::DRILL_NAME)?;
    let ncs = &STATIONS[0];
    book.set_station(
        &StationProfile {
            call: Callsign::parse(ncs.call).map_err(|e| invalid(e.to_string()))?,
            operator: None,
            usual_power: Power::from_watts(ncs.power_w).ok(),
            antenna: Some("NVIS dipole at 6 m".into()),
            rig: Some("100 W HF transceiver, run at 50 W".into()),
        },
        Some((
            Locator::parse(ncs.locator).map_err(|e| invalid(e.to_string()))?,
            s.start - chrono::Duration::hours(2),
        )),
    )?;
    for st in &STATIONS[1..] {
        book.roster_put(&RosterEntry {
            call: Callsign::parse(st.call).map_err(|e| invalid(e.to_string()))?,
            tactical: st.tactical.to_string(),
            locator: Locator::parse(st.locator).ok(),
            role: st.role.to_string(),
        })?;
    }
    for (name, f, m) in scenario::CHANNELS {
        let frequency = Frequency::parse(f).map_err(|e| invalid(e.to_string()))?;
        let band = Band::containing(frequency).map_err(|e| invalid(e.to_string()))?;
        book.add_channel(
            scenario::DRILL_NAME,
            &Channel {
                name: name.to_string(),
                band,
                frequency,
                mode: Mode::parse(m).map_err(|e| invalid(e.to_string()))?,
            },
        )?;
    }
    book.add_contacts(&s.contacts)?;
    for (at, band, station, text) in &s.notes {
        book.add_note(&Note {
            id: uuid::Uuid::from_u128(u128::from(seed) << 32 | u128::from(at.timestamp() as u64)),
            drill: Some(scenario::DRILL_NAME.to_string()),
            at: *at,
            band: *band,
            station: Callsign::parse(station).map_err(|e| invalid(e.to_string()))?,
            text: text.clone(),
        })?;
    }
    for (call, _, locator) in &s.moves {
        if let Some(mut e) = book.roster()?.into_iter().find(|e| e.call.as_str() == call) {
            e.locator = Some(*locator);
            e.role = format!("{} (moved during the drill)", e.role);
            book.roster_put(&e)?;
        }
    }
    Ok(s)
}

/// Prints the net: each station with its distance, bearing and path class from net control.
pub fn print_net(out: &mut impl Write) -> std::io::Result<()> {
    let ncs = &STATIONS[0];
    let Ok(home) = Locator::parse(ncs.locator) else {
        return Ok(());
    };
    writeln!(
        out,
        "Net control {} \"{}\" at {home}, {} W",
        ncs.call, ncs.tactical, ncs.power_w
    )?;
    writeln!(
        out,
        "{:<7} {:<13} {:<7} {:>6} {:>4} {:>3}  path (layer at {DAY_HEIGHT_KM} km)",
        "call", "name", "grid", "km", "brg", "W"
    )?;
    for s in &STATIONS[1..] {
        let Ok(l) = Locator::parse(s.locator) else {
            continue;
        };
        let p = geo::centre_path(&home, &l);
        let brg = p.bearing_deg.map_or("-".to_string(), |b| format!("{b:.0}"));
        let class = PathClass::of(p.distance_km, DAY_HEIGHT_KM);
        writeln!(
            out,
            "{:<7} {:<13} {:<7} {:>6.1} {:>4} {:>3}  {}",
            s.call,
            s.tactical,
            l,
            p.distance_km,
            brg,
            s.power_w,
            class.words()
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_demo_call_is_fictional_and_valid() {
        for s in &STATIONS {
            let c = Callsign::parse(s.call).unwrap();
            assert!(c.as_str().starts_with('Q'), "{}", s.call);
            Locator::parse(s.locator).unwrap();
        }
    }

    #[test]
    fn the_net_spreads_from_a_few_to_hundreds_of_km() {
        let home = Locator::parse(STATIONS[0].locator).unwrap();
        let d: Vec<f64> = STATIONS[1..]
            .iter()
            .map(|s| geo::centre_path(&home, &Locator::parse(s.locator).unwrap()).distance_km)
            .collect();
        let min = d.iter().copied().fold(f64::INFINITY, f64::min);
        let max = d.iter().copied().fold(0.0, f64::max);
        assert!((2.0..10.0).contains(&min), "{min}");
        assert!((300.0..=350.0).contains(&max), "{max}");
    }
}
