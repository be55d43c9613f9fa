//! The whole pipeline on arbitrary bytes: parse, compile, evaluate (scalar,
//! block and incremental, which must agree), and format every value.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    ohmsheet::harness::eval_bytes(data);
});
