//! Misreadings: each way of writing a quantity that once gave a wrong
//! number without warning (issue 13), with the right value or the refusal
//! the language now gives. One file per family.

mod angle;
mod check_lines;
mod complex_factor;
mod display;
mod infinite;
mod kinds;
mod lookalikes;
mod numerics;
mod overrides;
mod ranges;
mod search_targets;
mod trig_note;
