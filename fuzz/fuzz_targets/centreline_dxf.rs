//! Fuzz the DXF centreline reader used by `check` (the dxf crate's parser, then our entity reading).
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = loopwright::import::parse_dxf_bytes(data, None, None, "fuzz.dxf");
});
