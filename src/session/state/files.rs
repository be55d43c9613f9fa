//! A session's files: the journal that keeps unsaved work through a
//! crash (recovery, replay) and saving the sheet, never over another
//! session's work unseen.

use std::path::{Path, PathBuf};

use super::journal::{self, Entry, Flushing, Journal, Recovered};
use super::{plural, show, Reply, Session};

impl Session {
    // ---- recovery ----

    /// Unsaved work left by an earlier session on this sheet, if any.
    pub fn recovery(&self) -> Option<Recovered> {
        journal::read(&self.journal.as_ref()?.path)
    }

    /// Whether the sheet on disk is the text the recovered changes were
    /// made to.
    pub fn same_base(&self, rec: &Recovered) -> bool {
        rec.header.base == journal::text_hash(&self.doc.text())
    }

    /// Replay recovered changes. Changes that no longer apply (the sheet
    /// changed on disk) are skipped and named.
    pub fn restore(&mut self, rec: &Recovered) -> String {
        let mut applied = Vec::new();
        let mut skipped = Vec::new();
        for e in &rec.entries {
            let r = self.apply_entry(e);
            if r.refused {
                skipped.push(show::entry_text(e));
            } else {
                applied.push(e.clone());
            }
        }
        self.entries = applied.clone();
        let mut out = format!("restored {} change{}", applied.len(), plural(applied.len()));
        if !skipped.is_empty() {
            out.push_str(&format!(
                "; {} no longer appl{} and {} skipped: {}",
                skipped.len(),
                if skipped.len() == 1 { "ies" } else { "y" },
                if skipped.len() == 1 { "was" } else { "were" },
                skipped.join(" | ")
            ));
        }
        out.push('\n');
        if let Some(j) = &mut self.journal {
            if let Err(e) = j.rewrite(&applied) {
                out.push_str(&format!("warning: could not rewrite the journal: {e}\n"));
            }
        }
        out
    }

    /// Let go of the journal and its lock (before opening another sheet,
    /// or the same one again). Changes made after this are not journalled
    /// until `claim_journal`.
    pub fn release_journal(&mut self) {
        self.journal = None;
    }

    /// Take up a journal again after `release_journal` (opening another
    /// sheet failed and this session goes on).
    pub fn claim_journal(&mut self) {
        if let (None, Some(d)) = (&self.journal, &self.data_dir) {
            let path = self.path.as_deref();
            self.journal = Some(Journal::claim(journal::journal_path(d, path), path, &self.doc.text()));
        }
    }

    /// Forget unsaved work: the journal is removed.
    pub fn discard_journal(&mut self) {
        if let Some(j) = &mut self.journal {
            let _ = j.discard();
        }
        self.entries.clear();
    }

    fn apply_entry(&mut self, e: &Entry) -> Reply {
        match e {
            Entry::Line(t) => self.statement(t, false),
            Entry::Remove(n) => self.remove(n, false),
            Entry::Back => self.back(false),
            Entry::Forward => self.forward(false),
        }
    }

    pub(super) fn record(&mut self, e: Entry, out: &mut String) {
        if let Some(r) = self.record_start(e) {
            self.record_finish(r, out);
        }
    }

    /// `record`, in two halves: the change is written to the journal here
    /// and its flush to the disk runs while the caller draws its answer;
    /// `record_finish` waits for the flush (an answer is given only after
    /// it, so nothing the user was told is applied can be lost).
    pub(super) fn record_start(&mut self, e: Entry) -> Option<Recording> {
        let j = self.journal.as_mut()?;
        Some(Recording {
            flushing: j.append_flushing(&e),
            entry: e,
        })
    }

    /// Wait for the flush `record_start` started; a journal that cannot be
    /// written is said in `out` (once a session).
    pub(super) fn record_finish(&mut self, r: Recording, out: &mut String) {
        let Some(j) = &mut self.journal else { return };
        match r.flushing.and_then(Flushing::wait) {
            Ok(()) => self.entries.push(r.entry),
            Err(err) => {
                if !self.journal_warned {
                    out.push_str(&format!(
                        "warning: cannot write the journal {}: {err}\n  changes are not protected against a crash until /save\n",
                        j.path.display()
                    ));
                    self.journal_warned = true;
                }
            }
        }
    }

    /// Write the sheet (to `to`, or where it came from), atomically. The
    /// journal is cleared: the work is safe on disk.
    pub fn save(&mut self, to: Option<PathBuf>) -> Result<String, String> {
        let own = to.is_none() || to == self.path;
        let Some(path) = to.or_else(|| self.path.clone()) else {
            return Err("this sheet has no file yet: /save FILE\n".into());
        };
        // Its own file, changed on disk since this session read or wrote
        // it: writing would throw that other work away unseen.
        if own && path.exists() && disk_hash(&path) != self.on_disk {
            return Err(format!(
                "{} was changed on disk since this session read it (another session or an editor saved it); nothing was written\n  \
                 hint: /save FILE writes this session's sheet under another name; /save! writes over the file\n",
                path.display()
            ));
        }
        self.write_sheet(path)
    }

    /// `/save!`: write the sheet's own file even though it changed on
    /// disk since this session read it.
    pub fn save_over(&mut self) -> Result<String, String> {
        let Some(path) = self.path.clone() else {
            return Err("this sheet has no file yet: /save FILE\n".into());
        };
        self.write_sheet(path)
    }

    fn write_sheet(&mut self, path: PathBuf) -> Result<String, String> {
        let text = self.doc.text();
        if let Err(e) = crate::fsutil::write_atomic(&path, text.as_bytes()) {
            return Err(format!(
                "could not save {}: {e}\n  (nothing was lost: the changes are still here and in the journal)\n",
                path.display()
            ));
        }
        let moved = self.path.as_deref() != Some(path.as_path());
        self.on_disk = Some(journal::fnv64(text.as_bytes()));
        self.path = Some(path.clone());
        self.saved_version = self.version;
        self.entries.clear();
        if let (Some(j), Some(d)) = (&mut self.journal, &self.data_dir) {
            let jp = journal::journal_path(d, Some(&path));
            let _ = j.rebase(Some(&path), jp, &text);
        }
        let lines = self.doc.lines.len();
        Ok(format!(
            "saved {} ({lines} line{}){}\n",
            self.display_name(),
            plural(lines),
            if moved { "; it is now this session's file" } else { "" }
        ))
    }
}

/// A hash of a file's bytes, or `None` when it cannot be read.
pub(super) fn disk_hash(path: &Path) -> Option<u64> {
    std::fs::read(path).ok().map(|b| journal::fnv64(&b))
}

/// A change being written to the journal (`Session::record_start`).
pub(super) struct Recording {
    entry: Entry,
    flushing: std::io::Result<Flushing>,
}
