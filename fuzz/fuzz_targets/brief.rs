//! Fuzz the brief parser: any bytes as a brief file, then resolving it, must never panic.
#![no_main]

use libfuzzer_sys::fuzz_target;
use loopwright::brief::BriefInput;
use loopwright::units::parse_speed_m_s;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = parse_speed_m_s(text);
        if let Ok(input) = BriefInput::from_toml(text) {
            if let Ok(brief) = input.resolve() {
                // Whatever resolves must be finite and ordered.
                assert!(brief.entry_speed_m_s.is_finite() && brief.min_top_g < brief.max_g);
            }
        }
    }
});
