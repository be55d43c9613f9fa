//! Writing files so that a reader never sees half of one: everything goes
//! to a temporary file beside the destination, which is renamed over it
//! only when complete. A run that fails, panics or is interrupted leaves
//! the destination as it was.

use std::collections::HashSet;
use std::io::{self, BufWriter, Seek, Write};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, OnceLock};

/// Temporary files not yet renamed, removed by the interrupt handler.
fn live_temps() -> &'static Mutex<HashSet<PathBuf>> {
    static LIVE: OnceLock<Mutex<HashSet<PathBuf>>> = OnceLock::new();
    LIVE.get_or_init(|| Mutex::new(HashSet::new()))
}

/// A file being written in a temporary place, renamed to `dest` by
/// `commit`. Dropped without `commit`, the temporary file is deleted.
pub struct AtomicFile {
    out: Option<BufWriter<tempfile::NamedTempFile>>,
    tmp_path: PathBuf,
    dest: PathBuf,
    /// Bytes may have been written at offsets past the cursor (`placed`):
    /// the next write goes to the end of the file.
    placed: bool,
}

impl AtomicFile {
    /// Start writing `dest`. The temporary file sits in the same directory
    /// (so the final rename is atomic), named `.NAME.XXXXXX.partial`.
    pub fn create(dest: &Path) -> io::Result<AtomicFile> {
        let dir = match dest.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let name = dest
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "output".into());
        let prefix = format!(".{name}.");
        let mut b = tempfile::Builder::new();
        b.prefix(&prefix).suffix(".partial");
        // An ordinary file's permissions (less the umask), not a private
        // temporary file's.
        #[cfg(unix)]
        b.permissions(std::os::unix::fs::PermissionsExt::from_mode(0o666));
        let tmp = b.tempfile_in(&dir)?;
        let tmp_path = tmp.path().to_path_buf();
        if let Ok(mut live) = live_temps().lock() {
            live.insert(tmp_path.clone());
        }
        Ok(AtomicFile {
            // Small: callers that write large pieces go straight through.
            out: Some(BufWriter::with_capacity(1 << 16, tmp)),
            tmp_path,
            dest: dest.to_path_buf(),
            placed: false,
        })
    }

    /// The temporary file (a second handle) and the length written so far,
    /// for writing the rest at known offsets from several threads
    /// (`FileExt::write_all_at`). What is written through `self` afterwards
    /// goes to the end of the file.
    pub fn placed(&mut self) -> io::Result<(std::fs::File, u64)> {
        let out = self.out.as_mut().expect("not yet committed");
        out.flush()?;
        let f = out.get_mut().as_file_mut();
        let at = f.stream_position()?;
        self.placed = true;
        Ok((f.try_clone()?, at))
    }

    fn out(&mut self) -> io::Result<&mut BufWriter<tempfile::NamedTempFile>> {
        let out = self.out.as_mut().expect("not yet committed");
        if std::mem::take(&mut self.placed) {
            out.seek(io::SeekFrom::End(0))?;
        }
        Ok(out)
    }

    pub fn dest(&self) -> &Path {
        &self.dest
    }

    /// Flush, sync to disk and rename over the destination. A file that is
    /// replaced keeps its permissions; the directory entry is synced too.
    pub fn commit(mut self) -> io::Result<()> {
        let out = self.out.take().expect("not yet committed");
        let tmp = out.into_inner().map_err(|e| e.into_error())?;
        if let Ok(meta) = std::fs::metadata(&self.dest) {
            let _ = tmp.as_file().set_permissions(meta.permissions());
        }
        tmp.as_file().sync_all()?;
        let result = tmp.persist(&self.dest).map(|_| ()).map_err(|e| e.error);
        self.forget();
        if result.is_ok() {
            if let Some(dir) = self.dest.parent() {
                sync_dir(if dir.as_os_str().is_empty() {
                    Path::new(".")
                } else {
                    dir
                });
            }
        }
        result
    }

    fn forget(&self) {
        if let Ok(mut live) = live_temps().lock() {
            live.remove(&self.tmp_path);
        }
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.out()?.write(buf)
    }
    fn write_all(&mut self, buf: &[u8]) -> io::Result<()> {
        self.out()?.write_all(buf)
    }
    fn flush(&mut self) -> io::Result<()> {
        self.out()?.flush()
    }
}

impl Drop for AtomicFile {
    fn drop(&mut self) {
        // NamedTempFile deletes itself when dropped.
        self.forget();
    }
}

/// Write a whole file atomically.
pub fn write_atomic(dest: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut f = AtomicFile::create(dest)?;
    f.write_all(bytes)?;
    f.commit()
}

/// Flush a directory's entries (a new or renamed file) to the disk. Best
/// effort: not every platform can open a directory.
pub fn sync_dir(dir: &Path) {
    if let Ok(d) = std::fs::File::open(dir) {
        let _ = d.sync_all();
    }
}

/// On Ctrl-C or SIGTERM, delete every temporary file not yet renamed and
/// exit with status 130. Installing it twice is harmless.
pub fn remove_partial_files_on_interrupt() {
    static ONCE: OnceLock<()> = OnceLock::new();
    ONCE.get_or_init(|| {
        let _ = ctrlc::set_handler(|| {
            if let Ok(live) = live_temps().lock() {
                for p in live.iter() {
                    let _ = std::fs::remove_file(p);
                }
            }
            eprintln!("interrupted: no results file was written");
            std::process::exit(130);
        });
    });
}

/// `true` when `a` and `b` name the same existing file.
pub fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(x), Ok(y)) => x == y,
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn commit_renames_and_drop_discards() {
        let dir = tempfile::tempdir().unwrap();
        let dest = dir.path().join("out.csv");
        let mut f = AtomicFile::create(&dest).unwrap();
        f.write_all(b"a,b\n").unwrap();
        assert!(!dest.exists(), "nothing at the destination before commit");
        f.commit().unwrap();
        assert_eq!(std::fs::read(&dest).unwrap(), b"a,b\n");

        let mut g = AtomicFile::create(&dest).unwrap();
        g.write_all(b"half").unwrap();
        drop(g);
        assert_eq!(
            std::fs::read(&dest).unwrap(),
            b"a,b\n",
            "an abandoned write keeps the old file"
        );
        let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(left.len(), 1, "the temporary file is gone");
    }

    #[test]
    fn write_atomic_replaces_and_a_failed_write_keeps_the_old_file() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("site.ohm");
        write_atomic(&p, b"a = 1\n").unwrap();
        write_atomic(&p, b"a = 2\n").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "a = 2\n");
        // The target is a non-empty directory: the rename fails, the
        // temporary file is removed and the other file is untouched.
        let sub = dir.path().join("sub");
        std::fs::create_dir(&sub).unwrap();
        std::fs::write(sub.join("x"), "").unwrap();
        assert!(write_atomic(&sub, b"nope").is_err());
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "a = 2\n");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 2);
    }

    #[cfg(unix)]
    #[test]
    fn a_replaced_file_keeps_its_permissions() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("site.ohm");
        std::fs::write(&p, "a = 1\n").unwrap();
        std::fs::set_permissions(&p, std::fs::Permissions::from_mode(0o600)).unwrap();
        write_atomic(&p, b"a = 2\n").unwrap();
        assert_eq!(std::fs::metadata(&p).unwrap().permissions().mode() & 0o777, 0o600);
    }
}
