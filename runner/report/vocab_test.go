package report

import (
	"testing"

	"rankplan/spec"
)

// TestPostHocNamesCoverVocabulary requires words for every post-hoc procedure a plan can
// name, and for no other.
func TestPostHocNamesCoverVocabulary(t *testing.T) {
	n := 0
	for _, m := range spec.PostHocs() {
		if m == spec.NoPostHoc {
			continue
		}
		n++
		if postHocNames[m] == "" {
			t.Errorf("post-hoc procedure %q has no name in words", m)
		}
	}
	if len(postHocNames) != n {
		t.Errorf("%d names in words for %d procedures", len(postHocNames), n)
	}
}
