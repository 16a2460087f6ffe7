//! Brief cautions about what a station transmits. They warn and never block: local regulations
//! and the licence conditions decide, and these checks do not know them.

use super::{Band, Frequency, Power};

/// The 60 m segment allocated worldwide to the amateur service (secondary basis) by WRC-15,
/// ITU Radio Regulations footnote 5.133B: 5351.5–5366.5 kHz.
pub const SIXTY_METRE_SEGMENT_HZ: (u64, u64) = (5_351_500, 5_366_500);

/// The limit of footnote 5.133B: 15 W e.i.r.p. (some administrations allow up to 25 W).
pub const SIXTY_METRE_EIRP_W: f64 = 15.0;

/// What deserves a word of caution about a transmission on `band` at `frequency` with
/// `power` (transmitter output): empty when nothing does.
pub fn transmit_cautions(
    band: Band,
    frequency: Option<Frequency>,
    power: Option<Power>,
) -> Vec<String> {
    let mut out = Vec::new();
    if band != Band::B60m {
        return out;
    }
    let (lo, hi) = SIXTY_METRE_SEGMENT_HZ;
    if let Some(f) = frequency
        && !(lo..=hi).contains(&f.hz())
    {
        out.push(format!(
            "60 m: {f} is outside the worldwide segment 5351.5-5366.5 kHz (ITU RR 5.133B); some countries have other channels; check your licence"
        ));
    }
    if let Some(p) = power
        && p.watts() > SIXTY_METRE_EIRP_W
    {
        out.push(format!(
            "60 m: {} W is above the {SIXTY_METRE_EIRP_W:.0} W e.i.r.p. of ITU RR 5.133B (some countries 25 W or own rules); check your licence",
            p.watts()
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn f(hz: u64) -> Option<Frequency> {
        Frequency::from_hz(hz).ok()
    }

    fn w(x: f64) -> Option<Power> {
        Power::from_watts(x).ok()
    }

    #[test]
    fn only_60_m_outside_its_segment_or_above_15_w_is_cautioned() {
        // Segment edges and limit: ITU Radio Regulations footnote 5.133B (WRC-15),
        // 5351.5-5366.5 kHz, 15 W e.i.r.p.
        assert!(transmit_cautions(Band::B60m, f(5_351_500), w(15.0)).is_empty());
        assert!(transmit_cautions(Band::B60m, f(5_366_500), w(10.0)).is_empty());
        assert!(transmit_cautions(Band::B60m, None, None).is_empty());
        let low = transmit_cautions(Band::B60m, f(5_351_499), None);
        assert_eq!(low.len(), 1);
        assert!(
            low[0].contains("5.351499 MHz") && low[0].contains("outside"),
            "{low:?}"
        );
        let strong = transmit_cautions(Band::B60m, f(5_362_500), w(100.0));
        assert_eq!(strong.len(), 1);
        assert!(strong[0].starts_with("60 m: 100 W is above the 15 W e.i.r.p."));
        assert_eq!(
            transmit_cautions(Band::B60m, f(5_403_500), w(50.0)).len(),
            2
        );
        // Other bands: nothing here.
        assert!(transmit_cautions(Band::B40m, f(7_100_000), w(100.0)).is_empty());
        assert!(transmit_cautions(Band::B80m, f(3_600_000), w(100.0)).is_empty());
    }
}
