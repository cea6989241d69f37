package main

import (
	"fmt"
	"os"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/rogpeppe/go-internal/txtar"
	"gopkg.in/yaml.v3"
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

// ciCommand matches the lines of a shell script that do the work: rankplan's commands and
// the lines that read, show and pass on the audit head and the summary.
var ciCommand = regexp.MustCompile(`^(rankplan |head=|echo |cat )`)

// ciCommands returns the trimmed lines of script that ciCommand matches, in order.
func ciCommands(script string) []string {
	var out []string
	for _, l := range strings.Split(script, "\n") {
		if l = strings.TrimSpace(l); ciCommand.MatchString(l) {
			out = append(out, l)
		}
	}
	return out
}

// workflow is the part of a GitHub Actions workflow that the check below reads.
type workflow struct {
	Jobs map[string]struct {
		Env   map[string]string `yaml:"env"`
		Steps []struct {
			Name string `yaml:"name"`
			Uses string `yaml:"uses"`
			Run  string `yaml:"run"`
		} `yaml:"steps"`
	} `yaml:"jobs"`
}

// TestCIWorkflowMatchesScript: the example workflow's run steps call the commands of the
// example shell script, in the same order, with the variables they use set in the job's
// environment, and the plan it names exists; ci_example_script.txtar runs the script.
func TestCIWorkflowMatchesScript(t *testing.T) {
	script, err := os.ReadFile("../../examples/ci/verify-run.sh")
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile("../../examples/ci/github-actions.yml")
	if err != nil {
		t.Fatal(err)
	}
	var wf workflow
	if err := yaml.Unmarshal(b, &wf); err != nil {
		t.Fatalf("github-actions.yml: %v", err)
	}
	if len(wf.Jobs) != 1 {
		t.Fatalf("github-actions.yml has %d jobs, want 1", len(wf.Jobs))
	}
	want := ciCommands(string(script))
	if len(want) < 4 {
		t.Fatalf("verify-run.sh: only %d commands found: %q", len(want), want)
	}
	for name, job := range wf.Jobs {
		var got []string
		for _, st := range job.Steps {
			got = append(got, ciCommands(st.Run)...)
		}
		if !slices.Equal(got, want) {
			t.Errorf("job %s runs\n%s\nbut verify-run.sh runs\n%s", name, strings.Join(got, "\n"), strings.Join(want, "\n"))
		}
		for _, v := range []string{"PLAN", "CI_PIPELINE_ID", "REASON"} {
			if job.Env[v] == "" {
				t.Errorf("job %s does not set %s, which the commands use", name, v)
			}
		}
		if !strings.Contains(string(script), "PLAN=${PLAN:-"+job.Env["PLAN"]+"}") {
			t.Errorf("job %s runs the plan %s, not verify-run.sh's default", name, job.Env["PLAN"])
		}
		if _, err := os.Stat("../../" + job.Env["PLAN"]); err != nil {
			t.Errorf("job %s: plan: %v", name, err)
		}
	}
}

// TestCICommands: the lines the check above compares are the working lines, so a command
// the workflow adds, drops or spells otherwise shows as a difference.
func TestCICommands(t *testing.T) {
	script := "#!/bin/sh\n# rankplan run in a comment\nset -eu\nX=${X:-1}\n  rankplan run \"$P\"\nhead=$(cat h)\nif [ -n \"$Y\" ]; then\n\tcat s >> \"$Y\"\nfi\n"
	want := []string{`rankplan run "$P"`, "head=$(cat h)", `cat s >> "$Y"`}
	if got := ciCommands(script); !slices.Equal(got, want) {
		t.Errorf("ciCommands = %q, want %q", got, want)
	}
}
