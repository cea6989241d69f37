package main

import (
	"fmt"
	"os"
	"strings"
	"testing"

	"github.com/rogpeppe/go-internal/txtar"
)

// The README's CI recipe blocks, each found as the first indented block after the
// paragraph that starts with its lead, and the file of ci_recipe.txtar that holds it.
var recipeBlocks = []struct{ lead, file string }{
	{"A CI recipe (exit codes as above).", "recipe.sh"},
	{"On GitHub Actions the summary and the verdicts can go to", "summary.sh"},
}

// readmeBlock returns the first code block indented by four spaces after the line that
// starts with lead, without its indent.
func readmeBlock(readme, lead string) (string, error) {
	lines := strings.Split(readme, "\n")
	start := -1
	for i, l := range lines {
		if strings.HasPrefix(l, lead) {
			start = i
			break
		}
	}
	if start < 0 {
		return "", fmt.Errorf("no line starts with %q", lead)
	}
	var b strings.Builder
	for _, l := range lines[start+1:] {
		if code, ok := strings.CutPrefix(l, "    "); ok {
			b.WriteString(code + "\n")
		} else if b.Len() > 0 {
			break
		}
	}
	if b.Len() == 0 {
		return "", fmt.Errorf("no indented block after %q", lead)
	}
	return b.String(), nil
}

// archiveFiles reads a testscript archive's files by name.
func archiveFiles(t *testing.T, path string) map[string]string {
	t.Helper()
	a, err := txtar.ParseFile(path)
	if err != nil {
		t.Fatal(err)
	}
	files := map[string]string{}
	for _, f := range a.Files {
		files[f.Name] = string(f.Data)
	}
	return files
}

// TestCIRecipeMatchesReadme: the commands ci_recipe.txtar runs and checks are the
// README's CI recipe, character for character, so the two cannot drift apart.
func TestCIRecipeMatchesReadme(t *testing.T) {
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	files := archiveFiles(t, "testdata/script/ci_recipe.txtar")
	for _, rb := range recipeBlocks {
		got, err := readmeBlock(string(b), rb.lead)
		if err != nil {
			t.Fatalf("README.md: %v", err)
		}
		if want, ok := files[rb.file]; !ok {
			t.Errorf("ci_recipe.txtar has no file %s", rb.file)
		} else if got != want {
			t.Errorf("README.md's block after %q differs from ci_recipe.txtar's %s:\nREADME:\n%s\ntestscript:\n%s", rb.lead, rb.file, got, want)
		}
	}
}

// TestReadmeBlock: the extraction finds the block that follows its lead and only it, and
// reports a missing lead or block, so a README without the recipe fails the check above.
func TestReadmeBlock(t *testing.T) {
	doc := "Intro.\n\n    other\n\nLead line:\n\n    one\n    two\n\nAfter.\n\n    three\n"
	for _, c := range []struct{ lead, want, err string }{
		{"Lead line", "one\ntwo\n", ""},
		{"Intro", "other\n", ""},
		{"Missing", "", "no line starts with"},
		{"After", "three\n", ""},
		{"    three", "", "no indented block"},
	} {
		got, err := readmeBlock(doc, c.lead)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("%q: %q, %v; want an error with %q", c.lead, got, err, c.err)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("%q: %q, %v; want %q", c.lead, got, err, c.want)
		}
	}
}
