//! The demo drill: an invented scenario for trying nearsky out.
//!
//! Everything here is fiction: the call signs use the prefix `Q`, from which the ITU allocates
//! no call signs, and the stations, names and events are made up. The region (central France,
//! around Maidenhead square JN17) was chosen only because it gives a realistic spread of NVIS
//! distances.

use std::io::Write;

use crate::cli::args::DemoArgs;
use crate::domain::geo;
use crate::domain::skywave::{DAY_HEIGHT_KM, PathClass};
use crate::domain::{Callsign, Locator};

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
        tactical: "Red Cross",
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

/// Prints what the demo net holds: each station with its distance, bearing and path class as
/// seen from net control.
pub fn print_summary(out: &mut impl Write, _args: &DemoArgs) -> anyhow::Result<()> {
    writeln!(
        out,
        "nearsky demo drill (invented scenario; all call signs fictional, prefix Q)"
    )?;
    writeln!(out)?;
    let ncs = &STATIONS[0];
    let home = Locator::parse(ncs.locator)?;
    writeln!(
        out,
        "Net control {} \"{}\" at {}, {} W",
        Callsign::parse(ncs.call)?,
        ncs.tactical,
        home,
        ncs.power_w
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "{:<7} {:<13} {:<7} {:>7} {:>6} {:>5}  path (layer at {DAY_HEIGHT_KM} km)",
        "call", "name", "grid", "km", "brg", "W"
    )?;
    for s in &STATIONS[1..] {
        let l = Locator::parse(s.locator)?;
        let p = geo::locator_path(&home, &l);
        let brg = p
            .centre
            .bearing_deg
            .map_or("-".to_string(), |b| format!("{b:.0}"));
        let class = PathClass::of(p.centre.distance_km, DAY_HEIGHT_KM);
        writeln!(
            out,
            "{:<7} {:<13} {:<7} {:>7.1} {:>6} {:>5}  {}",
            s.call,
            s.tactical,
            l,
            p.centre.distance_km,
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
            .map(|s| {
                geo::locator_path(&home, &Locator::parse(s.locator).unwrap())
                    .centre
                    .distance_km
            })
            .collect();
        let min = d.iter().copied().fold(f64::INFINITY, f64::min);
        let max = d.iter().copied().fold(0.0, f64::max);
        assert!((2.0..10.0).contains(&min), "{min}");
        assert!((300.0..=350.0).contains(&max), "{max}");
    }
}
