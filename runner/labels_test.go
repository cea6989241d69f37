package runner

import (
	"slices"
	"strings"
	"testing"
)

// TestLookAlikeGroups: labels that differ only by surrounding spaces, invisible
// characters, Unicode normalisation (NFC/NFKC, Unicode Standard Annex #15) or case are
// reported together; labels that merely share letters are not.
func TestLookAlikeGroups(t *testing.T) {
	const (
		nfc = "\u00e9"  // é, composed
		nfd = "e\u0301" // é, e + combining acute accent
	)
	found := []string{"A", "A ", " A", nfc, nfd, "\uff21" /* full-width A */, "A\x00", "B", "AB", "a", "b\u200b"}
	la := LookAlikeGroups("g", found)
	if len(la) != 3 {
		t.Fatalf("got %d sets, want 3: %+v", len(la), la)
	}
	if want := []string{"A", "A ", " A", "\uff21", "A\x00", "a"}; !slices.Equal(la[0].Labels, want) {
		t.Errorf("first set %q, want %q", la[0].Labels, want)
	}
	wantDiff := []string{diffSpaces, diffNFKC, diffControl, diffCase}
	if !slices.Equal(la[0].Differences, wantDiff) {
		t.Errorf("first set differs by %q, want %q", la[0].Differences, wantDiff)
	}
	if !slices.Equal(la[1].Labels, []string{nfc, nfd}) || !slices.Equal(la[1].Differences, []string{diffNFC}) {
		t.Errorf("second set %+v", la[1])
	}
	if !slices.Equal(la[2].Labels, []string{"B", "b\u200b"}) {
		t.Errorf("third set %+v", la[2])
	}
	wantShown := []string{`"A"`, `"A "`, `" A"`, `"Ａ" (U+FF21)`, `"A\x00"`, `"a"`}
	if !slices.Equal(la[0].Shown, wantShown) {
		t.Errorf("shown %q, want %q", la[0].Shown, wantShown)
	}
	if la[1].Shown[0] == la[1].Shown[1] || la[1].Shown[1] != "\"e\u0301\" (U+0065 U+0301)" {
		t.Errorf("NFC and NFD shown as %q", la[1].Shown)
	}
	if LookAlikeGroups("g", []string{"ctrl", "trt1", "trt2"}) != nil {
		t.Error("distinct labels reported as look-alikes")
	}
}

// TestLookAlikeHint: a plan naming a group in NFC gets a hint when the data hold it in NFD.
func TestLookAlikeHint(t *testing.T) {
	h := lookAlikeHint("caf\u00e9", []string{"cafe\u0301", "tea"})
	for _, want := range []string{`"cafe` + "\u0301" + `" (U+0063 U+0061 U+0066 U+0065 U+0301)`, diffNFC, "compared exactly as written"} {
		if !strings.Contains(h, want) {
			t.Errorf("hint %q lacks %q", h, want)
		}
	}
	if lookAlikeHint("tea", []string{"coffee"}) != "" {
		t.Error("hint for a label with no look-alike")
	}
}
