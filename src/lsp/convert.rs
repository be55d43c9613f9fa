//! Between the analysis layer's byte offsets and the protocol's positions
//! (line and UTF-16 code unit), and between `file:` URIs and paths.
//!
//! A position past the end of its line means the end of the line (the
//! protocol says so); past the last line, the end of the text; inside a
//! character (between the two halves of a surrogate pair) the start of
//! that character. Offsets never fall inside a UTF-8 character.

use std::path::{Path, PathBuf};
use std::str::FromStr;

use lsp_types::{Position, Range, Uri};

/// Byte offsets of the starts of the lines of `text` (lines end at `\n`).
pub fn line_starts(text: &str) -> Vec<usize> {
    let mut v = vec![0];
    v.extend(memchr::memchr_iter(b'\n', text.as_bytes()).map(|i| i + 1));
    v
}

/// The end of line `i`'s content (before `\r\n` or `\n`).
fn line_end(text: &str, starts: &[usize], i: usize) -> usize {
    let end = starts.get(i + 1).map_or(text.len(), |&n| n - 1);
    if end > starts[i] && text.as_bytes()[end - 1] == b'\r' {
        end - 1
    } else {
        end
    }
}

/// The byte offset of a protocol position.
pub fn offset(text: &str, starts: &[usize], pos: Position) -> usize {
    let line = pos.line as usize;
    let Some(&start) = starts.get(line) else {
        return text.len();
    };
    let end = line_end(text, starts, line);
    let mut units = 0u32;
    for (i, c) in text[start..end].char_indices() {
        let w = c.len_utf16() as u32;
        if units + w > pos.character {
            return start + i;
        }
        units += w;
    }
    end
}

/// The protocol position of a byte offset.
pub fn position(text: &str, starts: &[usize], offset: usize) -> Position {
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let line = starts.partition_point(|&s| s <= offset).saturating_sub(1);
    let character: usize = text[starts[line]..offset].chars().map(char::len_utf16).sum();
    Position {
        line: line as u32,
        character: character as u32,
    }
}

pub fn range(text: &str, starts: &[usize], r: std::ops::Range<usize>) -> Range {
    Range {
        start: position(text, starts, r.start),
        end: position(text, starts, r.end),
    }
}

/// The path of a `file:` URI (percent-escapes decoded); None for another
/// scheme.
pub fn uri_to_path(uri: &Uri) -> Option<PathBuf> {
    let s = uri.as_str();
    let rest = s.strip_prefix("file://")?;
    // `file:///path` (empty authority) or `file://localhost/path`.
    let rest = rest.strip_prefix("localhost").unwrap_or(rest);
    if !rest.starts_with('/') {
        return None;
    }
    let bytes = rest.as_bytes();
    let mut out = Vec::with_capacity(bytes.len());
    let mut i = 0;
    while i < bytes.len() {
        if bytes[i] == b'%' && i + 2 < bytes.len() {
            let hex = std::str::from_utf8(&bytes[i + 1..i + 3]).ok();
            if let Some(b) = hex.and_then(|h| u8::from_str_radix(h, 16).ok()) {
                out.push(b);
                i += 3;
                continue;
            }
        }
        if bytes[i] == b'?' || bytes[i] == b'#' {
            break;
        }
        out.push(bytes[i]);
        i += 1;
    }
    let s = String::from_utf8(out).ok()?;
    Some(PathBuf::from(s))
}

/// The `file:` URI of an absolute path.
pub fn path_to_uri(path: &Path) -> Option<Uri> {
    let mut s = String::from("file://");
    for b in path.to_str()?.bytes() {
        match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'/' | b'-' | b'_' | b'.' | b'~' => s.push(b as char),
            _ => s.push_str(&format!("%{b:02X}")),
        }
    }
    Uri::from_str(&s).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pos(line: u32, character: u32) -> Position {
        Position { line, character }
    }

    #[test]
    fn utf16_positions_round_trip_through_surrogate_pairs() {
        // 😀 is two UTF-16 code units and four UTF-8 bytes (Unicode 15.0
        // §3.9, D91/D92); ∠ and Ω are one unit and three and two bytes.
        let text = "Z = 3 ∠ 30° # 😀 Ω\r\nx = 1\n";
        let s = line_starts(text);
        let emoji = text.find('😀').unwrap();
        // `Z = 3 ∠ 30° # ` is 14 units.
        assert_eq!(offset(text, &s, pos(0, 14)), emoji);
        // Inside the pair: the start of the character.
        assert_eq!(offset(text, &s, pos(0, 15)), emoji);
        assert_eq!(offset(text, &s, pos(0, 16)), emoji + 4);
        assert_eq!(position(text, &s, emoji + 4), pos(0, 16));
        assert_eq!(position(text, &s, emoji + 2), pos(0, 14));
        // Past the end of the line: before its `\r\n`.
        assert_eq!(offset(text, &s, pos(0, 400)), text.find('\r').unwrap());
        assert_eq!(offset(text, &s, pos(1, 2)), text.find("x = 1").unwrap() + 2);
        // Past the last line: the end of the text.
        assert_eq!(offset(text, &s, pos(9, 0)), text.len());
    }

    #[test]
    fn file_uris_and_paths() {
        let u = Uri::from_str("file:///tmp/a%20b/%CE%A9.ohm").unwrap();
        assert_eq!(uri_to_path(&u), Some(PathBuf::from("/tmp/a b/Ω.ohm")));
        let back = path_to_uri(Path::new("/tmp/a b/Ω.ohm")).unwrap();
        assert_eq!(back.as_str(), "file:///tmp/a%20b/%CE%A9.ohm");
        assert_eq!(uri_to_path(&Uri::from_str("untitled:Untitled-1").unwrap()), None);
    }
}
