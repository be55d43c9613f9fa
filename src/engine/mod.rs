//! Compiling and evaluating sheets. No I/O here.

pub mod block;
mod compare;
pub mod edit;
pub mod eval;
pub mod explain;
pub mod infinite;
pub mod model;
pub mod notes;
pub mod ops;
pub mod program;
pub mod search;
pub mod tolerance;

pub use edit::EditError;
pub use eval::{check_result, Change, CheckResult, Engine};
pub use model::{compile, Cell, CellError, CellId, Model, Role};
