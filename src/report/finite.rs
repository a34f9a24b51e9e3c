//! The last guard before a renderer: the first number of a vet report that
//! is not finite, named by where it sits (the pipeline then refuses the run,
//! so no NaN is ever printed).
//!
//! Owns: [`VetReport::first_non_finite`]. Must not: change the report or
//! judge the numbers beyond finiteness.

use super::VetReport;

impl VetReport {
    /// The first non-finite number in the report, named by where it sits.
    pub fn first_non_finite(&self) -> Option<String> {
        let top = [
            ("lost population", self.lost_population),
            ("norm error", self.norm_error),
            ("scattered photons", self.scattered_photons.unwrap_or(0.0)),
            ("emitted photons", self.emitted.unwrap_or(0.0)),
        ];
        if let Some((name, _)) = top.iter().find(|(_, v)| !v.is_finite()) {
            return Some(name.to_string());
        }
        for l in &self.levels {
            let mut vals = vec![l.final_population, l.peak_population];
            vals.extend(l.settled_population);
            vals.extend(l.window_end_population);
            vals.extend(l.scattered_photons);
            vals.extend(l.first_order);
            vals.extend(l.second_order);
            vals.extend(l.ratio);
            vals.extend(
                l.sources
                    .iter()
                    .flat_map(|s| [s.detuning, s.rabi, s.population]),
            );
            vals.extend(l.sources.iter().filter_map(|s| s.saturation));
            if let Some(r) = &l.remedy {
                vals.extend([r.gaussian_same_area, r.blackman_same_area, r.present_length]);
                vals.extend(r.length_for_tolerance);
                vals.extend(r.exact_gaussian);
                vals.extend(r.exact_blackman);
                vals.extend(r.exact_at_length);
            }
            if let Some(r) = &l.scatter_remedy {
                vals.extend(r.numbers());
            }
            if vals.iter().any(|v| !v.is_finite()) {
                return Some(format!("the report row of level {}", l.id));
            }
        }
        self.excluded
            .iter()
            .find(|x| {
                ![x.detuning, x.rabi, x.population, x.light_shift]
                    .iter()
                    .all(|v| v.is_finite())
            })
            .map(|x| format!("the left-out drive {} on {}-{}", x.field, x.lower, x.upper))
    }
}
