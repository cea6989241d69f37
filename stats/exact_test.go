package stats

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"reflect"
	"slices"
	"sort"
	"strings"
	"testing"
)

// exactReferencePath is written by testdata/reference/exact_kw_scipy.py (Debian
// python3-scipy 1.10.1, numpy 1.24.2; the versions are recorded in the file).
const exactReferencePath = "../testdata/reference/exact_kw_scipy.json"

type exactRefFile struct {
	Versions map[string]string `json:"versions"`
	Kruskal  []struct {
		Name   string      `json:"name"`
		Groups [][]float64 `json:"groups"`
		H      float64     `json:"h"`
		P      float64     `json:"p"`
		Count  int64       `json:"count"`
		Total  int64       `json:"total"`
	} `json:"kruskal_exact"`
	Critical []struct {
		Sizes  []int `json:"sizes"`
		Total  int64 `json:"total"`
		Levels []struct {
			Alpha float64 `json:"alpha"`
			H     float64 `json:"h"`
			Count int64   `json:"count"`
		} `json:"levels"`
	} `json:"critical_values"`
	MannWhitney []struct {
		Name string    `json:"name"`
		X    []float64 `json:"x"`
		Y    []float64 `json:"y"`
		P    float64   `json:"p"`
	} `json:"mann_whitney_exact"`
}

func loadExactReference(t *testing.T) *exactRefFile {
	t.Helper()
	b, err := os.ReadFile(exactReferencePath)
	if err != nil {
		t.Fatalf("read reference values: %v", err)
	}
	var ref exactRefFile
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatalf("decode %s: %v", exactReferencePath, err)
	}
	if ref.Versions["scipy"] != "1.10.1" || ref.Versions["numpy"] != "1.24.2" {
		t.Fatalf("%s made with scipy %q, numpy %q; the tests cite scipy 1.10.1, numpy 1.24.2",
			exactReferencePath, ref.Versions["scipy"], ref.Versions["numpy"])
	}
	if len(ref.Kruskal) < 8 || len(ref.Critical) != 3 || len(ref.MannWhitney) < 6 {
		t.Fatalf("%s is too small", exactReferencePath)
	}
	return &ref
}

// exactBrute is the oracle: it enumerates every assignment of the N observations to
// groups of the observed sizes (each of the N!/Π n_i! assignments once, as a
// depth-first walk over the observations), computes Σ_i S_i^2 / n_i exactly as the
// integer Σ_i S_i^2 Π_{l≠i} n_l from the definition of midranks (naiveRank2), and
// returns p = #{T* >= T_obs} / #assignments as an exact fraction.
func exactBrute(t *testing.T, groups [][]float64) *big.Rat {
	t.Helper()
	var vals []float64
	var grp []int
	for i, g := range groups {
		for _, x := range g {
			vals = append(vals, x)
			grp = append(grp, i)
		}
	}
	r2 := naiveRank2(vals)
	k := len(groups)
	prod := int64(1)
	for _, g := range groups {
		prod *= int64(len(g))
	}
	stat := func(s []int64) int64 {
		var v int64
		for i, g := range groups {
			v += s[i] * s[i] * (prod / int64(len(g)))
		}
		return v
	}
	s := make([]int64, k)
	for j, g := range grp {
		s[g] += r2[j]
	}
	obs := stat(s)
	clear(s)
	room := make([]int, k)
	for i, g := range groups {
		room[i] = len(g)
	}
	var ge, all int64
	var walk func(u int)
	walk = func(u int) {
		if u == len(vals) {
			all++
			if stat(s) >= obs {
				ge++
			}
			return
		}
		for i := range k {
			if room[i] > 0 {
				room[i]--
				s[i] += r2[u]
				walk(u + 1)
				s[i] -= r2[u]
				room[i]++
			}
		}
	}
	walk(0)
	return big.NewRat(ge, all)
}

func exactRatFloat(r *big.Rat) float64 {
	f, _ := r.Float64()
	return f
}

// exactBruteCases are the designs of the brute-force comparison; all data invented,
// except the tied toy, the constructed example of docs/methods.md §1.5.
var exactBruteCases = []struct {
	name   string
	groups [][]float64
}{
	{"2,2,2", [][]float64{{1.1, 2.3}, {0.4, 3.9}, {5.2, 4.4}}},
	{"3,3,3", [][]float64{{2.8, 3.5, 1.2}, {4.1, 6.6, 5.0}, {7.3, 9.9, 8.4}}},
	{"3,3,3 ties", [][]float64{{1, 2, 2}, {2, 3, 5}, {5, 5, 4}}},
	{"2,3,4", [][]float64{{0.5, 7.5}, {1.5, 2.5, 8.5}, {3.5, 4.5, 5.5, 6.5}}},
	{"2,3,4 ties", [][]float64{{3, 1}, {2, 2, 5}, {4, 5, 5, 6}}},
	{"4,4,4 tied toy", [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}}},
	{"1,2,3", [][]float64{{7.5}, {1.5, 2.5}, {3.0, 4.0, 9.0}}},
	{"1,1,4 ties", [][]float64{{2}, {2}, {1, 2, 3, 3}}},
	{"1,1,1,1", [][]float64{{4}, {1}, {3}, {2}}},
	{"1,1,1,1,1 ties", [][]float64{{4}, {1}, {4}, {2}, {1}}},
	{"1,5", [][]float64{{3.2}, {1, 2, 4, 5, 6}}},
	{"2,2,3,3 ties", [][]float64{{1, 4}, {2, 2}, {3, 5, 5}, {4, 6, 1}}},
	{"2,2,2,4", [][]float64{{0.3, 1.9}, {2.2, 0.8}, {3.1, 2.7}, {1.4, 3.6, 4.2, 0.1}}},
	{"2,2,2,2,3 ties", [][]float64{{0.3, 1.9}, {2.2, 0.3}, {3.1, 2.7}, {1.4, 1.9}, {2.2, 0.8, 5}}},
	{"1,1,1,1,2,2,2 ties (k=7)", [][]float64{{3}, {1}, {3}, {2}, {1, 5}, {2, 4}, {3, 6}}},
	{"2,2,3,3 block of 7", [][]float64{{1, 1}, {1, 2}, {1, 1, 3}, {1, 1, 0}}},
	{"3,4,5 ties", [][]float64{{1, 1, 4}, {2, 3, 3, 7}, {4, 5, 6, 6, 1}}},
	{"5,7 ties", [][]float64{{1, 2, 2, 3, 9}, {2, 3, 4, 4, 4, 6, 8}}},
	{"2,10 heavy ties", [][]float64{{1, 2}, {1, 1, 1, 2, 2, 2, 2, 1, 1, 2}}},
	{"3,3,3 one block of 8", [][]float64{{1, 1, 1}, {1, 1, 1}, {1, 1, 2}}},
}

// TestKruskalWallisExactBruteForce compares the exact p with complete enumeration
// (exactBrute, written here) within 1e-12 relative.
func TestKruskalWallisExactBruteForce(t *testing.T) {
	for _, c := range exactBruteCases {
		t.Run(c.name, func(t *testing.T) {
			r := mustRank(t, c.groups)
			got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
			if err != nil {
				t.Fatal(err)
			}
			want := exactBrute(t, c.groups)
			if !relClose(got.P, exactRatFloat(want), 1e-12) {
				t.Errorf("P = %.17g, brute force %s = %.17g", got.P, want.RatString(), exactRatFloat(want))
			}
			if got.States < 1 || got.Work < 1 {
				t.Errorf("States = %d, Work = %d; want both positive", got.States, got.Work)
			}
		})
	}
}

// TestKruskalWallisExactTiedToy checks the exact fraction of docs/methods.md §1.5 [V]:
// p = 47/1925 on {1,2,2,3},{2,3,3,4},{3,4,5,5}; brute force gives it too.
func TestKruskalWallisExactTiedToy(t *testing.T) {
	groups := [][]float64{{1, 2, 2, 3}, {2, 3, 3, 4}, {3, 4, 5, 5}}
	want := big.NewRat(47, 1925) // docs/methods.md §1.5 [V]
	if b := exactBrute(t, groups); b.Cmp(want) != 0 {
		t.Fatalf("brute force gives %s, docs/methods.md §1.5 47/1925", b.RatString())
	}
	got, err := KruskalWallisExact(context.Background(), mustRank(t, groups), ExactBudget{})
	if err != nil {
		t.Fatal(err)
	}
	if !relClose(got.P, exactRatFloat(want), 1e-12) {
		t.Errorf("P = %.17g, want 47/1925 = %.17g", got.P, exactRatFloat(want))
	}
}

// TestKruskalWallisExactRandomDesigns compares with brute force on random small
// designs (fixed seed), with ties of every kind and groups of size 1.
func TestKruskalWallisExactRandomDesigns(t *testing.T) {
	rng := rand.New(rand.NewPCG(20, 21))
	tested := 0
	for tested < 250 {
		k := 2 + rng.IntN(4)
		groups := make([][]float64, k)
		n := 0
		levels := 2 + rng.IntN(12)
		for i := range groups {
			groups[i] = make([]float64, 1+rng.IntN(4))
			for j := range groups[i] {
				groups[i][j] = float64(rng.IntN(levels))
			}
			n += len(groups[i])
		}
		if n > 10 {
			continue
		}
		r := mustRank(t, groups)
		if len(r.Blocks) < 2 {
			continue
		}
		tested++
		got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
		if err != nil {
			t.Fatalf("%v: %v", groups, err)
		}
		if want := exactBrute(t, groups); !relClose(got.P, exactRatFloat(want), 1e-12) {
			t.Errorf("%v: P = %.17g, brute force %s", groups, got.P, want.RatString())
		}
	}
}

// TestKruskalWallisExactScipy compares with scipy 1.10.1 stats.permutation_test
// (permutation_type="independent", n_resamples=inf: complete enumeration) on the sets
// of testdata/reference/exact_kw_scipy.json, as the exact fraction count/total.
func TestKruskalWallisExactScipy(t *testing.T) {
	ref := loadExactReference(t)
	for _, c := range ref.Kruskal {
		t.Run(c.Name, func(t *testing.T) {
			r := mustRank(t, c.Groups)
			kw, err := KruskalWallisTest(r)
			if err != nil {
				t.Fatal(err)
			}
			if !relClose(kw.H, c.H, 1e-12) {
				t.Errorf("H* = %.17g, scipy 1.10.1 stats.kruskal %.17g", kw.H, c.H)
			}
			got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
			if err != nil {
				t.Fatal(err)
			}
			want := exactRatFloat(big.NewRat(c.Count, c.Total))
			if !relClose(got.P, want, 1e-12) {
				t.Errorf("P = %.17g, scipy 1.10.1 permutation_test %d/%d = %.17g", got.P, c.Count, c.Total, want)
			}
		})
	}
}

// TestKruskalWallisExactCriticalValues checks the exact p at the classic published
// critical values for equal sizes without ties: 5.600/7.200 (3,3,3), 5.692/7.654
// (4,4,4), 5.780/8.000 (5,5,5) at alpha 0.05/0.01. The printed tables were not at hand
// (Meyer & Seaman's table site states the convention "p-value less than or equal to the
// nominal level" but shows no values in the part read), so these are recalled from
// memory, as listed in docs/methods.md §1.4 (Kruskal & Wallis 1952; Iman, Quade &
// Alexander 1975; 5.78 marked there as seen in a textbook table).
//
// The null distribution is enumerated here (every assignment of the ranks 1..3m to
// three groups of m, T = Σ_i S_i^2 in integers); from it the smallest attainable h with
// P(H >= h) <= alpha, its tail count and those of every level are checked against the
// enumeration by scipy 1.10.1 stats.permutation_test and the tail probabilities against
// docs/methods.md §1.4 [V] (5 decimals). Then KruskalWallisExact must give, on data
// whose H is that critical value, the tail count over the number of assignments within
// 1e-12, and on data whose H is the next attainable value below it, a p above alpha.
func TestKruskalWallisExactCriticalValues(t *testing.T) {
	ref := loadExactReference(t)
	published := map[int]map[float64]float64{ // recalled from memory, docs/methods.md §1.4
		3: {0.05: 5.600, 0.01: 7.200},
		4: {0.05: 5.692, 0.01: 7.654},
		5: {0.05: 5.780, 0.01: 8.000},
	}
	methodsP := map[int]map[float64]float64{ // docs/methods.md §1.4 [V], 5 decimals
		3: {0.10: 0.10000, 0.05: 0.05000, 0.01: 0.00357},
		4: {0.10: 0.09662, 0.05: 0.04866, 0.01: 0.00762},
		5: {0.10: 0.09952, 0.05: 0.04878, 0.01: 0.00946},
	}
	for _, c := range ref.Critical {
		m := c.Sizes[0]
		t.Run(fmt.Sprint(c.Sizes), func(t *testing.T) {
			atoms, total := equalSizeNull(m)
			if total != c.Total {
				t.Fatalf("enumerated %d assignments, scipy 1.10.1 %d", total, c.Total)
			}
			n := float64(3 * m)
			hOf := func(sumSq int64) float64 { // H = 12/(N(N+1)) · T/4 - 3(N+1), T = Σ S_i^2/m
				return 12/(n*(n+1))*(float64(sumSq)/float64(m))/4 - 3*(n+1)
			}
			for _, lev := range c.Levels {
				// atoms are in descending T; the critical value is the last atom whose
				// upper tail stays within alpha.
				var tail int64
				crit := -1
				for i, a := range atoms {
					if float64(tail+a.count) > lev.Alpha*float64(total) {
						break
					}
					tail += a.count
					crit = i
				}
				if crit < 0 || crit+1 == len(atoms) {
					t.Fatalf("alpha %v: no attainable level", lev.Alpha)
				}
				h := hOf(atoms[crit].sumSq)
				if math.Abs(h-lev.H) > 1e-8 {
					t.Errorf("alpha %v: h = %.9f, scipy 1.10.1 permutation_test %.9f", lev.Alpha, h, lev.H)
				}
				if tail != lev.Count {
					t.Errorf("alpha %v: tail = %d assignments, scipy 1.10.1 permutation_test %d", lev.Alpha, tail, lev.Count)
				}
				if want, ok := published[m][lev.Alpha]; ok && math.Abs(h-want) > 5e-4 {
					t.Errorf("alpha %v: h = %.4f, published %.3f (recalled, docs/methods.md §1.4)", lev.Alpha, h, want)
				}
				if want := methodsP[m][lev.Alpha]; math.Abs(float64(tail)/float64(total)-want) > 5e-6 {
					t.Errorf("alpha %v: P(H >= %.4f) = %d/%d, docs/methods.md §1.4 %.5f", lev.Alpha, h, tail, total, want)
				}
				if m == 3 && lev.Alpha == 0.05 && tail != 84 {
					t.Errorf("(3,3,3) at 5.6: %d of 1680 assignments, docs/methods.md §1.4 84/1680", tail)
				}
				// The programme at the critical value and just below it.
				got, err := KruskalWallisExact(context.Background(), mustRank(t, atoms[crit].groups(m)), ExactBudget{})
				if err != nil {
					t.Fatal(err)
				}
				if want := float64(tail) / float64(total); !relClose(got.P, want, 1e-12) {
					t.Errorf("alpha %v: P at h = %.4f is %.17g, enumerated %d/%d", lev.Alpha, h, got.P, tail, total)
				}
				below, err := KruskalWallisExact(context.Background(), mustRank(t, atoms[crit+1].groups(m)), ExactBudget{})
				if err != nil {
					t.Fatal(err)
				}
				next := tail + atoms[crit+1].count
				if below.P <= lev.Alpha || !relClose(below.P, float64(next)/float64(total), 1e-12) {
					t.Errorf("alpha %v: P at the next h = %.4f is %.17g, enumerated %d/%d (above alpha)",
						lev.Alpha, hOf(atoms[crit+1].sumSq), below.P, next, total)
				}
			}
		})
	}
}

// nullAtom is one attainable value of Σ_i S_i^2 (doubled rank sums) for three groups of
// m without ties: how many assignments give it, and one of them (the group of rank
// j+1 in bits 2j, 2j+1 of code).
type nullAtom struct {
	sumSq int64
	count int64
	code  uint64
}

// groups returns data with the atom's assignment: the ranks 1..3m as values.
func (a nullAtom) groups(m int) [][]float64 {
	g := make([][]float64, 3)
	for j := range 3 * m {
		i := a.code >> (2 * j) & 3
		g[i] = append(g[i], float64(j+1))
	}
	return g
}

// equalSizeNull enumerates every assignment of the ranks 1..3m to three groups of m
// and returns the attainable Σ_i S_i^2, in descending order, and the number of
// assignments.
func equalSizeNull(m int) ([]nullAtom, int64) {
	byT := map[int64]*nullAtom{}
	var s [3]int64
	var room [3]int
	for i := range room {
		room[i] = m
	}
	var total int64
	var walk func(j int, code uint64)
	walk = func(j int, code uint64) {
		if j == 3*m {
			total++
			v := s[0]*s[0] + s[1]*s[1] + s[2]*s[2]
			if a := byT[v]; a != nil {
				a.count++
			} else {
				byT[v] = &nullAtom{sumSq: v, count: 1, code: code}
			}
			return
		}
		for i := range 3 {
			if room[i] > 0 {
				room[i]--
				s[i] += int64(2 * (j + 1))
				walk(j+1, code|uint64(i)<<(2*j))
				s[i] -= int64(2 * (j + 1))
				room[i]++
			}
		}
	}
	walk(0, 0)
	atoms := make([]nullAtom, 0, len(byT))
	for _, a := range byT {
		atoms = append(atoms, *a)
	}
	sort.Slice(atoms, func(i, j int) bool { return atoms[i].sumSq > atoms[j].sumSq })
	return atoms, total
}

// TestKruskalWallisExactDobson1983PlantWeights checks the exact p of the Dobson (1983) plant weights
// (Dobson 1983; values in docs/methods.md §8.2; one tie) against the exact fraction
// count/total of testdata/reference/exact_dobson1983.json (Python's exact integers over
// all 5,550,996,791,340 assignments, exact_dobson1983.py beside it) within 1e-12
// relative and against docs/methods.md §1.5 [V]: p = 0.014592 (6 decimals); the
// programme without pruning is compared in stats/internal/exactdp
// (TestDobson1983PlantWeightsUnpruned). (The
// other worked value of docs/methods.md §1.5, the mucociliary (5,4,5) example, is not
// tested: its data are not listed there and are marked as recalled from memory; the
// (5,4,5) design is covered by invented data against scipy in
// TestKruskalWallisExactScipy.)
func TestKruskalWallisExactDobson1983PlantWeights(t *testing.T) {
	r := mustRank(t, dobson1983PlantWeights)
	got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got.P-0.014592) > 5e-7 {
		t.Errorf("P = %.8f, docs/methods.md §1.5 0.014592", got.P)
	}
	var ref struct {
		Dobson1983PlantWeights struct {
			Groups       [][]float64 `json:"groups"`
			Count, Total int64
		} `json:"dobson1983_plant_weights"`
	}
	b, err := os.ReadFile("../testdata/reference/exact_dobson1983.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(ref.Dobson1983PlantWeights.Groups, dobson1983PlantWeights) {
		t.Fatalf("exact_dobson1983.json holds other data: %v", ref.Dobson1983PlantWeights.Groups)
	}
	if want := exactRatFloat(big.NewRat(ref.Dobson1983PlantWeights.Count, ref.Dobson1983PlantWeights.Total)); !relClose(got.P, want, 1e-12) {
		t.Errorf("P = %.17g, exact enumeration %d/%d = %.17g", got.P, ref.Dobson1983PlantWeights.Count, ref.Dobson1983PlantWeights.Total, want)
	}
	// Regression pin of this implementation's bits (not an external reference): the
	// determinism promise is that this never changes on any machine or Go release.
	// Change it only with a deliberate change of the summation order, said in the
	// commit.
	if bits := math.Float64bits(got.P); bits != exactDobson1983PlantWeightsBits {
		t.Errorf("P bits = %#x (%.17g), pinned %#x (%.17g)", bits, got.P,
			uint64(exactDobson1983PlantWeightsBits), math.Float64frombits(exactDobson1983PlantWeightsBits))
	}
}

const exactDobson1983PlantWeightsBits = 0x3f8de27fa7a96f01 // 0.014592168144353492

// TestKruskalWallisExactWideKey covers states of more than 64 bits: fifteen groups of
// one and a group of five, N = 20, with ties. Groups of one hold one value each, so
// T = Σ_singles d^2 + S^2/5 depends only on the values of the group of five, and the
// exact p is #{5-subsets of the pooled values with T >= T_obs} / C(20, 5), enumerated
// here.
func TestKruskalWallisExactWideKey(t *testing.T) {
	five := []float64{2, 7, 7, 11, 15}
	groups := [][]float64{five}
	singles := []float64{1, 2, 3, 4, 4, 5, 6, 8, 9, 9, 10, 12, 13, 14, 16}
	for _, x := range singles {
		groups = append(groups, []float64{x})
	}
	r := mustRank(t, groups) // two-word keys: stats/internal/exactdp TestWideKeyLayout
	got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
	if err != nil {
		t.Fatal(err)
	}

	pooled := append(slices.Clone(five), singles...)
	r2 := naiveRank2(pooled)
	var sumSq int64
	for _, d := range r2 {
		sumSq += d * d
	}
	stat := func(idx []int) *big.Rat { // T for the group of five at positions idx
		var s, sq int64
		for _, u := range idx {
			s += r2[u]
			sq += r2[u] * r2[u]
		}
		return new(big.Rat).Add(big.NewRat(sumSq-sq, 1), big.NewRat(s*s, 5))
	}
	obs := stat([]int{0, 1, 2, 3, 4})
	var ge, all int64
	idx := make([]int, 5)
	var walk func(next, depth int)
	walk = func(next, depth int) {
		if depth == 5 {
			all++
			if stat(idx).Cmp(obs) >= 0 {
				ge++
			}
			return
		}
		for u := next; u <= len(pooled)-(5-depth); u++ {
			idx[depth] = u
			walk(u+1, depth+1)
		}
	}
	walk(0, 0)
	if all != 15504 {
		t.Fatalf("enumerated %d subsets, want C(20,5) = 15504", all)
	}
	want := exactRatFloat(big.NewRat(ge, all))
	if !relClose(got.P, want, 1e-12) {
		t.Errorf("P = %.17g, enumerated %d/%d = %.17g", got.P, ge, all, want)
	}
}

// TestKruskalWallisExactWorkers checks that the number of goroutines does not change
// a single bit of the result (fixed chunks, combined in order), on designs whose
// layers span many chunks and partitions.
func TestKruskalWallisExactWorkers(t *testing.T) {
	for _, groups := range [][][]float64{
		dobson1983PlantWeights,
		exactBenchGroups([]int{6, 6, 6, 6}, 3, 0),
		exactBenchGroups([]int{9, 10, 11}, 20, 0.3),
	} {
		var first Exact
		for i, workers := range []int{1, 2, 3, 4} {
			got, err := KruskalWallisExact(context.Background(), mustRank(t, groups), ExactBudget{workers: workers})
			if err != nil {
				t.Fatal(err)
			}
			if i == 0 {
				first = got
				if got.States < 4*4096 { // four chunks of the programme
					t.Errorf("design too small to test chunking: %d states", got.States)
				}
				continue
			}
			if math.Float64bits(got.P) != math.Float64bits(first.P) || got.States != first.States || got.Work != first.Work {
				t.Errorf("%d workers: %+v, 1 worker %+v", workers, got, first)
			}
		}
	}
	// A refusal stops at the same chunk, with the same figures.
	over := mustRank(t, exactBenchGroups([]int{8, 8, 8, 8}, 0, 0))
	var msg string
	for i, workers := range []int{1, 2, 4} {
		for _, b := range []ExactBudget{{MaxStates: 200_000}, {MaxWork: 300_000}} {
			b.workers = workers
			_, err := KruskalWallisExact(context.Background(), over, b)
			if !errors.Is(err, ErrExactBudget) {
				t.Fatalf("%d workers, %+v: err = %v", workers, b, err)
			}
			if i == 0 {
				msg += err.Error() + "\n"
			} else if !strings.Contains(msg, err.Error()+"\n") {
				t.Errorf("%d workers: %q, 1 worker:\n%s", workers, err, msg)
			}
		}
	}
}

// wilcoxonTwoSidedBrute is the exact two-sided Wilcoxon-Mann-Whitney rank-sum p
// conditional on ties, from its definition: over all C(N, n_1) choices of the first
// sample's positions, p = #{|W* - E W| >= |W - E W|} / C(N, n_1), with W the sum of the
// first sample's midranks and E W = n_1 (N+1)/2 (doubled, so all integers).
func wilcoxonTwoSidedBrute(x, y []float64) *big.Rat {
	pooled := append(slices.Clone(x), y...)
	r2 := naiveRank2(pooled)
	n, n1 := len(pooled), len(x)
	center := int64(n1) * int64(n+1) // 2 E W
	abs := func(v int64) int64 { return max(v, -v) }
	var w2 int64
	for i := range n1 {
		w2 += r2[i]
	}
	obs := abs(w2 - center)
	var ge, all int64
	var walk func(next, left int, sum int64)
	walk = func(next, left int, sum int64) {
		if left == 0 {
			all++
			if abs(sum-center) >= obs {
				ge++
			}
			return
		}
		for u := next; u <= n-left; u++ {
			walk(u+1, left-1, sum+r2[u])
		}
	}
	walk(0, n1, 0)
	return big.NewRat(ge, all)
}

// TestKruskalWallisExactTwoSample checks k = 2 against the exact two-sided
// Wilcoxon-Mann-Whitney test: without ties, scipy 1.10.1 stats.mannwhitneyu
// (method="exact", alternative="two-sided"), frozen in exact_kw_scipy.json; with
// ties, the definition enumerated (wilcoxonTwoSidedBrute).
func TestKruskalWallisExactTwoSample(t *testing.T) {
	ref := loadExactReference(t)
	for _, c := range ref.MannWhitney {
		t.Run(c.Name, func(t *testing.T) {
			got, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{c.X, c.Y}), ExactBudget{})
			if err != nil {
				t.Fatal(err)
			}
			if !relClose(got.P, c.P, 1e-12) {
				t.Errorf("P = %.17g, scipy 1.10.1 mannwhitneyu exact %.17g", got.P, c.P)
			}
			if len(c.X)+len(c.Y) <= 20 {
				if b := exactRatFloat(wilcoxonTwoSidedBrute(c.X, c.Y)); !relClose(b, c.P, 1e-12) {
					t.Errorf("the enumerated definition gives %.17g, scipy %.17g", b, c.P)
				}
			}
		})
	}
	tied := []struct {
		name string
		x, y []float64
	}{ // invented
		{"4,6", []float64{1, 2, 2, 5}, []float64{2, 3, 5, 5, 6, 7}},
		{"5,5", []float64{1, 1, 2, 3, 3}, []float64{3, 3, 4, 4, 5}},
		{"3,9 heavy", []float64{1, 2, 2}, []float64{1, 1, 2, 2, 2, 3, 3, 3, 1}},
		{"7,8", []float64{0, 1, 1, 2, 4, 4, 4}, []float64{2, 3, 3, 5, 5, 6, 6, 4}},
		{"1,9", []float64{3}, []float64{1, 3, 3, 2, 4, 5, 3, 6, 1}},
		{"4,20 block of 18", []float64{1, 2, 2, 3}, []float64{2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 2, 0, 3, 4}},
	}
	for _, c := range tied {
		t.Run("ties/"+c.name, func(t *testing.T) {
			got, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{c.x, c.y}), ExactBudget{})
			if err != nil {
				t.Fatal(err)
			}
			want := wilcoxonTwoSidedBrute(c.x, c.y)
			if !relClose(got.P, exactRatFloat(want), 1e-12) {
				t.Errorf("P = %.17g, enumerated two-sided rank-sum %s", got.P, want.RatString())
			}
		})
	}
}

// TestKruskalWallisExactInvariance: p is bit-for-bit the same under strictly
// increasing transforms, reordering of the rows and relabeling of the groups (the
// exact null depends on the ranks and the sizes only; common practice).
func TestKruskalWallisExactInvariance(t *testing.T) {
	groups := [][]float64{ // invented, with ties
		{1.5, 2, 2, 3.5},
		{2, 4, 4.5, 7, 7},
		{3.5, 5, 6, 9, 9.5, 12},
		{0.5, 1, 2},
	}
	base, err := KruskalWallisExact(context.Background(), mustRank(t, groups), ExactBudget{})
	if err != nil {
		t.Fatal(err)
	}
	transform := func(f func(float64) float64) [][]float64 {
		out := make([][]float64, len(groups))
		for i, g := range groups {
			for _, x := range g {
				out[i] = append(out[i], f(x))
			}
		}
		return out
	}
	check := func(name string, r *Ranking) {
		t.Helper()
		got, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if got.P != base.P {
			t.Errorf("%s: P = %.17g, untransformed %.17g", name, got.P, base.P)
		}
	}
	check("exp", mustRank(t, transform(math.Exp)))
	check("3x-7", mustRank(t, transform(func(x float64) float64 { return 3*x - 7 })))
	check("x^3", mustRank(t, transform(func(x float64) float64 { return x * x * x })))

	g, v := flatten(groups)
	rng := rand.New(rand.NewPCG(40, 41))
	for range 5 {
		rng.Shuffle(len(g), func(i, j int) { g[i], g[j] = g[j], g[i]; v[i], v[j] = v[j], v[i] })
		r, err := Rank(g, v, len(groups))
		if err != nil {
			t.Fatal(err)
		}
		check("rows shuffled", r)
	}
	for _, perm := range [][]int{{1, 0, 2, 3}, {3, 2, 1, 0}, {2, 3, 0, 1}} {
		relabeled := make([][]float64, len(groups))
		for i, p := range perm {
			relabeled[p] = groups[i]
		}
		check(fmt.Sprintf("groups relabeled %v", perm), mustRank(t, relabeled))
	}
}

// TestKruskalWallisExactDeterministic runs the same input twice and on fresh copies:
// identical bits.
func TestKruskalWallisExactDeterministic(t *testing.T) {
	r := mustRank(t, [][]float64{{1, 2, 2, 5, 9, 3}, {4, 4, 6, 7, 1}, {8, 8, 10, 2, 11, 12, 0}})
	a, err1 := KruskalWallisExact(context.Background(), r, ExactBudget{})
	b, err2 := KruskalWallisExact(context.Background(), r, ExactBudget{})
	if err1 != nil || err2 != nil {
		t.Fatal(err1, err2)
	}
	if math.Float64bits(a.P) != math.Float64bits(b.P) || a.States != b.States || a.Work != b.Work {
		t.Errorf("two runs differ: %+v, %+v", a, b)
	}
}

// TestKruskalWallisExactDoesNotMutate checks that the Ranking is left unchanged.
func TestKruskalWallisExactDoesNotMutate(t *testing.T) {
	r := mustRank(t, [][]float64{{1, 2, 2, 5}, {4, 4, 6}, {8, 8, 10, 2, 1}})
	before := &Ranking{
		N: r.N, K: r.K, TieSum: r.TieSum,
		Counts:   slices.Clone(r.Counts),
		RankSum2: slices.Clone(r.RankSum2),
		Blocks:   slices.Clone(r.Blocks),
		Sorted:   make([][]float64, len(r.Sorted)),
	}
	for i, s := range r.Sorted {
		before.Sorted[i] = slices.Clone(s)
	}
	if _, err := KruskalWallisExact(context.Background(), r, ExactBudget{}); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(r, before) {
		t.Errorf("the Ranking changed:\n got %+v\nwant %+v", r, before)
	}
}

// TestKruskalWallisExactEdgeCases covers p = 1 designs, errors and the budget.
func TestKruskalWallisExactEdgeCases(t *testing.T) {
	t.Run("N=2", func(t *testing.T) {
		got, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{{1}, {2}}), ExactBudget{})
		if err != nil || got.P != 1 {
			t.Errorf("got %+v, %v; want P = 1", got, err)
		}
	})
	t.Run("all groups of size 1", func(t *testing.T) {
		// Without ties H = N-1 for every assignment, so p = 1.
		got, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{{5}, {3}, {9}, {1}, {2}, {7}}), ExactBudget{})
		if err != nil || !relClose(got.P, 1, 1e-15) {
			t.Errorf("got %+v, %v; want P = 1", got, err)
		}
	})
	t.Run("identical groups", func(t *testing.T) {
		// Every group has the same rank sum: H = 0, the smallest value, so p = 1.
		got, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{{1, 6}, {2, 5}, {3, 4}}), ExactBudget{})
		if err != nil || !relClose(got.P, 1, 1e-15) {
			t.Errorf("got %+v, %v; want P = 1", got, err)
		}
	})
	t.Run("all tied", func(t *testing.T) {
		_, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{{2, 2}, {2, 2, 2}}), ExactBudget{})
		if !errors.Is(err, ErrAllTied) {
			t.Errorf("err = %v, want ErrAllTied", err)
		}
	})
	t.Run("nil", func(t *testing.T) {
		if _, err := KruskalWallisExact(context.Background(), nil, ExactBudget{}); err == nil || errors.Is(err, ErrExactBudget) {
			t.Errorf("err = %v, want a nil-ranking error", err)
		}
	})
	t.Run("inconsistent", func(t *testing.T) {
		r := mustRank(t, [][]float64{{1, 2}, {3, 4}})
		r.Counts[0] = 3
		_, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
		if err == nil || !strings.Contains(err.Error(), "inconsistent ranking") {
			t.Errorf("err = %v, want an inconsistent-ranking error", err)
		}
	})
	t.Run("negative budget", func(t *testing.T) {
		_, err := KruskalWallisExact(context.Background(), mustRank(t, [][]float64{{1, 2}, {3, 4}}), ExactBudget{MaxWork: -1})
		if err == nil || errors.Is(err, ErrExactBudget) {
			t.Errorf("err = %v, want a negative-budget error", err)
		}
	})

	// A design far over any budget: (30,30,30) has about 10^42 assignments.
	var groups [][]float64
	for i := range 3 {
		var g []float64
		for j := range 30 {
			g = append(g, float64(j*3+i))
		}
		groups = append(groups, g)
	}
	large := mustRank(t, groups)
	for _, b := range []ExactBudget{{MaxStates: 1000}, {MaxWork: 5000}} {
		t.Run(fmt.Sprintf("over budget %+v", b), func(t *testing.T) {
			_, err := KruskalWallisExact(context.Background(), large, b)
			if !errors.Is(err, ErrExactBudget) {
				t.Fatalf("err = %v, want ErrExactBudget", err)
			}
			if !strings.Contains(err.Error(), "live states") {
				t.Errorf("err = %q does not give the figures", err)
			}
		})
	}
	t.Run("over budget stops at once", func(t *testing.T) {
		// The work done before stopping is bounded by the budget plus the work on one
		// chunk of 4096 states, at most k transitions each.
		_, err := KruskalWallisExact(context.Background(), large, ExactBudget{MaxStates: 1 << 40, MaxWork: 10_000})
		if !errors.Is(err, ErrExactBudget) || !strings.Contains(err.Error(), "units of work (budget 10000)") {
			t.Fatalf("err = %v", err)
		}
		msg := err.Error()
		var work int64
		if _, err := fmt.Sscanf(msg[strings.Index(msg, "states (budget"):], "states (budget %d), %d", new(int64), &work); err != nil {
			t.Fatalf("parse %q: %v", msg, err)
		}
		if work <= 10_000 || work > 10_000+int64(4096*large.K) {
			t.Errorf("stopped after %d units of work, budget 10000", work)
		}
	})
	t.Run("default budget refuses a large design", func(t *testing.T) {
		if testing.Short() {
			t.Skip("runs up to the default budget")
		}
		_, err := KruskalWallisExact(context.Background(), large, ExactBudget{})
		if !errors.Is(err, ErrExactBudget) {
			t.Errorf("err = %v, want ErrExactBudget", err)
		}
	})
	t.Run("too many groups for the state", func(t *testing.T) {
		var groups [][]float64
		for i := range 30 {
			groups = append(groups, []float64{float64(i), float64(i) + 0.5, float64(i) + 0.25})
		}
		_, err := KruskalWallisExact(context.Background(), mustRank(t, groups), ExactBudget{})
		if !errors.Is(err, ErrExactBudget) || !strings.Contains(err.Error(), "127 bits") {
			t.Errorf("err = %v, want ErrExactBudget about the state size", err)
		}
	})
	t.Run("N above 65535", func(t *testing.T) {
		n := 70_000
		g := make([]int32, n)
		v := make([]float64, n)
		for i := range n {
			g[i] = int32(i % 2)
			v[i] = float64(i)
		}
		r, err := Rank(g, v, 2)
		if err != nil {
			t.Fatal(err)
		}
		_, err = KruskalWallisExact(context.Background(), r, ExactBudget{})
		if !errors.Is(err, ErrExactBudget) || !strings.Contains(err.Error(), "65535") {
			t.Errorf("err = %v, want ErrExactBudget about N", err)
		}
	})
}

func ExampleKruskalWallisExact() {
	// Three invented groups of four scores with ties.
	group := []int32{0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2}
	values := []float64{1, 2, 2, 3, 2, 3, 3, 4, 3, 4, 5, 5}
	r, err := Rank(group, values, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	kw, err := KruskalWallisTest(r)
	if err != nil {
		fmt.Println(err)
		return
	}
	ex, err := KruskalWallisExact(context.Background(), r, ExactBudget{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("H* = %.4f, chi-square p = %.4f, exact p = %.6f (47/1925 = %.6f)\n",
		kw.H, kw.P, ex.P, 47.0/1925)
	// Output:
	// H* = 6.6306, chi-square p = 0.0363, exact p = 0.024416 (47/1925 = 0.024416)
}
