// Package flow provides the scheme-independent mathematics of a real-space
// renormalization-group (RG) map: trajectories, fixed points (finite and at
// infinite coupling), their linearization, classification and scaling
// exponents.
//
// Package flow knows nothing of spin models, terminals or files. Engines
// (package decimation, user formulas) implement [Map]; every consumer (the
// command line, the explorer, tests) reads the plain result structs.
//
// # Conventions
//
// A map acts on a vector of n dimensionless couplings x = (x₁ … xₙ), in the
// order of [Map.Couplings]. One step x → x′ rescales lengths by b > 1
// ([Map.Rescale]) on a lattice of dimension d ([Map.Dimension]) and returns
// a constant g(x) per site of the lattice before the step:
//
//	ln Z_N(x) = N g(x) + ln Z_{N/bᵈ}(x′),
//
// so that the reduced free energy per site is
//
//	ln Z/N = Σ_{n≥0} b^{-dn} g(xₙ).
//
// Engines whose natural unit is the bond (hierarchical lattices) declare it
// through [PerBonder] and report g per bond together with their sites per
// bond.
//
// Eigenvalues λᵢ of the Jacobian ∂x′/∂x at a fixed point give the scaling
// exponents yᵢ = ln|λᵢ| / ln b. A direction is relevant when |λ| > 1,
// irrelevant when |λ| < 1 and marginal within a stated tolerance of 1.
//
// # Couplings at infinity
//
// A coupling that can run to +∞ or −∞ declares, per sign, a compactified
// coordinate u(x) with u → 0 at that infinity (Ising exchange e^{−2K}, Potts
// e^{−K}, a field e^{−2|h|}). Fixed points at infinite coupling are searched
// for and linearized in that coordinate; the output names it, because
// exponents there depend on it. Limits at the boundary u = 0 are taken by
// one-sided Richardson extrapolation, with an error estimate.
//
// # Symmetry
//
// Each coupling is either symmetric (even under the model's symmetry group,
// e.g. the Ising spin flip) or symmetry-breaking. The symmetric couplings span
// a subspace that the map leaves invariant, so at a symmetric fixed point the
// Jacobian is block-triangular and its eigenvalues split into a symmetric and a
// symmetry-breaking block.
//
// # Classification
//
// A fixed point is classified by r, the number of relevant symmetric
// directions: r = 0 sink, r = 1 critical, r ≥ 2 multicritical. Directions of a
// family of fixed points (free directions) are marginal by construction and
// do not count; one-body directions (field, crystal field) do not count at a
// fixed point whose two-site couplings are all zero. A fixed point with a
// two-site coupling at infinity (zero temperature) whose leading
// symmetry-breaking exponent equals d is a discontinuity fixed point: it
// controls a first-order transition.
//
// # Scaling relations
//
// From y_t (leading symmetric) and y_h (leading symmetry-breaking):
//
//	ν = 1/y_t            (definition)
//	η = d + 2 − 2 y_h    (scaling)
//	α = 2 − d/y_t        (hyperscaling, Josephson)
//	β = (d − y_h)/y_t    (scaling)
//	γ = (2 y_h − d)/y_t  (scaling, Fisher)
//	δ = y_h/(d − y_h)    (scaling, Widom)
//
// and at a multicritical point the crossover exponent φ = y₂/y₁.
package flow
