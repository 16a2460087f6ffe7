//! Drawing: every screen is a function of the state. Works at 80×24 and reads in monochrome:
//! cells carry glyphs and numbers, colour only adds to them (and is off under `NO_COLOR`).

use chrono::{DateTime, Local, Utc};
use ratatui::Frame;
use ratatui::layout::{Constraint, Layout, Rect};
use ratatui::style::{Color, Modifier, Style};
use ratatui::text::{Line, Span, Text};
use ratatui::widgets::canvas::{Canvas, Circle, Line as CLine};
use ratatui::widgets::{Block, Clear, Paragraph, Wrap};

use crate::app::ui::{AppState, FIELDS, Message, Prompt, ReviewTab, Screen};
use crate::domain::text::visible;
use crate::domain::{Field, Outcome};

/// Colours on or off.
#[derive(Debug, Clone, Copy)]
pub struct Theme {
    pub color: bool,
}

impl Theme {
    fn fg(self, c: Color) -> Style {
        if self.color {
            Style::new().fg(c)
        } else {
            Style::new()
        }
    }

    fn outcome(self, o: Outcome) -> Style {
        match o {
            Outcome::Worked => self.fg(Color::Green),
            Outcome::Partial => self.fg(Color::Yellow),
            Outcome::NoContact => self.fg(Color::Red),
        }
    }
}

fn bold() -> Style {
    Style::new().add_modifier(Modifier::BOLD)
}

fn rev() -> Style {
    Style::new().add_modifier(Modifier::REVERSED)
}

/// One letter per outcome, so the screen reads without colour.
pub fn outcome_glyph(o: Outcome) -> &'static str {
    match o {
        Outcome::Worked => "W",
        Outcome::Partial => "p",
        Outcome::NoContact => "x",
    }
}

/// Draws the whole screen.
pub fn draw(f: &mut Frame, s: &AppState, now: DateTime<Utc>, theme: Theme) {
    let area = f.area();
    // A message longer than the screen is wide takes up to three rows rather than being cut
    // off.
    let (text, style) = message_text(s, theme);
    let said = wrapped(&text, usize::from(area.width), "", 0);
    let message_rows = said.len().clamp(1, 3) as u16;
    let [status, banner, body, message, hints] = Layout::vertical([
        Constraint::Length(1),
        Constraint::Length(1),
        Constraint::Min(5),
        Constraint::Length(message_rows),
        Constraint::Length(1),
    ])
    .areas(area);
    draw_status(f, status, s, now);
    draw_banner(f, banner, s, now, theme);
    match s.screen {
        Screen::Log => draw_log(f, body, s, now, theme),
        Screen::RollCall => draw_roll(f, body, s, theme),
        Screen::Review => draw_review(f, body, s, theme),
        Screen::Map => draw_map(f, body, s, theme),
    }
    f.render_widget(Paragraph::new(Text::from(said)).style(style), message);
    f.render_widget(
        Paragraph::new(Line::from(hints_for(s)).style(Style::new().add_modifier(Modifier::DIM))),
        hints,
    );
    if let Some(p) = &s.prompt {
        draw_prompt(f, area, p, s.prompt_suggested);
    }
    if s.help {
        draw_help(f, area, s);
    }
}

fn draw_status(f: &mut Frame, area: Rect, s: &AppState, now: DateTime<Utc>) {
    let t = s.entry_time(now);
    let local = if area.width >= 100 {
        format!(" (local {})", t.with_timezone(&Local).format("%H:%M"))
    } else {
        String::new()
    };
    let drill = s
        .data
        .drill
        .as_deref()
        .map(|d| visible(d).into_owned())
        .unwrap_or_else(|| "no drill".into());
    let own = s
        .data
        .station
        .as_ref()
        .map_or("no station".to_string(), |p| {
            format!(
                "{} {}",
                p.call,
                s.data.locator.map(|l| l.to_string()).unwrap_or_default()
            )
        });
    let sched = s
        .scheduled(t)
        .and_then(|x| x.primary)
        .map_or(String::new(), |b| format!(" | sched {b}"));
    let clock = if s.clock_set_by_hand { "*" } else { "" };
    let fixed = format!(
        "{}{clock} UTC{local} | {own}{sched} | {} {} | ",
        t.format("%H:%M:%S"),
        s.data.count,
        if s.data.count == 1 {
            "contact"
        } else {
            "contacts"
        }
    );
    let room = (area.width as usize).saturating_sub(fixed.chars().count());
    let drill: String = drill.chars().take(room).collect();
    f.render_widget(Paragraph::new(format!("{fixed}{drill}")).style(rev()), area);
}

fn draw_banner(f: &mut Frame, area: Rect, s: &AppState, now: DateTime<Utc>, theme: Theme) {
    if let Some(w) = s.clock_warning(now) {
        let text = format!("!! {w} -- Ctrl-K sets the time by hand !!");
        f.render_widget(
            Paragraph::new(text).style(
                rev()
                    .add_modifier(Modifier::BOLD)
                    .patch(theme.fg(Color::Red)),
            ),
            area,
        );
        return;
    }
    // Each screen with the key that opens it from anywhere.
    let tabs = [
        (Screen::Log, "Log ^L"),
        (Screen::RollCall, "Roll call ^R"),
        (Screen::Review, "Review ^V"),
        (Screen::Map, "Map ^G"),
    ];
    let mut spans = Vec::new();
    for (sc, name) in tabs {
        let style = if sc == s.screen {
            rev().add_modifier(Modifier::BOLD)
        } else {
            Style::new()
        };
        spans.push(Span::styled(format!(" {name} "), style));
        spans.push(Span::raw(" "));
    }
    spans.push(Span::raw("  F1 help"));
    f.render_widget(Paragraph::new(Line::from(spans)), area);
}

/// The message line's text, as it will be shown, and its style.
fn message_text(s: &AppState, theme: Theme) -> (String, Style) {
    let (text, style) = match &s.message {
        None => (String::new(), Style::new()),
        Some(Message::Info(t)) => (t.clone(), Style::new()),
        Some(Message::Warning(t)) => (
            format!("warning: {t}"),
            bold().patch(theme.fg(Color::Yellow)),
        ),
        Some(Message::Error(t)) => (format!("error: {t}"), bold().patch(theme.fg(Color::Red))),
    };
    (visible(&text).into_owned(), style)
}

fn hints_for(s: &AppState) -> String {
    if s.prompt.is_some() {
        return "Enter accept  Esc cancel".into();
    }
    match s.screen {
        Screen::Log if s.recent_sel.is_some() => {
            "Up/Down pick  e/Enter correct  d delete  Esc back to entry".into()
        }
        Screen::Log => {
            "Enter save  Tab next  ^Y worked  ^P partial  ^N not heard  ^T note  PgUp list".into()
        }
        Screen::RollCall => {
            "w worked  p partial  n not heard  b band  [ ] order  r again  Esc log".into()
        }
        Screen::Review => "Left/Right view  b band  Up/Down scroll  u update  Esc log".into(),
        Screen::Map => "Left/Right hour  b band  Esc log".into(),
    }
}

fn draw_log(f: &mut Frame, area: Rect, s: &AppState, now: DateTime<Utc>, theme: Theme) {
    let [left, right] =
        Layout::horizontal([Constraint::Length(38), Constraint::Min(30)]).areas(area);
    let e = &s.entry;
    let mut lines = Vec::new();
    let title = if e.editing.is_some() {
        " Correct contact "
    } else {
        " New contact "
    };
    lines.push(Line::from(Span::styled(
        s.entry_hint()
            .map(|h| visible(&h).into_owned())
            .unwrap_or_default(),
        bold(),
    )));
    for (i, (field, label)) in FIELDS.iter().enumerate() {
        let focused = i == e.focus && s.recent_sel.is_none();
        let marker = if focused { ">" } else { " " };
        let bad = if e.problems[i].is_some() { "!" } else { " " };
        let value = visible(&e.values[i]).into_owned();
        let shown: String = value
            .chars()
            .rev()
            .take(27)
            .collect::<Vec<_>>()
            .into_iter()
            .rev()
            .collect();
        let style = if focused {
            rev()
        } else if e.auto[i] {
            Style::new().add_modifier(Modifier::ITALIC)
        } else {
            Style::new()
        };
        let mut spans = vec![
            Span::raw(format!("{marker}{label:<5}{bad}")),
            Span::styled(format!("{shown:<27}"), style),
        ];
        if *field == Field::Time && e.values[i].is_empty() {
            spans[1] = Span::styled(
                format!(
                    "{:<27}",
                    format!("(now {})", s.entry_time(now).format("%H:%M:%S"))
                ),
                style.add_modifier(Modifier::DIM),
            );
        }
        lines.push(Line::from(spans));
    }
    let o = e.outcome;
    lines.push(Line::from(vec![
        Span::raw(" Outcome "),
        Span::styled(
            format!("[{}] {}", outcome_glyph(o), o.words()),
            bold().patch(theme.outcome(o)),
        ),
    ]));
    if let Some(p) = e.problems.get(e.focus).and_then(|p| p.as_ref()) {
        lines.push(Line::from(Span::styled(
            format!("! {}", FIELDS[e.focus].1),
            bold(),
        )));
        lines.push(Line::from(visible(p).into_owned()));
    }
    let entry = Paragraph::new(Text::from(lines))
        .wrap(Wrap { trim: false })
        .block(Block::bordered().title(title));
    f.render_widget(entry, left);
    if s.recent_sel.is_none() && s.prompt.is_none() && !s.help {
        let row = left.y + 2 + e.focus as u16;
        let col = left.x + 7 + e.values[e.focus].chars().count().min(27) as u16;
        if row < left.bottom().saturating_sub(1) {
            f.set_cursor_position((col, row));
        }
    }
    // A header, then the contacts newest first, with a line where the UTC date changes (and
    // at the top when the newest is not from today), scrolled so that the picked one shows.
    let today = s.entry_time(now).date_naive();
    let mut rows = Vec::new();
    let mut picked_row = 0;
    let mut last_date = Some(today);
    for (i, r) in s.recent.iter().enumerate() {
        let c = &r.contact;
        let date = c.start.date_naive();
        if last_date != Some(date) {
            rows.push(Line::from(Span::styled(
                format!("── {} ──", date.format("%Y-%m-%d")),
                Style::new().add_modifier(Modifier::DIM),
            )));
            last_date = Some(date);
        }
        if s.recent_sel == Some(i) {
            picked_row = rows.len();
        }
        let km = r
            .distance_km
            .map_or("    ".to_string(), |d| format!("{d:>4.0}"));
        let brg = r
            .bearing_deg
            .map_or("   ".to_string(), |b| format!("{b:>3.0}"));
        let rep = format!(
            "{}/{}",
            c.sent.map(|x| x.to_string()).unwrap_or_else(|| "-".into()),
            c.rcvd.map(|x| x.to_string()).unwrap_or_else(|| "-".into())
        );
        let text = format!(
            "{} {:<9} {:<4} {} {:<7} {km} {brg}",
            c.start.format("%H:%M"),
            c.call.as_str(),
            c.band.name(),
            outcome_glyph(c.outcome),
            rep
        );
        let style = if s.recent_sel == Some(i) {
            rev()
        } else {
            theme.outcome(c.outcome)
        };
        rows.push(Line::from(Span::styled(text, style)));
    }
    if rows.is_empty() {
        rows.push(Line::from("no contacts yet"));
    }
    // Rows below the header.
    let room = usize::from(right.height.saturating_sub(3)).max(1);
    let skip = (picked_row + 1).saturating_sub(room);
    let mut shown = vec![Line::from(Span::styled(
        format!(
            "{:<5} {:<9} {:<4} {} {:<7} {:>4} {:>3}",
            "UTC", "call", "band", " ", "RST", "km", "brg"
        ),
        bold(),
    ))];
    shown.extend(rows.into_iter().skip(skip));
    f.render_widget(
        Paragraph::new(Text::from(shown)).block(Block::bordered().title(" Recent contacts ")),
        right,
    );
}

fn draw_roll(f: &mut Frame, area: Rect, s: &AppState, theme: Theme) {
    let mut lines = vec![Line::from(Span::styled(
        format!(
            "{:<2}{:<10} {:<16} {:>5} {:>4}  last on {}",
            "", "call", "name", "km", "brg", s.roll_band
        ),
        bold(),
    ))];
    let height = area.height.saturating_sub(3) as usize;
    let roll = s.roll_lines();
    let start = s.roll_sel.saturating_sub(height.saturating_sub(1));
    for (i, (e, path, last)) in roll.iter().enumerate().skip(start).take(height) {
        let (km, brg) = match path {
            Some((d, b)) => (
                format!("{d:.0}"),
                b.map_or("-".to_string(), |b| format!("{b:.0}")),
            ),
            None => (String::new(), String::new()),
        };
        let last = last.map_or("never tried".to_string(), |o| {
            format!("{} {}", outcome_glyph(o), o.words())
        });
        let name: String = visible(&e.tactical).chars().take(16).collect();
        let marker = if i == s.roll_sel { ">" } else { " " };
        let text = format!(
            "{marker} {:<10} {:<16} {km:>5} {brg:>4}  {last}",
            e.call.as_str(),
            name
        );
        let style = if i == s.roll_sel { rev() } else { Style::new() };
        let mut line = Line::from(Span::styled(text, style));
        if let Some(o) = path.and(s.last_on_band(&e.call, s.roll_band)) {
            line = line.patch_style(theme.outcome(o));
        }
        lines.push(line);
    }
    if roll.is_empty() {
        lines.push(Line::from(
            "the roster is empty: add stations with `nearsky roster add`",
        ));
    }
    let title = format!(" Roll call on {} ({} stations) ", s.roll_band, roll.len());
    f.render_widget(
        Paragraph::new(Text::from(lines)).block(Block::bordered().title(title)),
        area,
    );
}

fn shade(worked: u32, attempts: u32) -> (&'static str, Color) {
    if attempts == 0 {
        return (" ", Color::Reset);
    }
    let p = f64::from(worked) / f64::from(attempts);
    match p {
        p if p >= 0.8 => ("#", Color::Green),
        p if p >= 0.6 => ("+", Color::LightGreen),
        p if p >= 0.4 => ("=", Color::Yellow),
        p if p >= 0.2 => ("-", Color::LightRed),
        _ => (".", Color::Red),
    }
}

fn hour_ruler(bins: usize) -> String {
    (0..bins)
        .map(|b| {
            if b % 3 == 0 {
                format!("{b:02} ")
            } else {
                "   ".to_string()
            }
        })
        .collect::<String>()
}

fn draw_review(f: &mut Frame, area: Rect, s: &AppState, theme: Theme) {
    let titles: Vec<Span> = ReviewTab::ALL
        .iter()
        .map(|t| {
            if *t == s.review_tab {
                Span::styled(format!(" {} ", t.title()), rev())
            } else {
                Span::raw(format!(" {} ", t.title()))
            }
        })
        .collect();
    let [tabs, body] = Layout::vertical([Constraint::Length(1), Constraint::Min(3)]).areas(area);
    f.render_widget(Paragraph::new(Line::from(titles)), tabs);
    let Some(r) = s.review.as_ref() else {
        f.render_widget(
            Paragraph::new("computing coverage ...").block(Block::bordered()),
            body,
        );
        return;
    };
    let (c, plan) = (&r.0, &r.1);
    let band = s.shown_band();
    let bins = c.config.bins();
    let wide = body.width >= 5 + 3 * bins as u16 + 2;
    // Inside the border.
    let text_width = usize::from(body.width.saturating_sub(2));
    let mut lines: Vec<Line> = Vec::new();
    match s.review_tab {
        ReviewTab::Hours => {
            lines.push(Line::from(
                "worked share per band and UTC hour: # >=80%  + >=60%  = >=40%  - >=20%  . less",
            ));
            lines.push(Line::from(format!(
                "      {}",
                if wide {
                    hour_ruler(bins)
                } else {
                    short_ruler(bins)
                }
            )));
            for b in &c.bands {
                // Two rows per band: the shade glyph, then the worked per cent under it.
                let mut glyphs = vec![Span::raw(format!("{:<6}", b.name()))];
                let mut numbers = vec![Span::raw("      ".to_string())];
                for bin in 0..bins {
                    let (w, n) = c.hour(*b, bin).map_or((0, 0), |h| (h.worked, h.attempts));
                    let (g, col) = shade(w, n);
                    let style = if theme.color && n > 0 {
                        Style::new().fg(col)
                    } else {
                        Style::new()
                    };
                    if wide {
                        glyphs.push(Span::styled(format!(" {g} "), style));
                        let pct = if n == 0 {
                            "   ".to_string()
                        } else {
                            format!("{:>2} ", (100 * w / n.max(1)).min(99))
                        };
                        numbers.push(Span::styled(pct, style));
                    } else {
                        glyphs.push(Span::styled(g.to_string(), style));
                    }
                }
                lines.push(Line::from(glyphs));
                if wide {
                    lines.push(Line::from(numbers));
                }
            }
            lines.push(Line::from(""));
            lines.push(Line::from(format!(
                "{} observations: {} logged by both sides, {} one-sided; {} contradictions",
                c.observations, c.confirmed, c.one_sided, c.contradictions_total
            )));
            if wide {
                lines.push(Line::from(
                    "numbers: worked per cent of the attempts in that hour",
                ));
            }
        }
        ReviewTab::Links => {
            let Some(b) = band else { return };
            lines.push(Line::from(format!(
                "{b}: W worked  p partial  x not heard  . not tried   (b: next band)"
            )));
            lines.push(Line::from(format!(
                "{:<15} {:>4} {:>3} {}",
                "link",
                "km",
                "brg",
                short_ruler(bins)
            )));
            for l in c.links.iter().filter(|l| l.cells.contains_key(&b)) {
                let row: String = l.cells[&b]
                    .iter()
                    .map(|cell| {
                        cell.as_ref()
                            .and_then(|x| x.best())
                            .map_or(".", outcome_glyph)
                    })
                    .collect();
                let name: String = format!("{}-{}", l.a, l.b).chars().take(15).collect();
                lines.push(Line::from(format!(
                    "{name:<15} {:>4} {:>3} {row}",
                    l.distance_km.map_or(String::new(), |d| format!("{d:.0}")),
                    l.bearing_deg.map_or(String::new(), |d| format!("{d:.0}"))
                )));
            }
        }
        ReviewTab::Rings => {
            let Some(b) = band else { return };
            lines.push(Line::from(format!(
                "{b} by distance ring (near failing, far working: skip zone)"
            )));
            lines.push(Line::from(format!(
                "{:<9} {}",
                "ring km",
                short_ruler(bins)
            )));
            for label in c.config.ring_labels() {
                let mut spans = vec![Span::raw(format!("{label:<9} "))];
                for bin in 0..bins {
                    let r = c
                        .rings
                        .iter()
                        .find(|r| r.band == b && r.bin == bin && r.ring == label);
                    let (g, col) = r.map_or((" ", Color::Reset), |r| shade(r.worked, r.attempts));
                    spans.push(Span::styled(
                        g,
                        if theme.color {
                            Style::new().fg(col)
                        } else {
                            Style::new()
                        },
                    ));
                }
                lines.push(Line::from(spans));
            }
        }
        ReviewTab::Evidence => {
            for e in &c.evidence {
                let sun = e
                    .sun_elevation_deg
                    .map_or(String::new(), |x| format!(" [sun {x:.0} deg]"));
                lines.extend(wrapped(&format!("{}{sun}", e.note), text_width, "", 2));
                for (t, b, st, text) in &e.operator_notes {
                    let head = format!(
                        "   note {} {st}{}: ",
                        t.format("%H:%M"),
                        b.map_or(String::new(), |b| format!(" {b}"))
                    );
                    lines.extend(wrapped(&visible(text), text_width, &head, 8));
                }
            }
        }
        ReviewTab::Plan => {
            lines.push(Line::from(format!(
                "{:<6}{:<8}{:<10}{:>4}  evidence",
                "UTC", "primary", "alternate", "n"
            )));
            for row in plan.rows() {
                let b = row.bin;
                let n =
                    |x: Option<crate::domain::Band>| x.map_or("-".to_string(), |b| b.to_string());
                // The evidence wraps under its own column.
                let head = format!(
                    "{:<6}{:<8}{:<10}{:>4}  ",
                    b.hour_start,
                    n(b.primary),
                    n(b.alternate),
                    b.attempts
                );
                lines.extend(wrapped(&row.note, text_width, &head, 30));
            }
            if !plan.relays.is_empty() {
                lines.push(Line::from(""));
                lines.push(Line::from(Span::styled(
                    "links expected to fail even on the primary band; relay candidates:",
                    bold(),
                )));
                for r in &plan.relays {
                    lines.extend(wrapped(&r.line(3), text_width, "", 6));
                }
            }
        }
    }
    let scroll = (s.review_scroll as u16).min(lines.len().saturating_sub(1) as u16);
    let p = Paragraph::new(Text::from(lines))
        .scroll((scroll, 0))
        .block(Block::bordered().title(format!(" Review: {} ", s.review_tab.title())));
    f.render_widget(p, body);
}

/// `text` wrapped to `width` after `first`, the lines after the first indented by `indent`
/// spaces; a word too long for a line is cut rather than hidden by the border.
fn wrapped(text: &str, width: usize, first: &str, indent: usize) -> Vec<Line<'static>> {
    crate::domain::text::wrap_words(text, width, first, &" ".repeat(indent), true)
        .into_iter()
        .map(Line::from)
        .collect()
}

fn short_ruler(bins: usize) -> String {
    let mut s = String::new();
    let mut b = 0;
    while b < bins {
        if b % 6 == 0 && b + 2 <= bins {
            s.push_str(&format!("{b:02}"));
            b += 2;
        } else {
            s.push(' ');
            b += 1;
        }
    }
    s
}

fn draw_map(f: &mut Frame, area: Rect, s: &AppState, theme: Theme) {
    let Some(r) = s.review.as_ref() else {
        f.render_widget(
            Paragraph::new("computing coverage ...").block(Block::bordered()),
            area,
        );
        return;
    };
    let c = &r.0;
    let band = s.shown_band();
    let Some(home) = s.data.locator else {
        f.render_widget(
            Paragraph::new("no own station locator: set it with `nearsky station set`")
                .block(Block::bordered()),
            area,
        );
        return;
    };
    // Stations placed by bearing and distance from the own station.
    let place = |l: &crate::domain::Locator| {
        let p = crate::domain::geo::centre_path(&home, l);
        let d = p.distance_km;
        let b = p.bearing_deg.unwrap_or(0.0).to_radians();
        (d * b.sin(), d * b.cos())
    };
    let pos: Vec<(String, (f64, f64))> = c
        .stations
        .iter()
        .filter_map(|(call, l)| l.as_ref().map(|l| (call.clone(), place(l))))
        .collect();
    let max = pos
        .iter()
        .map(|(_, (x, y))| x.hypot(*y))
        .fold(50.0, f64::max)
        * 1.15;
    let ring = if max > 600.0 {
        300.0
    } else if max > 300.0 {
        150.0
    } else if max > 120.0 {
        100.0
    } else {
        50.0
    };
    let bin = s.map_bin % c.config.bins();
    let mut links = Vec::new();
    if let Some(b) = band {
        for l in &c.links {
            let Some(Some(cell)) = l.cells.get(&b).and_then(|row| row.get(bin)) else {
                continue;
            };
            let (Some(pa), Some(pb)) = (
                pos.iter().find(|p| p.0 == l.a),
                pos.iter().find(|p| p.0 == l.b),
            ) else {
                continue;
            };
            if let Some(o) = cell.best() {
                links.push((pa.1, pb.1, o));
            }
        }
    }
    let title = format!(
        " Map: {} at {} UTC, rings every {ring:.0} km (W worked, p partial, x not heard) ",
        band.map_or("-".into(), |b| b.to_string()),
        c.config.hour_start(bin)
    );
    let canvas = Canvas::default()
        .block(Block::bordered().title(title))
        .x_bounds([-max, max])
        .y_bounds([-max, max])
        .paint(|ctx| {
            let mut rr = ring;
            while rr < max {
                ctx.draw(&Circle {
                    x: 0.0,
                    y: 0.0,
                    radius: rr,
                    color: if theme.color {
                        Color::DarkGray
                    } else {
                        Color::Reset
                    },
                });
                rr += ring;
            }
            for (a, b, o) in &links {
                let color = if theme.color {
                    match o {
                        Outcome::Worked => Color::Green,
                        Outcome::Partial => Color::Yellow,
                        Outcome::NoContact => Color::Red,
                    }
                } else {
                    Color::Reset
                };
                if *o != Outcome::NoContact || !theme.color {
                    ctx.draw(&CLine {
                        x1: a.0,
                        y1: a.1,
                        x2: b.0,
                        y2: b.1,
                        color,
                    });
                }
            }
            ctx.layer();
            for (a, b, o) in &links {
                ctx.print(
                    (a.0 + b.0) / 2.0,
                    (a.1 + b.1) / 2.0,
                    Span::styled(outcome_glyph(*o), theme.outcome(*o)),
                );
            }
        });
    f.render_widget(canvas, area);
    // The stations on top, in the canvas's own cell arithmetic: the own station first, then
    // by distance, each label beside its marker where it covers no other label or marker.
    let inner = Block::bordered().inner(area);
    if inner.width < 2 || inner.height < 2 {
        return;
    }
    let cell = |(x, y): (f64, f64)| {
        let col = ((x + max) * f64::from(inner.width - 1) / (2.0 * max)) as u16;
        let row = ((max - y) * f64::from(inner.height - 1) / (2.0 * max)) as u16;
        (col.min(inner.width - 1), row.min(inner.height - 1))
    };
    // The own station's place, even when it is not in the coverage (nothing logged yet).
    let centre = (String::new(), (0.0, 0.0));
    let mut order: Vec<&(String, (f64, f64))> = pos.iter().collect();
    if !pos.iter().any(|(_, p)| p.0.hypot(p.1) < 1e-9) {
        order.push(&centre);
    }
    order.sort_by(|a, b| {
        let d = |p: &(f64, f64)| p.0.hypot(p.1);
        d(&a.1).total_cmp(&d(&b.1))
    });
    // Stations that fall in the cell of one before them are not drawn; its label says how
    // many share it (`Q3NET+1`).
    let mut labels: Vec<(String, (u16, u16), bool)> = Vec::new();
    for (call, p) in &order {
        let at = cell(*p);
        match labels.iter_mut().find(|l| l.1 == at) {
            Some(first) => first.0.push('+'),
            None => labels.push((call.clone(), at, p.0.hypot(p.1) < 1e-9)),
        }
    }
    for l in &mut labels {
        let shared = l.0.chars().rev().take_while(|c| *c == '+').count();
        if shared > 0 {
            l.0.truncate(l.0.len() - shared);
            l.0.push_str(&format!("+{shared}"));
        }
    }
    let marks: Vec<Mark> = labels
        .iter()
        .map(|(text, (col, row), _)| Mark {
            col: *col,
            row: *row,
            len: text.chars().count() as u16,
        })
        .collect();
    let glyphs: Vec<(u16, u16)> = links
        .iter()
        .map(|(a, b, _)| cell(((a.0 + b.0) / 2.0, (a.1 + b.1) / 2.0)))
        .collect();
    let placed = place_labels(&marks, &glyphs, inner.width);
    let buf = f.buffer_mut();
    for (((text, _, own), m), at) in labels.iter().zip(&marks).zip(placed) {
        let marker = if *own { "@" } else { "o" };
        buf.set_string(inner.x + m.col, inner.y + m.row, marker, bold());
        if let Some(col) = at {
            buf.set_string(inner.x + col, inner.y + m.row, text, bold());
        }
    }
}

/// A station on the map: its marker's cell and the length of its label.
#[derive(Debug, Clone, Copy)]
struct Mark {
    col: u16,
    row: u16,
    len: u16,
}

/// Where each label starts (in `marks` order, which is the priority): right of its marker,
/// else left of it, else nowhere (the marker alone). Labels never cover a marker or another
/// label; they avoid the link glyphs `glyphs` when they can.
fn place_labels(marks: &[Mark], glyphs: &[(u16, u16)], width: u16) -> Vec<Option<u16>> {
    use std::collections::HashSet;
    let mut taken: HashSet<(u16, u16)> = marks.iter().map(|m| (m.col, m.row)).collect();
    let soft: HashSet<(u16, u16)> = glyphs.iter().copied().collect();
    let mut out = Vec::with_capacity(marks.len());
    for m in marks {
        let right = m.col + 1;
        let left = m.col.checked_sub(m.len);
        let fits = |start: u16, avoid_glyphs: bool| {
            start + m.len <= width
                && (start..start + m.len).all(|c| {
                    let blocked =
                        taken.contains(&(c, m.row)) || avoid_glyphs && soft.contains(&(c, m.row));
                    !blocked
                })
        };
        let at = [true, false].into_iter().find_map(|avoid| {
            if fits(right, avoid) {
                Some(right)
            } else {
                left.filter(|&l| fits(l, avoid))
            }
        });
        if let Some(start) = at {
            taken.extend((start..start + m.len).map(|c| (c, m.row)));
        }
        out.push(at);
    }
    out
}

fn centered(area: Rect, w: u16, h: u16) -> Rect {
    let w = w.min(area.width);
    let h = h.min(area.height);
    Rect {
        x: area.x + (area.width - w) / 2,
        y: area.y + (area.height - h) / 2,
        width: w,
        height: h,
    }
}

fn draw_prompt(f: &mut Frame, area: Rect, p: &Prompt, suggested: bool) {
    let (title, text) = match p {
        Prompt::Note(t) => ("Propagation note (time and band are added)", t),
        Prompt::Reason {
            action: crate::app::ui::ReasonFor::Edit(_),
            text,
        } => ("Why is this contact corrected?", text),
        Prompt::Reason { text, .. } => ("Why is this contact deleted?", text),
        Prompt::SetClock(t) => ("UTC time now (YYYY-MM-DD HH:MM)", t),
        Prompt::Report { text, .. } => ("Report received (Enter: worked)", text),
        Prompt::Station(t) => ("Own station: call sign and locator", t),
    };
    let r = centered(area, 70, 3);
    f.render_widget(Clear, r);
    let shown = visible(text).into_owned();
    // A suggestion is dimmed: typing replaces it.
    let style = if suggested {
        Style::new().add_modifier(Modifier::DIM)
    } else {
        Style::new()
    };
    f.render_widget(
        Paragraph::new(Span::styled(shown.clone(), style))
            .block(Block::bordered().title(format!(" {title} "))),
        r,
    );
    f.set_cursor_position((r.x + 1 + shown.chars().count().min(67) as u16, r.y + 1));
}

/// The help text for a screen: its keys, then the cautions.
pub fn help_lines(s: &AppState) -> Vec<String> {
    let mut l: Vec<String> = vec![
        "Keys on every screen:".into(),
        "  Ctrl-L log   Ctrl-R roll call   Ctrl-V review   Ctrl-G map".into(),
        "  Ctrl-T propagation note   Ctrl-K set the UTC time by hand   Ctrl-Q quit".into(),
    ];
    l.push(String::new());
    match s.screen {
        Screen::Log => {
            l.push("Log: type the call; what the roster and the last contact know fills in".into());
            l.push("  Tab/Down next field, Shift-Tab/Up previous, Esc clear, Enter save".into());
            l.push("  Ctrl-Y worked  Ctrl-P partial  Ctrl-N nothing heard".into());
            l.push("  PgUp recent list: e or Enter correct, d delete (a reason is asked)".into());
        }
        Screen::RollCall => {
            l.push("Roll call: Up/Down station, w worked (then the report), p partial,".into());
            l.push("  n nothing heard; b/B next/previous band; [ ] move station; r again".into());
        }
        Screen::Review => {
            l.push("Review: Left/Right view, b band, Up/Down PgUp/PgDn scroll, u update".into())
        }
        Screen::Map => l.push("Map: Left/Right hour, b band".into()),
    }
    l.push(String::new());
    l.push("Cautions (local regulations and your licence conditions always prevail):".into());
    l.push("- RF exposure: keep people and animals away from wires, ends and feed points".into());
    l.push("- never raise masts or wires where they could fall onto power lines".into());
    l.push("- lightning: stop, disconnect and ground feed lines when thunder is heard".into());
    l.push("- batteries: fuse the positive lead; charge lithium only with its charger".into());
    l.push("- 60 m: channels and power (often 15 W e.i.r.p.) are set by each country".into());
    l.push(String::new());
    l.push("F1 or Esc closes this help".into());
    l
}

fn draw_help(f: &mut Frame, area: Rect, s: &AppState) {
    let lines: Vec<Line> = help_lines(s).into_iter().map(Line::from).collect();
    let r = centered(area, 80, lines.len() as u16 + 2);
    f.render_widget(Clear, r);
    f.render_widget(
        Paragraph::new(Text::from(lines))
            .wrap(Wrap { trim: false })
            .block(Block::bordered().title(" Help ")),
        r,
    );
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mark(col: u16, row: u16, len: u16) -> Mark {
        Mark { col, row, len }
    }

    #[test]
    fn map_labels_go_right_then_left_and_never_cover_each_other() {
        // Labels go right of their markers; a marker right after another's label finds its
        // right side blocked by a marker and its left by that label: no label.
        let marks = [mark(10, 3, 5), mark(17, 3, 5), mark(16, 3, 5)];
        assert_eq!(
            place_labels(&marks, &[], 40),
            vec![Some(11), Some(18), None]
        );
        // A label whose right side holds a marker goes left.
        let marks = [mark(10, 3, 5), mark(8, 3, 5)];
        assert_eq!(place_labels(&marks, &[], 40), vec![Some(11), Some(3)]);
        // At the right edge a label goes left.
        assert_eq!(place_labels(&[mark(38, 0, 5)], &[], 40), vec![Some(33)]);
        // A link glyph is avoided when the other side is free, covered when nothing else fits.
        assert_eq!(
            place_labels(&[mark(10, 0, 3)], &[(12, 0)], 40),
            vec![Some(7)]
        );
        assert_eq!(
            place_labels(&[mark(10, 0, 3)], &[(12, 0), (8, 0)], 40),
            vec![Some(11)]
        );
        // Wherever labels were put, no two cover one cell, and none covers a marker.
        let marks: Vec<Mark> = (0..30).map(|i| mark((i * 7) % 38, i % 4, 5)).collect();
        let at = place_labels(&marks, &[], 40);
        let mut cells = std::collections::HashSet::new();
        for m in &marks {
            cells.insert((m.col, m.row));
        }
        let markers = cells.clone();
        for (m, a) in marks.iter().zip(&at) {
            if let Some(s) = a {
                for c in *s..*s + m.len {
                    assert!(c < 40);
                    assert!(cells.insert((c, m.row)), "overlap at {c},{}", m.row);
                    assert!(!markers.contains(&(c, m.row)));
                }
            }
        }
    }
}
