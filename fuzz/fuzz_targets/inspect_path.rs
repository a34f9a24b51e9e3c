//! Fuzz the whole inspect path: parse, validate, build the inspect report and
//! render it in every format. Must never panic and never print NaN or inf.
#![no_main]
use levelplan::render::{exporter, Format};
use levelplan::report::{inspect, Provenance};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let Ok(model) = levelplan::scheme::parse(text, "fuzz.yaml") else { return };
    let report = inspect(&model, Provenance::new("fuzz.yaml", "0"));
    for f in [Format::Text, Format::Markdown, Format::Latex, Format::Csv, Format::Json] {
        let mut buf = Vec::new();
        if exporter(f, false).inspect(&report, &mut buf).is_ok() {
            let s = String::from_utf8_lossy(&buf);
            // Rust prints non-finite numbers as NaN, inf, -inf; the input's
            // own text (ids, title, labels) is echoed, so look only for
            // words the input does not contain.
            for word in ["NaN", "inf"] {
                if !text.contains(word) {
                    assert!(!s.contains(word), "{word} in {f:?} output");
                }
            }
        }
    }
});
