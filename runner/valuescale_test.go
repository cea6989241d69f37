package runner

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestValueScaleReport runs a plan that asks for a log value axis on invented data and
// verifies the folder: the report says the axis is logarithmic, and verify, which renders
// report.html again after its rerun, finds the same page (the plan's report option reaches
// that rendering too; without it the page would differ).
func TestValueScaleReport(t *testing.T) {
	dir := t.TempDir()
	data := "group,y\na,1.5\na,2\na,40\nb,3\nb,5.5\nb,8\nc,0.2\nc,0.9\nc,1.1\n"
	plan := `rankplan: 1
id: "log-axis"
title: "Log value axis (invented data)"
data:
  file: "data.csv"
  group: "group"
  outcome: "y"
alpha: 0.05
seed: 7
report:
  value_scale: log
analyses:
  - id: "main"
    test: kruskal-wallis
    pvalue:
      method: asymptotic
`
	if err := os.WriteFile(filepath.Join(dir, "data.csv"), []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "plan.yaml"), []byte(plan), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "run")
	if _, err := Run(context.Background(), filepath.Join(dir, "plan.yaml"), RunOptions{Out: out, Workers: 1}); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(out, ReportFile))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), "The value axis is logarithmic.") {
		t.Errorf("report.html does not say that its value axis is logarithmic")
	}
	r, err := Verify(context.Background(), out, VerifyOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Outcome != Verified {
		t.Errorf("verify: %s", r.Outcome)
	}
	ran := false
	for _, c := range r.Checks {
		ran = ran || c.Name == "report"
		if c.Verdict == Fail {
			t.Errorf("check %s failed: %s", c.Name, c.Detail)
		}
	}
	if !ran {
		t.Errorf("verify did not render report.html again")
	}
}
