package stats

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"testing"
)

// TestRankSumScipy compares with scipy 1.10.1 stats.mannwhitneyu (two-sided):
// testdata/reference/ranksum_scipy.py. The exact p only on data without ties (scipy's
// exact method ignores ties); the Dobson (1983) plant weights also match docs/methods.md §3.6 [V].
func TestRankSumScipy(t *testing.T) {
	b, err := os.ReadFile("../testdata/reference/ranksum_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Sets map[string]struct {
			X, Y    []float64
			Ties    bool
			U       float64
			PNormCC float64  `json:"p_norm_cc"`
			PNorm   float64  `json:"p_norm"`
			PExact  *float64 `json:"p_exact"`
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	for name, s := range ref.Sets {
		cc, err := RankSumTest(context.Background(), s.X, s.Y, true, ExactBudget{})
		if err != nil {
			t.Fatal(err)
		}
		plain, _ := RankSumTest(context.Background(), s.X, s.Y, false, ExactBudget{})
		if cc.U != s.U || !closeRel(cc.PNorm, s.PNormCC, 1e-12) || !closeRel(plain.PNorm, s.PNorm, 1e-12) {
			t.Errorf("%s: U %v p(cc) %v p %v; scipy %v %v %v", name, cc.U, cc.PNorm, plain.PNorm, s.U, s.PNormCC, s.PNorm)
		}
		if !cc.Exact {
			t.Errorf("%s: exact p did not fit the budget", name)
		}
		if s.PExact != nil && !closeRel(cc.PExact, *s.PExact, 1e-12) {
			t.Errorf("%s: exact p %v, scipy %v", name, cc.PExact, *s.PExact)
		}
	}
}

// TestRankSumExactTies enumerates every split of a tied sample into sizes m and n and
// counts those at least as far from the null mean m n/2 as the observed U.
func TestRankSumExactTies(t *testing.T) {
	x := []float64{1, 2, 2, 3, 3, 5}
	y := []float64{2, 3, 4, 4, 5, 5, 6, 6}
	all := append(append([]float64(nil), x...), y...)
	uOf := func(in []bool) float64 {
		var u float64
		for i, a := range all {
			if !in[i] {
				continue
			}
			for j, b := range all {
				if !in[j] {
					if a > b {
						u++
					} else if a == b {
						u += 0.5
					}
				}
			}
		}
		return u
	}
	in := make([]bool, len(all))
	for i := range x {
		in[i] = true
	}
	obs := math.Abs(uOf(in) - float64(len(x)*len(y))/2)
	var hits, total int
	for mask := 0; mask < 1<<len(all); mask++ {
		cnt := 0
		for i := range all {
			in[i] = mask>>i&1 == 1
			if in[i] {
				cnt++
			}
		}
		if cnt != len(x) {
			continue
		}
		total++
		if math.Abs(uOf(in)-float64(len(x)*len(y))/2) >= obs-1e-9 {
			hits++
		}
	}
	got, err := RankSumTest(context.Background(), x, y, false, ExactBudget{})
	if err != nil || !got.Exact {
		t.Fatal(err)
	}
	if want := float64(hits) / float64(total); math.Abs(got.PExact-want) > 1e-12 {
		t.Errorf("exact p %v, enumeration %d/%d = %v", got.PExact, hits, total, want)
	}
}

func TestRankSumErrors(t *testing.T) {
	if _, err := RankSumTest(context.Background(), nil, []float64{1}, true, ExactBudget{}); err == nil {
		t.Error("empty sample accepted")
	}
	if _, err := RankSumTest(context.Background(), []float64{2, 2}, []float64{2}, true, ExactBudget{}); err == nil {
		t.Error("all tied accepted")
	}
}
