// Package decimation provides the spin models of scalewalk and the exact
// decimation of the one-dimensional chain, as renormalization-group maps
// for package flow.
//
// # Models
//
// A [Model] is a nearest-neighbour spin model given by its bond Boltzmann
// matrix W(s, s′) = exp(−H_bond/kT), held in log space as an edge vector:
// the q·q entries ln W(s, s′) row-major. The couplings x enter linearly,
//
//	ln W = Σ_a x_a φ_a,
//
// with φ_a the basis matrix of coupling a; a one-body term f(s) is split
// half onto each end of a bond, φ = (f(s) + f(s′))/2, so that on a ring
// Z_N = Tr W^N exactly. The models are ising, potts, clock and spin1 (see
// [Models] for their Hamiltonians and coupling names). Field-free Potts
// models with non-integer q, or with q < 2, use instead the two-entry
// algebra W = a I + c E (I the identity, E the all-ones matrix), stored as
// (ln w_same, ln w_diff) and multiplied by
//
//	same″ = same·same′ + (q−1) diff·diff′,
//	diff″ = same·diff′ + diff·same′ + (q−2) diff·diff′.
//
// Products are computed with log-sum-exp, the largest term factored out, so
// couplings of order 10³ stay finite. [Model.Project] returns the
// least-squares coefficients of a log matrix on the basis plus a constant,
// through a pseudo-inverse computed once by SVD; [Model.Residual] is the
// part the basis cannot hold (the closure error).
//
// # Conventions
//
// Couplings are dimensionless (−H/kT). A step x → x′ returns the constant
// g(x) per site of the lattice before the step (as package flow requires):
// for the chain, W(x)^b = e^c W(x′) and Z_N = Tr W^N give
//
//	ln Z_N(x) = N (c/b) + ln Z_{N/b}(x′),  g = c/b,
//
// so that ln Z/N = Σ_n b^{−n} g(x_n). The Potts coupling is K δ(σ_i, σ_j),
// so K_Potts = 2 K_Ising at q = 2. Lengths of slices are programmer errors
// and panic with a "decimation: " prefix; bad parameter values and points
// outside a domain are returned as errors ([ErrParam], [ErrDomain]); a
// step outside the domain writes NaN.
//
// # Concurrency
//
// Models are immutable. A [Chain] is safe for concurrent use; its Step
// allocates nothing (buffers live on the stack for q ≤ 4 and in a
// sync.Pool otherwise).
//
// # References
//
//   - D. R. Nelson, M. E. Fisher, Soluble renormalization groups and
//     scaling fields for low-dimensional Ising systems, Ann. Phys. 91, 226
//     (1975): exact decimation of the Ising chain, with and without field.
//   - R. J. Baxter, Exactly Solved Models in Statistical Mechanics
//     (Academic Press, 1982), ch. 2: transfer matrix and free energy of
//     the Ising chain.
//   - F. Y. Wu, The Potts model, Rev. Mod. Phys. 54, 235 (1982): the Potts
//     model for general q and its transfer matrix.
package decimation
