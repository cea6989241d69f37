package report

import (
	"strings"
	"testing"

	"rankplan/runner/results"
)

func TestFormatP(t *testing.T) {
	v := 0.00435881
	for _, tc := range []struct {
		value *float64
		log10 float64
		want  string
	}{
		{&v, -2.36, "0.00435881"},
		{nil, -1762.8086, "< 1e-1762 (log10 p = -1762.8086)"},
		{nil, -308.2, "< 1e-308 (log10 p = -308.2000)"},
	} {
		if got := FormatP(tc.value, tc.log10); got != tc.want {
			t.Errorf("FormatP(%v) = %q, want %q", tc.log10, got, tc.want)
		}
	}
}

func TestNum(t *testing.T) {
	for _, tc := range []struct {
		x    float64
		want string
	}{
		{13.132423784966898, "13.1324"}, {0, "0"}, {17, "17"}, {12.375, "12.375"},
		{0.995779, "0.995779"}, {2.5e-7, "2.5e-07"}, {1.5e9, "1.5e+09"}, {-0.25, "-0.25"},
	} {
		if got := Num(tc.x); got != tc.want {
			t.Errorf("Num(%v) = %q, want %q", tc.x, got, tc.want)
		}
	}
}

func TestSummaryNotComputable(t *testing.T) {
	res := &results.Results{
		Plan: results.Plan{ID: "p", Title: "T"},
		Analyses: []results.Analysis{{ID: "a", Test: "kruskal-wallis", Outcome: "y", N: 3, Status: "not-computable",
			Reason: "all observations are tied", Groups: []results.Group{{Name: "A", N: 2}, {Name: "B", N: 1}}}},
	}
	var b strings.Builder
	if err := Summary(&b, res, "d.csv"); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"not computable: all observations are tied", Caution} {
		if !strings.Contains(b.String(), want) {
			t.Errorf("summary lacks %q:\n%s", want, b.String())
		}
	}
}
