//! Lines typed into an interactive session, on arbitrary bytes.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::session_bytes(data);
});
