//! Misreadings: angle (see mod.rs).
