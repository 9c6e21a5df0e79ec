// Package gaussian is keyceiling's covariance-matrix engine: Gaussian states, symplectic
// transforms, Gaussian channels in (X, Y) form, symplectic spectra and entropies, and the
// Stinespring dilations of the single-mode phase-insensitive channels the project studies.
//
// # Conventions (the single place they are stated; every other package links here)
//
//   - Quadrature order is x1, p1, x2, p2, ... ("xpxp"). Mode k occupies rows and columns
//     2k and 2k+1 of every matrix.
//   - Shot-noise units: the vacuum covariance is the identity I. A thermal state with mean
//     photon number N has V = (2N+1) I; a single mode's mean photon number is (tr V - 2)/4
//     for a zero-mean state.
//   - Omega is the direct sum of [[0, 1], [-1, 0]]. V is a physical covariance iff
//     V + i Omega >= 0; S is symplectic iff S Omega S^T = Omega.
//   - A Gaussian channel (X, Y) maps V to X V X^T + Y. It is completely positive iff
//     Y + i Omega_out - i X Omega_in X^T >= 0.
//   - Entropies are in bits: g(x) = (x+1) log2(x+1) - x log2 x and S(V) = sum_k g((nu_k-1)/2),
//     nu_k the symplectic eigenvalues.
//   - Two-mode squeezed vacuum TMSV(N) = [[a I, c Z], [c Z, a I]] with a = 2N+1,
//     c = 2 sqrt(N(N+1)), Z = diag(1, -1).
//   - Beam splitter of transmissivity t on modes (i, j): [[sqrt(t) I, sqrt(1-t) I],
//     [-sqrt(1-t) I, sqrt(t) I]]; two-mode squeezer of gain G (signal i, idler j):
//     [[sqrt(G) I, sqrt(G-1) Z], [sqrt(G-1) Z, sqrt(G) I]].
//
// These follow the project's physics notes and the review of Weedbrook et al., Rev. Mod.
// Phys. 84, 621 (2012), arXiv:1110.3234, up to its factor conventions.
//
// # Sizes and allocation
//
// Every matrix here is a Matrix backed by a fixed array of MaxDim x MaxDim float64 values,
// so that the objective's hot path can run without heap allocation. States of up to
// MaxModes modes are supported; a larger request is a programming error and panics.
package gaussian
