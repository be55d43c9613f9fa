//! The cases-table reader of `ohmsheet batch` on arbitrary bytes.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::cases_bytes(data);
});
