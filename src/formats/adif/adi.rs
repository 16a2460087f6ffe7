//! ADI, ADIF's tagged text format: a streaming reader and a writer.
//!
//! The reader tolerates what the standard allows (free text before the header's end, tags in
//! any case, unknown and application fields, type indicators, text between fields, a missing
//! final `<EOR>`), keeps memory bounded whatever lengths a file declares, never panics, and
//! reports each problem with its line. It scans with `memchr` and reuses one buffer per
//! record, so it does not allocate per field.

use std::io::{self, Read, Write};
use std::ops::Range;

use memchr::memchr;

use super::RecordError;

/// Longest field value kept (bytes). A field that declares more is skipped and its record
/// rejected, without the reader ever holding more than this.
pub const MAX_FIELD_BYTES: usize = 64 * 1024;
/// Most fields kept per record.
pub const MAX_FIELDS: usize = 1000;
/// Longest tag `<NAME:LENGTH:TYPE>` accepted.
const MAX_TAG: usize = 256;
const CHUNK: usize = 256 * 1024;

/// One field of a record, as spans into the record's buffer.
#[derive(Debug, Clone)]
struct Span {
    name: Range<usize>,
    value: Range<usize>,
    line: u32,
}

/// A record as read: field names (upper case) and values (UTF-8), with the line each field
/// started on. Reused from record to record.
///
/// Fields are collected as bytes (every piece added is valid UTF-8) and the record's text is
/// checked once when it is complete, not once per field.
#[derive(Debug, Default, Clone)]
pub struct RawRecord {
    /// The fields' text while the record is read.
    bytes: Vec<u8>,
    /// The same text once the record is complete (see `seal`).
    text: String,
    sealed: bool,
    fields: Vec<Span>,
    /// Line of the first field.
    pub line: u32,
    /// Things the reader tolerated in this record (text after a field, a missing `<EOR>`, …).
    pub warnings: Vec<String>,
    rejected: Option<RecordError>,
    /// One bit per field-name hash (256 bits): a name whose bit is clear is surely new, so
    /// the comparisons are skipped for nearly every field.
    seen: [u64; 4],
}

impl RawRecord {
    pub fn clear(&mut self) {
        self.unseal();
        self.bytes.clear();
        self.fields.clear();
        self.line = 0;
        self.warnings.clear();
        self.rejected = None;
        self.seen = [0; 4];
    }

    /// Makes the text readable as `str` (one check of the whole record), for a record that
    /// is complete. Reading an unsealed record works too, checking the text at each read.
    pub(super) fn seal(&mut self) {
        if !self.sealed {
            let bytes = std::mem::take(&mut self.bytes);
            // Only UTF-8 is ever added, so this does not fail; if it did, the fields would
            // read as empty rather than wrong.
            self.text = String::from_utf8(bytes).unwrap_or_default();
            self.sealed = true;
        }
    }

    /// Back to collecting bytes (no copy).
    fn unseal(&mut self) {
        if self.sealed {
            self.bytes = std::mem::take(&mut self.text).into_bytes();
            self.sealed = false;
        }
    }

    #[inline]
    fn raw(&self) -> &[u8] {
        if self.sealed {
            self.text.as_bytes()
        } else {
            &self.bytes
        }
    }

    /// Every field in file order: (name, value, line).
    pub fn fields(&self) -> impl Iterator<Item = (&str, &str, u32)> {
        let text = if self.sealed {
            self.text.as_str()
        } else {
            std::str::from_utf8(&self.bytes).unwrap_or_default()
        };
        self.fields.iter().map(move |s| {
            (
                text.get(s.name.clone()).unwrap_or_default(),
                text.get(s.value.clone()).unwrap_or_default(),
                s.line,
            )
        })
    }

    /// The value of a field (names are compared in upper case).
    pub fn get(&self, name: &str) -> Option<&str> {
        self.fields()
            .find(|(n, _, _)| *n == name)
            .map(|(_, v, _)| v)
    }

    /// The value and line of a field.
    pub fn get_with_line(&self, name: &str) -> Option<(&str, u32)> {
        self.fields()
            .find(|(n, _, _)| *n == name)
            .map(|(_, v, l)| (v, l))
    }

    pub fn is_empty(&self) -> bool {
        self.fields.is_empty()
    }

    /// Adds a field (used by the ADX reader and tests).
    pub fn push(&mut self, name: &str, value: &str, line: u32) {
        self.push_parts(name.as_bytes(), value.as_bytes(), line);
    }

    /// Adds a field whose name is valid text and whose value is UTF-8 (not checked here).
    fn push_parts(&mut self, name: &[u8], value: &[u8], line: u32) {
        self.unseal();
        if self.fields.is_empty() {
            self.line = line;
        }
        let n0 = self.bytes.len();
        self.bytes.extend_from_slice(name);
        self.bytes[n0..].make_ascii_uppercase();
        let v0 = self.bytes.len();
        self.bytes.extend_from_slice(value);
        self.fields.push(Span {
            name: n0..v0,
            value: v0..self.bytes.len(),
            line,
        });
        let h = name_hash(&self.bytes[n0..v0]);
        self.mark(h);
    }

    /// Adds a field from ASCII `NAME:LEN>VALUE` bytes: the name is the first `name_len` bytes
    /// (made upper case here when it has `lower` case letters; `hash` is its [`name_hash`]),
    /// the value starts at `value_at`. One copy for the whole field.
    #[inline(always)]
    fn push_tagged(
        &mut self,
        tagged: &[u8],
        (name_len, lower, hash): (usize, bool, u8),
        value_at: usize,
        line: u32,
    ) {
        self.unseal();
        if self.fields.is_empty() {
            self.line = line;
        }
        let n0 = self.bytes.len();
        self.bytes.extend_from_slice(tagged);
        if lower {
            self.bytes[n0..n0 + name_len].make_ascii_uppercase();
        }
        self.fields.push(Span {
            name: n0..n0 + name_len,
            value: n0 + value_at..self.bytes.len(),
            line,
        });
        self.mark(hash);
    }

    #[inline]
    fn mark(&mut self, hash: u8) {
        let (word, bit) = filter_bit(hash);
        self.seen[word] |= bit;
    }

    /// Whether the record has a field of this name, given in any case.
    #[inline]
    fn has(&self, name: &[u8]) -> bool {
        self.has_hashed(name, name_hash(name))
    }

    /// [`RawRecord::has`], with the name's [`name_hash`] given.
    #[inline(always)]
    fn has_hashed(&self, name: &[u8], hash: u8) -> bool {
        let raw = self.raw();
        let (word, bit) = filter_bit(hash);
        self.seen[word] & bit != 0
            && self
                .fields
                .iter()
                .any(|s| raw[s.name.clone()].eq_ignore_ascii_case(name))
    }

    fn reject(&mut self, e: RecordError) {
        if self.rejected.is_none() {
            self.rejected = Some(e);
        }
    }
}

/// The bit of a field name in a record's name filter: a multiply-xor over the name's 8-byte
/// words (the last one padded with zero bytes) with the case bit of every byte cleared, so
/// that any case of a name gives the same bit. The quick path computes the same while it
/// scans the name ([`scan_name`]).
fn name_hash(b: &[u8]) -> u8 {
    let mut h = NAME_HASH_START;
    for c in b.chunks(8) {
        let mut w = [0u8; 8];
        w[..c.len()].copy_from_slice(c);
        h = name_hash_step(h, u64::from_le_bytes(w));
    }
    name_hash_end(h, b.len())
}

/// Where a name's hash sits in the 256-bit filter: the word and the bit in it.
#[inline(always)]
fn filter_bit(hash: u8) -> (usize, u64) {
    (usize::from(hash >> 6), 1 << (hash & 63))
}

const NAME_HASH_START: u64 = 0xcbf2_9ce4_8422_2325;

#[inline(always)]
fn name_hash_step(h: u64, word: u64) -> u64 {
    (h ^ (word & !(ONES * 0x20))).wrapping_mul(0x0000_0100_0000_01b3)
}

#[inline(always)]
fn name_hash_end(h: u64, len: usize) -> u8 {
    ((h ^ len as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15) >> 56) as u8
}

const ONES: u64 = 0x0101_0101_0101_0101;
const HIGH: u64 = 0x8080_8080_8080_8080;

/// An 8-byte little-endian word of `b` from `i`, if there are 8 bytes.
#[inline]
fn word_at(b: &[u8], i: usize) -> Option<u64> {
    let w: [u8; 8] = b.get(i..i + 8)?.try_into().ok()?;
    Some(u64::from_le_bytes(w))
}

/// The high bit of each byte of `x` that lies in `lo..=hi`. Exact for bytes below 0x80; a
/// byte of 0x80 or more may carry into the bytes above it, so only the bytes before the first
/// such byte can be trusted (all that [`scan_name`] uses).
#[inline]
fn bytes_in(x: u64, lo: u8, hi: u8) -> u64 {
    let at_least_lo = x.wrapping_add(ONES * u64::from(0x80 - lo));
    let above_hi = x.wrapping_add(ONES * u64::from(0x7f - hi));
    at_least_lo & !above_hi & HIGH
}

/// A mask of the lowest `n` bytes of a word (`n` up to 8).
#[inline(always)]
fn first_bytes(n: usize) -> u64 {
    const MASKS: [u64; 9] = {
        let mut m = [0u64; 9];
        let mut i = 1;
        while i < 9 {
            m[i] = (m[i - 1] << 8) | 0xff;
            i += 1;
        }
        m
    };
    MASKS[n.min(8)]
}

/// The field name at the start of `b`, as the quick path reads it: the number of leading
/// letters, digits and `_` (the run is cut at 72 bytes, longer than any name accepted),
/// whether any is a lower-case letter, and the run's [`name_hash`]. Eight bytes at a time;
/// `None` when `b` is too short to tell.
#[inline(always)]
fn scan_name(b: &[u8]) -> Option<(usize, bool, u8)> {
    let mut lower = 0u64;
    let mut h = NAME_HASH_START;
    for k in 0..9 {
        let x = word_at(b, 8 * k)?;
        let ascii = !x & HIGH;
        let low = bytes_in(x, b'a', b'z');
        // `_`: a zero byte of `x ^ '_'`, found exactly byte by byte.
        let y = x ^ (ONES * u64::from(b'_'));
        let underscore = !(((y & !HIGH) + !HIGH) | y) & HIGH;
        let name = (bytes_in(x, b'A', b'Z') | low | bytes_in(x, b'0', b'9') | underscore) & ascii;
        let end = (!name & HIGH).trailing_zeros() as usize / 8;
        // Lower-case letters before the end only.
        let keep = first_bytes(end);
        lower |= low & keep;
        if end > 0 {
            h = name_hash_step(h, x & keep);
        }
        if end < 8 {
            let len = 8 * k + end;
            return Some((len, lower != 0, name_hash_end(h, len)));
        }
    }
    Some((72, lower != 0, name_hash_end(h, 72)))
}

/// Line breaks in `b`. Usually a field's worth of bytes: a plain count then beats setting up a
/// search.
fn newlines(b: &[u8]) -> u32 {
    let n = if b.len() < 64 {
        b.iter().filter(|c| **c == b'\n').count()
    } else {
        memchr::memchr_iter(b'\n', b).count()
    };
    n as u32
}

/// One pass over `buf[start..start + len]`: the number of line breaks when it is all ASCII,
/// else `None`. Eight bytes at a time; the last word may read on past the value within `buf`,
/// with the bytes beyond masked off; a word's bytes are counted one by one only when it holds
/// a `\n`.
#[inline(always)]
fn ascii_newlines(buf: &[u8], start: usize, len: usize) -> Option<u32> {
    const NL: u64 = 0x0a0a_0a0a_0a0a_0a0a;
    let (mut high, mut lines) = (0u64, 0u32);
    let mut add = |x: u64| {
        high |= x;
        // A zero byte of `x ^ NL` is a `\n` of `x` (exact for words without high bits).
        let y = x ^ NL;
        if y.wrapping_sub(ONES) & !y & HIGH != 0 {
            lines += x.to_le_bytes().iter().filter(|b| **b == b'\n').count() as u32;
        }
    };
    let end = start + len;
    let mut i = start;
    while i + 8 <= end {
        add(word_at(buf, i)?);
        i += 8;
    }
    if i < end {
        match word_at(buf, i) {
            Some(x) => add(x & first_bytes(end - i)),
            None => {
                for b in buf.get(i..end)? {
                    add(u64::from(*b));
                }
            }
        }
    }
    (high & HIGH == 0).then_some(lines)
}

/// What the reader found next.
#[derive(Debug)]
pub enum Next {
    /// A record is in the buffer passed in.
    Record,
    /// A record that cannot be used, and why; the reader has moved past it.
    Rejected(RecordError),
    /// End of the file.
    End,
}

/// A streaming ADI reader over any byte source.
pub struct AdiReader<R: Read> {
    src: R,
    buf: Vec<u8>,
    pos: usize,
    eof: bool,
    /// Line number (1-based) at `buf[line_pos]`; lines are counted lazily up to `pos`.
    line: u32,
    line_pos: usize,
    started: bool,
    header_done: bool,
    header: Vec<(String, String)>,
    /// Warnings about the header, available after the first record.
    pub header_warnings: Vec<String>,
    /// Whether the quick path for common fields is used (tests compare both paths).
    quick: bool,
}

enum Tag {
    Eoh,
    Eor,
    Field {
        name: Range<usize>,
        len: usize,
    },
    /// Not a valid tag: skip the `<` and go on.
    Bad(String),
}

impl<R: Read> AdiReader<R> {
    pub fn new(src: R) -> Self {
        Self {
            src,
            buf: Vec::with_capacity(CHUNK),
            pos: 0,
            eof: false,
            line: 1,
            line_pos: 0,
            started: false,
            header_done: false,
            header: Vec::new(),
            header_warnings: Vec::new(),
            quick: true,
        }
    }

    /// Header fields read so far (names upper case), e.g. `ADIF_VER`, `PROGRAMID`.
    pub fn header(&self) -> &[(String, String)] {
        &self.header
    }

    /// Makes at least `n` bytes available from `pos`, unless the source ends first.
    fn fill(&mut self, n: usize) -> io::Result<bool> {
        while self.buf.len() - self.pos < n && !self.eof {
            if self.pos > 0 && self.pos >= self.buf.len() / 2 {
                self.current_line();
                self.buf.drain(..self.pos);
                self.pos = 0;
                self.line_pos = 0;
            }
            let old = self.buf.len();
            let want = CHUNK.max(n - (old - self.pos));
            // Reads straight into the spare capacity (no zeroing first), until `want` bytes
            // or the end of the source.
            let got = match (&mut self.src).take(want as u64).read_to_end(&mut self.buf) {
                Ok(k) => k,
                Err(e) => {
                    self.buf.truncate(old);
                    return Err(e);
                }
            };
            if got < want {
                self.eof = true;
            }
        }
        Ok(self.buf.len() - self.pos >= n)
    }

    fn advance(&mut self, n: usize) {
        self.pos = (self.pos + n).min(self.buf.len());
    }

    /// The line number at `pos`.
    fn current_line(&mut self) -> u32 {
        self.line += newlines(&self.buf[self.line_pos..self.pos]);
        self.line_pos = self.pos;
        self.line
    }

    /// Reads one field of the common kind in place: a tag `<NAME:LEN>` or `<NAME:LEN:T>` with
    /// a name of letters, digits and `_`, a short length, and an ASCII value that is all in
    /// the buffer, after at most a few spaces or line breaks. Returns false, having changed
    /// nothing, for anything else, which the general path then reads (and reports on).
    fn quick_field(&mut self, rec: &mut RawRecord) -> bool {
        if self.line_pos != self.pos {
            self.current_line();
        }
        let (i, gap_lines) = self.short_gap();
        let buf = &self.buf;
        let Some(w) = buf.get(i..i + MAX_TAG) else {
            return false;
        };
        if w[0] != b'<' {
            return false;
        }
        // Letters, digits and `_`, noting whether any letter is lower case.
        let Some((name_len, lower, hash)) = scan_name(&w[1..]) else {
            return false;
        };
        if name_len == 0 || name_len > 64 || w.get(1 + name_len) != Some(&b':') {
            return false;
        }
        let d0 = 2 + name_len;
        let Some(digits) = w[d0..].iter().position(|b| !b.is_ascii_digit()) else {
            return false;
        };
        if digits == 0 || digits > 6 {
            return false;
        }
        let mut k = d0 + digits;
        if w.get(k) == Some(&b':') {
            if !(w.get(k + 1).is_some_and(u8::is_ascii_alphabetic) && w.get(k + 2) == Some(&b'>')) {
                return false;
            }
            k += 2;
        }
        if w.get(k) != Some(&b'>') {
            return false;
        }
        let len = w[d0..d0 + digits]
            .iter()
            .fold(0usize, |n, d| n * 10 + usize::from(d - b'0'));
        let v0 = i + k + 1;
        let Some(value) = buf.get(v0..v0 + len) else {
            return false;
        };
        if len > MAX_FIELD_BYTES || rec.fields.len() >= MAX_FIELDS {
            return false;
        }
        let Some(value_lines) = ascii_newlines(buf, v0, value.len()) else {
            return false;
        };
        // The tag's body and the value together: `NAME:LEN>VALUE`, all ASCII by now.
        let name = &w[1..1 + name_len];
        if rec.has_hashed(name, hash) {
            return false;
        }
        let line = self.line + gap_lines;
        if len > 0 {
            let tagged = &buf[i + 1..v0 + len];
            rec.push_tagged(tagged, (name_len, lower, hash), v0 - (i + 1), line);
        }
        self.line = line + value_lines;
        self.pos = v0 + len;
        self.line_pos = self.pos;
        true
    }

    /// The end of the spaces and line breaks (at most 4) at `pos` that the quick paths step
    /// over, and the line breaks among them.
    #[inline(always)]
    fn short_gap(&self) -> (usize, u32) {
        let (buf, mut i, mut lines) = (&self.buf, self.pos, 0);
        while i < buf.len() && i < self.pos + 4 && buf[i].is_ascii_whitespace() {
            lines += u32::from(buf[i] == b'\n');
            i += 1;
        }
        (i, lines)
    }

    /// Consumes an `<EOR>` (any case) that follows at once, after at most a few spaces or line
    /// breaks: what the general path does with it, without its searches. Lines are counted
    /// later, as for skipped text.
    fn quick_eor(&mut self) -> bool {
        let (i, _) = self.short_gap();
        match self.buf.get(i..i + 5) {
            Some(tag) if tag.eq_ignore_ascii_case(b"<EOR>") => {
                self.pos = i + 5;
                true
            }
            _ => false,
        }
    }

    /// At an `<EOR>`: the record, if it has anything. Fields before the first `<EOH>` or
    /// `<EOR>` are a record when `<EOR>` comes first.
    fn end_of_record(&mut self, rec: &mut RawRecord) -> Option<Next> {
        self.header_done = true;
        if rec.is_empty() && rec.rejected.is_none() {
            return None;
        }
        rec.seal();
        Some(match rec.rejected.take() {
            Some(e) => Next::Rejected(e),
            None => Next::Record,
        })
    }

    /// Moves to the next `<`; false at the end of the source.
    fn seek_tag(&mut self) -> io::Result<bool> {
        loop {
            if let Some(i) = memchr(b'<', &self.buf[self.pos..]) {
                self.advance(i);
                return Ok(true);
            }
            let rest = self.buf.len() - self.pos;
            self.advance(rest);
            if !self.fill(1)? {
                return Ok(false);
            }
        }
    }

    /// Parses the tag at `pos` (which holds `<`) without consuming it.
    fn parse_tag(&mut self) -> io::Result<(Tag, usize)> {
        self.fill(MAX_TAG)?;
        let window = &self.buf[self.pos..self.buf.len().min(self.pos + MAX_TAG)];
        let Some(gt) = memchr(b'>', &window[1..]).map(|i| i + 1) else {
            return Ok((Tag::Bad("`<` without a closing `>`".into()), 1));
        };
        // A `<` inside the tag means this `<` was stray text.
        if let Some(lt) = memchr(b'<', &window[1..gt]) {
            return Ok((Tag::Bad("stray `<`".into()), lt + 1));
        }
        let body = &window[1..gt];
        let shown = || String::from_utf8_lossy(&window[..=gt]).into_owned();
        let mut parts = body.splitn(4, |b| *b == b':');
        let name = parts.next().unwrap_or_default();
        let len = parts.next();
        let ty = parts.next();
        if parts.next().is_some() {
            return Ok((
                Tag::Bad(format!("tag `{}` has too many `:` parts", shown())),
                gt + 1,
            ));
        }
        let Some(len) = len else {
            return Ok(match name {
                n if n.eq_ignore_ascii_case(b"eoh") => (Tag::Eoh, gt + 1),
                n if n.eq_ignore_ascii_case(b"eor") => (Tag::Eor, gt + 1),
                _ => (Tag::Bad(format!("tag `{}` has no length", shown())), gt + 1),
            });
        };
        let name_ok = !name.is_empty()
            && name[0] != b' '
            && name[name.len() - 1] != b' '
            && name.iter().all(|b| (0x21..0x7f).contains(b) || *b == b' ')
            && !name.iter().any(|b| matches!(b, b',' | b'{' | b'}'));
        if !name_ok {
            return Ok((
                Tag::Bad(format!("tag `{}` has an invalid field name", shown())),
                gt + 1,
            ));
        }
        if len.is_empty() || len.len() > 12 || !len.iter().all(u8::is_ascii_digit) {
            return Ok((
                Tag::Bad(format!("tag `{}` has an invalid length", shown())),
                gt + 1,
            ));
        }
        if let Some(t) = ty
            && !(t.len() == 1 && t[0].is_ascii_alphabetic())
        {
            return Ok((
                Tag::Bad(format!("tag `{}` has an invalid type indicator", shown())),
                gt + 1,
            ));
        }
        let n = len.iter().fold(0usize, |acc, d| {
            acc.saturating_mul(10).saturating_add(usize::from(d - b'0'))
        });
        Ok((
            Tag::Field {
                name: 1..1 + name.len(),
                len: n,
            },
            gt + 1,
        ))
    }

    /// Reads the next record into `rec`.
    pub fn next_record(&mut self, rec: &mut RawRecord) -> io::Result<Next> {
        rec.clear();
        if !self.started {
            self.started = true;
            self.fill(3)?;
            if self.buf[self.pos..].starts_with(&[0xEF, 0xBB, 0xBF]) {
                self.advance(3);
            }
        }
        loop {
            if self.quick {
                if self.quick_field(rec) {
                    continue;
                }
                if self.quick_eor() {
                    match self.end_of_record(rec) {
                        Some(next) => return Ok(next),
                        None => continue,
                    }
                }
            }
            if !self.seek_tag()? {
                return Ok(self.finish(rec));
            }
            let tag_line = self.current_line();
            let (tag, used) = self.parse_tag()?;
            match tag {
                Tag::Bad(why) => {
                    rec.warnings
                        .push(format!("line {tag_line}: {why}: skipped"));
                    self.advance(used.max(1));
                }
                Tag::Eoh => {
                    self.advance(used);
                    if self.header_done {
                        rec.warnings
                            .push(format!("line {tag_line}: a second <EOH>: ignored"));
                    } else {
                        self.header_done = true;
                        self.header = rec
                            .fields()
                            .map(|(n, v, _)| (n.to_string(), v.to_string()))
                            .collect();
                        self.header_warnings = std::mem::take(&mut rec.warnings);
                        rec.clear();
                    }
                }
                Tag::Eor => {
                    self.advance(used);
                    if let Some(next) = self.end_of_record(rec) {
                        return Ok(next);
                    }
                }
                Tag::Field { name, len } => {
                    // Field names were checked to be printable ASCII in `parse_tag`.
                    let mut name_buf = [0u8; MAX_TAG];
                    let n = name.len();
                    name_buf[..n]
                        .copy_from_slice(&self.buf[self.pos + name.start..self.pos + name.end]);
                    name_buf[..n].make_ascii_uppercase();
                    self.advance(used);
                    let name_text = std::str::from_utf8(&name_buf[..n]).unwrap_or("?");
                    self.read_value(rec, name_text, len, tag_line)?;
                }
            }
        }
    }

    fn read_value(
        &mut self,
        rec: &mut RawRecord,
        name: &str,
        len: usize,
        line: u32,
    ) -> io::Result<()> {
        if len > MAX_FIELD_BYTES {
            rec.reject(RecordError::field(
                line,
                name,
                &format!("{len} bytes"),
                format!("longer than the {MAX_FIELD_BYTES} bytes nearsky reads; record skipped"),
            ));
            // Skip the declared data without holding it.
            let mut left = len;
            while left > 0 {
                if !self.fill(1)? {
                    break;
                }
                let k = left.min(self.buf.len() - self.pos);
                self.advance(k);
                left -= k;
            }
            return Ok(());
        }
        // Enough for the byte reading, the character reading (up to 4 bytes a character) and a
        // look past the end.
        self.fill(len * 4 + 64)?;
        let avail = &self.buf[self.pos..];
        let by_bytes = len.min(avail.len());
        let mut take = by_bytes;
        let mut note = None;
        if by_bytes < len {
            note = Some(format!(
                "line {line}: field {name} declares {len} bytes but the file ends after {by_bytes}"
            ));
        } else if !avail[..take].is_ascii() {
            let ends_clean = |end: usize| {
                let rest = &avail[end..];
                match rest.iter().position(|b| !b.is_ascii_whitespace()) {
                    None => true,
                    Some(i) => rest[i] == b'<',
                }
            };
            // The byte reading stops before a UTF-8 continuation byte: it cut a character.
            let cut_in_char = take < avail.len() && (avail[take] & 0xC0) == 0x80;
            if (cut_in_char || !ends_clean(take))
                && let Some(end) = char_end(avail, len)
                && ends_clean(end)
            {
                take = end;
                note = Some(format!(
                    "line {line}: field {name}: its length counts characters, not bytes"
                ));
            }
        }
        if rec.fields.len() >= MAX_FIELDS {
            rec.reject(RecordError::field(
                line,
                name,
                "",
                format!("more than {MAX_FIELDS} fields in one record"),
            ));
        } else if rec.has(name.as_bytes()) {
            let value = decode(&avail[..take]);
            rec.reject(RecordError::field(
                line,
                name,
                &value,
                "appears twice in the record".to_string(),
            ));
        } else if len > 0 {
            if !avail[..take].is_ascii() {
                rec.warnings.push(format!("line {line}: field {name} holds non-ASCII text (ADI is ASCII only); read as {}", if std::str::from_utf8(&avail[..take]).is_ok() { "UTF-8" } else { "Latin-1" }));
            }
            let value = decode(&avail[..take]);
            rec.push_parts(name.as_bytes(), value.as_bytes(), line);
        }
        if let Some(n) = note {
            rec.warnings.push(n);
        }
        self.advance(take);
        Ok(())
    }

    fn finish(&mut self, rec: &mut RawRecord) -> Next {
        if rec.is_empty() && rec.rejected.is_none() {
            return Next::End;
        }
        if let Some(e) = rec.rejected.take() {
            return Next::Rejected(e);
        }
        if rec.has(b"CALL") && rec.has(b"QSO_DATE") && rec.has(b"TIME_ON") {
            rec.warnings.push(format!(
                "line {}: the last record has no <EOR>; kept",
                rec.line
            ));
            rec.seal();
            Next::Record
        } else {
            let line = rec.line;
            rec.clear();
            Next::Rejected(RecordError::record(
                line,
                "incomplete record at the end of the file (no <EOR>, and CALL, QSO_DATE or TIME_ON missing)",
            ))
        }
    }
}

/// End (in bytes) of the first `chars` UTF-8 characters of `b`, when `b` is valid UTF-8 that
/// far.
fn char_end(b: &[u8], chars: usize) -> Option<usize> {
    let valid = match std::str::from_utf8(b) {
        Ok(s) => s,
        Err(e) => std::str::from_utf8(&b[..e.valid_up_to()]).ok()?,
    };
    match valid.char_indices().nth(chars) {
        Some((i, _)) => Some(i),
        None if valid.chars().count() == chars => Some(valid.len()),
        None => None,
    }
}

/// Bytes as text: UTF-8 when valid, else Latin-1 (every byte is a character).
fn decode(b: &[u8]) -> std::borrow::Cow<'_, str> {
    match std::str::from_utf8(b) {
        Ok(s) => std::borrow::Cow::Borrowed(s),
        Err(_) => std::borrow::Cow::Owned(b.iter().map(|&c| char::from(c)).collect()),
    }
}

/// Writes one ADI field; the value must be ASCII (lengths are then bytes and characters
/// alike, for every reader).
pub fn write_field(w: &mut impl Write, name: &str, value: &str) -> io::Result<()> {
    if value.is_empty() {
        return Ok(());
    }
    // Written piece by piece: this runs for every field of an export, and formatting
    // machinery would cost more than the bytes.
    let mut digits = [0u8; 20];
    let mut at = digits.len();
    let mut n = value.len();
    loop {
        at -= 1;
        digits[at] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    w.write_all(b"<")?;
    w.write_all(name.as_bytes())?;
    w.write_all(b":")?;
    w.write_all(&digits[at..])?;
    w.write_all(b">")?;
    w.write_all(value.as_bytes())?;
    w.write_all(b" ")
}

/// Writes contacts as an ADI file: a line of text, the header, then one record per line.
pub struct AdiWriter<W: Write> {
    w: W,
    paths: crate::domain::geo::PathCache,
    pub count: usize,
}

impl<W: Write> AdiWriter<W> {
    pub fn new(mut w: W, created: chrono::DateTime<chrono::Utc>) -> io::Result<Self> {
        writeln!(w, "nearsky drill log export (ADIF {})", super::ADIF_VERSION)?;
        write_field(&mut w, "ADIF_VER", super::ADIF_VERSION)?;
        write_field(&mut w, "PROGRAMID", super::PROGRAM_ID)?;
        write_field(&mut w, "PROGRAMVERSION", env!("CARGO_PKG_VERSION"))?;
        write_field(
            &mut w,
            "CREATED_TIMESTAMP",
            &created.format("%Y%m%d %H%M%S").to_string(),
        )?;
        writeln!(w, "<EOH>")?;
        Ok(Self {
            w,
            paths: crate::domain::geo::PathCache::new(),
            count: 0,
        })
    }

    pub fn write(&mut self, c: &crate::domain::Contact) -> io::Result<()> {
        let w = &mut self.w;
        super::for_each_field(c, true, &mut self.paths, |name, value| {
            write_field(w, name, value)
        })?;
        self.w.write_all(b"<EOR>\n")?;
        self.count += 1;
        Ok(())
    }

    /// The output, to take what was written so far.
    pub fn get_mut(&mut self) -> &mut W {
        &mut self.w
    }

    pub fn finish(mut self) -> io::Result<W> {
        self.w.flush()?;
        Ok(self.w)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    type Fields = Vec<(String, String)>;

    fn read_all(text: &[u8]) -> (Vec<Fields>, Vec<String>, Vec<String>) {
        let mut r = AdiReader::new(text);
        let mut rec = RawRecord::default();
        let mut records = Vec::new();
        let mut rejected = Vec::new();
        let mut warnings = Vec::new();
        loop {
            match r.next_record(&mut rec).unwrap() {
                Next::Record => {
                    records.push(
                        rec.fields()
                            .map(|(n, v, _)| (n.to_string(), v.to_string()))
                            .collect(),
                    );
                    warnings.extend(rec.warnings.iter().cloned());
                }
                Next::Rejected(e) => rejected.push(e.to_string()),
                Next::End => break,
            }
        }
        (records, rejected, warnings)
    }

    /// Everything a reader reports of a text, with the quick path on or off: records with
    /// their fields and lines, rejections and warnings, and the header.
    fn everything(text: &[u8], quick: bool, chunk: usize) -> Vec<String> {
        struct Trickle<'a>(&'a [u8], usize);
        impl Read for Trickle<'_> {
            fn read(&mut self, out: &mut [u8]) -> io::Result<usize> {
                let n = self.0.len().min(out.len()).min(self.1);
                out[..n].copy_from_slice(&self.0[..n]);
                self.0 = &self.0[n..];
                Ok(n)
            }
        }
        let mut r = AdiReader::new(Trickle(text, chunk));
        r.quick = quick;
        let mut rec = RawRecord::default();
        let mut out = Vec::new();
        loop {
            match r.next_record(&mut rec).unwrap() {
                Next::Record => {
                    out.push(format!("record at line {}", rec.line));
                    out.extend(rec.fields().map(|(n, v, l)| format!("{l}: {n}={v:?}")));
                    out.extend(rec.warnings.iter().cloned());
                }
                Next::Rejected(e) => out.push(format!("rejected: {e}")),
                Next::End => break,
            }
        }
        out.push(format!("header {:?} {:?}", r.header(), r.header_warnings));
        out
    }

    use proptest::prelude::Strategy as _;

    proptest::proptest! {
        /// The word-at-a-time name scan finds the run of letters, digits and `_` that a plain
        /// loop finds, and whether it holds a lower-case letter.
        #[test]
        fn scan_name_reads_like_a_plain_loop(
            v in proptest::collection::vec(proptest::prop_oneof![
                proptest::strategy::Just(b'_'),
                proptest::strategy::Just(b':'),
                b'A'..=b'Z',
                b'a'..=b'z',
                b'0'..=b'9',
                0u8..=255,
            ], 0..100)
        ) {
            let run = v.iter().take_while(|b| b.is_ascii_alphanumeric() || **b == b'_').count();
            let plain = (run.min(72), v[..run.min(72)].iter().any(u8::is_ascii_lowercase));
            // Short of whole words the scan may give up, but never answer wrongly.
            if let Some((n, lower, _)) = scan_name(&v) {
                proptest::prop_assert_eq!((n, lower), plain);
            }
            // With room to read: always the plain answer.
            let mut padded = v.clone();
            padded.extend_from_slice(&[b':'; 80]);
            let run = padded.iter().take_while(|b| b.is_ascii_alphanumeric() || **b == b'_').count();
            let n = run.min(72);
            let expect = (n, padded[..n].iter().any(u8::is_ascii_lowercase), name_hash(&padded[..n]));
            proptest::prop_assert_eq!(scan_name(&padded), Some(expect));
        }

        /// Any case of a name hashes alike.
        #[test]
        fn name_hash_ignores_case(name in "[A-Za-z0-9_]{1,70}") {
            proptest::prop_assert_eq!(
                name_hash(name.as_bytes()),
                name_hash(name.to_ascii_uppercase().as_bytes())
            );
        }

        /// The word-at-a-time scan gives what a byte-by-byte count gives.
        #[test]
        fn ascii_newlines_counts_like_a_plain_loop(
            v in proptest::collection::vec(proptest::prop_oneof![
                proptest::strategy::Just(b'\n'),
                proptest::strategy::Just(0x8a_u8),
                0u8..=255,
            ], 0..70)
        ) {
            let plain = v.is_ascii().then(|| v.iter().filter(|b| **b == b'\n').count() as u32);
            // The value alone, and the value inside more text (the last word reads past it).
            proptest::prop_assert_eq!(ascii_newlines(&v, 0, v.len()), plain);
            let mut wider = vec![b'\n', 0x80];
            wider.extend_from_slice(&v);
            wider.extend_from_slice(b"\n\x80\n\n\x80\n\n\n");
            proptest::prop_assert_eq!(ascii_newlines(&wider, 2, v.len()), plain);
        }

        /// The quick path reads exactly what the general path reads, whatever the text
        /// (names in any case, type indicators, line breaks, non-ASCII, broken tags,
        /// duplicate fields, wrong lengths) and however the source hands it over.
        #[test]
        fn the_quick_path_reads_what_the_general_path_reads(
            parts in proptest::collection::vec(
                proptest::prop_oneof![
                    ("[A-Za-z_]{1,12}", "[ -~\n\r]{0,20}", proptest::option::of("[A-Z]"), -2i64..3)
                        .prop_map(|(n, v, t, off)| {
                            let len = (v.len() as i64 + off).max(0);
                            match t {
                                Some(t) => format!("<{n}:{len}:{t}>{v}"),
                                None => format!("<{n}:{len}>{v}"),
                            }
                        }),
                    proptest::strategy::Just("<EOR>\n".to_string()),
                    proptest::strategy::Just("<eoh>\r\n".to_string()),
                    proptest::strategy::Just("<CALL:5>Q3NET ".to_string()),
                    proptest::strategy::Just("<NOTES:6>Zoë ok".to_string()),
                    proptest::strategy::Just("<NOTES:4>Zoë ok".to_string()),
                    "[ \n<>:a-z0-9]{0,6}",
                ],
                0..40,
            ),
            chunk in 1usize..600,
        ) {
            let text = parts.concat();
            proptest::prop_assert_eq!(
                everything(text.as_bytes(), true, chunk),
                everything(text.as_bytes(), false, chunk)
            );
        }
    }

    #[test]
    fn data_longer_than_its_length_keeps_the_first_bytes() {
        let (r, _, w) = read_all(b"<CALL:3>Q0TEST <EOR>");
        assert_eq!(r[0], vec![("CALL".into(), "Q0T".into())]);
        assert!(w.is_empty(), "text between fields is allowed: {w:?}");
    }

    #[test]
    fn the_length_decides_even_when_a_tag_follows_inside() {
        let (r, _, _) = read_all(b"<CALL:9>Q0TEST<BAND:3>40m <EOR>");
        assert_eq!(r[0], vec![("CALL".into(), "Q0TEST<BA".into())]);
    }

    #[test]
    fn bytes_and_characters_are_both_understood() {
        // ADIF sheet §1.4: `José` is 4 characters but 5 UTF-8 bytes.
        let (r, _, w) = read_all("<NAME:5>José<QTH:3>Ulm<EOR>".as_bytes());
        assert_eq!(
            r[0],
            vec![("NAME".into(), "José".into()), ("QTH".into(), "Ulm".into())]
        );
        assert!(w.iter().any(|w| w.contains("non-ASCII")));
        let (r, _, w) = read_all("<NAME:4>José<QTH:3>Ulm<EOR>".as_bytes());
        assert_eq!(
            r[0],
            vec![("NAME".into(), "José".into()), ("QTH".into(), "Ulm".into())]
        );
        assert!(w.iter().any(|w| w.contains("counts characters")), "{w:?}");
        let (r, _, _) = read_all(b"<NAME:4>Jos\xe9<EOR>");
        assert_eq!(r[0][0].1, "José", "Latin-1");
    }

    #[test]
    fn bad_tags_are_skipped_with_a_warning() {
        let (r, _, w) = read_all(b"<CALL :6>Q0TEST <BAND:3>40m <EOR >x<EOR>");
        assert_eq!(r[0], vec![("BAND".into(), "40m".into())]);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w[0].contains("invalid field name"));
    }

    #[test]
    fn a_duplicate_field_rejects_the_record_naming_line_and_field() {
        let (r, rej, _) = read_all(b"<CALL:5>Q1ABC\n<CALL:5>Q2ABC <EOR><CALL:5>Q3ABC<EOR>");
        assert_eq!(r.len(), 1);
        assert_eq!(
            rej,
            vec!["line 2: field CALL `Q2ABC`: appears twice in the record"]
        );
    }

    #[test]
    fn huge_declared_lengths_are_skipped_not_held() {
        let mut text = b"<NOTES:99999999999>".to_vec();
        text.extend(std::iter::repeat_n(b'x', 100_000));
        text.extend(b"<EOR><CALL:5>Q1ABC<EOR>");
        let (r, rej, _) = read_all(&text);
        assert!(
            rej[0].contains("NOTES") && rej[0].contains("longer than"),
            "{rej:?}"
        );
        assert!(
            r.is_empty(),
            "the declared length swallowed the rest of the file"
        );
    }

    #[test]
    fn an_unterminated_last_record_is_kept_only_when_complete() {
        let (r, _, w) = read_all(b"<CALL:5>Q1ABC<QSO_DATE:8>20250614<TIME_ON:4>1805");
        assert_eq!(r.len(), 1);
        assert!(w.iter().any(|w| w.contains("no <EOR>")));
        let (r, rej, _) = read_all(b"<CALL:5>Q1ABC<EOR><CALL:5>Q2ABC");
        assert_eq!(r.len(), 1);
        assert!(rej[0].contains("incomplete record"));
    }

    #[test]
    fn a_file_starting_with_a_tag_may_still_hold_a_header() {
        let mut r = AdiReader::new(&b"<ADIF_VER:5>3.1.7<EOH><CALL:5>Q1ABC<EOR>"[..]);
        let mut rec = RawRecord::default();
        assert!(matches!(r.next_record(&mut rec).unwrap(), Next::Record));
        assert_eq!(r.header()[0], ("ADIF_VER".into(), "3.1.7".into()));
        assert_eq!(rec.get("CALL"), Some("Q1ABC"));
    }

    #[test]
    fn empty_input_has_no_records() {
        let (r, rej, _) = read_all(b"");
        assert!(r.is_empty() && rej.is_empty());
        let (r, _, _) = read_all(b"\xEF\xBB\xBF\n<CALL:5>Q1ABC<eor>");
        assert_eq!(r.len(), 1);
    }
}
