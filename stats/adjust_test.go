package stats

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"testing"
)

// adjustReferencePath is written by testdata/reference/adjust_statsmodels.py from
// statsmodels 0.13.5 (Debian bookworm python3-statsmodels 0.13.5+dfsg, numpy 1.24.2)
// stats.multitest.multipletests, with the method always passed explicitly.
const adjustReferencePath = "../testdata/reference/adjust_statsmodels.json"

// allAdjustMethods lists every method name AdjustP accepts.
var allAdjustMethods = []string{
	AdjustNone, AdjustBonferroni, AdjustSidak, AdjustHolm,
	AdjustHochberg, AdjustHommel, AdjustBenjaminiHochberg, AdjustBenjaminiYekutieli,
}

type adjustRefCase struct {
	Name     string               `json:"name"`
	P        []float64            `json:"p"`
	Adjusted map[string][]float64 `json:"adjusted"`
	Reject   map[string][]bool    `json:"reject"`
}

type adjustRefFile struct {
	Generator string            `json:"generator"`
	Versions  map[string]string `json:"versions"`
	Alpha     float64           `json:"alpha"`
	Methods   map[string]string `json:"methods"`
	Cases     []adjustRefCase   `json:"cases"`
}

func loadAdjustReference(t testing.TB) *adjustRefFile {
	t.Helper()
	b, err := os.ReadFile(adjustReferencePath)
	if err != nil {
		t.Fatalf("read reference values: %v", err)
	}
	var ref adjustRefFile
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatalf("decode %s: %v", adjustReferencePath, err)
	}
	return &ref
}

func mustAdjust(t testing.TB, method string, p []float64) []float64 {
	t.Helper()
	got, err := AdjustP(method, p)
	if err != nil {
		t.Fatalf("AdjustP(%q, %v): %v", method, p, err)
	}
	if len(got) != len(p) {
		t.Fatalf("AdjustP(%q): %d values for %d p-values", method, len(got), len(p))
	}
	return got
}

// TestAdjustPStatsmodels compares every method with statsmodels 0.13.5
// multipletests (Debian python3-statsmodels) at rtol 1e-12 on the vectors of
// adjust_statsmodels.json: docs/methods.md §4's 10-value vector with a tie, and invented
// vectors (p = 1 with ties, a single p, 20 p-values, all-equal values, zeros).
func TestAdjustPStatsmodels(t *testing.T) {
	ref := loadAdjustReference(t)
	want := map[string]string{"statsmodels": "0.13.5+dfsg", "numpy": "1.24.2"}
	for lib, v := range want {
		if ref.Versions[lib] != v {
			t.Errorf("reference file made with %s %q, tests cite %q", lib, ref.Versions[lib], v)
		}
	}
	mustHave := []string{"methods_section4", "invented_ones_and_ties", "invented_single",
		"invented_twenty", "invented_all_equal"}
	for _, name := range mustHave {
		if !slices.ContainsFunc(ref.Cases, func(c adjustRefCase) bool { return c.Name == name }) {
			t.Errorf("reference file lacks the vector %q", name)
		}
	}
	for _, c := range ref.Cases {
		for _, method := range allAdjustMethods[1:] {
			t.Run(c.Name+"/"+method, func(t *testing.T) {
				wantAdj, ok := c.Adjusted[method]
				if !ok || len(wantAdj) != len(c.P) {
					t.Fatalf("reference lacks %d values for %s", len(c.P), method)
				}
				in := slices.Clone(c.P)
				got := mustAdjust(t, method, in)
				if !slices.Equal(in, c.P) {
					t.Errorf("input changed: %v, was %v", in, c.P)
				}
				for i := range got {
					if !relClose(got[i], wantAdj[i], 1e-12) {
						t.Errorf("p[%d] = %v: adjusted %.17g, statsmodels %.17g", i, c.P[i], got[i], wantAdj[i])
					}
				}
			})
		}
	}
}

// TestAdjustPRejectStatsmodels compares Reject(AdjustP(...), 0.05) with the reject
// flags of statsmodels 0.13.5 multipletests, skipping any adjusted value within 1e-12
// of alpha: there the decision is a floating-point tie (docs/methods.md §4, pitfalls) and
// statsmodels decides on its own, differently rounded, quantity.
func TestAdjustPRejectStatsmodels(t *testing.T) {
	ref := loadAdjustReference(t)
	for _, c := range ref.Cases {
		for _, method := range allAdjustMethods[1:] {
			got := Reject(mustAdjust(t, method, c.P), ref.Alpha)
			adj := c.Adjusted[method]
			for i, r := range got {
				if math.Abs(adj[i]-ref.Alpha) <= 1e-12 {
					continue
				}
				if r != c.Reject[method][i] {
					t.Errorf("%s/%s: p[%d] = %v rejected %v, statsmodels %v", c.Name, method, i, c.P[i], r, c.Reject[method][i])
				}
			}
		}
	}
}

// TestAdjustPMethodsTable checks the rejection counts at alpha = 0.05 of the table in
// docs/methods.md §4 ([V], statsmodels 0.13.5), including BH's three adjusted values that
// land on 0.05 and are rejected under p̃ ≤ α.
func TestAdjustPMethodsTable(t *testing.T) {
	p := []float64{0.0001, 0.004, 0.019, 0.0095, 0.020, 0.030, 0.040, 0.040, 0.21, 0.70}
	tests := []struct {
		method  string
		rejects int
	}{
		{AdjustNone, 8}, // raw p ≤ 0.05: all but 0.21 and 0.70 (counted by hand)
		{AdjustBonferroni, 2},
		{AdjustSidak, 2},
		{AdjustHolm, 2},
		{AdjustHochberg, 2},
		{AdjustHommel, 2},
		{AdjustBenjaminiHochberg, 8},
		{AdjustBenjaminiYekutieli, 1},
	}
	for _, tc := range tests {
		t.Run(tc.method, func(t *testing.T) {
			n := 0
			for _, r := range Reject(mustAdjust(t, tc.method, p), 0.05) {
				if r {
					n++
				}
			}
			if n != tc.rejects {
				t.Errorf("%d rejections, docs/methods.md §4 lists %d", n, tc.rejects)
			}
		})
	}
}

// simesP is Simes' (1986) p-value of the p-values ps: min_j |I|·p_(j)/j over the sorted values.
func simesP(ps []float64) float64 {
	s := slices.Clone(ps)
	slices.Sort(s)
	best := math.Inf(1)
	for j, x := range s {
		best = min(best, float64(float64(len(s))*x)/float64(j+1))
	}
	return best
}

// hommelClosedTesting is a brute-force oracle for Hommel (1988): the adjusted p of
// hypothesis i is the largest Simes p over all index sets containing i (closed testing,
// docs/methods.md §4), capped at 1. It enumerates all 2^m − 1 subsets.
func hommelClosedTesting(p []float64) []float64 {
	m := len(p)
	out := make([]float64, m)
	sub := make([]float64, 0, m)
	for mask := 1; mask < 1<<m; mask++ {
		sub = sub[:0]
		for i := range m {
			if mask&(1<<i) != 0 {
				sub = append(sub, p[i])
			}
		}
		sp := simesP(sub)
		for i := range m {
			if mask&(1<<i) != 0 {
				out[i] = max(out[i], sp)
			}
		}
	}
	for i := range out {
		out[i] = min(out[i], 1)
	}
	return out
}

// TestHommelClosedTesting compares the O(m²) Hommel algorithm with brute-force closed
// testing (all subsets, Simes' test) for m = 1..8 on random vectors from a fixed seed,
// both continuous and drawn from a coarse grid so that ties occur.
func TestHommelClosedTesting(t *testing.T) {
	rng := rand.New(rand.NewPCG(20240605, 5))
	grid := []float64{0.001, 0.01, 0.02, 0.04, 0.05, 0.1, 0.3, 1}
	for m := 1; m <= 8; m++ {
		for rep := range 60 {
			p := make([]float64, m)
			for i := range p {
				switch rep % 3 {
				case 0:
					p[i] = rng.Float64()
				case 1:
					p[i] = rng.Float64() * 0.1
				default:
					p[i] = grid[rng.IntN(len(grid))]
				}
			}
			got := mustAdjust(t, AdjustHommel, p)
			want := hommelClosedTesting(p)
			for i := range got {
				if !relClose(got[i], want[i], 1e-12) {
					t.Errorf("m=%d p=%v: [%d] = %.17g, closed testing %.17g", m, p, i, got[i], want[i])
				}
			}
		}
	}
}

// randomPValues returns n p-values from rng, a third of them from a coarse grid so that
// ties (and values of 0 and 1) occur.
func randomPValues(rng *rand.Rand, n int) []float64 {
	grid := []float64{0, 0.001, 0.01, 0.05, 0.2, 1}
	p := make([]float64, n)
	for i := range p {
		if rng.IntN(3) == 0 {
			p[i] = grid[rng.IntN(len(grid))]
		} else {
			p[i] = rng.Float64() * rng.Float64()
		}
	}
	return p
}

// TestAdjustPProperties checks, for every method on random vectors with ties: the
// input is not mutated, adjusted values lie in [p, 1], they are nondecreasing along the
// sorted raw p-values, equal raw p-values get equal adjusted values, and shuffling the
// input shuffles the output the same way (bit for bit).
func TestAdjustPProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, method := range allAdjustMethods {
		t.Run(method, func(t *testing.T) {
			for rep := range 200 {
				n := 1 + rng.IntN(40)
				if rep == 0 {
					n = 300
				}
				p := randomPValues(rng, n)
				orig := slices.Clone(p)
				got := mustAdjust(t, method, p)
				if !slices.Equal(p, orig) {
					t.Fatalf("input changed")
				}
				for i := range got {
					if got[i] > 1 || got[i] < p[i] {
						t.Fatalf("p[%d] = %v adjusted to %v, outside [p, 1]", i, p[i], got[i])
					}
				}
				idx := make([]int, n)
				for i := range idx {
					idx[i] = i
				}
				slices.SortStableFunc(idx, func(a, b int) int {
					switch {
					case p[a] < p[b]:
						return -1
					case p[a] > p[b]:
						return 1
					}
					return 0
				})
				for k := 1; k < n; k++ {
					a, b := idx[k-1], idx[k]
					if got[b] < got[a] {
						t.Fatalf("not monotone: p %v -> %v but %v -> %v", p[a], got[a], p[b], got[b])
					}
					if p[a] == p[b] && got[a] != got[b] {
						t.Fatalf("tied p = %v adjusted to %v and %v", p[a], got[a], got[b])
					}
				}
				perm := rng.Perm(n)
				shuffled := make([]float64, n)
				for i, j := range perm {
					shuffled[i] = p[j]
				}
				gotShuffled := mustAdjust(t, method, shuffled)
				for i, j := range perm {
					if gotShuffled[i] != got[j] {
						t.Fatalf("not permutation equivariant: p = %v gives %v shuffled, %v in place", p[j], gotShuffled[i], got[j])
					}
				}
			}
		})
	}
}

// TestAdjustPCapsAtOne checks the cap on values that would exceed 1 without it.
func TestAdjustPCapsAtOne(t *testing.T) {
	p := []float64{0.9, 0.5, 0.6, 1, 0.45}
	for _, method := range allAdjustMethods[1:] {
		got := mustAdjust(t, method, p)
		for i, x := range got {
			if x > 1 {
				t.Errorf("%s: p[%d] = %v adjusted to %v > 1", method, i, p[i], x)
			}
		}
		// p = 1 stays 1 under every method (each adjusted value is ≥ its raw p and ≤ 1).
		if got[3] != 1 {
			t.Errorf("%s: p = 1 adjusted to %v", method, got[3])
		}
	}
	// Bonferroni: 5·0.45 = 2.25 is capped (definition, common practice).
	if got := mustAdjust(t, AdjustBonferroni, p); got[4] != 1 {
		t.Errorf("bonferroni: 5·0.45 adjusted to %v, want 1", got[4])
	}
}

// TestAdjustPSingle checks a family of one: every adjustment returns p itself (each
// formula reduces to p at m = 1); Šidák's −expm1(log1p(−p)) may land one rounding above p.
func TestAdjustPSingle(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for range 2000 {
		p := []float64{rng.Float64()}
		for _, method := range allAdjustMethods {
			got := mustAdjust(t, method, p)[0]
			if method == AdjustSidak {
				if got < p[0] || !relClose(got, p[0], 4e-16) {
					t.Fatalf("sidak: p = %v adjusted to %v", p[0], got)
				}
				continue
			}
			if got != p[0] {
				t.Fatalf("%s: p = %v adjusted to %v", method, p[0], got)
			}
		}
	}
}

func TestAdjustPErrors(t *testing.T) {
	tests := []struct {
		name   string
		method string
		p      []float64
	}{
		{"nan", AdjustHolm, []float64{0.1, math.NaN(), 0.2}},
		{"nan none", AdjustNone, []float64{math.NaN()}},
		{"negative", AdjustBenjaminiHochberg, []float64{0.1, -0.001}},
		{"above one", AdjustBonferroni, []float64{1.0000001}},
		{"plus inf", AdjustHommel, []float64{math.Inf(1)}},
		{"minus inf", AdjustSidak, []float64{math.Inf(-1), 0.5}},
		{"unknown method", "Holm", []float64{0.1}},
		{"empty method", "", []float64{0.1}},
		{"unknown method empty p", "fdr_bh", nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			orig := slices.Clone(tc.p)
			got, err := AdjustP(tc.method, tc.p)
			if err == nil {
				t.Fatalf("no error, got %v", got)
			}
			if got != nil {
				t.Errorf("result %v beside the error", got)
			}
			if !slices.EqualFunc(tc.p, orig, func(a, b float64) bool {
				return a == b || (math.IsNaN(a) && math.IsNaN(b))
			}) {
				t.Errorf("input changed")
			}
		})
	}
	// The unknown-method error is lowercase and names the method.
	_, err := AdjustP("nope", []float64{0.1})
	if err == nil || err.Error() != `adjust p-values: unknown method "nope"` {
		t.Errorf("error %v", err)
	}
}

func TestAdjustPEmpty(t *testing.T) {
	for _, method := range allAdjustMethods {
		for _, p := range [][]float64{nil, {}} {
			got, err := AdjustP(method, p)
			if err != nil {
				t.Errorf("%s: %v", method, err)
			}
			if got == nil || len(got) != 0 {
				t.Errorf("%s: got %#v, want an empty non-nil slice", method, got)
			}
		}
	}
}

// TestAdjustPNoneCopies checks that "none" returns the p-values unchanged in a new slice.
func TestAdjustPNoneCopies(t *testing.T) {
	p := []float64{0.3, 0.01, 0.3}
	got := mustAdjust(t, AdjustNone, p)
	if !slices.Equal(got, p) {
		t.Fatalf("none: %v, want %v", got, p)
	}
	got[0] = 0.9
	if p[0] != 0.3 {
		t.Errorf("result aliases the input")
	}
}

func TestReject(t *testing.T) {
	tests := []struct {
		name  string
		adj   []float64
		alpha float64
		want  []bool
	}{
		{"empty", nil, 0.05, []bool{}},
		{"equality rejects", []float64{0.05, 0.0500000001, 0.049, 1}, 0.05, []bool{true, false, true, false}},
		{"alpha zero", []float64{0, 1e-300}, 0, []bool{true, false}},
		{"alpha one", []float64{1, 0.5}, 1, []bool{true, true}},
		{"nan alpha", []float64{0, 0.5}, math.NaN(), []bool{false, false}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			in := slices.Clone(tc.adj)
			got := Reject(in, tc.alpha)
			if !slices.Equal(got, tc.want) {
				t.Errorf("Reject(%v, %v) = %v, want %v", tc.adj, tc.alpha, got, tc.want)
			}
			if !slices.Equal(in, tc.adj) {
				t.Errorf("input changed")
			}
		})
	}
}

func ExampleAdjustP() {
	// Invented p-values of four pairwise comparisons.
	p := []float64{0.01, 0.04, 0.03, 0.005}
	adj, err := AdjustP(AdjustHolm, p)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%.3f\n", adj)
	fmt.Println(Reject(adj, 0.05))
	// Output:
	// [0.030 0.060 0.060 0.020]
	// [true false false true]
}

func ExampleReject() {
	adj, _ := AdjustP(AdjustBenjaminiHochberg, []float64{0.01, 0.02, 0.03, 0.5})
	fmt.Printf("%.2f\n", adj)
	fmt.Println(Reject(adj, 0.05))
	// Output:
	// [0.04 0.04 0.04 0.50]
	// [true true true false]
}

// BenchmarkAdjustP times each method on 4096 invented p-values (Hommel is O(m²)).
func BenchmarkAdjustP(b *testing.B) {
	p := randomPValues(rand.New(rand.NewPCG(3, 4)), 4096)
	for _, method := range allAdjustMethods {
		b.Run(method, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := AdjustP(method, p); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
