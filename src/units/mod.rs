//! Units: dimensions, the unit table, and how quantities are shown.

pub mod dim;
pub mod format;
pub mod kind;
pub mod lookalike;
pub mod table;

pub use dim::Dim;
pub use kind::{Kind, Quantity};
pub use table::{lookup_unit, parse_unit_expr, Unit, UnitError};
