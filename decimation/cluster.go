package decimation

import (
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

	"gonum.org/v1/gonum/mat"

	"scalewalk/flow"
)

// Cluster is finite-cluster renormalization: a cluster of blocks on a
// lattice is enumerated exactly; each configuration of the block spins μ
// gets the weight
//
//	W(μ) = Σ_s Π_blocks P(μ_B | s_B) exp(−H(s)/kT),
//
// and the renormalized couplings are the least-squares fit
// ln W(μ) ≈ c + Σ_a x′_a Φ_a(μ) over all block configurations, Φ_a the
// block-level interaction sums of the cluster. The fit residual (root mean
// square over block configurations) is the closure error.
//
// Speed by design: the spin configurations are enumerated once, at
// construction, into a table of their summed rule weights by block
// configuration and by the values of each interaction sum; a step is a sum
// over that table.
type Cluster struct {
	bl       *Blocking
	rule     Rule
	keep     keptSet
	cs       []flow.Coupling
	q        int
	periodic bool
	nblocks  int     // block spins in the cluster
	asked    int     // blocks asked for (the chain check adds an end spin)
	nsites   int     // sites in the cluster
	sites    float64 // sites the constant is shared over (chain ends count half)

	feat  []feature // one per kept coupling, in the order of x
	nconf int       // q^nblocks block configurations
	// Per block configuration, the table entries: idx[e*nf+f] is the value
	// index of feature f, wt[e] the summed weight; start[μ] .. start[μ+1].
	start []int
	idx   []int16
	wt    []float64

	design *mat.Dense // nconf × (1 + nf): 1 and the block-level sums
	pinv   *mat.Dense // (1 + nf) × nconf

	owner, ownerK []int // per site: its block and its index in the block

	pool sync.Pool
}

// feature is one kept interaction sum: its value is (min + k·step)/scale
// for the value index k = 0 … n−1.
type feature struct {
	name       string
	min, step  int
	n          int
	scale      float64
	pairs      [][2]int // site pairs (pair couplings)
	siteW      []int    // per site weight in units of 1/scale (field)
	pv         []int    // q×q pair values, or q site values
	blockPairs [][2]int // block-level pairs
	blockW     []float64
}

// ClusterSpec chooses a cluster.
type ClusterSpec struct {
	Blocks   int  // blocks in the cluster; 0 = the lattice's default
	Periodic bool // periodic boundary (at least 3 blocks wide)
	// MaxConfigs and MaxBytes bound the enumeration; 0 = the defaults
	// (2^31 configurations, 1 GiB of tables).
	MaxConfigs float64
	MaxBytes   float64
}

// clusterShape returns the block coordinates of a cluster of n blocks and,
// for a periodic one, the torus widths (m1, m2) in blocks.
func clusterShape(bl *Blocking, n int, periodic bool) (blocks [][2]int, m1, m2 int, err error) {
	bad := func(accepted string) error {
		b := "free"
		if periodic {
			b = "periodic"
		}
		return &ParamError{Name: "blocks", Value: fmt.Sprint(n), Reason: fmt.Sprintf("no %s cluster of %d blocks on the %s lattice; accepted: %s", b, n, bl.Lattice.Name, accepted)}
	}
	rect := func(a, b int) [][2]int {
		var out [][2]int
		for j := 0; j < b; j++ {
			for i := 0; i < a; i++ {
				out = append(out, [2]int{i, j})
			}
		}
		return out
	}
	switch bl.Lattice {
	case Square, Triangular:
		if periodic {
			if n == 9 {
				return rect(3, 3), 3, 3, nil
			}
			if n == 12 {
				return rect(4, 3), 4, 3, nil
			}
			return nil, 0, 0, bad("9 (3 × 3) or 12 (4 × 3); a periodic cluster must be at least 3 blocks wide, or block pairs are joined twice")
		}
		switch n {
		case 2:
			return rect(2, 1), 0, 0, nil
		case 4:
			return rect(2, 2), 0, 0, nil
		case 6:
			return rect(3, 2), 0, 0, nil
		case 9:
			return rect(3, 3), 0, 0, nil
		}
		if bl.Lattice == Triangular {
			switch n {
			case 3:
				return [][2]int{{0, 0}, {1, 0}, {0, 1}}, 0, 0, nil
			case 7:
				return [][2]int{{0, 0}, {1, 0}, {0, 1}, {1, -1}, {-1, 0}, {0, -1}, {-1, 1}}, 0, 0, nil
			}
			return nil, 0, 0, bad("2, 3 (a triangle of blocks), 4, 6, 7 (a block and its six neighbours), 9")
		}
		return nil, 0, 0, bad("2, 4 (2 × 2), 6 (3 × 2), 9 (3 × 3)")
	case Linear:
		if periodic && n < 3 {
			return nil, 0, 0, bad("3 or more; a periodic cluster must be at least 3 blocks wide, or block pairs are joined twice")
		}
		if n < 1 || n > 64 {
			return nil, 0, 0, bad("1 to 64")
		}
		out := make([][2]int, n)
		for i := range out {
			out[i] = [2]int{i, 0}
		}
		if periodic {
			return out, n, 0, nil
		}
		return out, 0, 0, nil
	}
	return nil, 0, 0, fmt.Errorf("decimation: unknown lattice")
}

// DefaultClusterBlocks returns the default number of blocks of a cluster on
// the lattice: 4 on the square lattice, 7 on the triangular, 1 on the chain
// (one block and the next block's spin: the exact decimation).
func DefaultClusterBlocks(l *Lattice) int {
	switch l {
	case Square:
		return 4
	case Triangular:
		return 7
	}
	return 1
}

// NewCluster returns the finite-cluster map of model m (Ising, or Potts
// with integer q) on the blocking bl.
func NewCluster(m *Model, bl *Blocking, rule Rule, keep []string, spec ClusterSpec) (*Cluster, error) {
	if m.Algebra() || m.absent["h"] != "" && contains(keep, "h") {
		return nil, &ParamError{Name: "model", Value: m.Name(), Reason: "the cluster engine enumerates integer states; accepted: ising, potts with integer q >= 2"}
	}
	if !strings.HasPrefix(m.Name(), "ising") && !strings.HasPrefix(m.Name(), "potts") {
		return nil, &ParamError{Name: "model", Value: m.Name(), Reason: "the cluster engine has K, L, M, h for the Ising and Potts models only; accepted: ising, potts with integer q >= 2"}
	}
	ks, err := parseKeep(keep, bl.Lattice)
	if err != nil {
		return nil, err
	}
	n := spec.Blocks
	if n == 0 {
		n = DefaultClusterBlocks(bl.Lattice)
	}
	blocks, m1, m2, err := clusterShape(bl, n, spec.Periodic)
	if err != nil {
		return nil, err
	}
	q := int(m.States())
	c := &Cluster{bl: bl, rule: rule, keep: ks, q: q, periodic: spec.Periodic, asked: n}
	fieldAt := 0
	for i, cp := range m.Couplings() {
		if cp.Name == "h" {
			fieldAt = i
		}
	}
	word := "X s_i s_j"
	if strings.HasPrefix(m.Name(), "potts") {
		word = "X δ(σ_i, σ_j)"
	}
	c.cs = ks.couplings(bl.Lattice, word+" between sites and between block spins alike", m.Couplings(), fieldAt)
	if err := c.geometry(m, blocks, m1, m2); err != nil {
		return nil, err
	}
	if err := c.checkAliases(); err != nil {
		return nil, err
	}
	if err := c.enumerate(spec); err != nil {
		return nil, err
	}
	if err := c.fitMatrix(); err != nil {
		return nil, err
	}
	return c, nil
}

func contains(list []string, w string) bool {
	for _, v := range list {
		if v == w {
			return true
		}
	}
	return false
}

// geometry lays out the cluster's sites, bonds and block-level sums.
func (c *Cluster) geometry(m *Model, blocks [][2]int, m1, m2 int) error {
	bl := c.bl
	lat := bl.Lattice
	chain := lat == Linear
	// Torus reduction of site and block coordinates.
	redBlock := func(B [2]int) [2]int {
		if !c.periodic {
			return B
		}
		B[0] = ((B[0] % m1) + m1) % m1
		if m2 > 0 {
			B[1] = ((B[1] % m2) + m2) % m2
		}
		return B
	}
	type member struct{ block, k int }
	siteIx := map[[2]int]int{}
	var owner []member
	blockIx := map[[2]int]int{}
	for bi, B := range blocks {
		blockIx[B] = bi
		for k := range bl.Sites {
			siteIx[bl.Site(B, k)] = len(owner)
			owner = append(owner, member{bi, k})
		}
	}
	weights := make([]int, len(owner))
	for i := range weights {
		weights[i] = 2
	}
	nb := len(blocks)
	// The chain check: one more block spin, the next block's first site,
	// and half fields at the two ends (each end is shared with the
	// neighbouring segment).
	if chain && !c.periodic {
		end := bl.Site([2]int{len(blocks), 0}, 0)
		siteIx[end] = len(owner)
		owner = append(owner, member{nb, 0})
		weights = append(weights, 1)
		weights[0] = 1
		blockIx[[2]int{len(blocks), 0}] = nb
		nb++
	}
	c.nblocks = nb
	c.nsites = len(owner)
	c.sites = 0
	for _, w := range weights {
		c.sites += float64(w) / 2
	}
	// locate maps a site coordinate to its index in the cluster (−1 when
	// outside), reducing on the torus.
	locate := func(e [2]int) int {
		if !c.periodic {
			if i, ok := siteIx[e]; ok {
				return i
			}
			return -1
		}
		B, k := bl.Locate(e)
		return siteIx[bl.Site(redBlock(B), k)]
	}
	nbr := lat.neighbourVectors(3)
	site := make([][2]int, len(owner))
	for e, i := range siteIx {
		site[i] = e
	}
	q := c.q
	// The model's pair function of K and its field function, as integers.
	phiK := m.Basis(0)
	pv := make([]int, q*q)
	for k, v := range phiK {
		if v != math.Round(v) {
			return fmt.Errorf("decimation: pair values of %s are not integers", m.Name())
		}
		pv[k] = int(v)
	}
	var sv []int
	if c.keep.field {
		for a, cp := range m.Couplings() {
			if cp.Name == "h" {
				phi := m.Basis(a)
				sv = make([]int, q)
				for s := 0; s < q; s++ {
					sv[s] = int(math.Round(phi[s*q+s]))
				}
			}
		}
	}
	for _, s := range c.keep.shells {
		f := feature{name: blockCouplingNames[s-1], pv: pv, scale: 1}
		for i, x := range site {
			for _, v := range nbr {
				if lat.SiteShell([2]int{}, v) != s || v[0] < 0 || (v[0] == 0 && v[1] < 0) {
					continue
				}
				j := locate([2]int{x[0] + v[0], x[1] + v[1]})
				if j >= 0 {
					f.pairs = append(f.pairs, [2]int{i, j})
				}
			}
		}
		// Block-level pairs of the same shell.
		for B, bi := range blockIx {
			for _, v := range nbr {
				D := [2]int{B[0] + v[0], B[1] + v[1]}
				if chain {
					D = [2]int{B[0] + v[0], 0}
				}
				if bl.BlockShell(v) != s || (chain && v[1] != 0) {
					continue
				}
				D = redBlock(D)
				bj, ok := blockIx[D]
				if !ok || bj == bi {
					continue
				}
				if v[0] < 0 || (v[0] == 0 && v[1] < 0) {
					continue // each pair once
				}
				key := [2]int{min(bi, bj), max(bi, bj)}
				f.blockPairs = append(f.blockPairs, key)
				f.blockW = append(f.blockW, 1)
			}
		}
		if len(f.blockPairs) == 0 {
			return &ParamError{Name: "keep", Value: f.name, Reason: fmt.Sprintf("coupling %s cannot be fitted: the %d-block cluster has no pair of blocks at that distance; choose more blocks or drop %s", f.name, len(blocks), f.name)}
		}
		c.feat = append(c.feat, f)
	}
	if c.keep.field {
		f := feature{name: "h", pv: sv, scale: 2, siteW: weights}
		f.blockW = make([]float64, nb)
		for i := range f.blockW {
			f.blockW[i] = 1
		}
		if chain && !c.periodic {
			f.blockW[0], f.blockW[nb-1] = 0.5, 0.5
		}
		c.feat = append(c.feat, f)
	}
	for fi := range c.feat {
		f := &c.feat[fi]
		lo, hi, g := 0, 0, 0
		add := func(vals []int, w int) {
			mn, mx := math.MaxInt, math.MinInt
			for _, v := range vals {
				mn, mx = min(mn, w*v), max(mx, w*v)
			}
			lo += mn
			hi += mx
			for _, v := range vals {
				g = gcd(g, w*v-mn)
			}
		}
		if f.siteW != nil {
			for _, w := range f.siteW {
				add(f.pv, w)
			}
		} else {
			for range f.pairs {
				add(f.pv, 1)
			}
		}
		if g == 0 {
			g = 1
		}
		f.min, f.step, f.n = lo, g, (hi-lo)/g+1
	}
	c.owner = make([]int, len(owner))
	c.ownerK = make([]int, len(owner))
	for i, o := range owner {
		c.owner[i], c.ownerK[i] = o.block, o.k
	}
	return nil
}

func gcd(a, b int) int {
	if a < 0 {
		a = -a
	}
	if b < 0 {
		b = -b
	}
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// ClusterCost estimates the enumeration of a cluster: the spin
// configurations q^N and the bytes of the count tables.
func (c *Cluster) cost(workers int) (configs, bytes float64) {
	configs = math.Pow(float64(c.q), float64(c.nsites))
	F := 1.0
	for _, f := range c.feat {
		F *= float64(f.n)
	}
	return configs, float64(c.nconf) * F * 8 * float64(workers)
}

// enumerate fills the count table: for every spin configuration, its rule
// weights by block configuration, binned by the values of the interaction
// sums. The configurations are split over the cores by the states of the
// last sites.
func (c *Cluster) enumerate(spec ClusterSpec) error {
	q, N, nf := c.q, c.nsites, len(c.feat)
	c.nconf = 1
	for i := 0; i < c.nblocks; i++ {
		c.nconf *= q
	}
	workers := runtime.GOMAXPROCS(0)
	maxConf, maxBytes := spec.MaxConfigs, spec.MaxBytes
	if maxConf == 0 {
		maxConf = 1 << 32
	}
	if maxBytes == 0 {
		maxBytes = 1 << 30
	}
	conf, bytes := c.cost(workers)
	if conf > maxConf {
		return &ParamError{Name: "blocks", Value: fmt.Sprint(c.asked), Reason: fmt.Sprintf(
			"cluster too large: %d sites with %d states have %.3g configurations to enumerate (about %.3g s at 5 ns each on one core); accepted up to %.3g: choose fewer blocks",
			N, q, conf, conf*5e-9, maxConf)}
	}
	if bytes > maxBytes {
		return &ParamError{Name: "blocks", Value: fmt.Sprint(c.asked), Reason: fmt.Sprintf(
			"cluster too large for memory with keep=%s: the count tables need about %.0f MB (%d block configurations × the values of %d interaction sums × %d cores); accepted up to %.0f MB: choose fewer blocks or fewer kept couplings",
			c.keepText(), bytes/1e6, c.nconf, nf, workers, maxBytes/1e6)}
	}
	F := 1
	stride := make([]int, nf)
	for fi, f := range c.feat {
		stride[fi] = F
		F *= f.n
	}
	// Neighbour lists per site and feature; field weights.
	type nb struct{ f, j int }
	adj := make([][]nb, N)
	for fi, f := range c.feat {
		for _, p := range f.pairs {
			adj[p[0]] = append(adj[p[0]], nb{fi, p[1]})
			adj[p[1]] = append(adj[p[1]], nb{fi, p[0]})
		}
	}
	fieldF := c.keep.fieldIndex()
	// Block members and rule tables by block size.
	members := make([][]int, c.nblocks)
	for i := 0; i < N; i++ {
		B := c.owner[i]
		for len(members[B]) <= c.ownerK[i] {
			members[B] = append(members[B], -1)
		}
		members[B][c.ownerK[i]] = i
	}
	type entry struct {
		mu int
		w  float64
	}
	ruleTab := map[int][][]entry{}
	for _, mem := range members {
		n := len(mem)
		if _, ok := ruleTab[n]; ok {
			continue
		}
		tot := 1
		for i := 0; i < n; i++ {
			tot *= q
		}
		tab := make([][]entry, tot)
		st := make([]int, n)
		w := make([]float64, q)
		for ix := 0; ix < tot; ix++ {
			r := ix
			for k := 0; k < n; k++ {
				st[k] = r % q
				r /= q
			}
			c.rule.weights(w, st, q)
			for mu, v := range w {
				if v != 0 {
					tab[ix] = append(tab[ix], entry{mu, v})
				}
			}
		}
		ruleTab[n] = tab
	}
	pow := make([]int, N+1) // q^k
	pow[0] = 1
	for k := 1; k <= N; k++ {
		pow[k] = pow[k-1] * q
	}
	// Chunks: the states of the last T sites.
	T := 0
	for T < N-1 && pow[T] < 16*workers {
		T++
	}
	L := N - T
	chunks := make(chan int, pow[T])
	for k := 0; k < pow[T]; k++ {
		chunks <- k
	}
	close(chunks)
	tables := make([][]float64, workers)
	var wg sync.WaitGroup
	for wkr := 0; wkr < workers; wkr++ {
		wg.Add(1)
		go func(wkr int) {
			defer wg.Done()
			tab := make([]float64, c.nconf*F)
			tables[wkr] = tab
			s := make([]int, N)
			sum := make([]int, nf)
			bidx := make([]int, c.nblocks)
			cur := make([]entry, 0, c.nconf)
			nxt := make([]entry, 0, c.nconf)
			change := func(i, b int) {
				a := s[i]
				for _, e := range adj[i] {
					pv := c.feat[e.f].pv
					sum[e.f] += pv[b*q+s[e.j]] - pv[a*q+s[e.j]]
				}
				if fieldF >= 0 {
					f := &c.feat[fieldF]
					sum[fieldF] += f.siteW[i] * (f.pv[b] - f.pv[a])
				}
				bidx[c.owner[i]] += (b - a) * pow[c.ownerK[i]]
				s[i] = b
			}
			for ch := range chunks {
				// Start from all zeros, then set the chunk's sites.
				for i := range s {
					s[i] = 0
				}
				for fi := range sum {
					sum[fi] = 0
					f := &c.feat[fi]
					if f.siteW != nil {
						for i := range s {
							sum[fi] += f.siteW[i] * f.pv[0]
						}
					} else {
						sum[fi] = len(f.pairs) * f.pv[0]
					}
				}
				for B := range bidx {
					bidx[B] = 0
				}
				r := ch
				for k := L; k < N; k++ {
					change(k, r%q)
					r /= q
				}
				for {
					fix := 0
					for fi, f := range c.feat {
						fix += (sum[fi] - f.min) / f.step * stride[fi]
					}
					cur = append(cur[:0], entry{0, 1})
					for B, mem := range members {
						es := ruleTab[len(mem)][bidx[B]]
						if len(es) == 1 {
							for k := range cur {
								cur[k].mu += es[0].mu * pow[B]
								cur[k].w *= es[0].w
							}
							continue
						}
						nxt = nxt[:0]
						for _, e0 := range cur {
							for _, e := range es {
								nxt = append(nxt, entry{e0.mu + e.mu*pow[B], e0.w * e.w})
							}
						}
						cur, nxt = nxt, cur
					}
					for _, e := range cur {
						tab[e.mu*F+fix] += e.w
					}
					// Next configuration of the first L sites.
					i := 0
					for i < L {
						if s[i]+1 < q {
							change(i, s[i]+1)
							break
						}
						change(i, 0)
						i++
					}
					if i == L {
						break
					}
				}
			}
		}(wkr)
	}
	wg.Wait()
	total := tables[0]
	for _, t := range tables[1:] {
		for k, v := range t {
			total[k] += v
		}
	}
	c.start = make([]int, c.nconf+1)
	for mu := 0; mu < c.nconf; mu++ {
		for fix := 0; fix < F; fix++ {
			w := total[mu*F+fix]
			if w == 0 {
				continue
			}
			r := fix
			for fi, f := range c.feat {
				c.idx = append(c.idx, int16(r%f.n))
				r /= f.n
				_ = fi
			}
			c.wt = append(c.wt, w)
		}
		c.start[mu+1] = len(c.wt)
	}
	return nil
}

func (c *Cluster) keepText() string {
	var n []string
	for _, f := range c.feat {
		n = append(n, f.name)
	}
	return strings.Join(n, ",")
}

// checkAliases refuses, on a periodic cluster, a kept pair coupling whose
// pairs are joined more than once around the torus or coincide with the
// pairs of another shell: its sum would then not be the coupling's.
func (c *Cluster) checkAliases() error {
	if !c.periodic {
		return nil
	}
	owner := map[[2]int]string{}
	for _, f := range c.feat {
		if f.siteW != nil {
			continue
		}
		for _, list := range [][][2]int{f.pairs, f.blockPairs} {
			seen := map[[2]int]bool{}
			for _, p := range list {
				k := [2]int{min(p[0], p[1]), max(p[0], p[1])}
				if seen[k] {
					return &ParamError{Name: "keep", Value: f.name, Reason: fmt.Sprintf("on this %d-block periodic cluster the pairs of coupling %s are joined more than once around the torus; choose a wider cluster or drop %s", c.asked, f.name, f.name)}
				}
				seen[k] = true
			}
		}
		for _, p := range f.blockPairs {
			k := [2]int{min(p[0], p[1]), max(p[0], p[1])}
			if o, ok := owner[k]; ok && o != f.name {
				return &ParamError{Name: "keep", Value: f.name, Reason: fmt.Sprintf("on this %d-block periodic cluster the block pairs of %s coincide with those of %s around the torus; choose a wider cluster or drop %s", c.asked, f.name, o, f.name)}
			}
			owner[k] = f.name
		}
	}
	return nil
}

// value returns the value of feature f at index k.
func (f *feature) value(k int) float64 { return float64(f.min+k*f.step) / f.scale }

// blockValue returns the block-level sum of feature f at block
// configuration mu.
func (c *Cluster) blockValue(f *feature, mu int) float64 {
	st := make([]int, c.nblocks)
	for B := range st {
		st[B] = mu % c.q
		mu /= c.q
	}
	v := 0.0
	if f.siteW != nil {
		for B, w := range f.blockW {
			v += w * float64(f.pv[st[B]])
		}
		return v
	}
	for _, p := range f.blockPairs {
		v += float64(f.pv[st[p[0]]*c.q+st[p[1]]])
	}
	return v
}

// fitMatrix builds the design matrix of the least-squares match and its
// pseudo-inverse; couplings the cluster cannot tell apart are refused.
func (c *Cluster) fitMatrix() error {
	nf := len(c.feat)
	c.design = mat.NewDense(c.nconf, nf+1, nil)
	for mu := 0; mu < c.nconf; mu++ {
		c.design.Set(mu, 0, 1)
		for fi := range c.feat {
			c.design.Set(mu, fi+1, c.blockValue(&c.feat[fi], mu))
		}
	}
	for fi, f := range c.feat {
		col := mat.Col(nil, fi+1, c.design)
		lo, hi := col[0], col[0]
		for _, v := range col {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if hi == lo {
			_ = fi
			return &ParamError{Name: "keep", Value: f.name, Reason: fmt.Sprintf("coupling %s cannot be fitted: its block-level sum is the same in every block configuration of this cluster; choose more blocks or drop %s", f.name, f.name)}
		}
	}
	var svd mat.SVD
	if !svd.Factorize(c.design, mat.SVDThin) {
		return fmt.Errorf("decimation: SVD of the cluster's design matrix failed")
	}
	sv := svd.Values(nil)
	if sv[len(sv)-1] < 1e-10*sv[0] {
		return &ParamError{Name: "keep", Value: "", Reason: "the kept couplings cannot be told apart on this cluster (their block-level sums are linearly dependent); choose more blocks or keep fewer couplings"}
	}
	var u, v mat.Dense
	svd.UTo(&u)
	svd.VTo(&v)
	// pinv = V Σ⁻¹ Uᵀ.
	k := len(sv)
	vs := mat.NewDense(nf+1, k, nil)
	for i := 0; i < nf+1; i++ {
		for j := 0; j < k; j++ {
			vs.Set(i, j, v.At(i, j)/sv[j])
		}
	}
	c.pinv = mat.NewDense(nf+1, c.nconf, nil)
	c.pinv.Mul(vs, u.T())
	return nil
}

type clusterWork struct {
	e         [][]float64
	lnW, coef []float64
	lnWv, cv  *mat.VecDense // views of lnW and coef
}

func (c *Cluster) work() *clusterWork {
	if w, ok := c.pool.Get().(*clusterWork); ok {
		return w
	}
	w := &clusterWork{lnW: make([]float64, c.nconf), coef: make([]float64, len(c.feat)+1)}
	w.lnWv, w.cv = mat.NewVecDense(c.nconf, w.lnW), mat.NewVecDense(len(w.coef), w.coef)
	for _, f := range c.feat {
		w.e = append(w.e, make([]float64, f.n))
	}
	return w
}

// logWeights fills lnW[μ] = ln W(μ) at the couplings x.
func (c *Cluster) logWeights(lnW []float64, w *clusterWork, x []float64) {
	nf := len(c.feat)
	base := 0.0
	for fi := range c.feat {
		f := &c.feat[fi]
		xa := x[fi]
		shift := math.Max(xa*f.value(0), xa*f.value(f.n-1))
		base += shift
		e := w.e[fi]
		for k := range e {
			e[k] = math.Exp(xa*f.value(k) - shift)
		}
	}
	for mu := 0; mu < c.nconf; mu++ {
		sum := 0.0
		lo, hi := c.start[mu], c.start[mu+1]
		switch nf {
		case 1:
			e0 := w.e[0]
			for k := lo; k < hi; k++ {
				sum += c.wt[k] * e0[c.idx[k]]
			}
		case 2:
			e0, e1 := w.e[0], w.e[1]
			for k := lo; k < hi; k++ {
				sum += c.wt[k] * e0[c.idx[2*k]] * e1[c.idx[2*k+1]]
			}
		default:
			for k := lo; k < hi; k++ {
				p := c.wt[k]
				for fi := 0; fi < nf; fi++ {
					p *= w.e[fi][c.idx[k*nf+fi]]
				}
				sum += p
			}
		}
		if sum > 1e-280 && !math.IsInf(sum, 0) {
			lnW[mu] = base + math.Log(sum)
			continue
		}
		// Far from balance: log-sum-exp term by term.
		mx := math.Inf(-1)
		for k := lo; k < hi; k++ {
			t := math.Log(c.wt[k])
			for fi := 0; fi < nf; fi++ {
				t += x[fi] * c.feat[fi].value(int(c.idx[k*nf+fi]))
			}
			mx = math.Max(mx, t)
		}
		s := 0.0
		for k := lo; k < hi; k++ {
			t := math.Log(c.wt[k])
			for fi := 0; fi < nf; fi++ {
				t += x[fi] * c.feat[fi].value(int(c.idx[k*nf+fi]))
			}
			s += math.Exp(t - mx)
		}
		lnW[mu] = mx + math.Log(s)
	}
}

// Couplings returns the kept couplings.
func (c *Cluster) Couplings() []flow.Coupling { return append([]flow.Coupling(nil), c.cs...) }

// Rescale returns b.
func (c *Cluster) Rescale() float64 { return c.bl.b }

// Dimension returns the lattice dimension.
func (c *Cluster) Dimension() float64 { return float64(c.bl.Lattice.Dim) }

// Symmetry names the model's symmetry (broken by h when kept).
func (c *Cluster) Symmetry() string {
	if c.q == 2 {
		return "Z2 spin flip"
	}
	return fmt.Sprintf("S_%d permutations", c.q)
}

// Sites returns the number of sites and of block spins in the cluster.
func (c *Cluster) Sites() (sites, blocks int) { return c.nsites, c.nblocks }

// Entries returns the number of entries of the count table.
func (c *Cluster) Entries() int { return len(c.wt) }

// Step writes the fitted block couplings into dst and returns the
// constant per site: the fitted constant shared over the cluster's sites
// (an end site of the chain check counts half).
func (c *Cluster) Step(dst, x []float64) float64 {
	if !blockStepInput("cluster", dst, x, len(c.cs)) {
		return math.NaN()
	}
	w := c.work()
	defer c.pool.Put(w)
	c.logWeights(w.lnW, w, x)
	w.cv.MulVec(c.pinv, w.lnWv)
	copy(dst, w.coef[1:])
	if i := c.keep.fieldIndex(); i >= 0 && x[i] == 0 {
		dst[i] = 0 // the weights are symmetric: h′ = 0 but for rounding
	}
	return w.coef[0] / c.sites
}

// Closure returns the root-mean-square residual of the fit over the block
// configurations at x.
func (c *Cluster) Closure(x []float64) float64 {
	w := c.work()
	defer c.pool.Put(w)
	c.logWeights(w.lnW, w, x)
	w.cv.MulVec(c.pinv, w.lnWv)
	s := 0.0
	for mu := 0; mu < c.nconf; mu++ {
		r := w.lnW[mu] - mat.Dot(c.design.RowView(mu), w.cv)
		s += r * r
	}
	return math.Sqrt(s / float64(c.nconf))
}

// FieldBound returns 1: the Ising spin and the Potts indicator are at
// most 1 in magnitude per site (see flow.FieldBounder).
func (c *Cluster) FieldBound(int) float64 { return 1 }

// Cautions says what the finite cluster cannot give well.
func (c *Cluster) Cautions() []string {
	var out []string
	if !c.periodic && c.bl.Lattice != Linear {
		out = append(out, "a free-boundary cluster's constant g misses the bonds that cross its edge, so its free energy and energy are biased (for the 4-block square cluster the high-temperature energy comes out about a quarter too small); critical couplings and exponents do not use g")
	}
	if c.keep.field {
		out = append(out, "in the ordered phase the least-squares fit carries the field into a strongly coupled region of its own, so responses to the field there are refused with a flag")
	}
	return out
}
