//! Fuzz the scheme parser and validator: any bytes in, Ok or a clean error out.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = levelplan::scheme::parse(text, "fuzz.yaml");
    }
});
