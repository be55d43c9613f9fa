//! Network blocks built from arbitrary bytes (`harness::network_bytes`):
//! element forms, node and element names, shorts, opens, wrong units and
//! results asked, through compiling, both evaluators and the explanation
//! of a case that has no solution.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::network_bytes(data);
});
