package runner

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"reflect"
	"slices"
	"strings"
	"testing"

	"rankplan/runner/results"
	"rankplan/spec"
)

// TestLargeGroupSizeStudy ties LargeGroupSize to its accuracy study,
// testdata/reference/auto_large_scipy.py (scipy 1.10.1 chi2.sf against 200000 random
// relabelings per design, k = 3 to 6, equal, unequal and tied designs): from
// LargeGroupSize on, in every design the chi-square test's actual size is at most
// alpha + 3 se at each alpha, at least 0.9 alpha at 0.05 and at least 0.8 alpha at
// 0.01; and at the next smaller group size of the study's grid that fails, so the
// constant is the smallest size the study supports.
func TestLargeGroupSizeStudy(t *testing.T) {
	raw, err := os.ReadFile("../testdata/reference/auto_large_scipy.json")
	if err != nil {
		t.Fatal(err)
	}
	var study struct {
		Versions  map[string]string `json:"versions"`
		Resamples int               `json:"resamples"`
		Designs   []struct {
			Design string `json:"design"`
			K, N   int
			Levels []struct {
				Alpha, Size, SE float64
			} `json:"levels"`
		} `json:"designs"`
	}
	if err := json.Unmarshal(raw, &study); err != nil {
		t.Fatal(err)
	}
	if study.Versions["scipy"] != "1.10.1" || study.Resamples != 200000 || len(study.Designs) != 84 {
		t.Fatalf("study made with %v, %d resamples, %d designs; this test cites scipy 1.10.1, 200000 and 84", study.Versions, study.Resamples, len(study.Designs))
	}
	least := map[float64]float64{0.05: 0.9, 0.01: 0.8}
	holds := func(n int) (bool, string) {
		for _, d := range study.Designs {
			if d.N < n {
				continue
			}
			for _, l := range d.Levels {
				if l.Size > l.Alpha+3*l.SE || l.Size < least[l.Alpha]*l.Alpha {
					return false, fmt.Sprintf("%s k = %d n = %d: size %v at alpha %v (se %v)", d.Design, d.K, d.N, l.Size, l.Alpha, l.SE)
				}
			}
		}
		return true, ""
	}
	var grid []int
	for _, d := range study.Designs {
		if !slices.Contains(grid, d.N) {
			grid = append(grid, d.N)
		}
	}
	slices.Sort(grid)
	i := slices.Index(grid, LargeGroupSize)
	if i < 1 {
		t.Fatalf("LargeGroupSize %d is not an inner point of the study's grid %v", LargeGroupSize, grid)
	}
	if ok, why := holds(LargeGroupSize); !ok {
		t.Errorf("the rule fails from n = %d on: %s", LargeGroupSize, why)
	}
	if ok, _ := holds(grid[i-1]); ok {
		t.Errorf("the rule holds already from n = %d, below LargeGroupSize %d", grid[i-1], LargeGroupSize)
	}
	// The texts that name the size for plan writers say the same.
	if spec.DraftLargeGroupSize != LargeGroupSize {
		t.Errorf("init's comment names %d, the rule %d", spec.DraftLargeGroupSize, LargeGroupSize)
	}
	for _, f := range []string{"../schemas/plan.schema.json", "../README.md"} {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		if want := fmt.Sprintf("every group holds at least %d observations", LargeGroupSize); !strings.Contains(string(b), want) {
			t.Errorf("%s does not say %q", f, want)
		}
	}
}

// equalGroupsCSV has k groups of n distinct values each.
func equalGroupsCSV(k int, sizes ...int) string {
	var b strings.Builder
	b.WriteString("g,y\n")
	row := 0
	for i := range k {
		for range sizes[i] {
			fmt.Fprintf(&b, "G%d,%d\n", i, (row*7919)%1009)
			row++
		}
	}
	return b.String()
}

// TestAutoAsymptoticWhenLarge: method auto with asymptotic_when_large takes the
// asymptotic p-value exactly when the exact distribution does not fit the budget and
// every group holds at least LargeGroupSize; without the key auto is unchanged; the
// Monte Carlo draws limit does not apply when no resample is drawn.
func TestAutoAsymptoticWhenLarge(t *testing.T) {
	large := equalGroupsCSV(3, LargeGroupSize, LargeGroupSize, LargeGroupSize+5)
	small := equalGroupsCSV(3, LargeGroupSize, LargeGroupSize-1, LargeGroupSize+5)
	for _, c := range []struct {
		name, pvalue, csv string
		method            spec.PValueMethod
		reason            string
	}{
		{"large", "{method: auto, resamples: 2000, asymptotic_when_large: true}", large, spec.Asymptotic,
			"every group holds at least 25 observations (the smallest 25)"},
		{"one group too small", "{method: auto, resamples: 2000, asymptotic_when_large: true}", small, spec.Permutation,
			"asymptotic_when_large does not apply, since the smallest group holds 24 observations, fewer than 25"},
		{"without the key", "{method: auto, resamples: 2000}", large, spec.Permutation, "does not fit the work budget"},
		{"exact fits", "{method: auto, resamples: 2000, asymptotic_when_large: true}", tiedToy, spec.Exact, "fits the work budget"},
	} {
		t.Run(c.name, func(t *testing.T) {
			p := methodPlan(t, c.pvalue, "{interval: none}", c.csv)
			prep, err := Prepare(context.Background(), p)
			if err != nil {
				t.Fatal(err)
			}
			if err := prep.CheckWork(context.Background()); err != nil {
				t.Fatal(err)
			}
			if got := prep.Analyses[0].autoChoice(); got != c.method {
				t.Errorf("check's choice %q, want %q", got, c.method)
			}
			res, err := Execute(context.Background(), prep, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if _, err := EncodeResults(res); err != nil {
				t.Fatal(err)
			}
			a := res.Analyses[0]
			if a.PValue.Method != c.method || !strings.Contains(a.PValue.Reason, c.reason) {
				t.Errorf("method %q, reason %q; want %q with %q", a.PValue.Method, a.PValue.Reason, c.method, c.reason)
			}
			if c.method == spec.Asymptotic && (a.PValue.MonteCarlo != nil || *a.PValue.Value != *a.AsymptoticP.Value || a.PValue.Log10 != a.AsymptoticP.Log10) {
				t.Errorf("asymptotic p %+v, the analysis's asymptotic p %+v", a.PValue, a.AsymptoticP)
			}
		})
	}
	// 10^7 resamples of 10001 observations pass the draws limit when auto takes the
	// asymptotic p-value (two groups of 5000 and 5001: the exact distribution does not fit).
	p := methodPlan(t, "{method: auto, resamples: 10000000, asymptotic_when_large: true}", "{interval: none}", rowsCSV(10001))
	prep, err := Prepare(context.Background(), p)
	if err != nil {
		t.Fatal(err)
	}
	if err := prep.CheckWork(context.Background()); err != nil {
		t.Errorf("no resample is drawn, yet: %v", err)
	}
}

// TestSequentialRecorded: pvalue.stop_at_exceedances reaches the Monte Carlo test and
// the results record the rule; the results are the same for 1, 2 and 8 workers, and
// without the key the results have no sequential block.
func TestSequentialRecorded(t *testing.T) {
	run := func(pvalue string, workers int) results.Analysis {
		p := methodPlan(t, pvalue, "{interval: none}", tiedToy)
		prep, err := Prepare(context.Background(), p)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Execute(context.Background(), prep, Options{Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := EncodeResults(res); err != nil {
			t.Fatal(err)
		}
		return res.Analyses[0]
	}
	// The tied toy's exact p is 47/1925 = 0.0244: 20 exceedances take about 800 of
	// the 20000 resamples, 1000 cannot be reached.
	for _, c := range []struct {
		pvalue  string
		stopped bool
	}{
		{"{method: permutation, resamples: 20000, stop_at_exceedances: 20}", true},
		{"{method: auto, resamples: 20000, stop_at_exceedances: 20}", false}, // exact fits: no resampling
		{"{method: permutation, resamples: 20000, stop_at_exceedances: 1000}", false},
	} {
		first := run(c.pvalue, 1)
		for _, w := range []int{2, 8} {
			if again := run(c.pvalue, w); !reflect.DeepEqual(again, first) {
				t.Errorf("%s: workers %d differ from 1:\n%+v\n%+v", c.pvalue, w, again.PValue, first.PValue)
			}
		}
		mc := first.PValue.MonteCarlo
		if first.PValue.Method == spec.Exact {
			if mc != nil {
				t.Errorf("%s: exact p-value with a Monte Carlo record", c.pvalue)
			}
			continue
		}
		if mc == nil || mc.Sequential == nil || mc.Sequential.Stopped != c.stopped || mc.Sequential.MaxResamples != "20000" {
			t.Fatalf("%s: %+v", c.pvalue, mc)
		}
		if c.stopped && (mc.Exceedances != "20" || !strings.HasPrefix(mc.Estimator, "h / L") || mc.Resamples == "20000") {
			t.Errorf("%s: stopped, yet %+v", c.pvalue, mc)
		}
		if !c.stopped && (mc.Resamples != "20000" || !strings.HasPrefix(mc.Estimator, "(b + 1) / (m + 1)")) {
			t.Errorf("%s: not stopped, yet %+v", c.pvalue, mc)
		}
	}
	if mc := run("{method: permutation, resamples: 2000}", 0).PValue.MonteCarlo; mc.Sequential != nil {
		t.Errorf("no rule in the plan, yet %+v", mc.Sequential)
	}
}
