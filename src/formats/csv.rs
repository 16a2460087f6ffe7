//! CSV rows of contacts for spreadsheets (RFC 4180 quoting, UTC times, Hz, km, W).

use std::io::{self, Write};

use crate::domain::Contact;
use crate::domain::geo::PathCache;

/// The column names, in order.
pub const COLUMNS: [&str; 22] = [
    "id",
    "drill",
    "start_utc",
    "end_utc",
    "own_call",
    "operator",
    "own_locator",
    "power_w",
    "antenna",
    "call",
    "locator",
    "band",
    "freq_hz",
    "mode",
    "submode",
    "rst_sent",
    "rst_rcvd",
    "their_power_w",
    "outcome",
    "distance_km",
    "bearing_deg",
    "via",
];

fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

pub fn write_header(w: &mut impl Write) -> io::Result<()> {
    writeln!(w, "{},note,deleted", COLUMNS.join(","))
}

/// One contact as a row; `deleted` marks soft-deleted contacts.
pub fn write_row(
    w: &mut impl Write,
    c: &Contact,
    deleted: bool,
    paths: &mut PathCache,
) -> io::Result<()> {
    let t = |x: chrono::DateTime<chrono::Utc>| x.format("%Y-%m-%dT%H:%M:%SZ").to_string();
    let (km, brg) = match (&c.own.locator, &c.locator) {
        (Some(a), Some(b)) => {
            // Centre to centre only: the cell-range search of a full locator path costs
            // thousands of geodesics, for figures the row does not show.
            let p = paths.centre(a, b);
            (
                format!("{:.1}", p.distance_km),
                p.bearing_deg.map(|b| format!("{b:.0}")).unwrap_or_default(),
            )
        }
        _ => (String::new(), String::new()),
    };
    let opt = |o: Option<String>| o.unwrap_or_default();
    let cells = [
        c.id.to_string(),
        opt(c.drill.clone()),
        t(c.start),
        opt(c.end.map(t)),
        c.own.call.to_string(),
        opt(c.own.operator.as_ref().map(ToString::to_string)),
        opt(c.own.locator.map(|l| l.to_string())),
        opt(c.own.power.map(|p| p.watts().to_string())),
        opt(c.own.antenna.clone()),
        c.call.to_string(),
        opt(c.locator.map(|l| l.to_string())),
        c.band.to_string(),
        opt(c.frequency.map(|f| f.hz().to_string())),
        c.mode.mode().to_string(),
        opt(c.mode.submode().map(str::to_string)),
        opt(c.sent.map(|r| r.to_string())),
        opt(c.rcvd.map(|r| r.to_string())),
        opt(c.other_power.map(|p| p.watts().to_string())),
        c.outcome.key().to_string(),
        km,
        brg,
        opt(c.via.as_ref().map(ToString::to_string)),
        c.note.clone(),
        deleted.to_string(),
    ];
    let line: Vec<String> = cells.iter().map(|s| field(s)).collect();
    writeln!(w, "{}", line.join(","))
}
