package runner

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"rankplan/runner/results"
	"rankplan/spec"
)

// endpointsRef is runner/testdata/endpoints/reference.json: scipy.stats.kruskal
// (scipy 1.10.1, Debian python3-scipy) on the invented three-endpoint data.
type endpointsRef struct {
	AllSites []struct{ H, P float64 } `json:"all_sites"`
	North    []struct{ H, P float64 } `json:"north"`
	South    []struct{ H, P float64 } `json:"south"`
}

func loadEndpointsRef(t *testing.T) endpointsRef {
	t.Helper()
	b, err := os.ReadFile("testdata/endpoints/reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref endpointsRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	return ref
}

// endpointsPlan writes a plan over testdata/endpoints/data.csv with the three endpoints
// itch, redness and sleep (in that order), extra analyses, and the multiplicity section.
func endpointsPlan(t *testing.T, extra, multiplicity string) *spec.Plan {
	t.Helper()
	abs, err := filepath.Abs("testdata/endpoints/data.csv")
	if err != nil {
		t.Fatal(err)
	}
	src := `rankplan: 1
id: endpoints
title: Three endpoints of an invented trial
data: {file: "` + abs + `", group: arm, outcome: itch}
groups: {order: [placebo, low, high]}
alpha: 0.05
seed: 7
analyses:
  - {id: itch, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
  - id: redness
    outcome: redness
    test: kruskal-wallis
    pvalue: {method: asymptotic}
    effect_size: {interval: none}
    posthoc: {method: dunn, adjust: holm}
  - {id: sleep, outcome: sleep, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
` + extra + multiplicity
	path := filepath.Join(t.TempDir(), "plan.yaml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, err := spec.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// TestMultiplicityThreeEndpoints checks the decisions across three endpoints against the
// decisions worked out by hand below, from the p-values of scipy 1.10.1 stats.kruskal
// (reference.json; checked first). At alpha = 0.05 the p-values are
//
//	itch p1 = 0.0011178, redness p2 = 0.0380812, sleep p3 = 0.4634244.
//
// Holm (1979) over (itch, redness, sleep): sorted p1 < p2 < p3;
//
//	itch    3·p1 = 0.0033535 <= 0.05        reject
//	redness 2·p2 = 0.0761623 >  0.05        do not reject, and stop
//	sleep   max(0.0761623, 1·p3) = 0.4634244 do not reject
//
// Fixed sequence itch → redness → sleep, each at 0.05 while all before rejected:
//
//	itch p1 <= 0.05 reject; redness p2 <= 0.05 reject; sleep p3 > 0.05 do not reject.
//
// Fixed sequence itch → sleep → redness:
//
//	itch reject; sleep p3 > 0.05 do not reject; redness not tested (so not rejected,
//	although p2 <= 0.05).
//
// Redness carries Dunn comparisons gated on its omnibus decision: they run under the first
// fixed sequence only.
func TestMultiplicityThreeEndpoints(t *testing.T) {
	ref := loadEndpointsRef(t)
	p1, p2, p3 := ref.AllSites[0].P, ref.AllSites[1].P, ref.AllSites[2].P
	type want struct {
		reject, tested bool
		adjusted       float64
	}
	for _, tc := range []struct {
		name, rule, section string
		order               []string
		want                map[string]want
		posthocRan          bool
	}{
		{"holm", "holm", "multiplicity: {rule: holm}\n", []string{"itch", "redness", "sleep"},
			map[string]want{"itch": {true, true, 3 * p1}, "redness": {false, true, 2 * p2}, "sleep": {false, true, p3}}, false},
		{"fixed sequence", "fixed-sequence", "multiplicity: {rule: fixed-sequence, analyses: [itch, redness, sleep]}\n", []string{"itch", "redness", "sleep"},
			map[string]want{"itch": {true, true, p1}, "redness": {true, true, p2}, "sleep": {false, true, p3}}, true},
		{"fixed sequence, sleep second", "fixed-sequence", "multiplicity: {rule: fixed-sequence, analyses: [itch, sleep, redness]}\n", []string{"itch", "sleep", "redness"},
			map[string]want{"itch": {true, true, p1}, "sleep": {false, true, p3}, "redness": {false, false, p3}}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res := runAll(t, endpointsPlan(t, "", tc.section))
			for i, a := range res.Analyses {
				if math.Abs(a.KruskalWallis.H-ref.AllSites[i].H) > 1e-11*ref.AllSites[i].H ||
					math.Abs(*a.PValue.Value-ref.AllSites[i].P) > 1e-12 {
					t.Fatalf("%s: H %v p %v, scipy H %v p %v", a.ID, a.KruskalWallis.H, *a.PValue.Value, ref.AllSites[i].H, ref.AllSites[i].P)
				}
			}
			m := res.Multiplicity
			if m == nil || string(m.Rule) != tc.rule || len(m.Members) != 3 {
				t.Fatalf("multiplicity %+v", m)
			}
			byID := map[string]results.Analysis{}
			for _, a := range res.Analyses {
				byID[a.ID] = a
			}
			for k, mem := range m.Members {
				w := tc.want[mem.ID]
				if mem.ID != tc.order[k] || mem.Reject != w.reject || mem.Tested != w.tested || math.Abs(mem.PAdjusted-w.adjusted) > 1e-12 {
					t.Errorf("member %d: %+v, want %s %+v", k, mem, tc.order[k], w)
				}
				d := byID[mem.ID].Decision
				if d.Reject != w.reject || d.PAdjusted == nil || *d.PAdjusted != mem.PAdjusted || !strings.Contains(d.Rule, mem.Why) {
					t.Errorf("%s decision %+v, member %+v", mem.ID, d, mem)
				}
			}
			if !m.Members[0].Tested || !strings.HasPrefix(m.Members[0].Why, "rejected") {
				t.Errorf("first member: %+v", m.Members[0])
			}
			if tc.name == "fixed sequence, sleep second" && m.Members[2].Why != `not tested: "sleep", earlier in the fixed sequence, did not reject` {
				t.Errorf("why %q", m.Members[2].Why)
			}
			ph := byID["redness"].PostHoc
			if ph.Ran != tc.posthocRan || !strings.Contains(ph.Why, "multiplicity rule") {
				t.Errorf("redness post-hoc ran %v (%s), want %v", ph.Ran, ph.Why, tc.posthocRan)
			}
		})
	}
}

// TestMultiplicityNotComputable: a family member whose test cannot be computed counts with
// p = 1, so m stays 3 and Bonferroni multiplies the others by 3.
func TestMultiplicityNotComputable(t *testing.T) {
	ref := loadEndpointsRef(t)
	p := endpointsPlan(t, "  - {id: flat, outcome: patient_age, test: kruskal-wallis, pvalue: {method: asymptotic}}\n",
		"multiplicity: {rule: bonferroni, analyses: [itch, flat, redness]}\n")
	// The data have no constant column; replace the plan's fourth outcome with a file copy
	// that has one.
	src, err := os.ReadFile("testdata/endpoints/data.csv")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(src), "\n"), "\n")
	for i := range lines {
		if i == 0 {
			lines[i] += ",patient_age"
		} else {
			lines[i] += ",40"
		}
	}
	path := filepath.Join(t.TempDir(), "data.csv")
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	p.Data.File = path
	res := runAll(t, p)
	m := res.Multiplicity
	if m.Members[1].P != nil || m.Members[1].PAdjusted != 1 || m.Members[1].Reject || !strings.Contains(m.Members[1].Why, "not computable") {
		t.Errorf("flat: %+v", m.Members[1])
	}
	if got, want := m.Members[0].PAdjusted, 3*ref.AllSites[0].P; math.Abs(got-want) > 1e-12 || !m.Members[0].Reject {
		t.Errorf("itch: %+v, want adjusted %v", m.Members[0], want)
	}
	if got, want := m.Members[2].PAdjusted, 3*ref.AllSites[1].P; math.Abs(got-want) > 1e-12 || m.Members[2].Reject {
		t.Errorf("redness: %+v, want adjusted %v", m.Members[2], want)
	}
	if res.Analyses[2].Decision.PAdjusted != nil {
		t.Errorf("sleep is outside the family: %+v", res.Analyses[2].Decision)
	}
}

// TestSubsets runs the same endpoint per site and checks H and p against scipy 1.10.1
// stats.kruskal on each site's rows (reference.json), and the rows left out.
func TestSubsets(t *testing.T) {
	ref := loadEndpointsRef(t)
	p := endpointsPlan(t, `  - {id: itch-north, subset: {column: site, values: [north]}, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
  - {id: itch-south, subset: {column: site, values: [south]}, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
  - {id: itch-both, subset: {column: site, values: [south, north]}, test: kruskal-wallis, pvalue: {method: asymptotic}, effect_size: {interval: none}}
`, "")
	res := runAll(t, p)
	for i, want := range []struct{ H, P float64 }{ref.North[0], ref.South[0], ref.AllSites[0]} {
		a := res.Analyses[3+i]
		if math.Abs(a.KruskalWallis.H-want.H) > 1e-11*want.H || math.Abs(*a.PValue.Value-want.P) > 1e-12 {
			t.Errorf("%s: H %v p %v, scipy H %v p %v", a.ID, a.KruskalWallis.H, *a.PValue.Value, want.H, want.P)
		}
	}
	north := res.Analyses[3]
	if north.N != 18 || north.Subset == nil || north.Subset.Column != "site" || len(north.Excluded) != 3 {
		t.Fatalf("north: n %d subset %+v excluded %+v", north.N, north.Subset, north.Excluded)
	}
	for _, e := range north.Excluded {
		if e.Reason != results.ReasonOutsideSubset || e.Rows != 6 {
			t.Errorf("north excluded %+v", e)
		}
	}
	if len(res.Analyses[5].Excluded) != 0 || res.Analyses[5].N != 36 {
		t.Errorf("both sites: %+v", res.Analyses[5].Excluded)
	}

	// A value that no row has is refused at its place in the plan.
	bad := endpointsPlan(t, "  - {id: x, subset: {column: site, values: [north, east]}, test: kruskal-wallis, pvalue: {method: asymptotic}}\n", "")
	_, err := Prepare(context.Background(), bad)
	if err == nil || !strings.Contains(err.Error(), `analyses[3].subset.values[1]: no row has "east" in column "site"`) ||
		!strings.Contains(err.Error(), `(values found: "north", "south")`) {
		t.Errorf("unknown subset value: %v", err)
	}
	for _, tc := range []struct{ col, want string }{
		{"region", `analyses[3].subset.column: no column "region"`},
		{"sleep", `analyses[3].subset.column: column "sleep" is an outcome of an analysis of this plan`},
	} {
		bad := endpointsPlan(t, "  - {id: x, subset: {column: "+tc.col+", values: [a]}, test: kruskal-wallis, pvalue: {method: asymptotic}}\n", "")
		if _, err := Prepare(context.Background(), bad); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("column %s: %v", tc.col, err)
		}
	}
}
