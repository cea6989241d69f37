package main

import (
	"encoding/json"
	"fmt"
	"os"
	"regexp"
	"slices"
	"strings"
	"testing"

	"rankplan/schemas"
	"rankplan/spec"
)

// vocabulary is one list of the plan vocabulary as package spec defines it, and where else
// the same names are written down: the plan schema's enum, the results schema's enums
// (some list a part of it: the values a run can report), the choices of an init flag and
// the README's plan-format table.
type vocabulary struct {
	name string
	code []string
	// planEnum is the JSON Pointer of the enum in schemas/plan.schema.json.
	planEnum string
	// resultsEnums are the JSON Pointers of enums in schemas/results.schema.json, each
	// with the part of code it must hold.
	resultsEnums []resultsEnum
	// initFlag is the `rankplan init` flag that offers the list, "" for none.
	initFlag string
	// readmeKey is the plan key whose row of the README's table lists the values; the
	// row's code spans are the values, except those in readmeOther (other names the row
	// mentions: keys, or values of another list).
	readmeKey   string
	readmeOther []string
}

type resultsEnum struct {
	pointer string
	want    []string
}

// listing is one place's list of a vocabulary and the part of the code's list it must
// hold; ordered says that its order must be the code's (an enum, whose order the error
// messages show; the README's prose may differ).
type listing struct {
	where   string
	values  []string
	want    []string
	ordered bool
}

func vocabularies() []vocabulary {
	without := func(all []string, drop ...string) []string {
		return slices.DeleteFunc(slices.Clone(all), func(s string) bool { return slices.Contains(drop, s) })
	}
	tests := spec.Names(spec.Tests())
	pvalues := spec.Names(spec.PValueMethods())
	posthocs := spec.Names(spec.PostHocs())
	adjusts := spec.Names(spec.Adjustments())
	rules := spec.Names(spec.MultiplicityRules())
	intervals := spec.Names(spec.IntervalMethods())
	whens := spec.Names(spec.Whens())
	return []vocabulary{
		{name: "test", code: tests, planEnum: "/$defs/analysis/properties/test",
			resultsEnums: []resultsEnum{{"/$defs/analysis/properties/test", spec.Names(spec.ImplementedTests())}},
			readmeKey:    "analyses[].test"},
		{name: "p-value method", code: pvalues, planEnum: "/$defs/pvalue/properties/method",
			resultsEnums: []resultsEnum{
				{"/$defs/pValue/properties/requested", pvalues},
				{"/$defs/pValue/properties/method", spec.Names(spec.UsedPValueMethods())},
			},
			initFlag: "pvalue", readmeKey: "analyses[].pvalue.method"},
		{name: "post-hoc procedure", code: posthocs, planEnum: "/$defs/posthoc/properties/method",
			resultsEnums: []resultsEnum{{"/$defs/posthoc/properties/method", without(posthocs, string(spec.NoPostHoc))}},
			initFlag:     "posthoc", readmeKey: "analyses[].posthoc.method"},
		{name: "adjustment", code: adjusts, planEnum: "/$defs/posthoc/properties/adjust",
			resultsEnums: []resultsEnum{{"/$defs/posthoc/properties/adjust", adjusts}},
			initFlag:     "adjust", readmeKey: "analyses[].posthoc.adjust",
			readmeOther: []string{string(spec.DSCF), string(spec.Nemenyi)}},
		{name: "multiplicity rule", code: rules, planEnum: "/$defs/multiplicity/properties/rule",
			resultsEnums: []resultsEnum{{"/$defs/multiplicity/properties/rule", rules}},
			readmeKey:    "multiplicity.rule"},
		{name: "effect-size interval", code: intervals, planEnum: "/$defs/effectSize/properties/interval",
			resultsEnums: []resultsEnum{{"/$defs/effectInterval/properties/method", without(intervals, string(spec.NoInterval))}},
			readmeKey:    "analyses[].effect_size.interval", readmeOther: []string{"resamples"}},
		{name: "bootstrap scheme", code: spec.Names(spec.BootstrapSchemes()), planEnum: "/$defs/effectSize/properties/scheme",
			resultsEnums: []resultsEnum{{"/$defs/effectInterval/properties/scheme", spec.Names(spec.BootstrapSchemes())}},
			readmeKey:    "analyses[].effect_size.scheme", readmeOther: []string{"bootstrap", "init"}},
		{name: "post-hoc condition", code: whens, planEnum: "/$defs/posthoc/properties/when",
			resultsEnums: []resultsEnum{{"/$defs/posthoc/properties/when", whens}},
			readmeKey:    "analyses[].posthoc.when"},
		{name: "missing-value policy", code: spec.Names(spec.MissingPolicies()), planEnum: "/$defs/missing/properties/policy",
			readmeKey: "data.missing.policy"},
	}
}

// vocabularySources reads the places outside package spec that list the vocabulary.
type vocabularySources struct {
	plan, results any
	readme        string
}

func readVocabularySources(t *testing.T) vocabularySources {
	t.Helper()
	var s vocabularySources
	for _, f := range []struct {
		name string
		into *any
	}{{"plan", &s.plan}, {"results", &s.results}} {
		b, err := schemas.Source(f.name)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, f.into); err != nil {
			t.Fatalf("%s schema: %v", f.name, err)
		}
	}
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	s.readme = string(b)
	return s
}

// listings gathers every place's list of v; an error says that a place lacks the list.
func (s vocabularySources) listings(v vocabulary) ([]listing, error) {
	var out []listing
	add := func(where string, values, want []string, ordered bool, err error) error {
		if err != nil {
			return fmt.Errorf("%s: %s: %w", v.name, where, err)
		}
		out = append(out, listing{where, values, want, ordered})
		return nil
	}
	values, err := enumAt(s.plan, v.planEnum)
	if err := add("plan.schema.json "+v.planEnum, values, v.code, true, err); err != nil {
		return nil, err
	}
	for _, re := range v.resultsEnums {
		values, err := enumAt(s.results, re.pointer)
		if err := add("results.schema.json "+re.pointer, values, re.want, true, err); err != nil {
			return nil, err
		}
	}
	if v.initFlag != "" {
		values, err := initChoices(v.initFlag)
		if err := add("rankplan init --"+v.initFlag, values, v.code, true, err); err != nil {
			return nil, err
		}
	}
	values, err = readmeValues(s.readme, v.readmeKey, v.readmeOther)
	if err := add("README.md row "+v.readmeKey, values, v.code, false, err); err != nil {
		return nil, err
	}
	return out, nil
}

// disagreements lists how each listing differs from what package spec gives it: a value
// it lacks, a value it has that the code lacks, or (for ordered listings) another order.
func disagreements(ls []listing) []string {
	var out []string
	for _, l := range ls {
		n := len(out)
		for _, c := range l.want {
			if !slices.Contains(l.values, c) {
				out = append(out, fmt.Sprintf("%s lacks %q", l.where, c))
			}
		}
		for _, x := range l.values {
			if !slices.Contains(l.want, x) {
				out = append(out, fmt.Sprintf("%s has %q, which package spec lacks", l.where, x))
			}
		}
		if l.ordered && len(out) == n && !slices.Equal(l.values, l.want) {
			out = append(out, fmt.Sprintf("%s lists %q, in another order than package spec's %q", l.where, l.values, l.want))
		}
	}
	return out
}

// TestVocabularyAgrees holds the plan vocabulary's lists (package spec) equal to the plan
// schema's enums, the results schema's enums, the choices of `rankplan init` and the
// README's plan-format table.
func TestVocabularyAgrees(t *testing.T) {
	s := readVocabularySources(t)
	for _, v := range vocabularies() {
		t.Run(v.name, func(t *testing.T) {
			ls, err := s.listings(v)
			if err != nil {
				t.Fatal(err)
			}
			for _, d := range disagreements(ls) {
				t.Error(d)
			}
		})
	}
}

// TestVocabularyCheckFails shows that TestVocabularyAgrees can fail: a value added to any
// one place, or to the code alone, or two values swapped in an enum, is reported.
func TestVocabularyCheckFails(t *testing.T) {
	s := readVocabularySources(t)
	for _, v := range vocabularies() {
		ls, err := s.listings(v)
		if err != nil {
			t.Fatal(err)
		}
		if d := disagreements(ls); len(d) > 0 {
			t.Fatalf("%s: the places disagree already: %v", v.name, d)
		}
		for i, l := range ls {
			gained := slices.Clone(ls)
			gained[i].values = append(slices.Clone(l.values), "added-value")
			if d := disagreements(gained); len(d) != 1 || !strings.Contains(d[0], `"added-value"`) {
				t.Errorf("%s: a value added to %s alone: reported %q, want one disagreement", v.name, l.where, d)
			}
			if l.ordered && len(l.values) > 1 {
				swapped := slices.Clone(ls)
				swapped[i].values = slices.Clone(l.values)
				swapped[i].values[0], swapped[i].values[1] = swapped[i].values[1], swapped[i].values[0]
				if d := disagreements(swapped); len(d) != 1 {
					t.Errorf("%s: two values of %s swapped: reported %q, want one disagreement", v.name, l.where, d)
				}
			}
		}
		// A value added to the code: every place that must hold all of the list lacks it.
		code := v.code
		v.code = append(slices.Clone(code), "added-value")
		v.resultsEnums = slices.Clone(v.resultsEnums)
		for i, re := range v.resultsEnums {
			if slices.Equal(re.want, code) {
				v.resultsEnums[i].want = v.code
			}
		}
		gained, err := s.listings(v)
		if err != nil {
			t.Fatal(err)
		}
		full := 0
		for _, l := range ls {
			if slices.Equal(l.want, code) {
				full++
			}
		}
		if d := disagreements(gained); len(d) != full || full < 2 {
			t.Errorf("%s: a value added to the code alone: reported %q, want one for each of the %d places that list it all", v.name, d, full)
		}
	}
	// The README reader sees a value added to the table's row.
	v := vocabularies()[3]
	row := "| `" + v.readmeKey + "` | no | `none` (default), "
	if !strings.Contains(s.readme, row) {
		t.Fatalf("README.md has no row starting %q", row)
	}
	s.readme = strings.Replace(s.readme, row, row+"`added-value`, ", 1)
	ls, err := s.listings(v)
	if err != nil {
		t.Fatal(err)
	}
	if d := disagreements(ls); len(d) != 1 || !strings.Contains(d[0], "README.md") {
		t.Errorf("a value added to the README's row: reported %q", d)
	}
}

// enumAt returns the enum of the schema node at the JSON Pointer p (RFC 6901, without
// escapes: the pointers here need none).
func enumAt(tree any, p string) ([]string, error) {
	node := tree
	for _, part := range strings.Split(strings.TrimPrefix(p, "/"), "/") {
		m, ok := node.(map[string]any)
		if !ok {
			return nil, fmt.Errorf("no object at %q", part)
		}
		if node, ok = m[part]; !ok {
			return nil, fmt.Errorf("no member %q", part)
		}
	}
	m, _ := node.(map[string]any)
	enum, ok := m["enum"].([]any)
	if !ok {
		return nil, fmt.Errorf("no enum")
	}
	out := make([]string, len(enum))
	for i, e := range enum {
		if out[i], ok = e.(string); !ok {
			return nil, fmt.Errorf("enum value %v is not text", e)
		}
	}
	return out, nil
}

// initChoices returns what `rankplan init` completes for the flag.
func initChoices(flag string) ([]string, error) {
	complete, ok := newInitCmd().GetFlagCompletionFunc(flag)
	if !ok {
		return nil, fmt.Errorf("no completion")
	}
	got, _ := complete(nil, nil, "")
	return got, nil
}

var codeSpan = regexp.MustCompile("`([^`]+)`")

// readmeValues returns the code spans of the description in the README table row of key,
// less those in other.
func readmeValues(readme, key string, other []string) ([]string, error) {
	start := "| `" + key + "` |"
	for line := range strings.Lines(readme) {
		if !strings.HasPrefix(line, start) {
			continue
		}
		cells := strings.Split(strings.TrimSpace(line), " | ")
		if len(cells) != 3 {
			return nil, fmt.Errorf("%d cells, want 3", len(cells))
		}
		var out []string
		for _, m := range codeSpan.FindAllStringSubmatch(cells[2], -1) {
			if !slices.Contains(other, m[1]) && !slices.Contains(out, m[1]) {
				out = append(out, m[1])
			}
		}
		return out, nil
	}
	return nil, fmt.Errorf("no row")
}
