package stats

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"
	"unsafe"
)

func TestRankHandCases(t *testing.T) {
	// Each expected value is worked out by hand from the definitions in the Block and
	// Ranking doc comments (d_j = 2 T_{j-1} + t_j + 1).
	tests := []struct {
		name     string
		groups   [][]float64
		blocks   []Block
		rankSum2 []int64
		tieSum   float64
	}{
		{
			// The tied toy data of docs/methods.md §1.5 (constructed there): pooled blocks
			// 1 (x1), 2 (x3), 3 (x4), 4 (x2), 5 (x2).
			name:     "tied toy",
			groups:   [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}},
			blocks:   []Block{{2, 1}, {6, 3}, {13, 4}, {19, 2}, {23, 2}},
			rankSum2: []int64{2 + 6 + 6 + 13, 6 + 13 + 13 + 19, 13 + 19 + 23 + 23},
			tieSum:   (27 - 3) + (64 - 4) + (8 - 2) + (8 - 2),
		},
		{
			name:     "no ties, interleaved",
			groups:   [][]float64{{5, 1}, {2, 4}, {3}},
			blocks:   []Block{{2, 1}, {4, 1}, {6, 1}, {8, 1}, {10, 1}},
			rankSum2: []int64{10 + 2, 4 + 8, 6},
			tieSum:   0,
		},
		{
			name:     "one tie block spanning all groups plus one value",
			groups:   [][]float64{{7, 7}, {7, 9}},
			blocks:   []Block{{4, 3}, {8, 1}},
			rankSum2: []int64{8, 12},
			tieSum:   27 - 3,
		},
		{
			name:     "minus zero and plus zero are tied",
			groups:   [][]float64{{math.Copysign(0, -1), -1}, {0, 1}},
			blocks:   []Block{{2, 1}, {5, 2}, {8, 1}},
			rankSum2: []int64{5 + 2, 5 + 8},
			tieSum:   8 - 2,
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := mustRank(t, tt.groups)
			if !reflect.DeepEqual(r.Blocks, tt.blocks) {
				t.Errorf("Blocks = %v, want %v", r.Blocks, tt.blocks)
			}
			if !reflect.DeepEqual(r.RankSum2, tt.rankSum2) {
				t.Errorf("RankSum2 = %v, want %v", r.RankSum2, tt.rankSum2)
			}
			if r.TieSum != tt.tieSum {
				t.Errorf("TieSum = %v, want %v", r.TieSum, tt.tieSum)
			}
			n := 0
			for i, g := range tt.groups {
				n += len(g)
				if r.Counts[i] != len(g) {
					t.Errorf("Counts[%d] = %d, want %d", i, r.Counts[i], len(g))
				}
				want := slices.Clone(g)
				slices.Sort(want)
				if !slices.Equal(r.Sorted[i], want) {
					t.Errorf("Sorted[%d] = %v, want %v", i, r.Sorted[i], want)
				}
			}
			if r.N != n || r.K != len(tt.groups) {
				t.Errorf("N, K = %d, %d, want %d, %d", r.N, r.K, n, len(tt.groups))
			}
		})
	}
}

// TestRankAgainstNaive compares Rank with the O(N^2) definition of midranks on
// fixed-seed random data with few, many and no ties, for several k.
func TestRankAgainstNaive(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := range 300 {
		k := 2 + rng.IntN(7)
		n := k + rng.IntN(60)
		levels := []int{2, 5, 20, 1 << 30}[trial%4] // distinct values available
		group := make([]int32, n)
		values := make([]float64, n)
		for j := range n {
			if j < k {
				group[j] = int32(j) // every group non-empty
			} else {
				group[j] = int32(rng.IntN(k))
			}
			values[j] = float64(rng.IntN(levels))/4 - 3
		}
		rng.Shuffle(n, func(a, b int) {
			group[a], group[b] = group[b], group[a]
			values[a], values[b] = values[b], values[a]
		})
		r, err := Rank(group, values, k)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		want := make([]int64, k)
		for j, d := range naiveRank2(values) {
			want[group[j]] += d
		}
		if !slices.Equal(r.RankSum2, want) {
			t.Fatalf("trial %d: RankSum2 = %v, naive %v", trial, r.RankSum2, want)
		}
		distinct := slices.Clone(values)
		slices.Sort(distinct)
		distinct = slices.Compact(distinct)
		if len(r.Blocks) != len(distinct) {
			t.Fatalf("trial %d: %d blocks, %d distinct values", trial, len(r.Blocks), len(distinct))
		}
		tieSum := 0.0
		for _, v := range distinct {
			c := 0
			for _, x := range values {
				if x == v {
					c++
				}
			}
			tieSum += float64(c*c*c - c)
		}
		if r.TieSum != tieSum {
			t.Fatalf("trial %d: TieSum = %v, naive %v", trial, r.TieSum, tieSum)
		}
	}
}

func TestRankErrors(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	tests := []struct {
		name   string
		group  []int32
		values []float64
		k      int
		want   string // a substring the error message must contain
	}{
		{"k = 1", []int32{0, 0}, []float64{1, 2}, 1, "at least 2 groups, got k = 1"},
		{"k = 0", nil, nil, 0, "k = 0"},
		{"k negative", []int32{0}, []float64{1}, -4, "k = -4"},
		{"length mismatch", []int32{0, 1}, []float64{1, 2, 3}, 2, "2 group labels for 3 values"},
		{"negative group", []int32{0, 1, -1}, []float64{1, 2, 3}, 2, "observation 2: group index -1"},
		{"group = k", []int32{0, 2, 1}, []float64{1, 2, 3}, 2, "observation 1: group index 2"},
		{"NaN", []int32{0, 1, 1, 0}, []float64{1, 2, 3, nan}, 2, "observation 3: value NaN"},
		{"+Inf", []int32{0, 1, 1}, []float64{1, inf, 3}, 2, "observation 1: value +Inf"},
		{"-Inf", []int32{0, 1}, []float64{-inf, 1}, 2, "observation 0: value -Inf"},
		{"empty group", []int32{0, 2, 0, 2}, []float64{1, 2, 3, 4}, 3, "group 1 has no observations"},
		{"more groups than observations", []int32{0, 1, 3}, []float64{1, 2, 3}, 10, "group 2 has no observations"},
		{"huge k", []int32{0, 1}, []float64{1, 2}, math.MaxInt, "group 2 has no observations"},
		{"no observations", []int32{}, []float64{}, 2, "group 0 has no observations"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r, err := Rank(tt.group, tt.values, tt.k)
			if err == nil {
				t.Fatalf("Rank returned %+v, want an error", r)
			}
			if !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error %q does not contain %q", err, tt.want)
			}
			if r != nil {
				t.Errorf("Rank returned a non-nil Ranking with an error")
			}
		})
	}
}

func TestRankDoesNotMutateInputs(t *testing.T) {
	negZero := math.Copysign(0, -1)
	group := []int32{2, 0, 1, 0, 2, 1, 1}
	values := []float64{3.5, negZero, -1, 9, 3.5, 0, 2}
	g0, v0 := slices.Clone(group), slices.Clone(values)
	if _, err := Rank(group, values, 3); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(group, g0) {
		t.Errorf("group changed: %v, was %v", group, g0)
	}
	for j := range values {
		if math.Float64bits(values[j]) != math.Float64bits(v0[j]) {
			t.Errorf("values[%d] changed: %v, was %v", j, values[j], v0[j])
		}
	}
}

// TestRankSortedLayout checks that Sorted stores zeros as +0 and that its groups are
// consecutive pieces of one backing array, each with capacity equal to its length (so
// an append to one group cannot overwrite the next).
func TestRankSortedLayout(t *testing.T) {
	negZero := math.Copysign(0, -1)
	r := mustRank(t, [][]float64{{2, negZero, 1}, {negZero, -3}, {4}})
	for i, s := range r.Sorted {
		if cap(s) != len(s) {
			t.Errorf("cap(Sorted[%d]) = %d, len %d", i, cap(s), len(s))
		}
		for _, v := range s {
			if v == 0 && math.Signbit(v) {
				t.Errorf("Sorted[%d] holds -0", i)
			}
		}
		if i > 0 {
			prev := r.Sorted[i-1]
			end := unsafe.Add(unsafe.Pointer(unsafe.SliceData(prev)), len(prev)*8)
			if end != unsafe.Pointer(unsafe.SliceData(s)) {
				t.Errorf("Sorted[%d] does not follow Sorted[%d] in one backing array", i, i-1)
			}
		}
	}
	before := r.Sorted[1][0]
	_ = append(r.Sorted[0], 99)
	if r.Sorted[1][0] != before {
		t.Errorf("append to Sorted[0] overwrote Sorted[1]")
	}
}

// TestRankAllocations checks that the number of allocations does not grow with N:
// nothing is allocated per observation.
func TestRankAllocations(t *testing.T) {
	allocs := func(n int) float64 {
		rng := rand.New(rand.NewPCG(3, 4))
		group := make([]int32, n)
		values := make([]float64, n)
		for j := range n {
			group[j] = int32(j % 4)
			values[j] = float64(rng.IntN(n / 2))
		}
		return testing.AllocsPerRun(3, func() {
			if _, err := Rank(group, values, 4); err != nil {
				t.Fatal(err)
			}
		})
	}
	small, large := allocs(100), allocs(200_000)
	if small != large {
		t.Errorf("allocations: %v at N = 100, %v at N = 200000; want the same count", small, large)
	}
	if large > 10 {
		t.Errorf("Rank made %v allocations, want at most 10", large)
	}
}
