//! Misreadings: display (see mod.rs).
