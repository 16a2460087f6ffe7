//! The after-action report: one self-contained HTML page (inline CSS and SVG, no scripts, no
//! external assets), readable on screen and on paper.

use std::fmt::Write;

use crate::domain::coverage::{ContradictionKind, Coverage};
use crate::domain::plan::Plan;
use crate::domain::{Band, Locator, Outcome, geo};

/// What the page is about, besides the coverage and the plan.
pub struct ReportInfo<'a> {
    pub drill: Option<&'a str>,
    pub net_control: Option<&'a str>,
    pub created: chrono::DateTime<chrono::Utc>,
    pub records: u64,
    pub home: Option<Locator>,
}

/// Escapes text for HTML element content and attribute values; control characters become
/// visible escapes.
pub fn esc(s: &str) -> String {
    let s = crate::domain::text::visible(s);
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const CSS: &str = "
body{font-family:system-ui,sans-serif;margin:1.5em;color:#111;max-width:72em}
h1{font-size:1.5em}h2{font-size:1.2em;margin-top:1.6em;border-bottom:1px solid #999}
table{border-collapse:collapse;margin:.5em 0;font-size:.85em}
td,th{border:1px solid #bbb;padding:.15em .35em;text-align:center}
th{background:#eee}td.l{text-align:left}
.heat td.c{width:2.2em;font-family:monospace}
.s5{background:#1a9641;color:#fff}.s4{background:#a6d96a}.s3{background:#ffffbf}
.s2{background:#fdae61}.s1{background:#d7191c;color:#fff}.s0{background:#fff;color:#999}
.W{background:#a6d96a}.p{background:#ffffbf}.x{background:#fdae61}
.figures span{display:inline-block;margin-right:1.5em}.figures b{font-size:1.3em}
.caution{border:2px solid #b00;padding:.5em 1em}
.note{color:#333}.muted{color:#666;font-size:.85em}
svg{border:1px solid #bbb;background:#fcfcfc}
@media print{body{margin:0;max-width:none}h2{break-after:avoid}table,svg,.band{break-inside:avoid}
.s5,.s4,.s3,.s2,.s1,.W,.p,.x{-webkit-print-color-adjust:exact;print-color-adjust:exact}}
";

fn shade(worked: u32, attempts: u32) -> (&'static str, char) {
    if attempts == 0 {
        return ("s0", ' ');
    }
    let p = f64::from(worked) / f64::from(attempts);
    match p {
        p if p >= 0.8 => ("s5", '#'),
        p if p >= 0.6 => ("s4", '+'),
        p if p >= 0.4 => ("s3", '='),
        p if p >= 0.2 => ("s2", '-'),
        _ => ("s1", '.'),
    }
}

fn glyph(o: Option<Outcome>) -> (&'static str, &'static str) {
    match o {
        Some(Outcome::Worked) => ("W", "W"),
        Some(Outcome::Partial) => ("p", "p"),
        Some(Outcome::NoContact) => ("x", "x"),
        None => ("", "."),
    }
}

/// The page.
pub fn html(c: &Coverage, plan: &Plan, info: &ReportInfo<'_>) -> String {
    let mut h = String::with_capacity(64 * 1024);
    let title = info.drill.map_or("nearsky drill report".to_string(), |d| {
        format!("{} — after-action report", d)
    });
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>{}</title><style>{CSS}</style></head><body>\n",
        esc(&title)
    );
    let _ = writeln!(h, "<h1 id=\"title\">{}</h1>", esc(&title));
    let _ = writeln!(
        h,
        "<p class=\"muted\">Made by nearsky {} on {} UTC{}. All times UTC.</p>",
        env!("CARGO_PKG_VERSION"),
        info.created.format("%Y-%m-%d %H:%M"),
        info.net_control
            .map_or(String::new(), |n| format!("; net control {}", esc(n)))
    );
    // Summary figures.
    let worked: u32 = c.hours.iter().map(|x| x.worked).sum();
    let attempts: u32 = c.hours.iter().map(|x| x.attempts).sum();
    let _ = write!(
        h,
        "<section id=\"summary\"><h2>Summary</h2><p class=\"figures\">"
    );
    for (label, v) in [
        ("records", info.records.to_string()),
        ("stations", c.stations.len().to_string()),
        ("links", c.links.len().to_string()),
        ("observations", c.observations.to_string()),
        ("logged by both sides", c.confirmed.to_string()),
        ("worked", format!("{worked} of {attempts}")),
        ("contradictions", c.contradictions_total.to_string()),
    ] {
        let _ = write!(h, "<span><b>{v}</b> {label}</span>");
    }
    h.push_str("</p></section>\n");
    // Heatmap.
    let bins = c.config.bins();
    h.push_str("<section id=\"heatmap\"><h2>Band × hour</h2><p class=\"muted\">Worked share of the attempts, per cent; the glyph repeats the shade for monochrome print (# ≥ 80 %, + ≥ 60 %, = ≥ 40 %, - ≥ 20 %, . less).</p><table class=\"heat\"><tr><th>band</th>");
    for b in 0..bins {
        let _ = write!(h, "<th>{}</th>", &c.config.hour_start(b)[..2]);
    }
    h.push_str("</tr>\n");
    for band in &c.bands {
        let _ = write!(h, "<tr><th>{band}</th>");
        for bin in 0..bins {
            match c.hour(*band, bin) {
                Some(x) => {
                    let (cls, g) = shade(x.worked, x.attempts);
                    let _ = write!(
                        h,
                        "<td class=\"c {cls}\" title=\"{band} {} UTC: {} of {} worked, 95% {:.2}-{:.2}\">{g}{}</td>",
                        x.hour_start,
                        x.worked,
                        x.attempts,
                        x.wilson_low,
                        x.wilson_high,
                        100 * x.worked / x.attempts.max(1)
                    );
                }
                None => h.push_str("<td class=\"c s0\"></td>"),
            }
        }
        h.push_str("</tr>\n");
    }
    h.push_str("</table></section>\n");
    // Map.
    h.push_str("<section id=\"map\"><h2>Map</h2><p class=\"muted\">Stations by bearing and distance from net control; links by their best outcome over the drill on each band (solid worked, dashed partial, dotted never heard).</p>\n");
    for band in &c.bands {
        h.push_str(&map_svg(c, *band, info.home));
    }
    h.push_str("</section>\n");
    // Link tables.
    h.push_str("<section id=\"links\"><h2>Links per band</h2>");
    for band in &c.bands {
        let _ = write!(
            h,
            "<div class=\"band\"><h3>{band}</h3><table><tr><th>link</th><th>km</th><th>brg</th>"
        );
        for b in 0..bins {
            let _ = write!(h, "<th>{}</th>", &c.config.hour_start(b)[..2]);
        }
        h.push_str("</tr>\n");
        for l in c.links.iter().filter(|l| l.cells.contains_key(band)) {
            let _ = write!(
                h,
                "<tr><td class=\"l\">{}–{}</td><td>{}</td><td>{}</td>",
                esc(&l.a),
                esc(&l.b),
                l.distance_km.map_or(String::new(), |d| format!("{d:.0}")),
                l.bearing_deg.map_or(String::new(), |d| format!("{d:.0}"))
            );
            for cell in &l.cells[band] {
                let (cls, g) = glyph(cell.as_ref().and_then(|x| x.best()));
                let _ = write!(h, "<td class=\"{cls}\">{g}</td>");
            }
            h.push_str("</tr>\n");
        }
        h.push_str("</table></div>\n");
    }
    h.push_str("</section>\n");
    // Evidence.
    h.push_str("<section id=\"evidence\"><h2>Propagation evidence per hour</h2><ul>");
    for e in &c.evidence {
        let sun = e.sun_elevation_deg.map_or(String::new(), |s| {
            format!(
                " <span class=\"muted\">[Sun {s:.0}° at the net's centre, {}]</span>",
                e.daylight.map_or("", |d| d.words())
            )
        });
        let _ = write!(h, "<li>{}{sun}", esc(&e.note));
        if let Some(b) = &e.fc_basis {
            let _ = write!(h, " <span class=\"muted\">({})</span>", esc(b));
        }
        for (t, band, st, text) in &e.operator_notes {
            let _ = write!(
                h,
                "<br><span class=\"note\">note {} {}{}: {}</span>",
                t.format("%H:%M"),
                esc(st),
                band.map_or(String::new(), |b| format!(" {b}")),
                esc(text)
            );
        }
        h.push_str("</li>\n");
    }
    h.push_str("</ul></section>\n");
    // Plan.
    let _ = writeln!(
        h,
        "<section id=\"plan\"><h2>Plan for the next drill</h2><p class=\"muted\">{}{}.</p><table><tr><th>UTC</th><th>primary</th><th>alternate</th><th>attempts</th><th class=\"l\">evidence</th></tr>",
        esc(&plan.ranking),
        plan.for_date.map_or(String::new(), |d| format!(
            "; for {d}, hours moved with the Sun"
        ))
    );
    let name = |b: Option<Band>| b.map_or("–".to_string(), |b| b.to_string());
    for b in &plan.bins {
        let _ = writeln!(
            h,
            "<tr><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"l\">{}</td></tr>",
            b.hour_start,
            name(b.primary),
            name(b.alternate),
            b.attempts,
            esc(&b.note)
        );
    }
    h.push_str("</table>");
    if !plan.relays.is_empty() {
        h.push_str("<h3>Links expected to fail even on the primary band, and relay candidates</h3><table><tr><th>UTC</th><th>link</th><th>band</th><th class=\"l\">candidates (weaker link's Wilson low)</th></tr>\n");
        for r in &plan.relays {
            let cands = r.candidates_text(4);
            let _ = writeln!(
                h,
                "<tr><td>{}</td><td>{}–{}</td><td>{}</td><td class=\"l\">{}</td></tr>",
                r.hour_start,
                esc(&r.a),
                esc(&r.b),
                r.band,
                if cands.is_empty() {
                    "none".into()
                } else {
                    esc(&cands)
                }
            );
        }
        h.push_str("</table>");
    }
    h.push_str("</section>\n");
    // Contradictions.
    h.push_str("<section id=\"contradictions\"><h2>Where the logs disagree</h2>");
    if c.contradictions.is_empty() {
        h.push_str("<p>No contradictions between the stations' logs.</p>");
    } else {
        if c.contradictions_total > c.contradictions.len() as u64 {
            let _ = writeln!(
                h,
                "<p>{} contradictions; the first {} are listed.</p>",
                c.contradictions_total,
                c.contradictions.len()
            );
        }
        h.push_str("<table><tr><th>kind</th><th class=\"l\">what</th><th>contacts</th></tr>\n");
        for x in &c.contradictions {
            let kind = match x.kind {
                ContradictionKind::Band => "band",
                ContradictionKind::Time => "time",
                ContradictionKind::Outcome => "outcome",
            };
            let _ = writeln!(
                h,
                "<tr><td>{kind}</td><td class=\"l\">{}</td><td>{} {}</td></tr>",
                esc(&x.message),
                x.ids[0].short(),
                x.ids[1].short()
            );
        }
        h.push_str("</table>");
    }
    h.push_str("</section>\n");
    h.push_str("<section id=\"cautions\" class=\"caution\"><h2>Cautions</h2><ul>\
<li>RF exposure: keep people and animals away from antennas, their ends and feed points while transmitting; evaluate exposure as your rules require (e.g. ICNIRP 2020).</li>\
<li>Never raise a mast, wire or throw-line where it could fall onto an overhead power line.</li>\
<li>Lightning: stop operating and disconnect feed lines when thunder is heard; shelter, and wait 30 minutes after the last thunder.</li>\
<li>Batteries: fuse the positive lead near the battery; charge lithium packs only with a matching charger, not below 0 °C.</li>\
<li>60 m: channels and power are set by each country (often 15 W e.i.r.p. under the international allocation).</li>\
</ul><p>This report helps plan radio operation; it does not make it safe or legal. Local regulations and licence conditions always prevail.</p></section>\n");
    h.push_str("<p class=\"muted\">Invented demo data, if this is the demo drill: every call sign (prefix Q) and event is fictional.</p></body></html>\n");
    h
}

fn map_svg(c: &Coverage, band: Band, home: Option<Locator>) -> String {
    let home = home.or_else(|| c.stations.iter().find_map(|s| s.1));
    let Some(home) = home else {
        return String::new();
    };
    let pos: Vec<(&str, f64, f64)> = c
        .stations
        .iter()
        .filter_map(|(call, l)| {
            let l = l.as_ref()?;
            let p = geo::centre_path(&home, l);
            let b = p.bearing_deg.unwrap_or(0.0).to_radians();
            Some((
                call.as_str(),
                p.distance_km * b.sin(),
                p.distance_km * b.cos(),
            ))
        })
        .collect();
    let max = pos.iter().map(|p| p.1.hypot(p.2)).fold(50.0, f64::max) * 1.15;
    let size = 360.0;
    let sx = |x: f64| size / 2.0 + x / max * size / 2.0;
    let sy = |y: f64| size / 2.0 - y / max * size / 2.0;
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg class=\"mapsvg\" xmlns=\"http://www.w3.org/2000/svg\" width=\"{size}\" height=\"{size}\" viewBox=\"0 0 {size} {size}\" role=\"img\"><title>{band}</title>"
    );
    let ring = if max > 300.0 { 100.0 } else { 50.0 };
    let mut r = ring;
    while r < max {
        let _ = write!(
            s,
            "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"{:.1}\" fill=\"none\" stroke=\"#ddd\"/>",
            size / 2.0,
            size / 2.0,
            r / max * size / 2.0
        );
        r += ring;
    }
    for l in &c.links {
        let Some(row) = l.cells.get(&band) else {
            continue;
        };
        let best = row.iter().flatten().filter_map(|x| x.best()).min();
        let (Some(a), Some(b), Some(best)) = (
            pos.iter().find(|p| p.0 == l.a),
            pos.iter().find(|p| p.0 == l.b),
            best,
        ) else {
            continue;
        };
        let (stroke, dash) = match best {
            Outcome::Worked => ("#1a9641", ""),
            Outcome::Partial => ("#c9a000", " stroke-dasharray=\"6 3\""),
            Outcome::NoContact => ("#d7191c", " stroke-dasharray=\"1 3\""),
        };
        let _ = write!(
            s,
            "<line x1=\"{:.1}\" y1=\"{:.1}\" x2=\"{:.1}\" y2=\"{:.1}\" stroke=\"{stroke}\" stroke-width=\"1.2\"{dash}/>",
            sx(a.1),
            sy(a.2),
            sx(b.1),
            sy(b.2)
        );
    }
    for (call, x, y) in &pos {
        let _ = write!(
            s,
            "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"3\" fill=\"#000\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"10\">{}</text>",
            sx(*x),
            sy(*y),
            sx(*x) + 4.0,
            sy(*y) - 3.0,
            esc(call)
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"6\" y=\"16\" font-size=\"13\" font-weight=\"bold\">{band}</text><text x=\"6\" y=\"{:.0}\" font-size=\"10\">rings every {ring:.0} km; north up</text></svg>",
        size - 6.0
    );
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn text_is_escaped_for_html() {
        assert_eq!(
            esc("<b>Q1&\"x\"</b>"),
            "&lt;b&gt;Q1&amp;&quot;x&quot;&lt;/b&gt;"
        );
        assert_eq!(esc("a\u{1b}[2J"), "a\\u{1b}[2J");
    }
}
