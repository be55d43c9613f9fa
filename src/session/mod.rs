//! The interactive session: `ohmsheet` alone, or `ohmsheet SHEET`.
//!
//! - `state.rs`: the session without a terminal (document, engine, undo,
//!   journal); `Session::handle` answers one typed line. Its rooms:
//!   `state/apply.rs` (edits to the document and engine, the layer another
//!   front end would share), `state/commands.rs` (the `/` commands),
//!   `state/files.rs` (journal recovery and saving).
//! - `doc.rs`: the sheet as the user's lines, for saving with comments kept.
//! - `journal.rs`: every accepted change flushed to disk as it is made.
//! - `show.rs`: how values, changes, trees and lists are shown.
//! - `repl.rs`: line editing, history, completion, hints (the only file
//!   that knows rustyline).

pub mod doc;
pub mod journal;
mod repl;
pub mod show;
pub mod state;

pub use repl::run;
pub use state::{Action, Reply, Session};
