//! JSON rendering: the reports serialised as they are, with the stable keys
//! of the contract (docs/output-format.md). Keys are added, never renamed.
//!
//! Owns: the JSON layout (pretty-printed, one trailing newline). Must not:
//! compute or convert anything; the keys, their order and their units are
//! those of the report types (`report::json_units` holds the unit changes).

use serde::Serialize;
use std::io::{self, Write};

/// Write a report as pretty-printed JSON followed by a newline.
pub fn write<T: Serialize + ?Sized>(report: &T, w: &mut dyn Write) -> io::Result<()> {
    serde_json::to_writer_pretty(&mut *w, report).map_err(io::Error::other)?;
    writeln!(w)
}

#[cfg(test)]
mod tests {
    use crate::report::sample;
    use serde_json::Value;

    fn json<T: serde::Serialize>(r: &T) -> (String, Value) {
        let mut b = Vec::new();
        super::write(r, &mut b).unwrap();
        let t = String::from_utf8(b).unwrap();
        let v = serde_json::from_str(&t).unwrap();
        (t, v)
    }

    fn keys(v: &Value) -> Vec<&str> {
        v.as_object().unwrap().keys().map(String::as_str).collect()
    }

    #[test]
    fn vet_keys_in_contract_order_with_units_in_their_names() {
        let (t, v) = json(&sample::vet_report());
        assert!(t.starts_with("{\n  \"tolerance\": 0.001,\n  \"norm_error\": 1e-15,\n"));
        assert!(t.ends_with("\n}\n"), "one newline after the object");
        assert_eq!(
            keys(&v),
            [
                "tolerance",
                "norm_error",
                "lost_population",
                "levels",
                "flagged_count",
                "goal",
                "targets_below_goal",
                "max_spectator_population",
                "excluded_drives",
                "window_s",
                "solver",
                "provenance",
                "title",
                "laser_safety",
                "readout",
                "dynamics",
                "initial_state",
            ]
        );
        assert_eq!(v["window_s"], serde_json::json!([0.0, 2e-7]));
        assert_eq!(v["solver"]["method"], "exact");
        assert_eq!(v["solver"]["detuning_cutoff_mhz"], 1e6);
        assert_eq!(v["provenance"]["scheme_sha256"], "ab12cd34ef56ab12cd34ef56");
        assert_eq!(v["goal"], Value::Null);
        let x = &v["excluded_drives"][0];
        assert_eq!(x["detuning_mhz"], 2e6);
        assert!((x["light_shift_mhz"].as_f64().unwrap() - 0.125e-6).abs() < 1e-18);
        assert_eq!(x["first_order_population"], 1e-14);
        // 1e4 W/m^2 is 1 W/cm^2; an unknown intensity is null.
        assert_eq!(v["laser_safety"][0]["peak_intensity_w_per_cm2"], 1.0);
        assert_eq!(
            v["laser_safety"][1]["peak_intensity_w_per_cm2"],
            Value::Null
        );
    }

    #[test]
    fn level_keys_and_the_population_key_of_each_source() {
        let (_, v) = json(&sample::vet_report());
        let [g, e, s] = [0, 1, 2].map(|k| &v["levels"][k]);
        assert_eq!(
            keys(g),
            [
                "id",
                "role",
                "final_population",
                "peak_population",
                "first_order_population",
                "flagged",
                "below_goal",
                "sources",
                "label",
                "estimate_order",
                "final_over_estimate",
                "tolerance",
                "estimate_unreliable",
            ],
            "no second-order key and no remedy where there is none"
        );
        assert_eq!(g["first_order_population"], Value::Null);
        assert_eq!(g["estimate_order"], "initial");
        assert_eq!(e["sources"][0]["first_order_population"], 0.5);
        assert_eq!(e["sources"][0]["detuning_mhz"], -20.0);
        assert_eq!(e["estimate_order"], "first");
        let src = &s["sources"][0];
        assert_eq!(
            keys(src),
            [
                "field",
                "from",
                "detuning_mhz",
                "rabi_mhz",
                "second_order_population",
                "in_dynamics"
            ]
        );
        assert_eq!(s["second_order_population"], 1.5e-3);
        assert_eq!(s["first_order_population"], 0.0);
        assert_eq!(s["estimate_order"], "second");
        assert_eq!(
            keys(&s["remedy"]),
            [
                "field",
                "present_shape",
                "present_length_s",
                "gaussian_same_area_population",
                "blackman_same_area_population",
                "length_for_tolerance_s",
                "fwhm_s",
                "exact_gaussian_population",
                "exact_blackman_population",
                "exact_population_at_length",
            ]
        );
        assert_eq!(s["remedy"]["exact_blackman_population"], Value::Null);
    }

    #[test]
    fn a_remedy_not_checked_adds_one_key_after_the_others() {
        let (_, v) = json(&sample::vet_report_with_unchecked_remedy());
        let remedy = &v["levels"][2]["remedy"];
        let k = keys(remedy);
        assert_eq!(k.len(), 11);
        assert_eq!(&k[9..], ["exact_population_at_length", "not_checked"]);
        assert_eq!(
            remedy["not_checked"],
            serde_json::json!([{
                "check": "blackman",
                "reason": "the run needs more than 10 steps; raise SolveOptions::step_budget"
            }])
        );
    }

    #[test]
    fn inspect_keys_and_units() {
        let (_, v) = json(&sample::inspect_report());
        assert_eq!(
            keys(&v),
            [
                "levels",
                "drives",
                "fields",
                "window_s",
                "tolerance",
                "detuning_cutoff_mhz",
                "provenance",
                "title",
            ]
        );
        assert_eq!(
            keys(&v["levels"][0]),
            [
                "id",
                "energy_hz",
                "energy_cm",
                "label",
                "lifetime_s",
                "role",
                "initial_population",
                "tolerance",
            ]
        );
        let d = &v["drives"][0];
        assert_eq!(
            keys(d),
            [
                "field",
                "lower",
                "upper",
                "transition_hz",
                "detuning_mhz",
                "rabi_mhz",
                "included",
                "wavelength_nm",
                "pulse_area_rad",
                "relative_dipole",
            ]
        );
        assert_eq!(d["detuning_mhz"], -20.0);
        assert_eq!(d["rabi_mhz"], 5.0);
        assert!((d["wavelength_nm"].as_f64().unwrap() - 780.7).abs() < 1e-9);
        let f = &v["fields"][0];
        assert_eq!(
            keys(f),
            [
                "id",
                "frequency_hz",
                "wavelength_nm",
                "envelope",
                "length_s",
                "peak_intensity_w_per_cm2",
                "chirp_hz_per_s",
                "rwa",
            ]
        );
        assert_eq!(f["peak_intensity_w_per_cm2"], 1.0);
        assert_eq!(v["levels"][1]["lifetime_s"], 26e-9);
        assert_eq!(v["title"], Value::Null);
    }

    #[test]
    fn generated_levels_add_their_quantum_numbers_as_numbers() {
        let (t, v) = json(&sample::vet_report_with_sublevels());
        let g = &v["levels"][0];
        assert!(
            g.get("manifold").is_none() && g.get("J").is_none(),
            "v1: no keys"
        );
        let s = &v["levels"][1];
        assert_eq!(
            &keys(s)[..6],
            ["id", "manifold", "J", "F", "m_F", "role"],
            "after the id"
        );
        assert!(
            t.contains("\"id\": \"P_F1_m-1\",\n      \"manifold\": \"P\",\n      \"J\": 1.5,\n      \"F\": 1,\n      \"m_F\": -1,\n"),
            "{t}"
        );
        assert_eq!(v["levels"][4]["m_F"], 0);
        let (t, v) = json(&sample::inspect_report_with_sublevels());
        assert_eq!(
            &keys(&v["levels"][2])[..6],
            ["id", "manifold", "J", "F", "m_F", "energy_hz"]
        );
        assert!(t.contains("\"J\": 0.5,"), "{t}");
        assert!(
            !t.contains("offset") && !t.contains("centre"),
            "the text-only numbers stay out"
        );
        assert!(v["levels"][0].get("manifold").is_none());
    }
}
