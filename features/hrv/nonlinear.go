package hrv

import (
	"fmt"
	"math"
	"slices"
)

// Poincare returns the Poincare plot descriptors of a contiguous NN series
// (Brennan, Palaniswami and Kamen, IEEE Trans Biomed Eng 48(11):1342-1347,
// 2001): SD1, the standard deviation of (NN[i+1]-NN[i])/sqrt 2 across the
// identity line, and SD2, that of (NN[i+1]+NN[i])/sqrt 2 along it (ms).
// With the same estimator SD1^2 = SDSD^2/2 exactly and
// SD2^2 = 2 SDNN^2 - SDSD^2/2 up to O(1/N) end effects. It needs three
// intervals (two with Population).
func Poincare(nn []float64, norm Norm) (sd1, sd2 float64, err error) {
	if err := checkNN(nn); err != nil {
		return math.NaN(), math.NaN(), err
	}
	if len(nn)-1 < minSD(norm) {
		return math.NaN(), math.NaN(), fmt.Errorf("hrv: Poincare of %d intervals: %w", len(nn), ErrTooFew)
	}
	a, b := poincarePairs(nil, nil, nn)
	return sd(a, norm), sd(b, norm), nil
}

func poincarePairs(a, b, nn []float64) ([]float64, []float64) {
	for i := 1; i < len(nn); i++ {
		a = append(a, (nn[i]-nn[i-1])/math.Sqrt2)
		b = append(b, (nn[i]+nn[i-1])/math.Sqrt2)
	}
	return a, b
}

// checkEntropy validates SampEn/ApEn parameters.
func checkEntropy(x []float64, m int, r float64) error {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("hrv: entropy: value %d is %v: %w", i, v, ErrInput)
		}
	}
	if m < 1 {
		return fmt.Errorf("hrv: entropy: template length %d: %w", m, ErrInput)
	}
	if math.IsNaN(r) || math.IsInf(r, 0) || r < 0 {
		return fmt.Errorf("hrv: entropy: tolerance %v: %w", r, ErrInput)
	}
	return nil
}

// sortedTemplates returns the start indices 0..n-1 sorted by x[i] (ties by
// index) and the templates' coordinates laid out in that order: coords[c][k]
// = x[idx[k]+c] for c = 0..width-1, so the pair scan reads memory
// sequentially.
func sortedTemplates(x []float64, n, width int) (idx []int32, coords [][]float64) {
	idx = make([]int32, n)
	for i := range idx {
		idx[i] = int32(i)
	}
	slices.SortFunc(idx, func(a, b int32) int {
		if x[a] < x[b] {
			return -1
		}
		if x[a] > x[b] {
			return 1
		}
		return int(a - b)
	})
	coords = make([][]float64, width)
	for c := range coords {
		col := make([]float64, n)
		for k, i := range idx {
			col[k] = x[int(i)+c]
		}
		coords[c] = col
	}
	return idx, coords
}

// SampleEntropy returns SampEn(m, r) of x (Richman and Moorman, Am J Physiol
// Heart Circ Physiol 278(6):H2039-H2049, 2000): with templates of length m
// starting at i = 0..N-m-1 (so that each has a length m+1 extension), B is
// the number of pairs i < j whose length-m templates are within r in the
// maximum norm (|d| <= r, self-matches excluded) and A the number of those
// whose length-(m+1) templates also match; SampEn = -ln(A/B). r is absolute
// (use 0.2 * SD(x) for the usual relative tolerance). It returns NaN and
// ErrUndefined when A or B is 0, and ErrTooFew when N <= m+1.
//
// The count is exact, never estimated: candidate pairs are pruned by
// sorting (see countGrid; for m = 1 or a tiny r, templates sorted by their
// first coordinate are compared only with the following ones within r), and
// every counted pair passes the same |d| <= r comparison as the direct
// definition, hence the same counts. Cost O(N log N + K) for K candidate
// pairs (about twice the matching pairs), memory O(N m).
func SampleEntropy(x []float64, m int, r float64) (float64, error) {
	a, b, err := SampleEntropyCounts(x, m, r)
	if err != nil {
		return math.NaN(), err
	}
	if a == 0 || b == 0 {
		return math.NaN(), fmt.Errorf("hrv: sample entropy: A = %d, B = %d matches (m = %d, r = %v): %w", a, b, m, r, ErrUndefined)
	}
	return -math.Log(float64(a) / float64(b)), nil
}

// SampleEntropyCounts returns the match counts A (length m+1) and B
// (length m) behind SampleEntropy.
func SampleEntropyCounts(x []float64, m int, r float64) (a, b int64, err error) {
	if err := checkEntropy(x, m, r); err != nil {
		return 0, 0, err
	}
	n := len(x) - m // templates
	if n < 2 {
		return 0, 0, fmt.Errorf("hrv: sample entropy of %d values with m = %d: %w", len(x), m, ErrTooFew)
	}
	if len(x) > math.MaxInt32 {
		return 0, 0, fmt.Errorf("hrv: sample entropy of %d values: %w", len(x), ErrInput)
	}
	if m >= 2 {
		if a, b, ok := countGrid(x, n, m, r); ok {
			return a, b, nil
		}
	}
	_, c := sortedTemplates(x, n, m+1)
	c0 := c[0]
	for k := 0; k < n; k++ {
		v0 := c0[k]
		for j := k + 1; j < n && c0[j]-v0 <= r; j++ {
			ok := true
			for d := 1; d < m; d++ {
				if math.Abs(c[d][j]-c[d][k]) > r {
					ok = false
					break
				}
			}
			if ok {
				b++
				if math.Abs(c[m][j]-c[m][k]) <= r {
					a++
				}
			}
		}
	}
	return a, b, nil
}

// countGrid is the fast exact counter for m >= 2. Templates are binned by
// their first coordinate into cells slightly wider than r and sorted by
// (cell, second coordinate). A template's matches then lie in its own cell
// or the next one (pairs are unordered, so the previous cell is not
// needed), and inside each cell within a contiguous run of the second
// coordinate found by binary search with the same |d| <= r comparison the
// definition uses. Pairs inside one cell are seen from both ends, and every
// template matches itself, so those counts are halved after removing the
// self-matches. Every counted pair passes the full Chebyshev test, so the
// counts equal the direct definition's. The cell width exceeds r by a margin
// far above the rounding of the binning, so no match hides two cells away;
// when that margin cannot be guaranteed (r zero or tiny against the values,
// too many cells) it reports ok = false and the caller uses the plain sorted
// scan.
func countGrid(x []float64, n, m int, r float64) (a, b int64, ok bool) {
	g, ok := newCellGrid(x, n, m+1, r)
	if !ok {
		return 0, 0, false
	}
	c := g.c
	c0, cm := c[0], c[m]
	var sameA, sameB, nextA, nextB int64
	if m == 2 {
		// The common case with the loops written out: no per-pair call,
		// no inner coordinate loop.
		scan := func(k, j0, j1 int) (ca, cb int64) {
			v0, v2 := c0[k], cm[k]
			for j := j0; j < j1; j++ {
				if math.Abs(c0[j]-v0) <= r {
					cb++
					if math.Abs(cm[j]-v2) <= r {
						ca++
					}
				}
			}
			return ca, cb
		}
		g.runs(r, func(k, s0, s1, n0, n1 int) {
			ca, cb := scan(k, s0, s1)
			sameA += ca
			sameB += cb
			if n1 > n0 {
				ca, cb = scan(k, n0, n1)
				nextA += ca
				nextB += cb
			}
		})
		return (sameA-int64(n))/2 + nextA, (sameB-int64(n))/2 + nextB, true
	}
	g.walk(r, func(k, j0, j1 int, same bool) {
		var ca, cb int64
		v0, vm := c0[k], cm[k]
		for j := j0; j < j1; j++ {
			if math.Abs(c0[j]-v0) > r {
				continue
			}
			match := true
			for d := 2; d < m; d++ {
				if math.Abs(c[d][j]-c[d][k]) > r {
					match = false
					break
				}
			}
			if match {
				cb++
				if math.Abs(cm[j]-vm) <= r {
					ca++
				}
			}
		}
		if same {
			sameA += ca
			sameB += cb
		} else {
			nextA += ca
			nextB += cb
		}
	})
	return (sameA-int64(n))/2 + nextA, (sameB-int64(n))/2 + nextB, true
}

// sortSearch is sort.Search without the import: the smallest i in [0, n)
// with f(i) true, or n.
func sortSearch(n int, f func(int) bool) int {
	i, j := 0, n
	for i < j {
		h := int(uint(i+j) >> 1)
		if !f(h) {
			i = h + 1
		} else {
			j = h
		}
	}
	return i
}

// ApproximateEntropy returns ApEn(m, r) of x (Pincus, PNAS 88(6):2297-2301,
// 1991): Phi^m = mean over the N-m+1 templates of ln C_i^m, with C_i^m the
// fraction of templates (self-match included) within r in the maximum norm,
// and ApEn = Phi^m - Phi^(m+1). ApEn is biased low for short series and
// depends on N (methods.md 3.3); prefer SampleEntropy. It needs N > m+1.
// Counting uses the same sorted first-coordinate pruning as SampleEntropy
// (exact), O(N log N + N K).
func ApproximateEntropy(x []float64, m int, r float64) (float64, error) {
	if err := checkEntropy(x, m, r); err != nil {
		return math.NaN(), err
	}
	if len(x) < m+2 {
		return math.NaN(), fmt.Errorf("hrv: approximate entropy of %d values with m = %d: %w", len(x), m, ErrTooFew)
	}
	return phi(x, m, r) - phi(x, m+1, r), nil
}

// phi computes Pincus' Phi^m(r).
func phi(x []float64, m int, r float64) float64 {
	n := len(x) - m + 1
	cnt, ok := phiCountsGrid(x, n, m, r)
	if !ok {
		cnt = phiCountsSorted(x, n, m, r)
	}
	var s float64
	for _, v := range cnt {
		s += math.Log(float64(v) / float64(n))
	}
	return s / float64(n)
}

// phiCountsSorted returns, per template, the number of templates within r
// (self included), by the first-coordinate sorted scan.
func phiCountsSorted(x []float64, n, m int, r float64) []int64 {
	_, c := sortedTemplates(x, n, m)
	cnt := make([]int64, n)
	for k := range cnt {
		cnt[k] = 1 // self-match
	}
	c0 := c[0]
	for k := 0; k < n; k++ {
		for j := k + 1; j < n && c0[j]-c0[k] <= r; j++ {
			ok := true
			for d := 1; d < m; d++ {
				if math.Abs(c[d][j]-c[d][k]) > r {
					ok = false
					break
				}
			}
			if ok {
				cnt[k]++
				cnt[j]++
			}
		}
	}
	return cnt
}

// phiCountsGrid is phiCountsSorted by the cell grid of countGrid (m >= 2):
// matches in a template's own cell are counted from its side only (the
// partner counts them from its own), matches in the next cell for both.
// The counts are in cell order, which does not matter for the sum of logs.
func phiCountsGrid(x []float64, n, m int, r float64) ([]int64, bool) {
	if m < 2 {
		return nil, false
	}
	g, ok := newCellGrid(x, n, m, r)
	if !ok {
		return nil, false
	}
	cnt := make([]int64, n)
	c := g.c
	g.walk(r, func(k, j0, j1 int, same bool) {
		for j := j0; j < j1; j++ {
			match := true
			for d := 0; d < m; d++ {
				if d != 1 && math.Abs(c[d][j]-c[d][k]) > r {
					match = false
					break
				}
			}
			if match {
				cnt[k]++
				if !same {
					cnt[j]++
				}
			}
		}
	})
	return cnt, true
}

// cellGrid holds templates binned by first coordinate into cells of width
// slightly above r and sorted by (cell, second coordinate); c[d][k] is
// coordinate d of the k-th template in that order and cell[k] its cell.
type cellGrid struct {
	c    [][]float64
	cell []int64
}

// newCellGrid builds the grid over the n templates of the given width
// (coordinates 0..width-1). It reports false when the margin between the
// cell width and r cannot be guaranteed against rounding.
func newCellGrid(x []float64, n, width int, r float64) (cellGrid, bool) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	// Binning error: (x - lo)/w is off by a few ulps of values up to
	// max(scale/r, cells), both below ~1e6 here, i.e. ~1e-9 of a cell,
	// far inside the 1e-7 margin of the cell width over r.
	scale := math.Max(math.Abs(lo), math.Abs(hi))
	if !(r > 1e-6*scale) || (hi-lo)/r > 1e6 {
		return cellGrid{}, false
	}
	w := r * (1 + 1e-7)
	cell := make([]int64, n)
	for i := 0; i < n; i++ {
		cell[i] = int64(math.Floor((x[i] - lo) / w))
	}
	idx := sortTemplates(x, cell)
	g := cellGrid{c: make([][]float64, width), cell: make([]int64, n)}
	for d := range g.c {
		col := make([]float64, n)
		for k, i := range idx {
			col[k] = x[int(i)+d]
		}
		g.c[d] = col
	}
	for k, i := range idx {
		g.cell[k] = cell[i]
	}
	return g, true
}

// runs calls visit(k, s0, s1, n0, n1) for every template k with the
// second-coordinate runs [s0, s1) in its own cell and [n0, n1) in the next
// cell (empty when there is no adjacent cell); see walk.
func (g cellGrid) runs(r float64, visit func(k, s0, s1, n0, n1 int)) {
	n := len(g.cell)
	c1 := g.c[1]
	for s := 0; s < n; {
		e := s
		for e < n && g.cell[e] == g.cell[s] {
			e++
		}
		ns, ne := e, e
		if e < n && g.cell[e] == g.cell[s]+1 {
			for ne < n && g.cell[ne] == g.cell[e] {
				ne++
			}
		}
		// The runs' bounds move monotonically with c1[k] (k ascends in c1
		// inside the cell), so they are advanced, not searched.
		a0, a1, b0, b1 := s, s, ns, ns
		for k := s; k < e; k++ {
			v1 := c1[k]
			for a0 < e && c1[a0]-v1 < -r {
				a0++
			}
			if a1 < a0 {
				a1 = a0
			}
			for a1 < e && c1[a1]-v1 <= r {
				a1++
			}
			for b0 < ne && c1[b0]-v1 < -r {
				b0++
			}
			if b1 < b0 {
				b1 = b0
			}
			for b1 < ne && c1[b1]-v1 <= r {
				b1++
			}
			visit(k, a0, a1, b0, b1)
		}
		s = e
	}
}

// walk calls visit(k, j0, j1, same) for every template k with the run
// [j0, j1) of templates in k's own cell (same) and in the next cell whose
// second coordinate is within r of k's (the same |d| <= r comparison as the
// definition, found by binary search: the run is contiguous because the
// rounded difference is monotone in the sorted coordinate).
func (g cellGrid) walk(r float64, visit func(k, j0, j1 int, same bool)) {
	n := len(g.cell)
	c1 := g.c[1]
	window := func(k, s, e int) (int, int) {
		v1 := c1[k]
		j0 := s + sortSearch(e-s, func(i int) bool { return c1[s+i]-v1 >= -r })
		j1 := j0 + sortSearch(e-j0, func(i int) bool { return c1[j0+i]-v1 > r })
		return j0, j1
	}
	for s := 0; s < n; {
		e := s
		for e < n && g.cell[e] == g.cell[s] {
			e++
		}
		ns, ne := e, e
		if e < n && g.cell[e] == g.cell[s]+1 {
			for ne < n && g.cell[ne] == g.cell[e] {
				ne++
			}
		}
		for k := s; k < e; k++ {
			j0, j1 := window(k, s, e)
			visit(k, j0, j1, true)
			if ne > ns {
				j0, j1 = window(k, ns, ne)
				visit(k, j0, j1, false)
			}
		}
		s = e
	}
}

// DFA returns the detrended fluctuation analysis exponent of x over box sizes
// minBox..maxBox beats, every integer size (Peng, Havlin, Stanley and
// Goldberger, Chaos 5(1):82-87, 1995): the profile y(k) = sum_{i<=k}
// (x_i - mean x) is cut into floor(N/n) non-overlapping boxes from the start,
// a least-squares line is removed in each (DFA-1), F(n) is the RMS residual,
// and alpha is the least-squares slope of log F(n) against log n. HRV uses
// alpha1 over 4..16 and alpha2 over 16..64 beats. It needs N >= maxBox and
// 2 <= minBox < maxBox; a zero fluctuation gives ErrUndefined.
// Cost O(N (maxBox - minBox + 1)). DFAWith exposes the variants.
func DFA(x []float64, minBox, maxBox int) (float64, error) {
	return DFAWith(x, DFAOptions{MinBox: minBox, MaxBox: maxBox})
}

// DFAOptions selects the DFA variant (methods.md 3.4 lists the choices that
// published tools differ on). Zero values mean the DFA defaults.
type DFAOptions struct {
	MinBox, MaxBox int // box sizes in beats; required
	// Sizes is the number of log-spaced box sizes between MinBox and
	// MaxBox (rounded, duplicates dropped); every integer size when zero.
	Sizes int
	// BothEnds also cuts boxes from the end of the series, so the
	// remainder at either end is used (2 floor(N/n) boxes).
	BothEnds bool
}

// DFAWith is DFA with the variant chosen by opt.
func DFAWith(x []float64, opt DFAOptions) (float64, error) {
	minBox, maxBox := opt.MinBox, opt.MaxBox
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return math.NaN(), fmt.Errorf("hrv: DFA: value %d is %v: %w", i, v, ErrInput)
		}
	}
	if minBox < 2 || maxBox <= minBox || opt.Sizes < 0 || opt.Sizes == 1 {
		return math.NaN(), fmt.Errorf("hrv: DFA boxes %d..%d (%d sizes): %w", minBox, maxBox, opt.Sizes, ErrInput)
	}
	if len(x) < maxBox {
		return math.NaN(), fmt.Errorf("hrv: DFA of %d values with boxes up to %d: %w", len(x), maxBox, ErrTooFew)
	}
	var sizes []int
	if opt.Sizes == 0 {
		for n := minBox; n <= maxBox; n++ {
			sizes = append(sizes, n)
		}
	} else {
		ratio := math.Log(float64(maxBox) / float64(minBox))
		for i := 0; i < opt.Sizes; i++ {
			n := int(math.Round(float64(minBox) * math.Exp(ratio*float64(i)/float64(opt.Sizes-1))))
			if len(sizes) == 0 || n != sizes[len(sizes)-1] {
				sizes = append(sizes, n)
			}
		}
	}
	m := mean(x)
	y := make([]float64, len(x))
	var s float64
	for i, v := range x {
		s += v - m
		y[i] = s
	}
	var sx, sy, sxx, sxy float64
	for _, n := range sizes {
		f := fluctuation(y, n, opt.BothEnds)
		if !(f > 0) {
			return math.NaN(), fmt.Errorf("hrv: DFA: zero fluctuation at box %d: %w", n, ErrUndefined)
		}
		lx, ly := math.Log(float64(n)), math.Log(f)
		sx += lx
		sy += ly
		sxx += lx * lx
		sxy += lx * ly
	}
	k := float64(len(sizes))
	return (k*sxy - sx*sy) / (k*sxx - sx*sx), nil
}

// fluctuation is F(n): RMS of the profile around per-box least-squares
// lines, boxes cut from the start (and from the end too when bothEnds).
func fluctuation(y []float64, n int, bothEnds bool) float64 {
	boxes := len(y) / n
	// Centred abscissa u = k - (n-1)/2 makes slope and intercept independent.
	c := float64(n-1) / 2
	var suu float64
	for k := 0; k < n; k++ {
		u := float64(k) - c
		suu += u * u
	}
	box := func(seg []float64) float64 {
		var my float64
		for _, v := range seg {
			my += v
		}
		my /= float64(n)
		var syy, suy float64
		for k, v := range seg {
			d := v - my
			syy += d * d
			suy += (float64(k) - c) * d
		}
		res := syy - suy*suy/suu
		if res < 0 {
			res = 0
		}
		return res
	}
	var total float64
	for b := 0; b < boxes; b++ {
		total += box(y[b*n : (b+1)*n])
	}
	used := boxes
	if bothEnds {
		off := len(y) - boxes*n
		for b := 0; b < boxes; b++ {
			total += box(y[off+b*n : off+(b+1)*n])
		}
		used *= 2
	}
	return math.Sqrt(total / float64(used*n))
}

// sortTemplates returns the template indices 0..len(cell)-1 ordered by
// cell, then by second coordinate x[i+1], then by index: a total order, so
// the result is the one any correct sort gives. When the cells span no more
// than a few per template it buckets by cell (counting sort, indices
// ascending in each bucket) and sorts each bucket alone, far fewer
// comparisons than one sort over all; otherwise it sorts everything.
func sortTemplates(x []float64, cell []int64) []int32 {
	n := len(cell)
	idx := make([]int32, n)
	less := func(p, q int32) int {
		if x[p+1] < x[q+1] {
			return -1
		}
		if x[p+1] > x[q+1] {
			return 1
		}
		return int(p - q)
	}
	var top int64
	for _, c := range cell {
		top = max(top, c)
	}
	if n == 0 || top >= int64(4*n+64) {
		for i := range idx {
			idx[i] = int32(i)
		}
		slices.SortFunc(idx, func(p, q int32) int {
			if cell[p] != cell[q] {
				if cell[p] < cell[q] {
					return -1
				}
				return 1
			}
			return less(p, q)
		})
		return idx
	}
	start := make([]int32, top+2)
	for _, c := range cell {
		start[c+1]++
	}
	for c := 1; c < len(start); c++ {
		start[c] += start[c-1]
	}
	pos := append([]int32(nil), start[:top+1]...)
	for i, c := range cell {
		idx[pos[c]] = int32(i)
		pos[c]++
	}
	for c := int64(0); c <= top; c++ {
		if b := idx[start[c]:start[c+1]]; len(b) > 1 {
			slices.SortFunc(b, less)
		}
	}
	return idx
}
