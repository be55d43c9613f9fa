//! The journal: every change a session accepts is appended to a file in
//! the user's data directory and flushed to the disk before the session
//! answers, so a session that is killed (terminal closed, power lost)
//! can be recovered on the next start. Saving the sheet or leaving on
//! purpose removes the journal.
//!
//! Format: JSON lines. The first line is a header naming the sheet and a
//! hash of the text the changes apply to; each further line is one change
//! as the user made it (`{"line":"R2 = 30 Ω"}`, `{"remove":"R2"}`,
//! `"back"`). A last line cut short by a crash is ignored.

use std::fs::{self, File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

/// One change, as the user made it; replaying the entries in order through
/// a session rebuilds its state, undo history included.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Entry {
    /// A statement typed (a definition, check or directive).
    Line(String),
    /// A cell removed.
    Remove(String),
    /// The last change undone.
    Back,
}

#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub struct Header {
    /// Format version.
    pub journal: u32,
    /// The sheet's path, if it has one.
    pub sheet: Option<String>,
    /// Hash of the sheet text the entries apply to (`text_hash`).
    pub base: String,
    /// Seconds since 1970 when the journal was started.
    pub started: u64,
}

/// What a journal on disk holds.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Recovered {
    pub header: Header,
    pub entries: Vec<Entry>,
}

/// FNV-1a, 64 bits: a stable hash for file names and base texts (not for
/// security).
pub fn fnv64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= b as u64;
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

pub fn text_hash(text: &str) -> String {
    format!("{:016x}", fnv64(text.as_bytes()))
}

/// Where the journal of a sheet (or of an unnamed session) lives.
pub fn journal_path(data_dir: &Path, sheet: Option<&Path>) -> PathBuf {
    let dir = data_dir.join("journals");
    match sheet {
        None => dir.join("unnamed.journal"),
        Some(p) => {
            let full = fs::canonicalize(p)
                .or_else(|_| std::path::absolute(p))
                .unwrap_or_else(|_| p.to_path_buf());
            let stem = p
                .file_name()
                .map(|s| s.to_string_lossy().into_owned())
                .unwrap_or_else(|| "sheet".into());
            let stem: String = stem
                .chars()
                .map(|c| {
                    if c.is_alphanumeric() || c == '.' || c == '-' {
                        c
                    } else {
                        '_'
                    }
                })
                .collect();
            dir.join(format!(
                "{stem}-{:016x}.journal",
                fnv64(full.as_os_str().as_encoded_bytes())
            ))
        }
    }
}

/// Read a journal. `None` when there is none or it holds no change.
pub fn read(path: &Path) -> Option<Recovered> {
    let text = fs::read(path).ok()?;
    let text = String::from_utf8_lossy(&text);
    let mut lines = text.split('\n');
    let header: Header = serde_json::from_str(lines.next()?).ok()?;
    let mut entries = Vec::new();
    for l in lines {
        if l.trim().is_empty() {
            continue;
        }
        match serde_json::from_str::<Entry>(l) {
            Ok(e) => entries.push(e),
            // Only the last line can be torn by a crash; stop there.
            Err(_) => break,
        }
    }
    if entries.is_empty() {
        return None;
    }
    Some(Recovered { header, entries })
}

/// The journal a session writes to. The file is made on the first change.
#[derive(Debug)]
pub struct Journal {
    pub path: PathBuf,
    pub header: Header,
    file: Option<File>,
}

impl Journal {
    pub fn new(path: PathBuf, sheet: Option<&Path>, base_text: &str) -> Journal {
        let started = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_secs());
        Journal {
            path,
            header: Header {
                journal: 1,
                sheet: sheet.map(|p| p.display().to_string()),
                base: text_hash(base_text),
                started,
            },
            file: None,
        }
    }

    /// Append one change and flush it to the disk.
    pub fn append(&mut self, e: &Entry) -> io::Result<()> {
        let line = serde_json::to_string(e).map_err(io::Error::other)? + "\n";
        if self.file.is_none() {
            let dir = self.path.parent().unwrap_or(Path::new("."));
            fs::create_dir_all(dir)?;
            let mut f = OpenOptions::new()
                .write(true)
                .create(true)
                .truncate(true)
                .open(&self.path)?;
            let head = serde_json::to_string(&self.header).map_err(io::Error::other)? + "\n";
            f.write_all(head.as_bytes())?;
            f.sync_all()?;
            crate::fsutil::sync_dir(dir);
            self.file = Some(f);
        }
        let f = self.file.as_mut().expect("opened above");
        f.write_all(line.as_bytes())?;
        f.sync_data()
    }

    /// Write the journal anew with these entries (after a restore).
    pub fn rewrite(&mut self, entries: &[Entry]) -> io::Result<()> {
        self.discard()?;
        for e in entries {
            self.append(e)?;
        }
        Ok(())
    }

    /// Start over with a new base text (after saving): the old journal
    /// is removed.
    pub fn rebase(&mut self, sheet: Option<&Path>, path: PathBuf, base_text: &str) -> io::Result<()> {
        self.discard()?;
        *self = Journal::new(path, sheet, base_text);
        Ok(())
    }

    /// Remove the journal from the disk.
    pub fn discard(&mut self) -> io::Result<()> {
        self.file = None;
        match fs::remove_file(&self.path) {
            Err(e) if e.kind() != io::ErrorKind::NotFound => Err(e),
            _ => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn entries_come_back_in_order() {
        let dir = tempfile::tempdir().unwrap();
        let p = journal_path(dir.path(), Some(Path::new("site.ohm")));
        let mut j = Journal::new(p.clone(), Some(Path::new("site.ohm")), "a = 1\n");
        assert!(read(&p).is_none(), "nothing is written before a change");
        let es = [Entry::Line("R2 = 30 Ω".into()), Entry::Remove("x".into()), Entry::Back];
        for e in &es {
            j.append(e).unwrap();
        }
        let r = read(&p).unwrap();
        assert_eq!(r.entries, es);
        assert_eq!(r.header.base, text_hash("a = 1\n"));
        assert_eq!(r.header.sheet.as_deref(), Some("site.ohm"));
        j.discard().unwrap();
        assert!(!p.exists());
    }

    #[test]
    fn a_torn_last_line_is_ignored() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("j.journal");
        let mut j = Journal::new(p.clone(), None, "");
        j.append(&Entry::Line("a = 1".into())).unwrap();
        j.append(&Entry::Line("b = 2".into())).unwrap();
        let mut f = OpenOptions::new().append(true).open(&p).unwrap();
        f.write_all(b"{\"line\":\"c = ").unwrap();
        let r = read(&p).unwrap();
        assert_eq!(r.entries, [Entry::Line("a = 1".into()), Entry::Line("b = 2".into())]);
    }

    #[test]
    fn different_sheets_have_different_journals() {
        let d = Path::new("/data");
        let a = journal_path(d, Some(Path::new("/x/site.ohm")));
        let b = journal_path(d, Some(Path::new("/y/site.ohm")));
        assert_ne!(a, b);
        assert!(a.file_name().unwrap().to_string_lossy().starts_with("site.ohm-"));
        assert_eq!(journal_path(d, None), d.join("journals/unnamed.journal"));
    }

    #[test]
    fn fnv_matches_the_published_test_vectors() {
        // FNV-1a 64-bit test vectors from the FNV reference page (from memory):
        // "" -> cbf29ce484222325, "a" -> af63dc4c8601ec8c.
        assert_eq!(fnv64(b""), 0xcbf29ce484222325);
        assert_eq!(fnv64(b"a"), 0xaf63dc4c8601ec8c);
    }
}
