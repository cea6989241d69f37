package runner

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"rankplan/spec"
)

// groupsCSV has k groups of two rows each.
func groupsCSV(k int) string {
	var b strings.Builder
	b.WriteString("g,y\n")
	for i := range k {
		fmt.Fprintf(&b, "G%04d,1\nG%04d,2\n", i, i)
	}
	return b.String()
}

// rowsCSV has n rows in two groups.
func rowsCSV(n int) string {
	var b strings.Builder
	b.WriteString("g,y\n")
	for i := range n {
		fmt.Fprintf(&b, "%c,%d\n", 'A'+i%2, i)
	}
	return b.String()
}

// TestWorkLimits checks each limit of an analysis at its value (accepted) and one past
// it (refused with a positioned plan error), through Prepare and CheckWork as check and
// run call them.
func TestWorkLimits(t *testing.T) {
	const dunn = "{method: dunn}\n"
	for _, tc := range []struct {
		name, pvalue, effect, posthoc, csv, want string
	}{
		{"groups at the limit", "{method: asymptotic}", "{interval: none}", "", groupsCSV(MaxGroups), ""},
		{"groups over the limit", "{method: asymptotic}", "{interval: none}", "", groupsCSV(MaxGroups + 1),
			`plan.yaml:6:10: data.group: column "g" of ` + "%s" + ` holds 1001 groups, more than the limit of 1000 for an analysis; name the groups to analyse in groups.include`},
		{"post-hoc groups at the limit", "{method: asymptotic}", "{interval: none}", dunn, groupsCSV(MaxPostHocGroups), ""},
		{"post-hoc groups over the limit", "{method: asymptotic}", "{interval: none}", dunn, groupsCSV(MaxPostHocGroups + 1),
			"plan.yaml:15:23: analyses[0].posthoc.method: post-hoc comparisons of 101 groups (5050 pairs) exceed the limit of 100 groups; choose fewer groups with groups.include, or set posthoc.method to none"},
		// 10^4 observations × 10^7 resamples = 10^11 draws exactly.
		{"Monte Carlo draws at the limit", "{method: permutation, resamples: 10000000}", "{interval: none}", "", rowsCSV(10000), ""},
		{"Monte Carlo draws over the limit", "{method: permutation, resamples: 10000000}", "{interval: none}", "", rowsCSV(10001),
			"plan.yaml:13:46: analyses[0].pvalue.resamples: 10000000 Monte Carlo resamples of 10001 observations are 100010000000 draws, more than the limit of 100000000000 for one analysis; use at most 9999000 resamples"},
		{"default effect-size interval (no resamples)", "{method: asymptotic}", "", "", rowsCSV(50000), ""},
		{"bootstrap draws over the limit", "{method: asymptotic}", "{interval: bootstrap, resamples: 1000000}", "", rowsCSV(100001),
			"plan.yaml:14:51: analyses[0].effect_size.resamples: 1000000 bootstrap resamples of 100001 observations are 100001000000 draws, more than the limit of 100000000000 for one analysis; use at most 999990 resamples"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			extra := ""
			if tc.posthoc != "" {
				extra = "    posthoc: " + tc.posthoc
			}
			p := methodPlanWith(t, tc.pvalue, tc.effect, extra, tc.csv)
			want := tc.want
			if strings.Contains(want, "%s") {
				want = fmt.Sprintf(want, p.DataPath())
			}
			want = strings.ReplaceAll(want, "plan.yaml", p.File)
			prep, err := Prepare(context.Background(), p)
			if err == nil {
				err = prep.CheckWork(context.Background())
			}
			var ie *InputError
			switch {
			case want == "" && err != nil:
				t.Errorf("error %v", err)
			case want != "" && (err == nil || err.Error() != want):
				t.Errorf("error\n%v\nwant\n%s", err, want)
			case err != nil && !errors.As(err, &ie):
				t.Errorf("%T is not an InputError", err)
			}
		})
	}
}

// methodPlanWith is methodPlan with extra lines in the analysis (indented by four spaces).
func methodPlanWith(t *testing.T, pvalue, effect, extra, csv string) *spec.Plan {
	t.Helper()
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(csv), 0o644); err != nil {
		t.Fatal(err)
	}
	src := planHead + "alpha: 0.05\nseed: 11\nanalyses:\n  - id: a\n    test: kruskal-wallis\n    pvalue: " + pvalue + "\n"
	if effect != "" {
		src += "    effect_size: " + effect + "\n"
	}
	path := filepath.Join(dir, "plan.yaml")
	if err := os.WriteFile(path, []byte(src+extra), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestCheckWorkKeepsExact checks that the exact p-value CheckWork computes is the one
// Execute reports, and that Execute computes the same without CheckWork.
func TestCheckWorkKeepsExact(t *testing.T) {
	p := methodPlan(t, "{method: exact}", "{interval: none}", tiedToy)
	prep, err := Prepare(context.Background(), p)
	if err != nil {
		t.Fatal(err)
	}
	if err := prep.CheckWork(context.Background()); err != nil {
		t.Fatal(err)
	}
	if prep.Analyses[0].exact == nil || prep.Analyses[0].exact.err != nil {
		t.Fatalf("CheckWork kept %+v", prep.Analyses[0].exact)
	}
	checked, err := Execute(context.Background(), prep, Options{})
	if err != nil {
		t.Fatal(err)
	}
	fresh := runAll(t, methodPlan(t, "{method: exact}", "{interval: none}", tiedToy))
	if !reflect.DeepEqual(checked.Analyses[0].PValue, fresh.Analyses[0].PValue) {
		t.Errorf("p-value after CheckWork %+v, without %+v", checked.Analyses[0].PValue, fresh.Analyses[0].PValue)
	}
}
