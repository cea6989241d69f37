package exactdp

import (
	"encoding/json"
	"math"
	"os"
	"slices"
	"testing"
)

// testDesign is the input of the programme for invented groups of values: the group
// sizes, the tie blocks in ascending order and the doubled rank sums.
type testDesign struct {
	n        int
	counts   []int
	blocks   []Block
	rankSum2 []int64
}

// design ranks groups straight from the definition of midranks: a value with l smaller
// and e equal pooled values (itself included) has doubled midrank 2l + e + 1, and a tie
// block of e values at doubled midrank 2l + e + 1 follows the l smaller ones (common
// practice; stats.Rank does the same in one sort).
func design(t *testing.T, groups [][]float64) testDesign {
	t.Helper()
	var pooled []float64
	d := testDesign{counts: make([]int, len(groups)), rankSum2: make([]int64, len(groups))}
	for i, g := range groups {
		if len(g) == 0 {
			t.Fatalf("group %d is empty", i)
		}
		d.counts[i] = len(g)
		pooled = append(pooled, g...)
	}
	d.n = len(pooled)
	slices.Sort(pooled)
	for l := 0; l < len(pooled); {
		e := 1
		for l+e < len(pooled) && pooled[l+e] == pooled[l] {
			e++
		}
		d.blocks = append(d.blocks, Block{Rank2: int64(2*l + e + 1), Size: e})
		l += e
	}
	for i, g := range groups {
		for _, x := range g {
			l, _ := slices.BinarySearch(pooled, x)
			e := 0
			for l+e < len(pooled) && pooled[l+e] == x {
				e++
			}
			d.rankSum2[i] += int64(2*l + e + 1)
		}
	}
	return d
}

// tieCorrection is C = 1 − Σ_j (t_j³ − t_j)/(N³ − N) (Kruskal & Wallis 1952; common
// practice).
func (d testDesign) tieCorrection() float64 {
	n := float64(d.n)
	var s float64
	for _, b := range d.blocks {
		t := float64(b.Size)
		s += t*t*t - t
	}
	return 1 - s/(n*n*n-n)
}

// relClose reports whether got is within a relative tol of want (exact when want is 0).
func relClose(got, want, tol float64) bool {
	if want == 0 {
		return got == 0
	}
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// dobson1983PlantWeights reads the plant weights of Dobson (1983) from
// testdata/reference/exact_dobson1983.json, where exact_dobson1983.py froze them with
// the exact count of assignments.
func dobson1983PlantWeights(t *testing.T) (groups [][]float64, count, total int64) {
	t.Helper()
	var ref struct {
		Dobson1983PlantWeights struct {
			Groups       [][]float64 `json:"groups"`
			Count, Total int64
		} `json:"dobson1983_plant_weights"`
	}
	b, err := os.ReadFile("../../../testdata/reference/exact_dobson1983.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Dobson1983PlantWeights.Groups) != 3 {
		t.Fatalf("exact_dobson1983.json: %d groups", len(ref.Dobson1983PlantWeights.Groups))
	}
	return ref.Dobson1983PlantWeights.Groups, ref.Dobson1983PlantWeights.Count, ref.Dobson1983PlantWeights.Total
}

// TestDesign checks the ranking helper on a small case worked by hand: values
// {1, 2, 2} and {2, 5} have doubled midranks 2, 6, 6 and 6, 10.
func TestDesign(t *testing.T) {
	d := design(t, [][]float64{{1, 2, 2}, {2, 5}})
	want := testDesign{n: 5, counts: []int{3, 2}, blocks: []Block{{2, 1}, {6, 3}, {10, 1}}, rankSum2: []int64{14, 16}}
	if d.n != want.n || !slices.Equal(d.counts, want.counts) || !slices.Equal(d.blocks, want.blocks) || !slices.Equal(d.rankSum2, want.rankSum2) {
		t.Errorf("design = %+v, want %+v", d, want)
	}
	if c := d.tieCorrection(); math.Abs(c-(1-24.0/120)) > 1e-15 {
		t.Errorf("C = %v, want 1 - 24/120", c)
	}
}
