//! Test data only: the 87Rb D2 manifolds with published constants, shared by
//! the structure and dipole checks. Must not be used outside tests (it is
//! compiled only for them) and must not hold anything but quoted constants.
//!
//! Sources: 5S1/2 A, g_J, g_I from D. A. Steck, "Rubidium 87 D Line Data"
//! (revision 2.x); 5P3/2 A and B from E. Arimondo, M. Inguscio and
//! P. Violino, Rev. Mod. Phys. 49, 31 (1977) as quoted by Steck, g_J = 1.3362
//! from Steck (all from memory).

use crate::atom::structure::Manifold;
use std::f64::consts::PI;

/// 1 MHz as an angular frequency (rad/s).
pub const MHZ: f64 = 2.0 * PI * 1e6;

/// 87Rb 5S1/2.
pub fn ground() -> Manifold {
    Manifold {
        two_j: 1,
        two_i: 3,
        a: 3_417.341_305_452_145 * MHZ,
        b: 0.0,
        g_j: 2.002_331_13,
        g_i: -0.000_995_141_4,
    }
}

/// 87Rb 5P3/2.
pub fn excited() -> Manifold {
    Manifold {
        two_j: 3,
        two_i: 3,
        a: 84.7185 * MHZ,
        b: 12.4965 * MHZ,
        g_j: 1.3362,
        g_i: -0.000_995_141_4,
    }
}
