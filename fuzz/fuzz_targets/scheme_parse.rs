//! Fuzz the scheme parser and validator: any bytes in, Ok or a clean error out.
//! Also a differential check of the YAML flow-depth pre-check: whatever it
//! refuses, the YAML library refuses too.
#![no_main]
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    if let Ok(text) = std::str::from_utf8(data) {
        if levelplan::yaml::check_flow_depth(text).is_err() {
            assert!(
                levelplan::yaml::count_nodes(text).is_err(),
                "the flow-depth pre-check refused a text the YAML library reads"
            );
        }
        let _ = levelplan::scheme::parse(text, "fuzz.yaml");
    }
});
