package scenarios

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// BoltzmannEV is the Boltzmann constant in eV/K (CODATA; exact since the
// 2019 redefinition of the SI).
const BoltzmannEV = 8.617333262e-5

// Conventions for the exchange energy J of a material, and the factor that
// turns it into the model's exchange (the coupling that is K = J/kT).
//
//	ising       H = −J Σ s_i s_j, s = ±1, each bond once: factor 1
//	spin-half   H = −J Σ S_i S_j, S = ±1/2: S_i S_j = s_i s_j / 4, factor 1/4
//	minus-two-j H = −2J Σ S_i·S_j, S = 1/2 (its Ising part): 2 · 1/4, factor 1/2
//
// For Potts, clock and spin-1 models only ising applies: J multiplies the
// model's own exchange term (δ(σ_i, σ_j), cos(...), s_i s_j with s ∈ {1, 0, −1}).
var conventionFactor = map[string]float64{"ising": 1, "spin-half": 0.25, "minus-two-j": 0.5}

var conventionHelp = map[string]string{
	"ising":       "H = -J sum over bonds of s_i s_j, s = +-1, each bond counted once (J is the model's exchange)",
	"spin-half":   "H = -J sum of S_i S_j with S = +-1/2: the model's exchange is J/4",
	"minus-two-j": "H = -2J sum of S_i.S_j with S = 1/2 (Ising part): the model's exchange is J/2",
}

// ConventionNames lists the accepted conventions.
func ConventionNames() []string {
	var out []string
	for k := range conventionFactor {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}

// ConventionHelp describes a convention.
func ConventionHelp(c string) string { return conventionHelp[c] }

// Material is a material's exchange energy, converted.
type Material struct {
	Name       string
	Exchange   float64 // as given
	Unit       string  // meV or K
	Convention string
	// JModelK is the model's exchange J_model/k_B in kelvin: the energy
	// scale by which kT_c/J_model is multiplied.
	JModelK float64
}

// MaterialFrom checks and converts a [material] table.
func MaterialFrom(m *MaterialFile) (*Material, error) {
	conv := m.Convention
	if conv == "" {
		conv = "ising"
	}
	f, ok := conventionFactor[conv]
	if !ok {
		return nil, fmt.Errorf("convention %q; accepted: %s", conv, strings.Join(ConventionNames(), ", "))
	}
	if math.IsNaN(m.Exchange) || math.IsInf(m.Exchange, 0) || m.Exchange <= 0 {
		return nil, fmt.Errorf("exchange = %g: give the size of the material's exchange energy, a finite number > 0 (for an antiferromagnet, its magnitude; the sign belongs to the model's couplings)", m.Exchange)
	}
	var jK float64
	switch m.Unit {
	case "meV":
		jK = m.Exchange * 1e-3 / BoltzmannEV
	case "K":
		jK = m.Exchange
	default:
		return nil, fmt.Errorf("unit %q; accepted: meV, K", m.Unit)
	}
	return &Material{Name: m.Name, Exchange: m.Exchange, Unit: m.Unit, Convention: conv, JModelK: jK * f}, nil
}

// TcKelvin converts kT_c/J_model (the critical temperature in units of the
// model's exchange) into kelvin.
func (m *Material) TcKelvin(kTOverJ float64) float64 { return kTOverJ * m.JModelK }

// Caution is printed beside every transition temperature in kelvin.
func Caution(scheme string) string {
	return "an estimate, not a measurement: the approximation error of the " + scheme +
		" scheme carries into T_c, and factors of 2 to 4 in the exchange convention are the commonest error in such estimates"
}

// LatticeGasToIsing maps a lattice gas with nearest-neighbour attraction
// epsilon (H = −ε Σ n_i n_j − μ Σ n_i, n = 0, 1) on a lattice of
// coordination z to the Ising model by n = (1 + s)/2: exchange J = ε/4 and
// field H = μ/2 + z ε/4 (both energies; divide by kT for K and h), and the
// coverage is θ = (1 + m)/2. Half coverage (H = 0) is μ = −z ε/2.
// (K. Huang, Statistical Mechanics, 2nd ed., Wiley 1987, sect. 14.4; from
// memory, re-derived in the test.)
func LatticeGasToIsing(epsilon, mu float64, z int) (J, H float64) {
	return epsilon / 4, mu/2 + float64(z)*epsilon/4
}
