package decimation

import (
	"fmt"
	"math"
	"sort"
	"strconv"
)

// Lattice is a Bravais lattice in one or two dimensions. A site has
// integer coordinates c = (i, j) and the position i·A1 + j·A2; a chain has
// j = 0 throughout.
type Lattice struct {
	Name   string
	Dim    int
	A1, A2 [2]float64
	// shells are the squared distances of the first neighbour shells,
	// nearest first.
	shells []float64
}

// Lattices the block-spin engines know.
var (
	Square     = &Lattice{Name: "square", Dim: 2, A1: [2]float64{1, 0}, A2: [2]float64{0, 1}, shells: []float64{1, 2, 4}}
	Triangular = &Lattice{Name: "triangular", Dim: 2, A1: [2]float64{1, 0}, A2: [2]float64{0.5, math.Sqrt(3) / 2}, shells: []float64{1, 3, 4}}
	Linear     = &Lattice{Name: "chain", Dim: 1, A1: [2]float64{1, 0}, shells: []float64{1, 4, 9}}
)

// LatticeNames lists the lattices by name.
func LatticeNames() []string { return []string{"square", "triangular", "chain"} }

// LookupLattice returns the lattice called name.
func LookupLattice(name string) (*Lattice, error) {
	for _, l := range []*Lattice{Square, Triangular, Linear} {
		if l.Name == name {
			return l, nil
		}
	}
	return nil, &ParamError{Name: "lattice", Value: name, Reason: "unknown lattice; accepted: square, triangular, chain"}
}

// Pos returns the position of the lattice vector c.
func (l *Lattice) Pos(c [2]int) [2]float64 {
	return [2]float64{float64(c[0])*l.A1[0] + float64(c[1])*l.A2[0], float64(c[0])*l.A1[1] + float64(c[1])*l.A2[1]}
}

// Shell returns the neighbour shell (1 nearest, 2 next-nearest, 3 third)
// of the squared distance r2 in units of the lattice spacing squared, 0
// for r2 = 0 and −1 beyond the third shell.
func (l *Lattice) Shell(r2 float64) int {
	if r2 < 1e-9 {
		return 0
	}
	for k, s := range l.shells {
		if math.Abs(r2-s) < 1e-9*s {
			return k + 1
		}
	}
	return -1
}

// Shells returns how many neighbour shells the lattice names (three).
func (l *Lattice) Shells() int { return len(l.shells) }

// Blocking is a partition of a lattice into congruent blocks: the block at
// block coordinates (I, J) holds the sites Sites[k] + I·B1 + J·B2. The
// block centres form a lattice of the same kind as the sites, scaled by
// the rescaling factor b (and, for the triangular three-site block,
// rotated by 30°).
type Blocking struct {
	Lattice *Lattice
	Name    string   // e.g. "2x2", "triangle"
	Sites   [][2]int // offsets of the block's sites; Sites[0] is the site a decimation rule keeps
	B1, B2  [2]int   // block lattice vectors in site coordinates (B2 = 0 on a chain)
	b       float64
}

// Rescale returns the length rescaling factor b.
func (bl *Blocking) Rescale() float64 { return bl.b }

// Size returns the number of sites in a block.
func (bl *Blocking) Size() int { return len(bl.Sites) }

// NewBlocking returns the blocks of n sites on lattice l: on the square
// lattice n = 4 (2×2, b = 2) or 9 (3×3, b = 3); on the triangular lattice
// n = 3 (an elementary up-triangle, b = √3); on the chain any n ≥ 2 (b = n).
// n = 0 picks the lattice's default (4, 3 and 2). A block that does not tile
// the lattice is refused with what is accepted.
func NewBlocking(l *Lattice, n int) (*Blocking, error) {
	bad := func(accepted string) error {
		return &ParamError{Name: "block", Value: strconv.Itoa(n),
			Reason: fmt.Sprintf("a block of %d sites does not tile the %s lattice here; accepted: %s", n, l.Name, accepted)}
	}
	switch l {
	case Square:
		switch n {
		case 0, 4:
			return &Blocking{Lattice: l, Name: "2x2", Sites: [][2]int{{0, 0}, {1, 0}, {0, 1}, {1, 1}}, B1: [2]int{2, 0}, B2: [2]int{0, 2}, b: 2}, nil
		case 9:
			var s [][2]int
			// The centre first: the decimation rule keeps it.
			s = append(s, [2]int{1, 1})
			for j := 0; j < 3; j++ {
				for i := 0; i < 3; i++ {
					if i != 1 || j != 1 {
						s = append(s, [2]int{i, j})
					}
				}
			}
			return &Blocking{Lattice: l, Name: "3x3", Sites: s, B1: [2]int{3, 0}, B2: [2]int{0, 3}, b: 3}, nil
		}
		return nil, bad("4 (2×2 blocks, b = 2) or 9 (3×3 blocks, b = 3)")
	case Triangular:
		if n == 0 || n == 3 {
			// Up-triangles on the √3 × √3 superlattice: B1 = (1, 1) and
			// B2 = (2, −1) have length √3 at 60° and index 3.
			return &Blocking{Lattice: l, Name: "triangle", Sites: [][2]int{{0, 0}, {1, 0}, {0, 1}}, B1: [2]int{1, 1}, B2: [2]int{2, -1}, b: math.Sqrt(3)}, nil
		}
		return nil, bad("3 (three-site triangles, b = √3)")
	case Linear:
		if n == 0 {
			n = 2
		}
		if n < 2 || n > 64 {
			return nil, bad("2 to 64 consecutive sites")
		}
		s := make([][2]int, n)
		for i := range s {
			s[i] = [2]int{i, 0}
		}
		return &Blocking{Lattice: l, Name: strconv.Itoa(n) + " sites", Sites: s, B1: [2]int{n, 0}, b: float64(n)}, nil
	}
	return nil, fmt.Errorf("decimation: unknown lattice %q", l.Name)
}

// Site returns the site coordinates of site k of block (I, J).
func (bl *Blocking) Site(blk [2]int, k int) [2]int {
	s := bl.Sites[k]
	return [2]int{s[0] + blk[0]*bl.B1[0] + blk[1]*bl.B2[0], s[1] + blk[0]*bl.B1[1] + blk[1]*bl.B2[1]}
}

// Locate returns the block holding site c and the site's index in it.
func (bl *Blocking) Locate(c [2]int) (blk [2]int, k int) {
	det := bl.B1[0]*bl.B2[1] - bl.B1[1]*bl.B2[0]
	for k, s := range bl.Sites {
		dx, dy := c[0]-s[0], c[1]-s[1]
		if bl.Lattice.Dim == 1 {
			if dy == 0 && dx%bl.B1[0] == 0 {
				return [2]int{dx / bl.B1[0], 0}, k
			}
			continue
		}
		// Solve (dx, dy) = I·B1 + J·B2 by Cramer's rule.
		in := dx*bl.B2[1] - dy*bl.B2[0]
		jn := bl.B1[0]*dy - bl.B1[1]*dx
		if in%det == 0 && jn%det == 0 {
			return [2]int{in / det, jn / det}, k
		}
	}
	panic(fmt.Sprintf("decimation: site %v lies in no block of %s", c, bl.Name))
}

// BlockShell returns the neighbour shell of the block-lattice vector d
// (in block coordinates), measured on the block lattice: 1 for nearest
// blocks, 0 for the same block, −1 beyond the third shell.
func (bl *Blocking) BlockShell(d [2]int) int {
	c := [2]int{d[0]*bl.B1[0] + d[1]*bl.B2[0], d[0]*bl.B1[1] + d[1]*bl.B2[1]}
	p := bl.Lattice.Pos(c)
	return bl.Lattice.Shell((p[0]*p[0] + p[1]*p[1]) / (bl.b * bl.b))
}

// SiteShell returns the neighbour shell between sites c and e.
func (l *Lattice) SiteShell(c, e [2]int) int {
	p := l.Pos([2]int{e[0] - c[0], e[1] - c[1]})
	return l.Shell(p[0]*p[0] + p[1]*p[1])
}

// neighbourVectors returns the lattice vectors of shells 1..k, sorted.
func (l *Lattice) neighbourVectors(k int) [][2]int {
	var out [][2]int
	r := 3
	for i := -r; i <= r; i++ {
		jr := r
		if l.Dim == 1 {
			jr = 0
		}
		for j := -jr; j <= jr; j++ {
			if s := l.SiteShell([2]int{}, [2]int{i, j}); s >= 1 && s <= k {
				out = append(out, [2]int{i, j})
			}
		}
	}
	sort.Slice(out, func(a, b int) bool {
		if out[a][0] != out[b][0] {
			return out[a][0] < out[b][0]
		}
		return out[a][1] < out[b][1]
	})
	return out
}
