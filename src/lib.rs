//! ohmsheet: a plain-text worksheet engine for AC phasor calculations.
//!
//! See ARCHITECTURE.md for the code map and the invariants.

// The parser pest derives names `alloc::` when pest is built without its
// `std` feature (see Cargo.toml).
extern crate alloc;

pub mod analysis;
pub mod batch;
pub mod cli;
pub mod diag;
pub mod engine;
pub mod fsutil;
pub mod funcs;
pub mod harness;
pub mod lsp;
pub mod network;
pub mod output;
pub mod plot;
pub mod session;
pub mod sheet;
pub mod spread;
pub mod sweep;
pub mod syntax;
pub mod units;
