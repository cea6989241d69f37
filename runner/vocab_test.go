package runner

import (
	"testing"

	"rankplan/spec"
	"rankplan/stats"
)

// TestVocabularyImplemented requires an implementation for every name of the plan
// vocabulary that the runner acts on: every adjustment is one that stats.AdjustP computes,
// and every multiplicity rule has its description in results.json.
func TestVocabularyImplemented(t *testing.T) {
	for _, a := range spec.Adjustments() {
		if _, err := stats.AdjustP(string(a), []float64{0.01, 0.04, 0.5}); err != nil {
			t.Errorf("adjustment %q: %v", a, err)
		}
	}
	for _, r := range spec.MultiplicityRules() {
		if multiplicityMethods[r] == "" {
			t.Errorf("multiplicity rule %q has no description", r)
		}
	}
	if n, want := len(multiplicityMethods), len(spec.MultiplicityRules()); n != want {
		t.Errorf("%d multiplicity descriptions for %d rules", n, want)
	}
}
