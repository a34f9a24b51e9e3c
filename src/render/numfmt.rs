//! Number formatting for readers: populations in scientific notation below
//! 1e-3, frequencies in Hz..THz by magnitude, times in fs..s, with the
//! significant figures a reader needs.
//!
//! Owns: [`Num`], a number already rounded for display, which each renderer
//! spells its own way (plain text or LaTeX). Must not: compute physics; it
//! only rescales by powers of ten and 2 pi is never applied here.

/// A number ready for display: mantissa text, optional power of ten, optional unit.
#[derive(Debug, Clone, PartialEq)]
pub struct Num {
    pub mantissa: String,
    pub exponent: Option<i32>,
    pub unit: &'static str,
}

impl Num {
    fn new(mantissa: String, exponent: Option<i32>, unit: &'static str) -> Self {
        Num {
            mantissa,
            exponent,
            unit,
        }
    }

    /// Plain text: `3.20e-5`, `266.7 MHz`.
    pub fn plain(&self) -> String {
        let mut s = self.mantissa.clone();
        if let Some(e) = self.exponent {
            s.push_str(&format!("e{e}"));
        }
        if !self.unit.is_empty() {
            s.push(' ');
            s.push_str(self.unit);
        }
        s
    }

    /// LaTeX (math mode pieces, siunitx-free): `$3.20\times10^{-5}$`, `266.7~MHz`.
    pub fn latex(&self) -> String {
        let mut s = match self.exponent {
            Some(e) => format!("${}\\times10^{{{}}}$", self.mantissa, e),
            None => self.mantissa.replace('-', "$-$"),
        };
        if !self.unit.is_empty() {
            s.push('~');
            s.push_str(&self.unit.replace("^-1", "$^{-1}$").replace("^2", "$^2$"));
        }
        s
    }
}

/// Scientific notation with `sig` significant figures.
pub fn sci(x: f64, sig: usize, unit: &'static str) -> Num {
    if x == 0.0 {
        return Num::new("0".into(), None, unit);
    }
    let s = format!("{:.*e}", sig.saturating_sub(1), x);
    match s.split_once('e') {
        Some((m, e)) => Num::new(m.to_string(), e.parse().ok(), unit),
        None => Num::new(s, None, unit),
    }
}

/// Fixed notation with `sig` significant figures (for |x| in a sensible range).
fn fixed(x: f64, sig: usize, unit: &'static str) -> Num {
    if x == 0.0 {
        return Num::new("0".into(), None, unit);
    }
    let mag = x.abs().log10().floor() as i32;
    let decimals = (sig as i32 - 1 - mag).max(0) as usize;
    Num::new(format!("{:.*}", decimals, x), None, unit)
}

/// A population: 4 decimals at or above 1e-3, else 3 significant figures in
/// scientific notation.
pub fn population(p: f64) -> Num {
    if p == 0.0 {
        Num::new("0".into(), None, "")
    } else if p.abs() >= 1e-3 {
        Num::new(format!("{p:.4}"), None, "")
    } else {
        sci(p, 3, "")
    }
}

/// A bare ratio or factor, 3 significant figures.
pub fn ratio(x: f64) -> Num {
    if x.abs() >= 1e-2 && x.abs() < 1e4 {
        fixed(x, 3, "")
    } else {
        sci(x, 3, "")
    }
}

/// A cyclic frequency (Hz) in Hz, kHz, MHz, GHz or THz by magnitude, 4
/// significant figures; `signed` prints a leading + on positive values.
pub fn frequency(hz: f64, signed: bool) -> Num {
    let a = hz.abs();
    let (scale, unit) = if a >= 1e12 {
        (1e12, "THz")
    } else if a >= 1e9 {
        (1e9, "GHz")
    } else if a >= 1e6 {
        (1e6, "MHz")
    } else if a >= 1e3 {
        (1e3, "kHz")
    } else {
        (1.0, "Hz")
    };
    let mut n = fixed(hz / scale, 4, unit);
    if signed && hz > 0.0 {
        n.mantissa.insert(0, '+');
    }
    n
}

/// An energy / h relative to a manifold's centre (Hz), in MHz with a sign:
/// 3 decimals (1 kHz) from 1 MHz up, 4 significant figures below, never
/// finer than 1 Hz (`+2563.006 MHz`, `-0.7001 MHz`).
pub fn offset_mhz(hz: f64) -> Num {
    let mhz = hz / 1e6;
    let decimals = if mhz == 0.0 {
        3
    } else {
        (3 - mhz.abs().log10().floor() as i32).clamp(3, 6) as usize
    };
    let mut n = Num::new(format!("{mhz:.decimals$}"), None, "MHz");
    if mhz > 0.0 {
        n.mantissa.insert(0, '+');
    }
    n
}

/// A time (s) in fs, ps, ns, us, ms or s, 4 significant figures.
pub fn time(s: f64) -> Num {
    let a = s.abs();
    let (scale, unit) = if a == 0.0 || a >= 1.0 {
        (1.0, "s")
    } else if a >= 1e-3 {
        (1e-3, "ms")
    } else if a >= 1e-6 {
        (1e-6, "us")
    } else if a >= 1e-9 {
        (1e-9, "ns")
    } else if a >= 1e-12 {
        (1e-12, "ps")
    } else {
        (1e-15, "fs")
    };
    fixed(s / scale, 4, unit)
}

/// A vacuum wavelength (m) in nm (below 10 um) or um, 7 significant figures.
pub fn wavelength(m: f64) -> Num {
    if m < 1e-5 {
        fixed(m * 1e9, 7, "nm")
    } else if m < 1e-2 {
        fixed(m * 1e6, 7, "um")
    } else {
        fixed(m * 1e3, 7, "mm")
    }
}

/// An energy given as a wavenumber (cm^-1), 9 significant figures.
pub fn wavenumber(cm: f64) -> Num {
    if cm.abs() < 1e-3 && cm != 0.0 {
        sci(cm, 6, "cm^-1")
    } else {
        fixed(cm, 9, "cm^-1")
    }
}

/// An intensity (W/m^2) shown in W/cm^2 (or mW/cm^2 below 1 W/cm^2), 4 significant figures.
pub fn intensity(w_per_m2: f64) -> Num {
    let w_cm2 = w_per_m2 * 1e-4;
    if w_cm2 >= 1e4 {
        sci(w_cm2, 4, "W/cm^2")
    } else if w_cm2 >= 1.0 {
        fixed(w_cm2, 4, "W/cm^2")
    } else {
        fixed(w_cm2 * 1e3, 4, "mW/cm^2")
    }
}

/// A pulse area (rad) in units of pi, 4 significant figures.
pub fn area_in_pi(rad: f64) -> Num {
    fixed(rad / std::f64::consts::PI, 4, "pi")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn populations_switch_to_scientific_below_1e_3() {
        assert_eq!(population(0.99871).plain(), "0.9987");
        assert_eq!(population(0.001).plain(), "0.0010");
        assert_eq!(population(3.2e-5).plain(), "3.20e-5");
        assert_eq!(population(0.0).plain(), "0");
    }

    #[test]
    fn frequencies_pick_their_unit() {
        assert_eq!(frequency(266.65e6, true).plain(), "+266.6 MHz");
        assert_eq!(frequency(-20e6, true).plain(), "-20.00 MHz");
        assert_eq!(frequency(6.834682e9, false).plain(), "6.835 GHz");
        assert_eq!(frequency(384.23e12, false).plain(), "384.2 THz");
    }

    #[test]
    fn centre_offsets_keep_kilohertz() {
        assert_eq!(offset_mhz(2563.0059e6).plain(), "+2563.006 MHz");
        assert_eq!(offset_mhz(-4271.6766e6).plain(), "-4271.677 MHz");
        assert_eq!(offset_mhz(-0.70012e6).plain(), "-0.7001 MHz");
        assert_eq!(offset_mhz(1.4e3).plain(), "+0.001400 MHz");
        assert_eq!(offset_mhz(0.2).plain(), "+0.000000 MHz");
        assert_eq!(offset_mhz(0.0).plain(), "0.000 MHz");
        assert_eq!(offset_mhz(-2.5e6).latex(), "$-$2.500~MHz");
    }

    #[test]
    fn latex_spells_powers_of_ten() {
        assert_eq!(population(3.2e-5).latex(), "$3.20\\times10^{-5}$");
        assert_eq!(frequency(-20e6, true).latex(), "$-$20.00~MHz");
    }

    #[test]
    fn times_pick_their_unit() {
        assert_eq!(time(26.2e-9).plain(), "26.20 ns");
        assert_eq!(time(1.5e-6).plain(), "1.500 us");
    }
}
