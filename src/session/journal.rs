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
//!
//! A session holds a lock (`flock` on `<journal>.lock`) for as long as it
//! runs. A second session on the same sheet finds the lock taken and keeps
//! a journal of its own beside the sheet's (`<journal name>.<pid>-<k>.journal`),
//! so neither truncates nor removes the other's. A side journal left by a
//! session that was killed is taken over by the next session that holds
//! the sheet's lock and finds the sheet's own journal empty, and offered
//! like any other.

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
    /// The last change undone made again.
    Forward,
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

fn lock_path(journal: &Path) -> PathBuf {
    let mut name = journal.file_name().unwrap_or_default().to_os_string();
    name.push(".lock");
    journal.with_file_name(name)
}

/// Take the lock of the journal at `path` for this session: `Some` when
/// taken, `None` while another live session holds it. The lock goes with
/// the returned file (and with the process, however it ends).
fn try_lock(path: &Path) -> io::Result<Option<File>> {
    if let Some(dir) = path.parent() {
        fs::create_dir_all(dir)?;
    }
    let lp = lock_path(path);
    // A session that ends removes its lock file before it lets go of the
    // lock: a lock won on a file that was removed meanwhile is no lock.
    for _ in 0..16 {
        let f = OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(&lp)?;
        match f.try_lock() {
            Ok(()) if still_at(&f, &lp) => return Ok(Some(f)),
            Ok(()) => continue,
            Err(fs::TryLockError::WouldBlock) => return Ok(None),
            Err(fs::TryLockError::Error(e)) => return Err(e),
        }
    }
    Err(io::Error::other("the journal's lock file keeps being replaced"))
}

/// Is `f` still the file at `path`?
fn still_at(f: &File, path: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        match (f.metadata(), fs::metadata(path)) {
            (Ok(a), Ok(b)) => a.dev() == b.dev() && a.ino() == b.ino(),
            _ => false,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = (f, path);
        true
    }
}

/// `site.ohm-<hash>.journal` → `site.ohm-<hash>.`: what the names of the
/// side journals beside it start with.
fn side_prefix(primary: &Path) -> String {
    let stem = primary.file_stem().unwrap_or_default().to_string_lossy();
    format!("{stem}.")
}

/// What lies beside `primary` for side sessions on the same sheet: side
/// journals and their lock files, as (file name, path).
fn side_entries(primary: &Path) -> Vec<(String, PathBuf)> {
    let (Some(dir), prefix) = (primary.parent(), side_prefix(primary)) else {
        return Vec::new();
    };
    let Ok(entries) = fs::read_dir(dir) else {
        return Vec::new();
    };
    let own_lock = lock_path(primary);
    entries
        .flatten()
        .map(|e| (e.file_name().to_string_lossy().into_owned(), e.path()))
        .filter(|(name, path)| name.starts_with(&prefix) && *path != primary && *path != own_lock)
        .collect()
}

/// Side journals beside `primary` whose sessions have ended (their lock is
/// free), with the lock now held, oldest first.
fn abandoned(primary: &Path) -> Vec<(PathBuf, File)> {
    let mut found: Vec<(std::time::SystemTime, PathBuf)> = side_entries(primary)
        .into_iter()
        .filter(|(name, _)| name.ends_with(".journal"))
        .filter_map(|(_, path)| Some((fs::metadata(&path).and_then(|m| m.modified()).ok()?, path)))
        .collect();
    found.sort();
    found
        .into_iter()
        .filter_map(|(_, p)| Some((p.clone(), try_lock(&p).ok()??)))
        .collect()
}

/// Remove the lock files of side sessions that ended before writing any
/// change (killed ones leave their lock file; their journal never was).
fn sweep_side_locks(primary: &Path) {
    for (name, path) in side_entries(primary) {
        let Some(journal) = name.strip_suffix(".lock").filter(|j| j.ends_with(".journal")) else {
            continue;
        };
        let journal = path.with_file_name(journal);
        if journal.exists() {
            continue;
        }
        // Held while removed, so no live session loses its lock file.
        if let Ok(Some(lock)) = try_lock(&journal) {
            let _ = fs::remove_file(lock_path(&journal));
            drop(lock);
        }
    }
}

/// A change written to the journal whose flush to the disk may still be
/// running (`Journal::append_flushing`).
#[must_use = "the change is on the disk only after `wait`"]
pub struct Flushing(Option<std::thread::JoinHandle<io::Result<()>>>);

impl Flushing {
    /// Wait until the change is on the disk.
    pub fn wait(self) -> io::Result<()> {
        match self.0 {
            None => Ok(()),
            Some(t) => t
                .join()
                .unwrap_or_else(|_| Err(io::Error::other("the journal's flush failed"))),
        }
    }
}

/// The journal a session writes to. The file is made on the first change.
#[derive(Debug)]
pub struct Journal {
    pub path: PathBuf,
    pub header: Header,
    file: Option<File>,
    /// The sheet's own journal path (`path` is a side journal when they differ).
    primary: PathBuf,
    /// This session's lock on `path`, when locks work here.
    lock: Option<File>,
}

impl Journal {
    pub fn new(path: PathBuf, sheet: Option<&Path>, base_text: &str) -> Journal {
        let started = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.as_secs());
        Journal {
            primary: path.clone(),
            path,
            header: Header {
                journal: 1,
                sheet: sheet.map(|p| p.display().to_string()),
                base: text_hash(base_text),
                started,
            },
            file: None,
            lock: None,
        }
    }

    /// The journal of a session on a sheet whose own journal is at
    /// `primary`, with its lock held: the sheet's own journal when no other
    /// live session holds it, else a side journal of this session's own.
    /// Holding the sheet's journal, a session takes over a side journal
    /// left by a killed session when the sheet's own has nothing in it.
    /// Where locks cannot be taken (a file system without them), the
    /// sheet's own journal, unlocked, as before locks were kept.
    pub fn claim(primary: PathBuf, sheet: Option<&Path>, base_text: &str) -> Journal {
        let mut j = Journal::new(primary.clone(), sheet, base_text);
        match try_lock(&primary) {
            Ok(Some(lock)) => {
                j.lock = Some(lock);
                if read(&primary).is_none() {
                    // Taken over whole, by renaming it into place; the
                    // remaining side journals wait for their turn.
                    if let Some((side, lock)) = abandoned(&primary).into_iter().find(|(p, _)| read(p).is_some()) {
                        if fs::rename(&side, &primary).is_ok() {
                            let _ = fs::remove_file(lock_path(&side));
                        }
                        drop(lock);
                    }
                }
                sweep_side_locks(&primary);
            }
            Ok(None) => {
                let dir = primary.parent().unwrap_or(Path::new("."));
                for k in 0..64 {
                    let side = dir.join(format!("{}{}-{k}.journal", side_prefix(&primary), std::process::id()));
                    if let Ok(Some(lock)) = try_lock(&side) {
                        j.path = side;
                        j.lock = Some(lock);
                        break;
                    }
                }
            }
            Err(_) => {}
        }
        j
    }

    /// Another live session holds the sheet's own journal: this one keeps
    /// a side journal.
    pub fn is_side(&self) -> bool {
        self.path != self.primary
    }

    /// Append one change and flush it to the disk.
    pub fn append(&mut self, e: &Entry) -> io::Result<()> {
        self.append_flushing(e)?.wait()
    }

    /// `append`, with the flush to the disk left running on a thread of
    /// its own, so the session can draw its answer meanwhile; it answers
    /// only after `Flushing::wait`. The line is written before this
    /// returns (a session killed from here on still leaves it in the
    /// file); the wait is for the disk, against a lost machine.
    pub fn append_flushing(&mut self, e: &Entry) -> io::Result<Flushing> {
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
        let flushed = f.try_clone().and_then(|g| {
            std::thread::Builder::new()
                .name("journal flush".into())
                .spawn(move || g.sync_data())
        });
        match flushed {
            Ok(t) => Ok(Flushing(Some(t))),
            // No thread to spare: flush here.
            Err(_) => f.sync_data().map(|()| Flushing(None)),
        }
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
    /// is removed. `primary` is the saved sheet's own journal path; the
    /// lock is kept when it is the same sheet, else claimed anew.
    pub fn rebase(&mut self, sheet: Option<&Path>, primary: PathBuf, base_text: &str) -> io::Result<()> {
        self.discard()?;
        if primary == self.primary {
            self.header = Journal::new(primary, sheet, base_text).header.clone();
        } else {
            *self = Journal::claim(primary, sheet, base_text);
        }
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

impl Drop for Journal {
    fn drop(&mut self) {
        // The lock file goes with the session that holds it: removed while
        // still locked (the lock is released after this, with the field),
        // so a session starting meanwhile either met the lock and keeps a
        // side journal, or makes a new lock file. The journal itself stays
        // if it holds unsaved work.
        if self.lock.is_some() {
            let _ = fs::remove_file(lock_path(&self.path));
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

    fn lines(j: &Path) -> Vec<Entry> {
        read(j).map(|r| r.entries).unwrap_or_default()
    }

    #[test]
    fn a_second_session_on_a_sheet_keeps_a_journal_of_its_own() {
        let dir = tempfile::tempdir().unwrap();
        let p = journal_path(dir.path(), Some(Path::new("site.ohm")));
        let mut a = Journal::claim(p.clone(), None, "x = 1");
        let mut b = Journal::claim(p.clone(), None, "x = 1");
        assert!(!a.is_side());
        assert!(b.is_side());
        assert_ne!(a.path, b.path);
        a.append(&Entry::Line("a = 1".into())).unwrap();
        b.append(&Entry::Line("b = 2".into())).unwrap();
        // B's first change did not truncate A's journal, nor the reverse.
        a.append(&Entry::Line("a = 3".into())).unwrap();
        assert_eq!(
            lines(&a.path),
            [Entry::Line("a = 1".into()), Entry::Line("a = 3".into())]
        );
        assert_eq!(lines(&b.path), [Entry::Line("b = 2".into())]);
        // A saves (its journal goes): B's unsaved change is still on disk.
        a.discard().unwrap();
        assert_eq!(lines(&b.path), [Entry::Line("b = 2".into())]);
        // A third session is a side session too while A lives.
        let c = Journal::claim(p.clone(), None, "x = 1");
        assert!(c.is_side() && c.path != b.path);
    }

    #[test]
    fn a_killed_side_sessions_journal_is_offered_to_the_next_session() {
        let dir = tempfile::tempdir().unwrap();
        let p = journal_path(dir.path(), Some(Path::new("site.ohm")));
        let a = Journal::claim(p.clone(), None, "x = 1");
        let mut b = Journal::claim(p.clone(), None, "x = 1");
        b.append(&Entry::Line("b = 2".into())).unwrap();
        b.append(&Entry::Back).unwrap();
        let side = b.path.clone();
        // Both end without saving; B's work is only in its side journal.
        drop(b);
        drop(a);
        let c = Journal::claim(p.clone(), None, "x = 1");
        assert!(!c.is_side());
        assert_eq!(lines(&p), [Entry::Line("b = 2".into()), Entry::Back]);
        assert!(!side.exists(), "taken over by renaming");
        // Nothing is left beside the sheet's journal but its lock file.
        let mut names: Vec<String> = fs::read_dir(p.parent().unwrap())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        let own = p.file_name().unwrap().to_string_lossy().into_owned();
        assert_eq!(names, [own.clone(), format!("{own}.lock")]);
    }

    #[test]
    fn lock_files_of_side_sessions_killed_early_are_swept() {
        let dir = tempfile::tempdir().unwrap();
        let p = journal_path(dir.path(), Some(Path::new("site.ohm")));
        let a = Journal::claim(p.clone(), None, "x = 1");
        let mut b = Journal::claim(p.clone(), None, "x = 1");
        let live = Journal::claim(p.clone(), None, "x = 1");
        assert!(b.is_side() && live.is_side());
        // B is killed before any change: the process lets go of its lock,
        // but nothing removes its lock file.
        let b_lock = lock_path(&b.path);
        drop(b.lock.take());
        std::mem::forget(b);
        drop(a);
        assert!(b_lock.exists());
        let c = Journal::claim(p.clone(), None, "x = 1");
        assert!(!c.is_side());
        assert!(!b_lock.exists(), "swept");
        assert!(
            lock_path(&live.path).exists(),
            "a live side session keeps its lock file"
        );
        assert!(lock_path(&p).exists());
        drop(live);
        drop(c);
    }

    #[test]
    fn a_live_side_session_is_not_taken_over() {
        let dir = tempfile::tempdir().unwrap();
        let p = journal_path(dir.path(), Some(Path::new("site.ohm")));
        let a = Journal::claim(p.clone(), None, "x = 1");
        let mut b = Journal::claim(p.clone(), None, "x = 1");
        b.append(&Entry::Line("b = 2".into())).unwrap();
        drop(a);
        // A new session gets the sheet's journal, but B is still running.
        let c = Journal::claim(p.clone(), None, "x = 1");
        assert!(!c.is_side());
        assert!(read(&p).is_none());
        assert_eq!(lines(&b.path), [Entry::Line("b = 2".into())]);
    }
}
