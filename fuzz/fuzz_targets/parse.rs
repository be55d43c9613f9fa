//! The parser on arbitrary bytes: decode, split into lines, parse each,
//! and render every diagnostic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::parse_bytes(data);
});
