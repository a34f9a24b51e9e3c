//! Fuzz the whole vet path on small schemes: parse, propagate (with a small
//! step budget so that a single input stays fast), check the solution,
//! estimate, assemble the report and render it in every format. Must never
//! panic and never print NaN or inf; a model the stages refuse is a clean error.
//! Schemes with more than 8 levels or 16 drives are skipped (their cost, not
//! their correctness, is what would grow).
#![no_main]
use levelplan::render::{exporter, Format};
use levelplan::report::{vet, Provenance};
use levelplan::solve::{solve, SolveOptions};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let Ok(model) = levelplan::scheme::parse(text, "fuzz.yaml") else { return };
    if model.levels().len() > 8 || model.drives().len() > 16 {
        return;
    }
    let opts = SolveOptions { samples: 5, step_budget: 20_000, ..SolveOptions::default() };
    let Ok(sol) = solve(&model, &opts) else { return };
    if levelplan::pipeline::check_solution(&sol).is_err() {
        return;
    }
    for p in sol.final_populations.iter().chain(&sol.peak_populations) {
        assert!(p.is_finite() && *p >= -1e-9 && *p <= 1.0 + 1e-5, "population {p}");
    }
    let Ok(est) = levelplan::estimate::estimate(&model) else { return };
    let Ok(rep) = vet(&model, Provenance::new("fuzz.yaml", "0"), &sol, &est, None) else { return };
    if rep.first_non_finite().is_some() {
        return;
    }
    for f in [Format::Text, Format::Markdown, Format::Latex, Format::Csv, Format::Json] {
        let mut buf = Vec::new();
        if exporter(f, false).vet(&rep, &mut buf).is_ok() {
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
