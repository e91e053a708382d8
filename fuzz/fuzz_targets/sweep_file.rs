//! Fuzz the sweep-file reader and the grid check: any bytes as a sweep file must give a checked
//! grid or an error, never a panic, and a checked grid stays within the design ceiling.
#![no_main]

use libfuzzer_sys::fuzz_target;
use loopwright::sweep::{MAX_DESIGNS, SweepSpec, parse_sweep_file};

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        if let Ok((brief, sweep)) = parse_sweep_file(text) {
            if let Ok(spec) = SweepSpec::new(brief, &sweep) {
                assert!(spec.len() >= 1 && spec.len() <= MAX_DESIGNS);
            }
        }
    }
});
