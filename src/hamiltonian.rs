//! Hamiltonian assembly and the rotating frame. (in progress)
