package runner

import (
	"context"
	"os"
	"strings"
	"testing"

	"rankplan/spec"
)

// TestRerunRetiredAdjustment: the plan copy of a folder written before the false discovery
// rate adjustments were named in full holds "bh" or "by". verify reruns that copy, and the
// rerun stops with the plan error that names the new spelling, so verify reports that the
// plan no longer runs instead of reading the old code silently.
func TestRerunRetiredAdjustment(t *testing.T) {
	for _, tc := range []struct{ old, current string }{
		{"bh", "benjamini-hochberg"},
		{"by", "benjamini-yekutieli"},
	} {
		t.Run(tc.old, func(t *testing.T) {
			p := methodPlanWith(t, "{method: asymptotic}", "{interval: none}",
				"    posthoc: {method: dunn, adjust: "+tc.current+", when: always}\n", tiedToy)
			if _, err := rerun(context.Background(), p.File, p.DataPath(), 1); err != nil {
				t.Fatalf("rerun with %q: %v", tc.current, err)
			}
			src, err := os.ReadFile(p.File)
			if err != nil {
				t.Fatal(err)
			}
			old := strings.Replace(string(src), "adjust: "+tc.current, "adjust: "+tc.old, 1)
			if err := os.WriteFile(p.File, []byte(old), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err = rerun(context.Background(), p.File, p.DataPath(), 1)
			want := `analyses[0].posthoc.adjust: "` + tc.old + `" is no longer a method name; write ` + tc.current
			if err == nil || !strings.Contains(err.Error(), want) {
				t.Fatalf("rerun with %q: error %v; want one containing %q", tc.old, err, want)
			}
			if _, ok := spec.AsList(err); !ok {
				t.Errorf("rerun error %T is not a plan error", err)
			}
		})
	}
}
