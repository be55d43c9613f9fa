//! Misreadings: kinds (see mod.rs).
