package stats

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"
)

// SortedRuns is one sample, sorted ascending, read as runs of equal values. The pairwise
// effect sizes and the Hodges-Lehmann selection ([PairWork]) count over runs, so a pass
// over a sample of 10^6 values with 10^4 distinct ones takes 10^4 steps, not 10^6.
//
// A run is a block of adjacent values with the same bits: −0 and +0 are equal values but
// separate runs, so that a zero order statistic keeps the sign it always had (see
// diffMatrix.sign). The counts do not need maximal runs, and a sample
// with few ties (more than half its values distinct) is read value by value, without a copy.
// The zero value is not usable: build one with [NewSortedRuns].
type SortedRuns struct {
	val     []float64 // the runs' values, ascending
	cum     []int32   // cum[t]: values before run t, len(val)+1 entries; nil: one value per run
	n       int       // the number of values
	tied    bool      // two values are equal (==)
	negZero bool      // some value is −0
}

// maxRunValues is the largest sample [NewSortedRuns] takes: counts are held in int32.
const maxRunValues = math.MaxInt32 - 1

// NewSortedRuns checks that sorted is non-empty, finite and ascending (each value <= the
// next) in one pass and views it as runs. When more than half of the values are distinct
// the view shares sorted's memory, so sorted must not change while the view is in use;
// otherwise the runs are copied, 12 bytes each. Runner code builds one per group, once,
// from the sorted groups of a [Ranking] (which hold every zero as +0).
func NewSortedRuns(sorted []float64) (*SortedRuns, error) {
	n := len(sorted)
	if n == 0 {
		return nil, errors.New("sorted runs: the sample is empty")
	}
	if n > maxRunValues {
		return nil, fmt.Errorf("sorted runs: %d values, more than %d", n, maxRunValues)
	}
	s := &SortedRuns{n: n}
	runs := 1
	prev := sorted[0]
	for i, v := range sorted {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("sorted runs: value %d is %v", i, v)
		}
		if v == 0 && math.Signbit(v) {
			s.negZero = true
		}
		if i == 0 {
			continue
		}
		if !(prev <= v) {
			return nil, fmt.Errorf("sorted runs: value %d (%v) is below value %d (%v): not ascending", i, v, i-1, prev)
		}
		if prev == v {
			s.tied = true
		}
		if math.Float64bits(prev) != math.Float64bits(v) {
			runs++
		}
		prev = v
	}
	if 2*runs > n {
		s.val = sorted[:n:n]
		return s, nil
	}
	s.val = make([]float64, 0, runs)
	s.cum = make([]int32, 0, runs+1)
	for i, v := range sorted {
		if i == 0 || math.Float64bits(v) != math.Float64bits(sorted[i-1]) {
			s.val = append(s.val, v)
			s.cum = append(s.cum, int32(i))
		}
	}
	s.cum = append(s.cum, int32(n))
	return s, nil
}

// PairWork holds the buffers of the pairwise effect sizes and Hodges-Lehmann selections,
// reused from one pair to the next, so that a family of pairs allocates them once: 32 bytes
// per run of the largest first sample of a pair, and 4 bytes per value of the largest
// sample read value by value. The zero value is ready to use. A PairWork must not be used
// by two goroutines at once.
type PairWork struct {
	ones           []int32 // 0, 1, 2, …: the cumulative counts of a view without its own
	beg, end       []int32 // each row's window of candidate columns [beg, end)
	pa, pb, pc, pd []int32 // a pass's column pointers, see pass
	draws          []int64 // positions of a sample among the candidates
	sample         []float64
	gather         []weightedDiff
	rng            uint64
	// A selection may keep its state for the next ones (see kth).
	keepLo, keepHi   int64 // the ranks to keep a state for; 0: none
	keepBeg, keepEnd []int32
	keptWin          window
	kept             bool
	// Tests force the steps of the selection on small pairs: gatherAt (when not 0) replaces
	// the number of run pairs at or below which the windows are gathered (−1: never), and
	// bisectOnly takes every pivot by bisection on the value.
	gatherAt   int64
	bisectOnly bool
}

// weightedDiff is the difference of one run pair and the number of value pairs it stands for.
type weightedDiff struct {
	d float64
	w int64
}

// diffMatrix is the matrix of differences x_a − y_b of one pair of samples in runs: rows
// are runs of x (ascending, so differences grow down a column), columns runs of y
// (ascending, so differences fall along a row).
type diffMatrix struct {
	xv, yv   []float64
	xc, yc   []int32 // cumulative counts, one entry more than runs
	n, mn    int64   // values of y; pairs of values
	xNegZero bool    // x holds a −0
}

// counts returns the cumulative counts of s: its own, or 0, 1, 2, … from the work's buffer.
func (w *PairWork) counts(s *SortedRuns) []int32 {
	if s.cum != nil {
		return s.cum
	}
	if len(w.ones) < s.n+1 {
		w.ones = make([]int32, s.n+1)
		for i := range w.ones {
			w.ones[i] = int32(i)
		}
	}
	return w.ones[:s.n+1]
}

// matrix views a pair of samples for the counts and selections below.
func (w *PairWork) matrix(x, y *SortedRuns) (diffMatrix, error) {
	if x == nil || y == nil || x.n == 0 || y.n == 0 {
		return diffMatrix{}, errors.New("both samples must be non-empty sorted runs")
	}
	// Both views are taken before either is used: a larger y may replace w.ones, and the
	// old buffer that xc reads keeps its values.
	xc, yc := w.counts(x), w.counts(y)
	return diffMatrix{xv: x.val, yv: y.val, xc: xc, yc: yc, n: int64(y.n), mn: int64(x.n) * int64(y.n), xNegZero: x.negZero}, nil
}

// EffectSizes is [PairEffectSizes] on samples already in runs: the same counts and
// formulas, found by one merge over the runs, O(runs of x + runs of y).
func (w *PairWork) EffectSizes(x, y *SortedRuns) (PairEffect, error) {
	d, err := w.matrix(x, y)
	if err != nil {
		return PairEffect{}, fmt.Errorf("pairwise effect: %w", err)
	}
	var e PairEffect
	// For each run of x, count the y below it and the y equal to it.
	lo, hi, ry := 0, 0, len(d.yv)
	for a, v := range d.xv {
		for lo < ry && d.yv[lo] < v {
			lo++
		}
		hi = max(hi, lo)
		for hi < ry && d.yv[hi] == v {
			hi++
		}
		c := int64(d.xc[a+1] - d.xc[a])
		e.Greater += c * int64(d.yc[lo])
		e.Ties += c * int64(d.yc[hi]-d.yc[lo])
	}
	e.Less = d.mn - e.Greater - e.Ties
	fmn := float64(d.mn)
	e.CliffsDelta = float64(e.Greater-e.Less) / fmn
	e.VarghaDelaneyA = (float64(e.Greater) + float64(e.Ties)/2) / fmn
	return e, nil
}

// HodgesLehmann is [HodgesLehmannShift] on samples already in runs; see there for the
// estimate, the interval and its index. The order statistics of the m·n differences come
// from [PairWork.kth]: the same float64 values as sorting all of them would give.
func (w *PairWork) HodgesLehmann(x, y *SortedRuns, level float64) (HodgesLehmann, error) {
	if !(level > 0 && level < 1) {
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: level must lie in (0, 1), got %v", level)
	}
	d, err := w.matrix(x, y)
	if err != nil {
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
	}
	m, n, mn := int64(x.n), int64(y.n), d.mn
	_, _, common := firstCommon(d.xv, d.yv)
	out := HodgesLehmann{Tied: x.tied || y.tied || common}
	switch widest, cov, err := widestUnattainable(x.n, y.n, level); {
	case err != nil:
		return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
	case widest:
		out.C, out.Coverage, out.ExactIndex, out.Attainable = 0, cov, true, false
	case MosesExact(x.n, y.n):
		null, err := newMannWhitneyNull(x.n, y.n, int(mn/2))
		if err != nil {
			return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
		}
		ix, err := null.index(level)
		if err != nil {
			return HodgesLehmann{}, fmt.Errorf("hodges-lehmann: %w", err)
		}
		out.C, out.Coverage, out.ExactIndex, out.Attainable = int64(ix.c), ix.coverage, true, ix.attainable
	default:
		z := normalCritical(float64(1 - level))
		c := math.Floor(float64(mn)/2 - float64(z*math.Sqrt(float64(float64(mn)*float64(m+n+1))/12)))
		// The level is attainable (checked above), so c >= 0 is a valid index; and c <= (mn−1)/2
		// keeps the interval's ends in order.
		out.C = min(max(int64(c), 0), (mn-1)/2)
		out.Coverage, out.Attainable = math.NaN(), true
	}
	// The median first, keeping the last state of its selection that still holds the ranks
	// of both ends, from which their selections start.
	w.keepLo, w.keepHi, w.kept = out.C+1, mn-out.C, false
	defer func() { w.keepLo, w.kept = 0, false }()
	r, err := w.kth(&d, (mn+1)/2)
	if err != nil {
		return HodgesLehmann{}, err
	}
	out.Shift = r.v
	if mn%2 == 0 {
		a, b := r.v, r.v
		if r.atMost < mn/2+1 {
			b = d.nextAbove(r)
		}
		out.Shift = a + float64(b-a)/2
	}
	w.keepLo = 0
	if r, err = w.kth(&d, out.C+1); err != nil {
		return HodgesLehmann{}, err
	}
	out.Low = r.v
	if r, err = w.kth(&d, mn-out.C); err != nil {
		return HodgesLehmann{}, err
	}
	out.High = r.v
	return out, nil
}

// firstCommon finds the smallest value held by both ascending slices: the first index of
// it in x and in y, and whether there is one. One merge, O(len(x) + len(y)).
func firstCommon(x, y []float64) (int, int, bool) {
	i, j := 0, 0
	for i < len(x) && j < len(y) {
		switch {
		case x[i] < y[j]:
			i++
		case y[j] < x[i]:
			j++
		default:
			return i, j, true
		}
	}
	return i, j, false
}

// sign fixes the sign of a zero order statistic. Equal nonzero float64 values have equal
// bits, so only a zero needs a rule: x_i − y_j is zero exactly when x_i = y_j, and −0 only
// for x_i = −0, y_j = +0. A zero order statistic is x_f − y_l, with x_f the first value of
// sorted x equal to the smallest value both samples hold and y_l the last value of sorted y
// equal to it. That is the pair the element-wise selection used before the runs returned
// (it kept the first smallest difference over x in order, with the last y for each x), so
// results are unchanged; as runs split at every change of bits, x_f and y_l are runs here.
func (d *diffMatrix) sign(v float64) float64 {
	if v != 0 {
		return v
	}
	if !d.xNegZero {
		return 0 // −0 needs x_i = −0
	}
	i, j, ok := firstCommon(d.xv, d.yv)
	if !ok || d.xv[i] != 0 {
		return 0
	}
	for j+1 < len(d.yv) && d.yv[j+1] == 0 {
		j++
	}
	return d.xv[i] - d.yv[j]
}

// orderKey maps a float64 other than NaN to an int64 in the same order, with −0 and +0
// both at 0 (they are equal), so that bisection can halve a range of float64 values in
// at most 65 steps; fromOrderKey is its inverse (giving +0 for 0).
func orderKey(v float64) int64 {
	b := math.Float64bits(v)
	if b>>63 != 0 {
		return -int64(b &^ (1 << 63))
	}
	return int64(b)
}

func fromOrderKey(k int64) float64 {
	if k < 0 {
		return -math.Float64frombits(uint64(-k))
	}
	return math.Float64frombits(uint64(k))
}

// maxSelectSteps bounds the steps of kth far above what it can take (see there), so that a
// defect shows as an error, never as a hang.
const maxSelectSteps = 400

// errSelectionLost reports a broken invariant of kth; it means a defect, not a property of
// the data.
var errSelectionLost = errors.New("hodges-lehmann: the selection of an order statistic lost its target")

// window is the state of a selection besides each row's candidate columns [beg_a, end_a).
type window struct {
	below, upTo int64 // differences below the windows; below or in them
	runPairs    int64 // run pairs in the windows
	kLo, kHi    int64 // the candidates' values lie in [kLo, kHi] (orderKey)
}

// kthResult is an order statistic v of the differences, the number of differences <= v,
// and in each row the first column whose difference is <= v.
type kthResult struct {
	v      float64
	atMost int64
	first  []int32
}

// nextAbove is the smallest difference above r.v (there must be one): in each row the
// column before r.first, O(rows).
func (d *diffMatrix) nextAbove(r kthResult) float64 {
	best := math.Inf(1)
	for a, p := range r.first[:len(d.xv)] {
		if p > 0 {
			best = min(best, d.xv[a]-d.yv[p-1])
		}
	}
	return d.sign(best)
}

// kth returns the k-th smallest (1 <= k <= m n) of the m·n differences x_i − y_j as
// computed in float64 (a zero with the sign that sign gives it).
//
// The selection keeps in each row a the window [beg_a, end_a) of columns whose
// differences may still be the k-th, and the number of differences below the windows
// (Monahan 1984, ACM TOMS 10:265-270, Algorithm 616, recalled from memory; Johnson &
// Mizoguchi 1978, SIAM J. Comput. 7:147-153, for the k-th element of X + Y). Each step picks
// two pivots d_L <= d_H and counts in one merge, O(rows + columns), the differences
// <= and < each pivot; that leaves the k-th either equal to a pivot (done) or inside a
// narrower window. The pivots are order statistics of a sample of the candidates near the
// target's rank (Floyd & Rivest 1975, Commun. ACM 18:165-172, recalled from memory), so
// each step keeps about 3/√s of them for a sample of s; a sampled step that does not halve
// the candidates is followed by bisection on the value (orderKey), which halves the range
// of possible values. So the steps are at most about 190 and typically a handful, whatever
// the data. When the windows hold few run pairs, they are gathered, sorted and walked.
// The pivots steer only the cost: the answer is the exact order statistic whatever they are.
//
// When keep names a range of ranks (keepLo > 0), the last state whose windows still hold
// them all is kept, and a later kth for a rank in it starts from there.
func (w *PairWork) kth(d *diffMatrix, k int64) (kthResult, error) {
	rx, ry := len(d.xv), len(d.yv)
	if !(k >= 1 && k <= d.mn) {
		return kthResult{}, fmt.Errorf("hodges-lehmann: order statistic %d of %d differences", k, d.mn)
	}
	w.beg, w.end = grow(w.beg, rx), grow(w.end, rx)
	w.pa, w.pb, w.pc, w.pd = grow(w.pa, rx), grow(w.pb, rx), grow(w.pc, rx), grow(w.pd, rx)
	var s window
	if w.kept && w.keptWin.below < k && k <= w.keptWin.upTo {
		copy(w.beg, w.keepBeg[:rx])
		copy(w.end, w.keepEnd[:rx])
		s = w.keptWin
	} else {
		for a := range rx {
			w.beg[a], w.end[a] = 0, int32(ry)
		}
		s = window{below: 0, upTo: d.mn, runPairs: int64(rx) * int64(ry),
			kLo: orderKey(d.xv[0] - d.yv[ry-1]), kHi: orderKey(d.xv[rx-1] - d.yv[0])}
	}
	w.rng = 0x9e3779b97f4a7c15
	gatherMax := int64(max(1024, (rx+ry)/32))
	if w.gatherAt != 0 {
		gatherMax = w.gatherAt
	}
	sampled := !w.bisectOnly
	for step := 0; ; step++ {
		if step > maxSelectSteps {
			return kthResult{}, errSelectionLost
		}
		if s.kLo == s.kHi { // every candidate has this one value
			return kthResult{d.sign(fromOrderKey(s.kLo)), s.upTo, w.beg}, nil
		}
		if s.runPairs <= gatherMax {
			return w.gatherKth(d, k, s.below)
		}
		var lo, hi float64
		if sampled {
			if lo, hi = w.pivots(d, k-s.below, s.upTo-s.below); math.IsNaN(lo) {
				return kthResult{}, errSelectionLost
			}
		} else {
			lo = fromOrderKey(s.kLo + int64((uint64(s.kHi)-uint64(s.kLo))/2)) // the keys' span may exceed MaxInt64
			hi = lo
		}
		c := w.pass(d, lo, hi)
		was := s.upTo - s.below
		switch {
		case k <= c.ltLo: // below d_L
			w.beg, w.pd = w.pd, w.beg
			s.upTo, s.runPairs = c.ltLo, c.sumEnd-c.sumD
			s.kHi = min(s.kHi, orderKey(lo)-1)
		case k <= c.leLo:
			return kthResult{d.sign(lo), c.leLo, w.pc}, nil
		case k <= c.ltHi: // strictly between d_L and d_H
			w.end, w.pc = w.pc, w.end
			w.beg, w.pb = w.pb, w.beg
			s.below, s.upTo, s.runPairs = c.leLo, c.ltHi, c.sumC-c.sumB
			s.kLo, s.kHi = max(s.kLo, orderKey(lo)+1), min(s.kHi, orderKey(hi)-1)
		case k <= c.leHi:
			return kthResult{d.sign(hi), c.leHi, w.pa}, nil
		default: // above d_H
			w.end, w.pa = w.pa, w.end
			s.below, s.runPairs = c.leHi, c.sumA-c.sumBeg
			s.kLo = max(s.kLo, orderKey(hi)+1)
		}
		if s.kLo > s.kHi || s.below >= s.upTo {
			return kthResult{}, errSelectionLost
		}
		if w.keepLo > 0 && s.below < w.keepLo && w.keepHi <= s.upTo {
			w.keepBeg, w.keepEnd = append(w.keepBeg[:0], w.beg...), append(w.keepEnd[:0], w.end...)
			w.keptWin, w.kept = s, true
		}
		sampled = !w.bisectOnly && (!sampled || 2*(s.upTo-s.below) <= was)
	}
}

// passCounts are the counts of one pass: differences <= and < each pivot, and the sums
// of the column pointers (the run pairs between two pointer sets are their difference).
type passCounts struct {
	leHi, ltHi, leLo, ltLo int64
	sumA, sumB, sumC, sumD int64
	sumBeg, sumEnd         int64
}

// pass counts the differences <= hi, < hi, <= lo and < lo (lo <= hi, both inside the
// windows' range of values). In row a the differences fall along the columns, so each
// count is a first column in the window: A (first <= hi), B (first < hi), C (first <= lo),
// D (first < lo), with A <= B and A <= C <= D; and each grows with a, as differences grow
// down a column, so every pointer only moves right: O(rows + columns). The pointers go to
// pa, pb, pc, pd, ready to become a window's new ends.
func (w *PairWork) pass(d *diffMatrix, lo, hi float64) passCounts {
	rows := len(d.xv)
	yv, yc, xc, n := d.yv, d.yc, d.xc[:rows+1], d.n
	beg, end := w.beg[:rows], w.end[:rows]
	pa, pb, pc, pd := w.pa[:rows], w.pb[:rows], w.pc[:rows], w.pd[:rows]
	// Plain local sums: the compiler keeps them in registers, not in a struct in memory.
	var leHi, ltHi, leLo, ltLo, sumA, sumB, sumC, sumD, sumBeg, sumEnd int64
	var A, B, C, D int
	for a, v := range d.xv {
		b0, e0 := int(beg[a]), int(end[a])
		A = max(A, b0)
		for A < e0 && v-yv[A] > hi {
			A++
		}
		B = max(B, A)
		for B < e0 && v-yv[B] >= hi {
			B++
		}
		C = max(C, A)
		for C < e0 && v-yv[C] > lo {
			C++
		}
		D = max(D, C)
		for D < e0 && v-yv[D] >= lo {
			D++
		}
		pa[a], pb[a], pc[a], pd[a] = int32(A), int32(B), int32(C), int32(D)
		m := int64(xc[a+1] - xc[a])
		leHi += m * (n - int64(yc[A]))
		ltHi += m * (n - int64(yc[B]))
		leLo += m * (n - int64(yc[C]))
		ltLo += m * (n - int64(yc[D]))
		sumA += int64(A)
		sumB += int64(B)
		sumC += int64(C)
		sumD += int64(D)
		sumBeg += int64(b0)
		sumEnd += int64(e0)
	}
	return passCounts{leHi, ltHi, leLo, ltLo, sumA, sumB, sumC, sumD, sumBeg, sumEnd}
}

// pivots draws a sample of the candidate differences (each value pair in the windows
// equally likely, from a fixed generator: the pivots steer only the cost) and returns its
// order statistics about 1.5 √s below and above the target's share t/W of the sample. The
// draws are sorted first, so that one walk over the rows' candidate counts places them all.
func (w *PairWork) pivots(d *diffMatrix, t, total int64) (float64, float64) {
	rx, ry := len(d.xv), len(d.yv)
	s := min(max((rx+ry)/64, 64), 4096)
	w.draws = slices.Grow(w.draws[:0], s)[:s]
	for j := range w.draws {
		w.draws[j] = w.below(total)
	}
	slices.Sort(w.draws)
	w.sample = slices.Grow(w.sample[:0], s)[:s]
	j, before := 0, int64(0) // draws placed; candidates in the rows before a
	for a := 0; a < rx && j < s; a++ {
		lo, hi := d.yc[w.beg[a]], d.yc[w.end[a]]
		in := int64(d.xc[a+1]-d.xc[a]) * int64(hi-lo)
		for ; j < s && w.draws[j] < before+in; j++ {
			e := lo + int32((w.draws[j]-before)%int64(hi-lo)) // a value of y in the window
			// its run: the last column b in the window with yc[b] <= e
			b := int(w.beg[a]) + sortSearchInt32(d.yc[w.beg[a]:w.end[a]], e)
			w.sample[j] = d.xv[a] - d.yv[b]
		}
		before += in
	}
	if j < s { // the windows hold fewer candidates than total: a defect, see kth
		return math.NaN(), math.NaN()
	}
	slices.Sort(w.sample)
	pos := int(float64(t-1) / float64(total) * float64(s))
	half := int(1.5*math.Sqrt(float64(s))) + 1
	return w.sample[max(pos-half, 0)], w.sample[min(pos+half, s-1)]
}

// sortSearchInt32 returns the index of the last element <= e of the ascending c, whose
// first element is <= e.
func sortSearchInt32(c []int32, e int32) int {
	i, _ := slices.BinarySearch(c, e+1)
	return i - 1
}

// below returns a draw in [0, n) from the work's SplitMix64 generator (Steele, Lea &
// Flood 2014; Lemire's multiply-shift for the range). Only pivots use it.
func (w *PairWork) below(n int64) int64 {
	w.rng += 0x9e3779b97f4a7c15
	z := w.rng
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	z ^= z >> 31
	hi, _ := bits.Mul64(z, uint64(n))
	return int64(hi)
}

// gatherKth finishes a selection whose windows hold few run pairs: it gathers them with
// their numbers of value pairs, sorts them by difference and walks to the k-th; then it
// finds each row's first column at or below it inside the windows.
func (w *PairWork) gatherKth(d *diffMatrix, k, below int64) (kthResult, error) {
	g := w.gather[:0]
	for a, xa := range d.xv {
		m := int64(d.xc[a+1] - d.xc[a])
		for b := w.beg[a]; b < w.end[a]; b++ {
			g = append(g, weightedDiff{xa - d.yv[b], m * int64(d.yc[b+1]-d.yc[b])})
		}
	}
	w.gather = g
	slices.SortFunc(g, func(p, q weightedDiff) int { return cmp.Compare(p.d, q.d) })
	for i := 0; i < len(g); i++ {
		below += g[i].w
		if below < k {
			continue
		}
		for i+1 < len(g) && g[i+1].d == g[i].d {
			i++
			below += g[i].w
		}
		v := g[i].d
		for a, xa := range d.xv {
			p := w.beg[a]
			for p < w.end[a] && xa-d.yv[p] > v {
				p++
			}
			w.pa[a] = p
		}
		return kthResult{d.sign(v), below, w.pa}, nil
	}
	return kthResult{}, errSelectionLost
}

// grow returns s with length n, reusing its memory when it is large enough.
func grow(s []int32, n int) []int32 {
	return slices.Grow(s[:0], n)[:n]
}
