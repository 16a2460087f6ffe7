//! ADX, ADIF's XML form: a streaming reader (quick-xml) and a writer.
//!
//! Records are `<RECORD>` elements holding one element per field; application fields are
//! `<APP PROGRAMID=".." FIELDNAME="..">`, read as `APP_{PROGRAMID}_{FIELDNAME}`; user-defined
//! ones `<USERDEF FIELDNAME="..">`. `*_INTL` fields (Unicode text) are allowed here only.

use std::io::{self, BufRead, Write};

use chrono::{DateTime, Utc};
use quick_xml::escape::{escape, resolve_predefined_entity};
use quick_xml::events::Event;

use super::adi::{MAX_FIELD_BYTES, Next, RawRecord};
use super::{ADIF_VERSION, PROGRAM_ID, RecordError, for_each_field};
use crate::domain::Contact;
use crate::domain::geo::PathCache;

/// Most bytes one XML event may span; beyond it the file is refused, so that memory stays
/// bounded whatever the file holds.
const MAX_EVENT_BYTES: usize = MAX_FIELD_BYTES + 4096;

/// A `BufRead` that counts lines and refuses events longer than [`MAX_EVENT_BYTES`].
struct Bounded<R> {
    inner: R,
    line: u32,
    since_reset: usize,
}

impl<R: BufRead> io::Read for Bounded<R> {
    fn read(&mut self, out: &mut [u8]) -> io::Result<usize> {
        let avail = self.fill_buf()?;
        let n = avail.len().min(out.len());
        out[..n].copy_from_slice(&avail[..n]);
        self.consume(n);
        Ok(n)
    }
}

impl<R: BufRead> BufRead for Bounded<R> {
    fn fill_buf(&mut self) -> io::Result<&[u8]> {
        if self.since_reset > MAX_EVENT_BYTES {
            return Err(io::Error::new(
                io::ErrorKind::InvalidData,
                format!("an XML element runs past {MAX_EVENT_BYTES} bytes"),
            ));
        }
        self.inner.fill_buf()
    }

    fn consume(&mut self, n: usize) {
        if let Ok(b) = self.inner.fill_buf() {
            let k = n.min(b.len());
            self.line += memchr::memchr_iter(b'\n', &b[..k]).count() as u32;
        }
        self.since_reset += n;
        self.inner.consume(n);
    }
}

#[derive(PartialEq)]
enum Place {
    Outside,
    Header,
    Records,
    Record,
}

/// A streaming ADX reader.
pub struct AdxReader<R: BufRead> {
    xml: quick_xml::Reader<Bounded<R>>,
    buf: Vec<u8>,
    place: Place,
    header: Vec<(String, String)>,
    done: bool,
}

impl<R: BufRead> AdxReader<R> {
    pub fn new(src: R) -> Self {
        let mut xml = quick_xml::Reader::from_reader(Bounded {
            inner: src,
            line: 1,
            since_reset: 0,
        });
        xml.config_mut().trim_text(false);
        Self {
            xml,
            buf: Vec::new(),
            place: Place::Outside,
            header: Vec::new(),
            done: false,
        }
    }

    pub fn header(&self) -> &[(String, String)] {
        &self.header
    }

    fn line(&self) -> u32 {
        self.xml.get_ref().line
    }

    /// Reads the next record into `rec`.
    pub fn next_record(&mut self, rec: &mut RawRecord) -> io::Result<Next> {
        rec.clear();
        let mut field: Option<(String, u32)> = None;
        let mut value = String::new();
        let mut depth_in_field = 0usize;
        loop {
            if self.done {
                return Ok(Next::End);
            }
            self.buf.clear();
            self.xml.get_mut().since_reset = 0;
            let line = self.line();
            let ev = match self.xml.read_event_into(&mut self.buf) {
                Ok(ev) => ev,
                Err(e) => {
                    self.done = true;
                    let msg = format!("the XML cannot be read further: {e}");
                    return Ok(Next::Rejected(RecordError::record(line, &msg)));
                }
            };
            match ev {
                Event::Eof => {
                    self.done = true;
                    if !rec.is_empty() || field.is_some() {
                        return Ok(Next::Rejected(RecordError::record(
                            rec.line,
                            "the file ends inside a RECORD",
                        )));
                    }
                    return Ok(Next::End);
                }
                Event::Start(e) => {
                    let name = e.name().as_ref().to_ascii_uppercase();
                    match (&self.place, name.as_str()) {
                        (Place::Outside, "ADX") => {}
                        (Place::Outside, "HEADER") => self.place = Place::Header,
                        (Place::Outside, "RECORDS") => self.place = Place::Records,
                        (Place::Records, "RECORD") => {
                            self.place = Place::Record;
                            rec.line = line;
                        }
                        (Place::Header | Place::Record, _) if field.is_none() => {
                            let attr = |k: &str| {
                                e.try_get_attribute(k)
                                    .ok()
                                    .flatten()
                                    .and_then(|a| {
                                        a.normalized_value(quick_xml::XmlVersion::Implicit1_0).ok()
                                    })
                                    .map(|v| v.to_ascii_uppercase())
                            };
                            let full = match name.as_str() {
                                "APP" => format!(
                                    "APP_{}_{}",
                                    attr("PROGRAMID").unwrap_or_default(),
                                    attr("FIELDNAME").unwrap_or_default()
                                ),
                                "USERDEF" if self.place == Place::Record => {
                                    attr("FIELDNAME").unwrap_or_default()
                                }
                                _ => name,
                            };
                            field = Some((full, line));
                            value.clear();
                        }
                        _ => depth_in_field += 1,
                    }
                }
                Event::Text(t) if field.is_some() => value.push_str(&t.xml10_content()),
                Event::CData(t) if field.is_some() => value.push_str(&t.into_inner()),
                Event::GeneralRef(r) if field.is_some() => {
                    let resolved = if r.is_char_ref() {
                        r.resolve_char_ref().ok().flatten().map(String::from)
                    } else {
                        resolve_predefined_entity(&r.clone().into_inner()).map(str::to_string)
                    };
                    match resolved {
                        Some(s) => value.push_str(&s),
                        None => {
                            let (name, l) = field.clone().unwrap_or_default();
                            rec.warnings.push(format!(
                                "line {l}: field {name}: unknown entity `&{};` dropped",
                                r.into_inner()
                            ));
                        }
                    }
                }
                Event::End(e) => {
                    let name = e.name().as_ref().to_ascii_uppercase();
                    if depth_in_field > 0 {
                        depth_in_field -= 1;
                        continue;
                    }
                    if let Some((fname, l)) = field.take() {
                        if value.len() > MAX_FIELD_BYTES {
                            rec.warnings.push(format!(
                                "line {l}: field {fname} longer than {MAX_FIELD_BYTES} bytes: cut"
                            ));
                            let mut cut = MAX_FIELD_BYTES;
                            while !value.is_char_boundary(cut) {
                                cut -= 1;
                            }
                            value.truncate(cut);
                        }
                        let target = if self.place == Place::Header {
                            None
                        } else {
                            Some(&mut *rec)
                        };
                        match target {
                            None => self.header.push((fname, value.clone())),
                            Some(r) => {
                                if r.get(&fname).is_some() {
                                    let e = RecordError::field(
                                        l,
                                        &fname,
                                        &value,
                                        "appears twice in the record".into(),
                                    );
                                    self.skip_to_record_end()?;
                                    return Ok(Next::Rejected(e));
                                }
                                if !value.is_empty() {
                                    r.push(&fname, &value, l);
                                }
                            }
                        }
                        continue;
                    }
                    match (&self.place, name.as_str()) {
                        (Place::Record, "RECORD") => {
                            self.place = Place::Records;
                            if rec.is_empty() {
                                continue;
                            }
                            rec.seal();
                            return Ok(Next::Record);
                        }
                        (Place::Header, "HEADER") | (Place::Records, "RECORDS") => {
                            self.place = Place::Outside
                        }
                        _ => {}
                    }
                }
                _ => {}
            }
        }
    }

    fn skip_to_record_end(&mut self) -> io::Result<()> {
        loop {
            self.buf.clear();
            self.xml.get_mut().since_reset = 0;
            match self.xml.read_event_into(&mut self.buf) {
                Ok(Event::End(e)) if e.name().as_ref().eq_ignore_ascii_case("RECORD") => {
                    self.place = Place::Records;
                    return Ok(());
                }
                Ok(Event::Eof) | Err(_) => {
                    self.done = true;
                    return Ok(());
                }
                Ok(_) => {}
            }
        }
    }
}

/// Writes contacts as an ADX document.
pub struct AdxWriter<W: Write> {
    w: W,
    paths: PathCache,
    pub count: usize,
}

impl<W: Write> AdxWriter<W> {
    pub fn new(mut w: W, created: DateTime<Utc>) -> io::Result<Self> {
        writeln!(w, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>")?;
        writeln!(w, "<ADX>")?;
        writeln!(w, "  <HEADER>")?;
        writeln!(w, "    <ADIF_VER>{ADIF_VERSION}</ADIF_VER>")?;
        writeln!(w, "    <PROGRAMID>{PROGRAM_ID}</PROGRAMID>")?;
        writeln!(
            w,
            "    <PROGRAMVERSION>{}</PROGRAMVERSION>",
            env!("CARGO_PKG_VERSION")
        )?;
        writeln!(
            w,
            "    <CREATED_TIMESTAMP>{}</CREATED_TIMESTAMP>",
            created.format("%Y%m%d %H%M%S")
        )?;
        writeln!(w, "  </HEADER>")?;
        writeln!(w, "  <RECORDS>")?;
        Ok(Self {
            w,
            paths: PathCache::new(),
            count: 0,
        })
    }

    pub fn write(&mut self, c: &Contact) -> io::Result<()> {
        let w = &mut self.w;
        w.write_all(b"    <RECORD>")?;
        for_each_field(c, false, &mut self.paths, |name, value| {
            let text = escape(value);
            if let Some(app) = name.strip_prefix("APP_NEARSKY_") {
                write!(
                    w,
                    "<APP PROGRAMID=\"{PROGRAM_ID}\" FIELDNAME=\"{app}\" TYPE=\"S\">{text}</APP>"
                )
            } else if !value.is_ascii() && matches!(name, "NOTES" | "MY_ANTENNA") {
                write!(w, "<{name}_INTL>{text}</{name}_INTL>")
            } else {
                write!(w, "<{name}>{text}</{name}>")
            }
        })?;
        w.write_all(b"</RECORD>\n")?;
        self.count += 1;
        Ok(())
    }

    /// The output, to take what was written so far.
    pub fn get_mut(&mut self) -> &mut W {
        &mut self.w
    }

    pub fn finish(mut self) -> io::Result<W> {
        writeln!(self.w, "  </RECORDS>")?;
        writeln!(self.w, "</ADX>")?;
        self.w.flush()?;
        Ok(self.w)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str) -> (Vec<RawRecord>, Vec<String>) {
        let mut r = AdxReader::new(text.as_bytes());
        let mut out = Vec::new();
        let mut rej = Vec::new();
        loop {
            let mut rec = RawRecord::default();
            match r.next_record(&mut rec).unwrap() {
                Next::Record => out.push(rec),
                Next::Rejected(e) => rej.push(e.to_string()),
                Next::End => break,
            }
        }
        (out, rej)
    }

    #[test]
    fn the_sheet_example_shape_reads() {
        // Shape from the ADIF sheet §2 (invented calls).
        let (recs, rej) = read(
            r#"<?xml version="1.0" encoding="UTF-8"?>
<ADX><HEADER><ADIF_VER>3.1.7</ADIF_VER><PROGRAMID>EXAMPLE</PROGRAMID>
<USERDEF FIELDID="1" TYPE="S">DRILL_ID</USERDEF></HEADER>
<RECORDS><RECORD><CALL>Q0TEST</CALL><QSO_DATE>20250614</QSO_DATE><NAME_INTL>José &amp; Ana</NAME_INTL>
<USERDEF FIELDNAME="DRILL_ID">SET-2025A</USERDEF>
<APP PROGRAMID="EXAMPLE" FIELDNAME="NET_ROLE" TYPE="S">NCS</APP></RECORD></RECORDS></ADX>"#,
        );
        assert!(rej.is_empty(), "{rej:?}");
        assert_eq!(recs[0].get("CALL"), Some("Q0TEST"));
        assert_eq!(recs[0].get("NAME_INTL"), Some("José & Ana"));
        assert_eq!(recs[0].get("DRILL_ID"), Some("SET-2025A"));
        assert_eq!(recs[0].get("APP_EXAMPLE_NET_ROLE"), Some("NCS"));
        assert_eq!(recs[0].get_with_line("APP_EXAMPLE_NET_ROLE").unwrap().1, 6);
    }

    #[test]
    fn broken_xml_and_duplicates_are_reported_with_lines() {
        let (recs, rej) = read(
            "<ADX><RECORDS><RECORD><CALL>Q1A</CALL><CALL>Q1B</CALL></RECORD>\n<RECORD><CALL>Q2ABC</CALL></RECORD></RECORDS></ADX>",
        );
        assert_eq!(recs.len(), 1);
        assert_eq!(
            rej,
            vec!["line 1: field CALL `Q1B`: appears twice in the record"]
        );
        let (_, rej) = read("<ADX><RECORDS><RECORD><CALL>Q1A</CALL></RECORDS>");
        assert!(!rej.is_empty());
    }
}
