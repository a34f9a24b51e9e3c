//! What a propagated equation supplies to the steppers and observers.
//!
//! Owns: the [`Equation`] trait and the [`Generator`] of a piecewise-constant
//! stretch. Must not: step, record, or know any model type (an equation is
//! built from the model elsewhere, in `equations/`).
//!
//! The contract, so that a new equation is one new file in `equations/` and
//! touches no stepper and no observer:
//!
//! - The state is a real vector of [`Equation::dim`] components.
//! - Time: [`Equation::rhs`] is the derivative with respect to *window time*
//!   s = (t - t0) / T (t0 the window start, T the window length, both in
//!   [`Clock`]), the variable the adaptive stepper integrates in (steps of
//!   order one whatever the time scale). [`Equation::enter_stretch`] and
//!   samples take absolute times in seconds; the [`Generator`] is per second,
//!   the unit the exact stepper propagates in.
//! - Populations: [`Equation::population`] reads level k's population from a
//!   state; [`Equation::population_rate`] its derivative from a state and its
//!   derivative; [`Equation::interpolated_population`] the equation's own
//!   cubic Hermite interpolant inside a step (the default interpolates the
//!   populations themselves; the amplitude equation interpolates amplitudes and
//!   squares them, which follows oscillating populations more closely).
//! - Conservation: [`Equation::norm`] plus [`Equation::lost`] is conserved
//!   (amplitudes: sum |a|^2 and the population decayed out of the system; a
//!   density matrix: its trace and 1 minus it); its drift is the norm error.
//! - Exact propagation: on a stretch where the equation is linear with
//!   constant coefficients, [`Equation::generator`] gives G with z' = G z for
//!   the complex vector z interleaved (re, im) in the first 2m state
//!   components. At most one further real component may follow: the lost
//!   quantity, whose rate is z^dagger diag(q) z ([`Generator::loss`]); a
//!   quantity lost at a rate linear in z belongs inside z instead. The exact
//!   stepper hands observers each sub-step in the frame that removes every
//!   component's own rotation exp(i Im(G_jj) s); populations must not change
//!   under such phases (true for |a_k|^2, and for the diagonal of a density
//!   matrix, which does not rotate).

use nalgebra::DMatrix;
use num_complex::Complex64;

/// Window time: s = (t - t0) / T.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Clock {
    /// Window start (s).
    pub t0: f64,
    /// Window length T (s), positive.
    pub scale: f64,
}

impl Clock {
    /// Absolute time (s) of window time `s`.
    #[inline]
    pub fn absolute(&self, s: f64) -> f64 {
        self.t0 + s * self.scale
    }
}

/// The generator of a stretch on which an equation is linear with constant
/// coefficients (see the module docs for the state layout it implies).
#[derive(Debug, Clone, PartialEq)]
pub struct Generator {
    /// G (1/s), m x m: z' = G z.
    pub matrix: DMatrix<Complex64>,
    /// q (1/s), length m: the lost quantity grows at sum_j q_j |z_j|^2
    /// (all zero, or empty, where nothing is lost that way).
    pub loss: Vec<f64>,
}

impl Generator {
    /// An empty generator of size m, to be filled by [`Equation::generator`].
    pub fn zeros(m: usize) -> Generator {
        Generator {
            matrix: DMatrix::from_element(m, m, Complex64::new(0.0, 0.0)),
            loss: vec![0.0; m],
        }
    }
}

/// An equation of motion the steppers can advance and the observers can read.
/// Every method called per step must not allocate.
pub trait Equation {
    /// Number of real state components.
    fn dim(&self) -> usize;
    /// Number of levels (populations).
    fn levels(&self) -> usize;
    /// Write the state at the window start into `y` (length [`Equation::dim`]).
    fn initial_state(&self, y: &mut [f64]);
    /// Fix the coefficients for the stretch between two stops (absolute
    /// times, s): envelope pieces are chosen from the stretch's inside.
    fn enter_stretch(&mut self, start: f64, end: f64);
    /// dy/ds at window time s into `dy`.
    fn rhs(&self, s: f64, y: &[f64], dy: &mut [f64]);
    /// Population of level k.
    fn population(&self, y: &[f64], k: usize) -> f64;
    /// d(population k)/dv from a state and its derivative with respect to
    /// any variable v.
    fn population_rate(&self, y: &[f64], dy: &[f64], k: usize) -> f64;
    /// Population of level k inside a step of length h from (y0, d0) to
    /// (y1, d1) (derivatives with respect to the variable h is in), from the
    /// cubic Hermite weights `w` = (h00, h10, h01, h11) at some theta.
    #[allow(clippy::too_many_arguments)]
    fn interpolated_population(
        &self,
        k: usize,
        y0: &[f64],
        d0: &[f64],
        y1: &[f64],
        d1: &[f64],
        h: f64,
        w: &[f64; 4],
    ) -> f64 {
        w[0] * self.population(y0, k)
            + w[1] * h * self.population_rate(y0, d0, k)
            + w[2] * self.population(y1, k)
            + w[3] * h * self.population_rate(y1, d1, k)
    }
    /// Every population into `out` (length [`Equation::levels`]).
    fn populations(&self, y: &[f64], out: &mut [f64]) {
        for (k, p) in out.iter_mut().enumerate() {
            *p = self.population(y, k);
        }
    }
    /// The conserved quantity without the lost part (sum |a|^2, trace).
    fn norm(&self, y: &[f64]) -> f64;
    /// The quantity lost from the system so far.
    fn lost(&self, y: &[f64]) -> f64;
    /// How far the state is from a physical one beyond its norm (a density
    /// matrix: from positive semidefinite); 0 where it cannot be otherwise
    /// (amplitudes). `thorough`: the full test (once per run), else a
    /// cheap necessary one (every step).
    fn positivity_defect(&self, _y: &[f64], _thorough: bool) -> f64 {
        0.0
    }
    /// Spontaneous emissions of every level so far per atom (Gamma_k times
    /// the integral of its population) into `out`; false where the
    /// equation does not count them.
    fn scattered_photons(&self, _y: &[f64], _out: &mut [f64]) -> bool {
        false
    }
    /// The settled populations (drives off, every decay run to its end) of
    /// state `y` into `out` and the total lost population, where the
    /// populations alone do not determine them (coherent decay channels);
    /// `None`: relax the populations through the branching instead.
    fn settled(&self, _y: &[f64], _out: &mut [f64]) -> Option<f64> {
        None
    }
    /// Spontaneous emissions per atom so far, all levels together (the
    /// sum of [`Equation::scattered_photons`] where the equation counts
    /// them per level), without allocating; None where the equation does
    /// not count them.
    fn emitted(&self, _y: &[f64]) -> Option<f64> {
        None
    }
    /// The generator of the current stretch (after
    /// [`Equation::enter_stretch`]) into `out`, or false where the equation
    /// has none there (the exact stepper then does not apply).
    fn generator(&self, _out: &mut Generator) -> bool {
        false
    }
    /// Size m of the complex vector the generator acts on (0: no generator).
    fn generator_dim(&self) -> usize {
        0
    }
}
