//! Fuzz the limit-table reader: any bytes as a `--limits` TOML must parse and validate to a table
//! or give an error, never a panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use loopwright::brief::limits_table::EnvelopeTable;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = EnvelopeTable::from_toml(text);
    }
});
