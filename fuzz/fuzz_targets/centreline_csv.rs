//! Fuzz the CSV centreline reader used by `check`: any text must parse or be refused, never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = loopwright::import::parse_csv(text, "fuzz.csv");
    }
});
