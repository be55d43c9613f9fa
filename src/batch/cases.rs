//! The cases table, read into chunks of records.
//!
//! The reader thread cuts the table into chunks of whole records; the
//! workers split the fields. A stretch of the table with no `"`, and no
//! `\r` but in `\r\n` line ends (the usual table: one record a line,
//! nothing quoted) is cut at newlines, found many bytes at a time by
//! `memchr`, and each line split at its commas. Anything else is read record by record by `csv_core`, the
//! csv crate's own parser, so quoted fields, doubled quotes, newlines
//! inside quotes and `\r\n` or `\r` line ends read as the csv crate reads
//! them (tested against it over generated tables).
//!
//! Each record carries the line it starts on, counting `\n`, `\r\n` and a
//! lone `\r` as one line end each, as an editor shows the file, and
//! skipping blank lines, which are not records. (The csv crate's own
//! positions give the line where its reading started instead, which is
//! the line before for `\r\n` files and after blank lines.)

use std::io::{self, Read};

use memchr::{memchr2, memchr_iter};

/// Bytes read from the cases file at a time, unless a record is longer.
pub const BUFFER: usize = 1 << 20;

/// One record: where its bytes are in [`Rows::text`] and where it was.
#[derive(Clone, Copy, Debug)]
struct Rec {
    /// The line as written (cut at newlines), or its fields back to back
    /// (read by `csv_core`).
    start: usize,
    end: usize,
    /// Line of the table where the record starts (the header is line 1).
    line: u64,
    /// Its fields in [`Rows::spans`]; empty until split.
    first: usize,
    n: usize,
    /// The record as written is also how it is written back: its fields
    /// joined by commas, none needing quotes.
    plain: bool,
}

/// The records of one chunk.
#[derive(Debug, Default)]
pub struct Rows {
    text: Vec<u8>,
    recs: Vec<Rec>,
    /// Fields: byte ranges in `text`.
    spans: Vec<(usize, usize)>,
    split: bool,
}

/// One record of a chunk.
#[derive(Clone, Copy)]
pub struct Row<'a> {
    rows: &'a Rows,
    rec: Rec,
}

impl<'a> Row<'a> {
    /// Number of fields.
    pub fn len(&self) -> usize {
        self.rec.n
    }

    pub fn is_empty(&self) -> bool {
        self.rec.n == 0
    }

    /// Field `k`, unquoted.
    pub fn get(&self, k: usize) -> Option<&'a [u8]> {
        (k < self.rec.n).then(|| {
            let (s, e) = self.rows.spans[self.rec.first + k];
            &self.rows.text[s..e]
        })
    }

    /// Line of the table where the record starts (the header is line 1).
    pub fn line(&self) -> u64 {
        self.rec.line
    }

    /// The record's text when it is exactly its fields joined by commas,
    /// none of them needing quotes: it can be copied out as it is.
    pub fn plain_text(&self) -> Option<&'a [u8]> {
        self.rec.plain.then(|| &self.rows.text[self.rec.start..self.rec.end])
    }
}

impl Rows {
    pub fn len(&self) -> usize {
        self.recs.len()
    }

    pub fn is_empty(&self) -> bool {
        self.recs.is_empty()
    }

    pub fn clear(&mut self) {
        self.text.clear();
        self.recs.clear();
        self.spans.clear();
        self.split = false;
    }

    /// Record `i`; its fields are there once [`Rows::split_fields`] ran.
    pub fn row(&self, i: usize) -> Row<'_> {
        Row {
            rows: self,
            rec: self.recs[i],
        }
    }

    /// Split the records cut at newlines into fields at their commas
    /// (records read by `csv_core` come split). The workers do this, so
    /// the reader thread only looks for line ends.
    pub fn split_fields(&mut self) {
        if self.split {
            return;
        }
        for r in &mut self.recs {
            r.first = self.spans.len();
            let mut s = r.start;
            for c in memchr_iter(b',', &self.text[r.start..r.end]) {
                self.spans.push((s, r.start + c));
                s = r.start + c + 1;
            }
            self.spans.push((s, r.end));
            r.n = self.spans.len() - r.first;
        }
        self.split = true;
    }
}

/// The cases table, read from its first byte.
pub struct Cases<R> {
    src: R,
    buf: Vec<u8>,
    start: usize,
    end: usize,
    eof: bool,
    /// Line of `buf[start]`, not counting a `\r` just before it.
    line: u64,
    /// The byte before `buf[start]` was a `\r`: one line end if the next
    /// byte is not `\n`, part of `\r\n` if it is.
    cr: bool,
    /// Offset of `buf[start]` in the table.
    byte: u64,
    core: csv_core::Reader,
    /// `csv_core`'s output for the record being read.
    field_bytes: Vec<u8>,
    field_ends: Vec<usize>,
    /// Lines found by the fast path: (start, end, line ends before it),
    /// relative to `start`.
    found: Vec<(usize, usize, u64)>,
}

impl<R: Read> Cases<R> {
    pub fn new(src: R) -> Cases<R> {
        Cases::with_buffer(src, BUFFER)
    }

    /// Reading `capacity` bytes at a time (more for a longer record).
    pub fn with_buffer(src: R, capacity: usize) -> Cases<R> {
        Cases {
            src,
            buf: vec![0; capacity.max(64)],
            start: 0,
            end: 0,
            eof: false,
            line: 1,
            cr: false,
            byte: 0,
            core: csv_core::Reader::new(),
            field_bytes: vec![0; 256],
            field_ends: vec![0; 16],
            found: Vec::new(),
        }
    }

    /// Offset in the table of the first byte not yet taken.
    pub fn byte(&self) -> u64 {
        self.byte
    }

    /// The first record (the header), or `None` for a table with none.
    pub fn header(&mut self) -> io::Result<Option<Vec<Vec<u8>>>> {
        let mut rows = Rows::default();
        if !self.read_record(&mut rows)? {
            return Ok(None);
        }
        let r = rows.row(0);
        Ok(Some(
            (0..r.len()).filter_map(|k| r.get(k)).map(<[u8]>::to_vec).collect(),
        ))
    }

    /// The next records, at most `max` (at least one), into `rows`
    /// (cleared first); none at the end of the table.
    pub fn next_chunk(&mut self, max: usize, rows: &mut Rows) -> io::Result<()> {
        rows.clear();
        let max = max.max(1);
        if !self.cut_at_newlines(max, rows)? {
            rows.clear();
            while rows.len() < max && self.read_record(rows)? {}
        }
        Ok(())
    }

    /// Read more of the table after `end`, moving what is not taken to the
    /// front (and growing the buffer when it is full of it). Returns
    /// false at the end of the table.
    fn fill(&mut self) -> io::Result<bool> {
        if self.eof {
            return Ok(false);
        }
        if self.start > 0 {
            self.buf.copy_within(self.start..self.end, 0);
            self.end -= self.start;
            self.start = 0;
        }
        if self.end == self.buf.len() {
            self.buf.resize(self.buf.len() * 2, 0);
        }
        loop {
            match self.src.read(&mut self.buf[self.end..]) {
                Ok(0) => {
                    self.eof = true;
                    return Ok(false);
                }
                Ok(n) => {
                    self.end += n;
                    return Ok(true);
                }
                Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(e),
            }
        }
    }

    /// Take `n` bytes, counting their line ends.
    fn take(&mut self, n: usize) {
        for &b in &self.buf[self.start..self.start + n] {
            if self.cr && b != b'\n' {
                self.line += 1;
            }
            self.cr = b == b'\r';
            if b == b'\n' {
                self.line += 1;
            }
        }
        self.start += n;
        self.byte += n as u64;
    }

    /// The fast path: up to `max` records from lines with no `"` and no
    /// `\r` but in `\r\n` line ends, into `rows` as they are written.
    /// Returns false, having taken nothing, where the next lines need
    /// `csv_core`.
    fn cut_at_newlines(&mut self, max: usize, rows: &mut Rows) -> io::Result<bool> {
        // Scan state, relative to `start` (which a refill moves to 0).
        let mut scanned = 0;
        let mut line_start = 0;
        let mut newlines = 0u64;
        let mut found = std::mem::take(&mut self.found);
        found.clear();
        loop {
            let data = &self.buf[self.start..self.end];
            for p in memchr_iter(b'\n', &data[scanned..]) {
                let p = scanned + p;
                // A `\r\n` line end is not part of the line.
                let end = if p > line_start && data[p - 1] == b'\r' {
                    p - 1
                } else {
                    p
                };
                if end > line_start {
                    found.push((line_start, end, newlines));
                }
                newlines += 1;
                line_start = p + 1;
                if found.len() == max {
                    break;
                }
            }
            scanned = if found.len() == max { line_start } else { data.len() };
            if found.len() == max {
                break;
            }
            // Read on while the buffer has room, or while not one line
            // is whole.
            let room = self.end - self.start < self.buf.len() / 2;
            if (room || found.is_empty()) && self.fill()? {
                continue;
            }
            if self.eof && line_start < self.end - self.start {
                // The last line, with no line end.
                found.push((line_start, self.end - self.start, newlines));
                line_start = self.end - self.start;
            }
            break;
        }
        let cut = line_start;
        let data = &self.buf[self.start..self.start + cut];
        let simple = match memchr2(b'"', b'\r', data) {
            None => true,
            // Only `\r\n` line ends (a `\r` before a `\n`; the last line,
            // with no line end, is not cut short).
            Some(_) if memchr::memchr(b'"', data).is_none() => {
                memchr_iter(b'\r', data).all(|i| data.get(i + 1) == Some(&b'\n'))
            }
            Some(_) => false,
        };
        if !simple {
            self.found = found;
            return Ok(false);
        }
        // A `\r` before these lines ended a line unless a `\n` follows it.
        let mut line = self.line;
        if self.cr && data.first() != Some(&b'\n') {
            line += 1;
        }
        rows.text.extend_from_slice(data);
        rows.recs.extend(found.iter().map(|&(s, e, nl)| Rec {
            start: s,
            end: e,
            line: line + nl,
            first: 0,
            n: 0,
            plain: true,
        }));
        self.found = found;
        self.line = line + newlines;
        self.cr = false;
        self.start += cut;
        self.byte += cut as u64;
        Ok(true)
    }

    /// One record read by `csv_core`, appended to `rows` split into
    /// fields; false at the end of the table.
    fn read_record(&mut self, rows: &mut Rows) -> io::Result<bool> {
        use csv_core::ReadRecordResult::*;
        // Blank lines are not records (as `csv_core` would skip them),
        // but they count as lines.
        loop {
            let blank = self.buf[self.start..self.end]
                .iter()
                .take_while(|&&b| b == b'\n' || b == b'\r')
                .count();
            self.take(blank);
            if self.start < self.end {
                break;
            }
            if !self.fill()? {
                return Ok(false);
            }
        }
        let line = self.line + u64::from(self.cr);
        let (mut nout, mut nend) = (0, 0);
        loop {
            let input = &self.buf[self.start..self.end];
            let (res, nin, o, e) =
                self.core
                    .read_record(input, &mut self.field_bytes[nout..], &mut self.field_ends[nend..]);
            self.take(nin);
            nout += o;
            nend += e;
            match res {
                InputEmpty => {
                    // At the end of the table, an empty input tells
                    // `csv_core` to finish the record.
                    if !self.eof {
                        self.fill()?;
                    }
                }
                OutputFull => self.field_bytes.resize(self.field_bytes.len() * 2, 0),
                OutputEndsFull => self.field_ends.resize(self.field_ends.len() * 2, 0),
                Record => break,
                End => return Ok(false),
            }
        }
        let base = rows.text.len();
        rows.text.extend_from_slice(&self.field_bytes[..nout]);
        let first = rows.spans.len();
        let mut s = 0;
        for &e in &self.field_ends[..nend] {
            rows.spans.push((base + s, base + e));
            s = e;
        }
        rows.recs.push(Rec {
            start: base,
            end: base + nout,
            line,
            first,
            n: nend,
            plain: false,
        });
        rows.split = true;
        Ok(true)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Every record of `text` with its fields and line, read `max` at a
    /// time through a buffer of `cap` bytes, after the header when
    /// `header` (which is then returned first).
    fn ours(text: &[u8], cap: usize, max: usize, header: bool) -> Vec<(Vec<Vec<u8>>, u64)> {
        let mut c = Cases::with_buffer(text, cap);
        let mut all = Vec::new();
        if header {
            match c.header().unwrap() {
                Some(h) => all.push((h, 0)),
                None => return all,
            }
        }
        let mut rows = Rows::default();
        loop {
            c.next_chunk(max, &mut rows).unwrap();
            if rows.is_empty() {
                return all;
            }
            assert!(rows.len() <= max.max(1));
            rows.split_fields();
            for i in 0..rows.len() {
                let r = rows.row(i);
                let fields: Vec<Vec<u8>> = (0..r.len()).map(|k| r.get(k).unwrap().to_vec()).collect();
                if let Some(t) = r.plain_text() {
                    assert_eq!(t, fields.join(&b","[..]), "plain text is the fields joined");
                    assert!(fields.iter().flatten().all(|b| !b"\",\r\n".contains(b)));
                }
                all.push((fields, r.line()));
            }
        }
    }

    /// The csv crate's records (flexible, no header), each with the line
    /// where it starts counted independently: the first byte at or after
    /// the crate's position that is not a line end, and one line for each
    /// `\n`, `\r\n` or lone `\r` before it.
    fn reference(text: &[u8]) -> Vec<(Vec<Vec<u8>>, u64)> {
        let mut rd = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .from_reader(text);
        let mut rec = csv::ByteRecord::new();
        let mut all = Vec::new();
        while rd.read_byte_record(&mut rec).unwrap() {
            let mut at = rec.position().unwrap().byte() as usize;
            while at < text.len() && (text[at] == b'\r' || text[at] == b'\n') {
                at += 1;
            }
            let before = &text[..at];
            let lf = before.iter().filter(|&&b| b == b'\n').count();
            let lone_cr = before
                .iter()
                .enumerate()
                .filter(|&(i, &b)| b == b'\r' && text.get(i + 1) != Some(&b'\n'))
                .count();
            let fields = rec.iter().map(<[u8]>::to_vec).collect();
            all.push((fields, 1 + (lf + lone_cr) as u64));
        }
        all
    }

    fn table() -> impl Strategy<Value = Vec<u8>> {
        // Mostly what tables hold, with quotes and line ends of every kind.
        let byte = prop_oneof![
            6 => prop::sample::select(b"0123456789.e-".to_vec()),
            3 => Just(b','),
            2 => Just(b'\n'),
            1 => Just(b'\r'),
            1 => Just(b'"'),
            1 => prop::sample::select(b" aV\xc3\xa9\xef\xbb\xbf".to_vec()),
        ];
        prop::collection::vec(byte, 0..300)
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(3000))]
        #[test]
        fn records_and_lines_match_the_csv_crate(
            text in table(), cap in 64usize..200, max in 1usize..40, header: bool,
        ) {
            let mut want = reference(&text);
            if header && !want.is_empty() {
                want[0].1 = 0;
            }
            prop_assert_eq!(ours(&text, cap, max, header), want);
        }

        #[test]
        fn plain_tables_take_the_fast_path(
            rows in prop::collection::vec(prop::collection::vec("[0-9.e-]{0,9}", 1..6), 0..60),
            crlf: bool, cap in 64usize..300, max in 1usize..40,
        ) {
            let end = if crlf { "\r\n" } else { "\n" };
            let text: String = rows.iter().map(|r| r.join(",") + end).collect();
            let got = ours(text.as_bytes(), cap, max, false);
            prop_assert_eq!(&got, &reference(text.as_bytes()));
            // Every record came through the fast path (checked in `ours`
            // against its fields) except blank lines, which are none.
            let mut c = Cases::with_buffer(text.as_bytes(), cap);
            let mut chunk = Rows::default();
            loop {
                c.next_chunk(max, &mut chunk).unwrap();
                if chunk.is_empty() { break; }
                prop_assert!((0..chunk.len()).all(|i| chunk.row(i).plain_text().is_some()));
            }
        }
    }

    #[test]
    fn lines_count_blank_lines_and_every_kind_of_line_end() {
        let lines = |text: &[u8]| -> Vec<u64> { ours(text, 64, 1000, true).iter().skip(1).map(|r| r.1).collect() };
        assert_eq!(lines(b"h\na\n\n\nb\n"), [2, 5]);
        assert_eq!(lines(b"h\r\na\r\n\r\nb\r\n"), [2, 4]);
        assert_eq!(lines(b"h\ra\rb"), [2, 3]);
        // A field with a line end inside quotes: the next record is on
        // the line after it.
        assert_eq!(lines(b"h\n\"x\ny\",1\nb\n"), [2, 4]);
        // A byte-order mark before the header is not part of its name.
        let mut c = Cases::new(&b"\xef\xbb\xbfVs,Z\n1,2\n"[..]);
        assert_eq!(c.header().unwrap().unwrap(), [b"Vs".to_vec(), b"Z".to_vec()]);
    }

    #[test]
    fn a_record_longer_than_the_buffer_is_read_whole() {
        let long = "7".repeat(10_000);
        let text = format!("a,b\n1,{long}\n2,3\n");
        let got = ours(text.as_bytes(), 64, 1000, true);
        assert_eq!(got[1].0[1].len(), 10_000);
        assert_eq!(got[2], (vec![b"2".to_vec(), b"3".to_vec()], 3));
    }
}
