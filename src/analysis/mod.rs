//! The analysis layer: an open sheet as an editor holds it, its engine,
//! edits applied in place or by compiling the whole sheet, and answers in
//! plain data with byte offsets into the text (problems, value hints, …).
//! It knows nothing of any protocol or terminal: the language server
//! (`src/lsp/`) translates its answers into protocol messages, and the
//! terminal session (`src/session/`) shares its ways of showing values.
//!
//! Rooms:
//! - `document.rs`: `Document`, the open text and its engine; an edit of
//!   one definition line goes through `Engine::redefine` (the session's
//!   incremental path), anything else compiles the sheet; where a span of
//!   the model lies in the current text (`Document::locate`);
//! - `problems.rs`: every problem the command line reports, a NaN where it
//!   was born, a failed check, an error of an included sheet at its
//!   `@include` line;
//! - `hints.rs`: each cell's value and each check's verdict at the end of
//!   its line;
//! - `values.rs`: values as people read them (shared with the session);
//! - `complete.rs`: what may be typed at a place, and the call being typed;
//! - `rename.rs`: renaming a cell everywhere, or why not;
//! - `outline.rs`: sections, cells, checks and networks of a sheet;
//! - `fixes.rs`: the repairs the diagnostics suggest, as edits;
//! - `tokens.rs`: what each piece of the text is, for highlighting.

pub mod complete;
pub mod document;
pub mod explain;
pub mod fixes;
pub mod hints;
pub mod hover;
pub mod navigate;
pub mod outline;
pub mod problems;
pub mod rename;
pub mod symbols;
pub mod tokens;
pub mod values;

pub use document::{Document, Located, Place};
pub use hints::{Hint, HintKind};
pub use problems::{Problem, Related};

/// How values are shown: significant digits, and complex values as
/// `a + jb` or `m ∠ θ°`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Display {
    pub style: crate::units::format::Style,
    pub polar: bool,
}
