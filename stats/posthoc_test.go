package stats

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"testing"
)

// TestPostHocReference compares Dunn and Conover-Iman with an independent computation
// from the formulas with scipy 1.10.1 (testdata/reference/posthoc_scipy.py), on the Dobson (1983) plant weights
// and two invented sets with ties and unequal sizes. The Dobson (1983) plant weights also match docs/methods.md
// §3.1-3.2 [V]: z = 1.117725, -1.689290, -2.807015; t = 1.267026, -1.914938, -3.181964.
func TestPostHocReference(t *testing.T) {
	b, err := os.ReadFile("../testdata/reference/posthoc_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Sets map[string]struct {
			Groups       [][]float64
			RankVariance float64 `json:"rank_variance"`
			Pairs        []struct {
				I, J     int
				MeanDiff float64 `json:"mean_diff"`
				Z, T     float64
				PDunn    float64 `json:"p_dunn"`
				PConover float64 `json:"p_conover"`
			}
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Sets) < 3 {
		t.Fatal("too few sets")
	}
	for name, set := range ref.Sets {
		g, v := flatten(set.Groups)
		r, err := Rank(g, v, len(set.Groups))
		if err != nil {
			t.Fatal(err)
		}
		if !closeRel(RankVariance(r), set.RankVariance, 1e-13) {
			t.Errorf("%s: rank variance %v, scipy %v", name, RankVariance(r), set.RankVariance)
		}
		pairs := AllPairs(len(set.Groups))
		dunn, err := DunnTest(r, pairs)
		if err != nil {
			t.Fatal(err)
		}
		con, err := ConoverImanTest(r, pairs)
		if err != nil {
			t.Fatal(err)
		}
		for k, p := range set.Pairs {
			if dunn[k].I != p.I || dunn[k].J != p.J || !closeRel(dunn[k].MeanDiff, p.MeanDiff, 1e-13) ||
				!closeRel(dunn[k].Statistic, p.Z, 1e-12) || !closeRel(dunn[k].P, p.PDunn, 1e-11) {
				t.Errorf("%s pair %d-%d Dunn: %+v, scipy z %v p %v", name, p.I, p.J, dunn[k], p.Z, p.PDunn)
			}
			if !closeRel(con[k].Statistic, p.T, 1e-12) || !closeRel(con[k].P, p.PConover, 1e-11) {
				t.Errorf("%s pair %d-%d Conover: %+v, scipy t %v p %v", name, p.I, p.J, con[k], p.T, p.PConover)
			}
		}
	}
}

// TestDunnVarianceByEnumeration: on the tied toy data (docs/methods.md §1.5) the variance of
// R̄_1 − R̄_2 over all 34650 equally likely assignments equals σ²_R (1/n_1 + 1/n_2) =
// 6.1363636364 (docs/methods.md §3.1 [V]); enumerated here.
func TestDunnVarianceByEnumeration(t *testing.T) {
	vals := []float64{1, 2, 2, 3, 2, 3, 3, 4, 3, 4, 5, 5}
	g := []int32{0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2}
	r, err := Rank(g, vals, 3)
	if err != nil {
		t.Fatal(err)
	}
	// Midranks by value (from the blocks).
	rank := map[float64]float64{}
	pos := 0
	sorted := append([]float64(nil), vals...)
	for i := range sorted {
		for j := i + 1; j < len(sorted); j++ {
			if sorted[j] < sorted[i] {
				sorted[i], sorted[j] = sorted[j], sorted[i]
			}
		}
	}
	for _, b := range r.Blocks {
		rank[sorted[pos]] = float64(b.Rank2) / 2
		pos += b.Size
	}
	var sum, sumSq float64
	count := 0
	lab := make([]int, 12)
	left := []int{4, 4, 4}
	var rec func(u int)
	rec = func(u int) {
		if u == 12 {
			var s [3]float64
			for i, l := range lab {
				s[l] += rank[vals[i]]
			}
			d := s[0]/4 - s[1]/4
			sum += d
			sumSq += d * d
			count++
			return
		}
		for l := range 3 {
			if left[l] > 0 {
				left[l]--
				lab[u] = l
				rec(u + 1)
				left[l]++
			}
		}
	}
	rec(0)
	if count != 34650 {
		t.Fatalf("%d assignments", count)
	}
	mean := sum / float64(count)
	variance := sumSq/float64(count) - mean*mean
	want := RankVariance(r) * (1.0/4 + 1.0/4)
	if math.Abs(variance-want) > 1e-9 || math.Abs(want-6.1363636364) > 1e-9 {
		t.Errorf("enumerated variance %v, formula %v, docs/methods.md §3 6.1363636364", variance, want)
	}
}

func TestPostHocErrors(t *testing.T) {
	// Groups with no spread inside them: H* = N − 1 (docs/methods.md §1.1), whether their
	// values differ between groups or not; groups that merely do not overlap have spread.
	for _, tc := range []struct {
		name   string
		group  []int32
		values []float64
		k      int
		want   error
	}{
		{"constant and separated", []int32{0, 0, 1, 1}, []float64{1, 1, 2, 2}, 2, ErrConstantGroups},
		{"constant, two groups share a value", []int32{0, 0, 1, 1, 2, 2}, []float64{1, 1, 1, 1, 2, 2}, 3, ErrConstantGroups},
		{"separated with spread", []int32{0, 0, 1, 1}, []float64{1, 2, 3, 4}, 2, nil},
	} {
		r, err := Rank(tc.group, tc.values, tc.k)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := ConoverImanTest(r, AllPairs(tc.k)); !errors.Is(err, tc.want) || (tc.want == nil) != (err == nil) {
			t.Errorf("%s: %v, want %v", tc.name, err, tc.want)
		}
	}
	r, _ := Rank([]int32{0, 0, 1, 1}, []float64{1, 2, 3, 4}, 2)
	if _, err := DunnTest(r, [][2]int{{0, 0}}); err == nil {
		t.Error("a pair of one group accepted")
	}
	if _, err := DunnTest(r, [][2]int{{0, 2}}); err == nil {
		t.Error("a pair outside the groups accepted")
	}
	r1, _ := Rank([]int32{0, 1}, []float64{1, 2}, 2)
	if _, err := ConoverImanTest(r1, AllPairs(2)); err == nil {
		t.Error("N = k accepted")
	}
	tied, _ := Rank([]int32{0, 1, 1}, []float64{3, 3, 3}, 2)
	if _, err := DunnTest(tied, AllPairs(2)); !errors.Is(err, ErrAllTied) {
		t.Errorf("all tied: %v", err)
	}
	if got := ManyToOne(4, 2); len(got) != 3 || got[0] != [2]int{0, 2} || got[2] != [2]int{3, 2} {
		t.Errorf("ManyToOne %v", got)
	}
	if got := AllPairs(4); len(got) != 6 || got[5] != [2]int{2, 3} {
		t.Errorf("AllPairs %v", got)
	}
}
