package spec

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestReportValueScale checks the plan's report options: value_scale linear or log, linear
// when absent, any other value refused by the schema with the key's position, and a plan
// without the key encoded as before the key existed (no "report" member).
func TestReportValueScale(t *testing.T) {
	for _, tc := range []struct {
		name, report string
		want         ValueScale
		err          string
	}{
		{"absent", "", LinearScale, ""},
		{"empty", "report: {}\n", LinearScale, ""},
		{"linear", "report:\n  value_scale: linear\n", LinearScale, ""},
		{"log", "report:\n  value_scale: log\n", LogScale, ""},
		{"rank", "report:\n  value_scale: rank\n", "", "plan.yaml:11:16: report.value_scale"},
		{"unknown key", "report:\n  scale: log\n", "", "plan.yaml:11:3: report.scale: unknown key"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p, err := Parse("plan.yaml", []byte(strings.Replace(goodPlan, "analyses:\n", tc.report+"analyses:\n", 1)))
			if tc.err != "" {
				if err == nil || !strings.Contains(err.Error(), tc.err) {
					t.Fatalf("error %v, want one at %s", err, tc.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got := p.BoxValueScale(); got != tc.want {
				t.Errorf("value scale %q, want %q", got, tc.want)
			}
			b, err := json.Marshal(p)
			if err != nil {
				t.Fatal(err)
			}
			if has := strings.Contains(string(b), `"report"`); has != (tc.report != "") {
				t.Errorf("encoded plan has report: %v, plan text has it: %v", has, tc.report != "")
			}
		})
	}
}
