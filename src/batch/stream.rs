//! Streaming a cases table through a plan: chunks read, evaluated in
//! parallel and written back in input order.

use super::{Cases, Plan, RowError, Rows, Worker};
use std::collections::BTreeMap;
use std::io::{self, Read, Write};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{mpsc, Arc};

// ---------------------------------------------------------------- streaming

/// Options of a streaming run.
#[derive(Clone, Copy, Debug)]
pub struct StreamOptions {
    /// Stop at the first bad row.
    pub strict: bool,
    /// Rows per chunk (a multiple of the block size works best).
    pub chunk_rows: usize,
    /// Chunks in flight at once; bounds the memory used.
    pub in_flight: usize,
}

impl Default for StreamOptions {
    fn default() -> StreamOptions {
        StreamOptions {
            strict: false,
            chunk_rows: 1024,
            in_flight: 4 * rayon::current_num_threads().max(1),
        }
    }
}

/// What a streaming run did.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Summary {
    /// Cases read (rows after the header).
    pub cases: u64,
    /// Rows that could not be computed.
    pub bad_rows: u64,
    /// `--strict` stopped the run at a bad row.
    pub stopped: bool,
}

/// A run that could not go on.
#[derive(Debug)]
pub enum StreamError {
    Read(io::Error),
    Write(io::Error),
    Internal(String),
}

impl std::fmt::Display for StreamError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            StreamError::Read(e) => write!(f, "reading the cases: {e}"),
            StreamError::Write(e) => write!(f, "writing the results: {e}"),
            StreamError::Internal(e) => write!(f, "internal error: {e}"),
        }
    }
}

struct Chunk {
    seq: u64,
    first_case: u64,
    rows: Rows,
    /// Byte offset in the cases file after this chunk.
    end_byte: u64,
    out: Vec<u8>,
    errors: Vec<RowError>,
    worker: Option<Worker>,
}

enum Msg {
    Done(Box<Chunk>),
    End(u64),
    Failed(StreamError),
}

/// The memory one chunk holds at most, for the bound stated in docs: rows,
/// output and a block of slots. Everything else is fixed by the sheet.
pub fn chunks_in_flight(opts: &StreamOptions) -> usize {
    opts.in_flight.max(1)
}

/// Evaluate every row of `cases` (its header already read and planned) and
/// write the result lines to `out` in input order. Bad rows go to
/// `on_errors` in order; `progress(cases_done, bytes_read)` is called after
/// each chunk is written.
pub fn run_stream<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    cases: Cases<R>,
    out: &mut dyn Write,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    stream(plan, cases, Sink::Stream(out), on_errors, progress, opts)
}

/// [`run_stream`] into a file, the result lines starting at byte `start`:
/// the workers write finished chunks at their places themselves (one
/// worker at a time, taking every chunk placed meanwhile, while the others
/// go on computing) instead of handing them to a writing thread. The file then holds exactly what `run_stream`
/// would have written from `start` on (nothing is written after the last
/// line). On an error or a `--strict` stop the file holds a part of the
/// results, possibly with gaps: it is meant to be a temporary file that is
/// then discarded.
#[cfg(unix)]
pub fn run_stream_at<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    cases: Cases<R>,
    file: std::fs::File,
    start: u64,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    let at = Arc::new(Placed {
        file,
        order: std::sync::Mutex::new(Order {
            next: 0,
            offset: start,
            parked: BTreeMap::new(),
            ready: Default::default(),
            writing: false,
        }),
    });
    stream(plan, cases, Sink::At(at), on_errors, progress, opts)
}

/// Where the result lines go.
enum Sink<'a> {
    /// Written in order by the calling thread.
    Stream(&'a mut dyn Write),
    /// Written at their offsets in a file by the workers.
    #[cfg(unix)]
    At(Arc<Placed>),
}

/// A file the workers write chunks into at their places.
#[cfg(unix)]
struct Placed {
    file: std::fs::File,
    order: std::sync::Mutex<Order>,
}

/// Which chunk gets the next place in the file, and where that is.
#[cfg(unix)]
struct Order {
    next: u64,
    offset: u64,
    /// Chunks done before the one in front of them: they wait here, and
    /// the worker that places their predecessor places them too.
    parked: BTreeMap<u64, Box<Chunk>>,
    /// Placed chunks not yet written, in file order.
    ready: std::collections::VecDeque<(Box<Chunk>, u64)>,
    /// A worker is writing `ready` out.
    writing: bool,
}

#[cfg(unix)]
impl Placed {
    /// Place `c` (and any parked chunks it lets through) and see them
    /// written; each written chunk is reported to `done`. One worker
    /// writes at a time, taking every chunk placed meanwhile; the others
    /// go back to computing rather than wait on the file (two writers of
    /// one file only queue behind the kernel's lock on it).
    fn place(&self, c: Box<Chunk>, done: &mpsc::Sender<Msg>) {
        use std::os::unix::fs::FileExt;
        let lock = || self.order.lock().unwrap_or_else(|e| e.into_inner());
        let mut o = lock();
        if c.seq != o.next {
            o.parked.insert(c.seq, c);
            return;
        }
        let mut c = c;
        loop {
            let at = o.offset;
            o.offset += c.out.len() as u64;
            o.next += 1;
            o.ready.push_back((c, at));
            let next = o.next;
            match o.parked.remove(&next) {
                Some(p) => c = p,
                None => break,
            }
        }
        if o.writing {
            return;
        }
        o.writing = true;
        while let Some((c, at)) = o.ready.pop_front() {
            drop(o);
            let _ = done.send(match self.file.write_all_at(&c.out, at) {
                Ok(()) => Msg::Done(c),
                Err(e) => Msg::Failed(StreamError::Write(e)),
            });
            o = lock();
        }
        o.writing = false;
    }
}

fn stream<R: Read + Send + 'static>(
    plan: Arc<Plan>,
    mut cases: Cases<R>,
    mut sink: Sink<'_>,
    on_errors: &mut dyn FnMut(&[RowError]) -> io::Result<()>,
    progress: &mut dyn FnMut(u64, u64),
    opts: StreamOptions,
) -> Result<Summary, StreamError> {
    #[cfg(unix)]
    let placed = match &sink {
        Sink::At(p) => Some(p.clone()),
        Sink::Stream(_) => None,
    };
    let (pool_tx, pool_rx) = mpsc::channel::<Chunk>();
    for _ in 0..chunks_in_flight(&opts) {
        let _ = pool_tx.send(Chunk {
            seq: 0,
            first_case: 0,
            rows: Rows::default(),
            end_byte: 0,
            out: Vec::new(),
            errors: Vec::new(),
            worker: None,
        });
    }
    let (done_tx, done_rx) = mpsc::channel::<Msg>();
    let stop = Arc::new(AtomicBool::new(false));
    let chunk_rows = opts.chunk_rows.max(1);

    let reader = {
        let stop = stop.clone();
        let plan = plan.clone();
        std::thread::spawn(move || {
            let mut seq = 0u64;
            let mut case = 0u64;
            loop {
                if stop.load(Ordering::Relaxed) {
                    return;
                }
                let Ok(mut chunk) = pool_rx.recv() else { return };
                chunk.seq = seq;
                chunk.first_case = case;
                if let Err(e) = cases.next_chunk(chunk_rows, &mut chunk.rows) {
                    let _ = done_tx.send(Msg::Failed(StreamError::Read(e)));
                    return;
                }
                chunk.end_byte = cases.byte();
                let eof = chunk.rows.is_empty();
                if !eof {
                    seq += 1;
                    case += chunk.rows.len() as u64;
                    let plan = plan.clone();
                    let done = done_tx.clone();
                    #[cfg(unix)]
                    let placed = placed.clone();
                    rayon::spawn(move || {
                        let r = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
                            let mut c = chunk;
                            c.out.clear();
                            c.errors.clear();
                            let mut w = c.worker.take().unwrap_or_else(|| Worker::new(&plan));
                            c.rows.split_fields();
                            plan.eval_rows(&mut w, &c.rows, c.first_case, &mut c.out, &mut c.errors);
                            c.worker = Some(w);
                            c
                        }));
                        let c = match r {
                            Ok(c) => Box::new(c),
                            Err(_) => {
                                let _ = done.send(Msg::Failed(StreamError::Internal("a worker panicked".into())));
                                return;
                            }
                        };
                        #[cfg(unix)]
                        if let Some(p) = &placed {
                            return p.place(c, &done);
                        }
                        let _ = done.send(Msg::Done(c));
                    });
                }
                if eof {
                    let _ = done_tx.send(Msg::End(seq));
                    return;
                }
            }
        })
    };

    let mut summary = Summary::default();
    let mut waiting: BTreeMap<u64, Chunk> = BTreeMap::new();
    let mut next = 0u64;
    let mut total: Option<u64> = None;
    let fail = |e: StreamError, stop: &AtomicBool| {
        stop.store(true, Ordering::Relaxed);
        Err(e)
    };
    while total != Some(next) {
        match done_rx.recv() {
            Ok(Msg::Done(c)) => {
                waiting.insert(c.seq, *c);
            }
            Ok(Msg::End(n)) => total = Some(n),
            Ok(Msg::Failed(e)) => return fail(e, &stop),
            Err(_) => return fail(StreamError::Internal("the reader stopped".into()), &stop),
        }
        while let Some(c) = waiting.remove(&next) {
            summary.cases += c.rows.len() as u64;
            if opts.strict && !c.errors.is_empty() {
                // Only the rows before the first bad one count as done.
                let first = c.errors[0].clone();
                summary.bad_rows = 1;
                summary.stopped = true;
                summary.cases = first.case;
                stop.store(true, Ordering::Relaxed);
                on_errors(&[first]).map_err(StreamError::Write)?;
                return Ok(summary);
            }
            if let Sink::Stream(out) = &mut sink {
                out.write_all(&c.out).map_err(StreamError::Write)?;
            }
            if !c.errors.is_empty() {
                let mut rows: Vec<u64> = c.errors.iter().map(|e| e.case).collect();
                rows.dedup();
                summary.bad_rows += rows.len() as u64;
                on_errors(&c.errors).map_err(StreamError::Write)?;
            }
            progress(summary.cases, c.end_byte);
            next += 1;
            let _ = pool_tx.send(c);
        }
    }
    let _ = reader.join();
    Ok(summary)
}
