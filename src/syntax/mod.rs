//! Reading sheet text: the pest grammar glue, the syntax tree and spans.
//! Nothing here knows about evaluation.

pub mod ast;
pub mod parser;

pub use parser::{parse_line, parse_sheet, Limits, ParsedSheet};
