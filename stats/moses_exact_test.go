package stats

import (
	"encoding/json"
	"os"
	"testing"
)

// TestMosesExactReference compares c, the coverage, attainability and the counts
// #{U <= c}, #{U <= c+1} with testdata/reference/moses_exact.json, written from Python's
// exact integers by testdata/reference/moses_exact.py (the null counts from the
// Mann-Whitney recurrence for sizes up to 150 and from the generating function in unbounded
// integers above, cross-checked there) for all 225 pairs m, n of a grid up to 300 and six
// levels (under a second).
func TestMosesExactReference(t *testing.T) {
	raw, err := os.ReadFile("../testdata/reference/moses_exact.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Cases []struct {
			M, N       int
			Level      float64
			C          int
			Attainable bool
			Coverage   float64
			CountC     string `json:"count_c"`
			CountC1    string `json:"count_c1"`
		}
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Cases) != 15*15*6 {
		t.Fatalf("%d cases", len(ref.Cases))
	}
	nulls := map[[2]int]*mannWhitneyNull{}
	for _, rc := range ref.Cases {
		key := [2]int{rc.M, rc.N}
		d := nulls[key]
		if d == nil {
			// One entry above ⌊mn/2⌋, for the count at c + 1.
			if d, err = newMannWhitneyNull(rc.M, rc.N, min(rc.M*rc.N, rc.M*rc.N/2+1)); err != nil {
				t.Fatal(err)
			}
			nulls = map[[2]int]*mannWhitneyNull{key: d} // one table at a time
		}
		ix, err := d.index(rc.Level)
		if err != nil {
			t.Fatal(err)
		}
		if ix.c != rc.C || ix.coverage != rc.Coverage || ix.attainable != rc.Attainable ||
			d.cumAt(rc.C).String() != rc.CountC || d.cumAt(rc.C+1).String() != rc.CountC1 {
			t.Errorf("m %d, n %d, level %v: c %d coverage %v attainable %v, want %d %v %v (or counts differ)",
				rc.M, rc.N, rc.Level, ix.c, ix.coverage, ix.attainable, rc.C, rc.Coverage, rc.Attainable)
		}
	}
}
