//! The unit-expression parser on arbitrary text, and formatting in any
//! unit that parses.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::unit_bytes(data);
});
