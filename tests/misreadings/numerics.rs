//! Misreadings: numerics (see mod.rs).
