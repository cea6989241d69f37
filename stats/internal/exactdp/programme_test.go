package exactdp

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"rankplan/stats/internal/wide"
)

// distribution runs the programme without pruning and returns the final states:
// T·L and probability. It also returns the plan (for L and N).
func distribution(t *testing.T, d testDesign) ([]wide.U128, []float64, *plan) {
	t.Helper()
	pl, err := newPlan(d.counts, d.blocks)
	if err != nil {
		t.Fatal(err)
	}
	var ts []wide.U128
	var ws []float64
	_, err = pl.run(context.Background(), Budget{MaxStates: 1 << 40, MaxWork: 1 << 50}, wide.U128{}, func(v wide.U128, w float64) {
		ts = append(ts, v)
		ws = append(ws, w)
	}, false)
	if err != nil {
		t.Fatal(err)
	}
	return ts, ws, pl
}

// toFloat converts T·L to float64 and divides by L: T = Σ S_i^2/n_i.
func toFloat(v wide.U128, l uint64) float64 {
	f := float64(v.Hi)*0x1p64 + float64(v.Lo)
	return f / float64(l)
}

// TestPruningAgrees compares the pruned and unpruned programmes on
// designs too large for brute force (fixed-seed invented data, with and without ties,
// near and far from the null).
func TestPruningAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(30, 31))
	sizes := [][]int{{7, 8, 9}, {6, 6, 6}, {4, 5, 6, 5}, {3, 3, 3, 3, 3}, {12, 14}, {1, 6, 9}, {2, 2, 2, 2, 2, 2, 2}}
	for _, sz := range sizes {
		for _, ties := range []bool{false, true} {
			for _, shift := range []float64{0, 0.8} {
				groups := make([][]float64, len(sz))
				for i, m := range sz {
					for range m {
						v := rng.NormFloat64() + shift*float64(i)
						if ties {
							v = math.Round(v * 2)
						}
						groups[i] = append(groups[i], v)
					}
				}
				name := fmt.Sprintf("%v/ties=%v/shift=%v", sz, ties, shift)
				d := design(t, groups)
				pl, err := newPlan(d.counts, d.blocks)
				if err != nil {
					t.Fatal(err)
				}
				obs := pl.observed(d.counts, d.rankSum2)
				budget := Budget{MaxStates: 1 << 40, MaxWork: 1 << 50}
				pruned, err1 := pl.run(context.Background(), budget, obs, nil, true)
				full, err2 := pl.run(context.Background(), budget, obs, nil, false)
				if err1 != nil || err2 != nil {
					t.Fatalf("%s: %v, %v", name, err1, err2)
				}
				if !relClose(pruned.P, full.P, 1e-13) {
					t.Errorf("%s: pruned P = %.17g, unpruned %.17g", name, pruned.P, full.P)
				}
			}
		}
	}
}

// TestSettleBounds checks the pruning bounds directly: for random designs and
// random partial assignments of the smallest values, settle may answer +1 only when
// every completion reaches obs and -1 only when none does; and since its upper bound
// is the exact maximum (k <= maxSubsetK), it must answer -1 whenever no
// completion reaches obs. The completions are enumerated here.
func TestSettleBounds(t *testing.T) {
	rng := rand.New(rand.NewPCG(50, 51))
	checked, accepted, dropped := 0, 0, 0
	for range 400 {
		k := 2 + rng.IntN(4)
		counts := make([]int, k)
		n := 0
		for i := range counts {
			counts[i] = 1 + rng.IntN(4)
			n += counts[i]
		}
		if n > 11 {
			continue
		}
		// Random values with ties, ranked to get the blocks.
		groups := make([][]float64, k)
		levels := 2 + rng.IntN(10)
		for i := range groups {
			for range counts[i] {
				groups[i] = append(groups[i], float64(rng.IntN(levels)))
			}
		}
		d := design(t, groups)
		if len(d.blocks) < 2 {
			continue
		}
		pl, err := newPlan(d.counts, d.blocks)
		if err != nil {
			t.Fatal(err)
		}
		if !pl.prune {
			t.Fatal("pruning off for a small design")
		}
		vals := make([]int64, 0, n) // doubled midranks in ascending order
		for _, b := range d.blocks {
			for range b.Size {
				vals = append(vals, b.Rank2)
			}
		}
		// Place the first done values at random (canonical groups).
		done := 1 + rng.IntN(n-1)
		c := make([]int64, k)
		sum := make([]int64, k)
		for _, v := range vals[:done] {
			for {
				g := rng.IntN(k)
				if c[g] < pl.size[g] {
					c[g]++
					sum[g] += v
					break
				}
			}
		}
		sc := scratch{
			c: c, s: sum, r: make([]int64, k), v: make([]uint64, k), act: make([]int, k),
			f: make([]int64, 1<<k), q: make([]int64, 1<<k), lo: make([]int64, k), hi: make([]int64, k),
		}
		for i := range k {
			sc.r[i] = pl.size[i] - c[i]
		}
		// Every completion's T·L.
		room := slices.Clone(sc.r)
		y := slices.Clone(sum)
		lo, hi := int64(math.MaxInt64), int64(-1)
		var walk func(u int)
		walk = func(u int) {
			if u == n {
				var tl int64
				for i := range k {
					tl += int64(pl.mu[i]) * y[i] * y[i]
				}
				lo, hi = min(lo, tl), max(hi, tl)
				return
			}
			for i := range k {
				if room[i] > 0 {
					room[i]--
					y[i] += vals[u]
					walk(u + 1)
					y[i] -= vals[u]
					room[i]++
				}
			}
		}
		walk(done)
		for _, obs := range []int64{lo - 1, lo, lo + 1, (lo + hi) / 2, hi - 1, hi, hi + 1} {
			got := pl.settle(&sc, done, obs)
			checked++
			switch {
			case got > 0 && lo < obs:
				t.Fatalf("sizes %v, done %d, c %v, s %v: settle +1 at obs %d, but a completion gives %d", pl.size, done, c, sum, obs, lo)
			case got < 0 && hi >= obs:
				t.Fatalf("sizes %v, done %d, c %v, s %v: settle -1 at obs %d, but a completion gives %d", pl.size, done, c, sum, obs, hi)
			case got >= 0 && hi < obs:
				t.Fatalf("sizes %v, done %d, c %v, s %v: settle %d at obs %d above the maximum %d", pl.size, done, c, sum, got, obs, hi)
			}
			if got > 0 {
				accepted++
			}
			if got < 0 {
				dropped++
			}
		}
	}
	if checked < 1000 || accepted == 0 || dropped == 0 {
		t.Errorf("too weak: %d checks, %d accepted, %d dropped", checked, accepted, dropped)
	}
}

// TestWholeBlocks compares spreading small tie blocks in whole with
// spreading every value alone, on invented designs with many ties.
func TestWholeBlocks(t *testing.T) {
	for _, sz := range [][]int{{5, 6, 7}, {4, 4, 5, 5}, {9, 9}, {3, 3, 3, 3, 3}} {
		for _, levels := range []int{3, 6, 12} {
			rng := rand.New(rand.NewPCG(uint64(levels), 60))
			groups := make([][]float64, len(sz))
			for i, m := range sz {
				for range m {
					groups[i] = append(groups[i], float64(rng.IntN(levels)))
				}
			}
			d := design(t, groups)
			pl, err := newPlan(d.counts, d.blocks)
			if err != nil {
				t.Fatal(err)
			}
			wholeBlocks := 0
			for _, b := range d.blocks {
				if pl.whole(b.Size) {
					wholeBlocks++
				}
			}
			obs := pl.observed(d.counts, d.rankSum2)
			budget := Budget{MaxStates: 1 << 40, MaxWork: 1 << 50}
			a, err1 := pl.run(context.Background(), budget, obs, nil, true)
			pl.wholeMax = 0
			b, err2 := pl.run(context.Background(), budget, obs, nil, true)
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			if !relClose(a.P, b.P, 1e-13) {
				t.Errorf("%v, %d levels (%d blocks in whole): P = %.17g, one value at a time %.17g",
					sz, levels, wholeBlocks, a.P, b.P)
			}
		}
	}
}

// TestMoments checks the full exact distribution: its probabilities
// add up to 1 within 1e-12, E[H*] = k - 1 with or without ties (Kruskal & Wallis
// 1952; docs/methods.md §1.1 [V]), and without ties Var H matches the closed form
//
//	Var H = 2(k-1) - 2[3k^2 - 6k + N(2k^2 - 6k + 1)]/[5N(N+1)] - (6/5) Σ 1/n_i
//
// (Kruskal & Wallis 1952, recalled from memory in docs/methods.md §1.1; checked there by
// enumeration: (3,3,3) 2.72, (5,5,5) 3.24, both [V]).
func TestMoments(t *testing.T) {
	cases := []struct {
		name    string
		groups  [][]float64
		varWant float64 // docs/methods.md §1.1 [V]; 0: not listed
	}{
		{"3,3,3", [][]float64{{1, 2, 3}, {4, 5, 6}, {7, 8, 9}}, 2.72},
		{"5,5,5", [][]float64{{1, 2, 3, 4, 5}, {6, 7, 8, 9, 10}, {11, 12, 13, 14, 15}}, 3.24},
		{"2,3,4", [][]float64{{1, 2}, {3, 4, 5}, {6, 7, 8, 9}}, 0},
		{"3,3,3,3", [][]float64{{1, 2, 3}, {4, 5, 6}, {7, 8, 9}, {10, 11, 12}}, 0},
		{"1,2,6", [][]float64{{1}, {2, 3}, {4, 5, 6, 7, 8, 9}}, 0},
		{"tied toy", [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}}, -1},
		{"2,3,4 ties", [][]float64{{3, 1}, {2, 2, 5}, {4, 5, 5, 6}}, -1},
		{"6,7,8 ties", [][]float64{{1, 1, 2, 3, 3, 3}, {2, 4, 4, 5, 6, 6, 7}, {1, 2, 5, 5, 7, 8, 8, 9}}, -1},
		{"2,2,2,2,2 ties", [][]float64{{1, 2}, {2, 3}, {3, 3}, {4, 1}, {5, 5}}, -1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			d := design(t, c.groups)
			ts, ws, pl := distribution(t, d)
			l := pl.mu[0] * uint64(pl.size[0])
			n := float64(d.n)
			var mass, mean, sq neumaier
			for i := range ts {
				h := (12/(n*(n+1))*toFloat(ts[i], l)/4 - 3*(n+1)) / d.tieCorrection()
				mass.add(ws[i])
				mean.add(float64(ws[i] * h))
				sq.add(float64(ws[i] * float64(h*h)))
			}
			if math.Abs(mass.sum()-1) > 1e-12 {
				t.Errorf("total probability = %.17g, want 1", mass.sum())
			}
			k := float64(len(d.counts))
			if math.Abs(mean.sum()-(k-1)) > 1e-12*(k-1) {
				t.Errorf("E[H*] = %.17g, want k-1 = %v", mean.sum(), k-1)
			}
			if c.varWant < 0 {
				return // ties: no closed form here
			}
			invSum := 0.0
			for _, g := range c.groups {
				invSum += 1 / float64(len(g))
			}
			want := 2*(k-1) - 2*(3*k*k-6*k+n*(2*k*k-6*k+1))/(5*n*(n+1)) - 1.2*invSum
			variance := sq.sum() - mean.sum()*mean.sum()
			if !relClose(variance, want, 1e-11) {
				t.Errorf("Var H = %.15g, closed form %.15g", variance, want)
			}
			if c.varWant > 0 && math.Abs(variance-c.varWant) > 5e-7 {
				t.Errorf("Var H = %.7f, docs/methods.md §1.1 %v", variance, c.varWant)
			}
		})
	}
}

// TestDobson1983PlantWeightsUnpruned runs the plant weights of Dobson (1983) with and without the
// bounds of settle: the same p within 1e-13, the exact fraction count/total of
// exact_dobson1983.json (Python's exact integers over every assignment) within 1e-12,
// and fewer states with the bounds.
func TestDobson1983PlantWeightsUnpruned(t *testing.T) {
	groups, count, total := dobson1983PlantWeights(t)
	d := design(t, groups)
	pl, err := newPlan(d.counts, d.blocks)
	if err != nil {
		t.Fatal(err)
	}
	budget := Budget{MaxStates: 1 << 40, MaxWork: 1 << 50}
	obs := pl.observed(d.counts, d.rankSum2)
	pruned, err1 := pl.run(context.Background(), budget, obs, nil, true)
	full, err2 := pl.run(context.Background(), budget, obs, nil, false)
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	if want := float64(count) / float64(total); !relClose(full.P, want, 1e-12) {
		t.Errorf("unpruned P = %.17g, exact enumeration %d/%d", full.P, count, total)
	}
	if !relClose(pruned.P, full.P, 1e-13) {
		t.Errorf("pruned P = %.17g, unpruned %.17g", pruned.P, full.P)
	}
	if pruned.States >= full.States {
		t.Errorf("pruning did not reduce the states: %d, unpruned %d", pruned.States, full.States)
	}
}

// TestWideKeyLayout checks that the design of stats' TestKruskalWallisExactWideKey
// (fifteen groups of one and a group of five, N = 20, with ties) needs the second word
// of the state key, so that test covers two-word keys.
func TestWideKeyLayout(t *testing.T) {
	groups := [][]float64{{2, 7, 7, 11, 15}}
	for _, x := range []float64{1, 2, 3, 4, 4, 5, 6, 8, 9, 9, 10, 12, 13, 14, 16} {
		groups = append(groups, []float64{x})
	}
	d := design(t, groups)
	pl, err := newPlan(d.counts, d.blocks)
	if err != nil {
		t.Fatal(err)
	}
	if !pl.wide || slices.Max(pl.word) != 1 {
		t.Fatalf("the key fits one word (%v); the test needs two", pl.word)
	}
}

// TestPValueInputs covers the checks of PValue and CheckSize.
func TestPValueInputs(t *testing.T) {
	d := design(t, [][]float64{{1, 2}, {3, 4}})
	ok := Budget{MaxStates: 100, MaxWork: 100}
	tests := []struct {
		name     string
		counts   []int
		blocks   []Block
		rankSum2 []int64
		budget   Budget
		want     string
	}{
		{"zero states", d.counts, d.blocks, d.rankSum2, Budget{MaxWork: 1}, "must be positive"},
		{"zero work", d.counts, d.blocks, d.rankSum2, Budget{MaxStates: 1}, "must be positive"},
		{"negative workers", d.counts, d.blocks, d.rankSum2, Budget{MaxStates: 1, MaxWork: 1, Workers: -1}, "must be positive"},
		{"rank sums missing", d.counts, d.blocks, d.rankSum2[:1], ok, "1 rank sums"},
		{"one block", d.counts, d.blocks[:1], d.rankSum2, ok, "1 tie blocks"},
		{"N above MaxN", []int{MaxN, 1}, d.blocks, d.rankSum2, ok, "65535"},
	}
	for _, tc := range tests {
		_, err := PValue(context.Background(), tc.counts, tc.blocks, tc.rankSum2, tc.budget)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one containing %q", tc.name, err, tc.want)
		}
	}
	if err := CheckSize([]int{MaxN - 1, 1}); err != nil {
		t.Errorf("CheckSize(N = MaxN) = %v", err)
	}
	if err := CheckSize([]int{MaxN, 1}); !errors.Is(err, ErrBudget) {
		t.Errorf("CheckSize(N = MaxN + 1) = %v, want ErrBudget", err)
	}
	// The 2 x 2 design: P(T >= T_obs) for {1, 2} against {3, 4} is 2/6 (the two
	// extreme splits of C(4, 2) = 6), worked by hand.
	got, err := PValue(context.Background(), d.counts, d.blocks, d.rankSum2, ok)
	if err != nil || !relClose(got.P, 1.0/3, 1e-15) {
		t.Errorf("PValue = %+v, %v; want P = 1/3", got, err)
	}
}
