package spec

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
)

const goodPlan = `rankplan: 1
id: p1
title: A plan
data:
  file: data.csv
  group: g
  outcome: y
alpha: 0.05
seed: 42
analyses:
  - id: a
    test: kruskal-wallis
    pvalue:
      method: asymptotic
`

// edit replaces one line of goodPlan (matched whole, after trimming) with repl.
func edit(t *testing.T, line, repl string) string {
	t.Helper()
	lines := strings.Split(goodPlan, "\n")
	for i, l := range lines {
		if strings.TrimSpace(l) == line {
			indent := l[:len(l)-len(strings.TrimLeft(l, " "))]
			lines[i] = indent + strings.ReplaceAll(repl, "\n", "\n"+indent)
			return strings.Join(lines, "\n")
		}
	}
	t.Fatalf("no line %q in goodPlan", line)
	return ""
}

func TestParseGood(t *testing.T) {
	p, err := Parse("plan.yaml", []byte(goodPlan))
	if err != nil {
		t.Fatal(err)
	}
	// The defaults of the plan format 1 (documented in README.md).
	if p.Data.Delimiter != "," || p.Data.Decimal != "." || p.Data.Missing.Policy != ExcludeMissing ||
		!reflect.DeepEqual(p.Data.Missing.Tokens, []string{"", "NA"}) {
		t.Errorf("data defaults: %+v", p.Data)
	}
	a := p.Analyses[0]
	if a.Outcome != "y" || a.PostHoc.Method != NoPostHoc || a.PostHoc.Adjust != NoAdjustment ||
		a.EffectSize.Level != 0.95 || a.EffectSize.Interval != NoncentralInterval || a.EffectSize.Resamples != 0 {
		t.Errorf("analysis defaults: %+v", a)
	}
	if p.Seed != 42 || p.Alpha != 0.05 {
		t.Errorf("seed %d alpha %v", p.Seed, p.Alpha)
	}
}

func TestSeed(t *testing.T) {
	for _, tc := range []struct {
		yaml string
		want uint64
		err  string
	}{
		{"seed: 0", 0, ""},
		{`seed: "18446744073709551615"`, 1<<64 - 1, ""},
		{"seed: 18446744073709551615", 1<<64 - 1, ""},
		{"seed: 9007199254740993", 9007199254740993, ""}, // 2^53 + 1: kept exact
		{"seed: +5", 5, ""},
		{`seed: "007"`, 7, ""},
		// One wording, at the seed's position, whether the seed is a number or digits in
		// quotes; 2^64 is read by yaml.v3 as a float and keeps its digits in the message.
		{`seed: "18446744073709551616"`, 0, `plan.yaml:9:7: seed: ` + seedRange + `; found "18446744073709551616"`},
		{"seed: 18446744073709551616", 0, "plan.yaml:9:7: seed: " + seedRange + "; found 18446744073709551616"},
		{"seed: 000018446744073709551616", 0, "plan.yaml:9:7: seed: " + seedRange + "; found 18446744073709551616"},
		{"seed: -1", 0, "plan.yaml:9:7: seed: " + seedRange + "; found -1"},
		{"seed: -99999999999999999999", 0, "plan.yaml:9:7: seed: " + seedRange + "; found -99999999999999999999"},
		{"seed: 1.5", 0, "plan.yaml:9:7: seed: " + seedRange + "; found 1.5"},
		{"seed: 1e3", 1000, ""}, // an integral number, as the schema's integer type admits
		{`seed: "12a"`, 0, `plan.yaml:9:7: seed: ` + seedRange + `; found "12a"`},
		{"seed: true", 0, "plan.yaml:9:7: seed: expected an integer or text; found true; put it in quotes to make it text"},
	} {
		p, err := Parse("plan.yaml", []byte(edit(t, "seed: 42", tc.yaml)))
		if tc.err == "" {
			if err != nil {
				t.Errorf("%s: %v", tc.yaml, err)
			} else if uint64(p.Seed) != tc.want {
				t.Errorf("%s: seed %d, want %d", tc.yaml, p.Seed, tc.want)
			}
			continue
		}
		if err == nil || err.Error() != tc.err {
			t.Errorf("%s: error\n%v\nwant\n%s", tc.yaml, err, tc.err)
		}
	}
}

const seedRange = "expected an integer from 0 to 18446744073709551615 (64 bits), as a number or as digits in quotes"

// parseErrorCase is a plan and every line of its error, in order.
type parseErrorCase struct {
	name string
	src  string
	want []string
}

// TestParseErrors checks the position, key path and wording of each kind of plan error.
func TestParseErrors(t *testing.T) {
	for _, tc := range parseErrorCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("plan.yaml", []byte(tc.src))
			if err == nil {
				t.Fatal("no error")
			}
			list, ok := AsList(err)
			if !ok {
				t.Fatalf("error %T is not a plan error list: %v", err, err)
			}
			got := strings.Split(list.Error(), "\n")
			if !reflect.DeepEqual(got, tc.want) {
				t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(tc.want, "\n"))
			}
		})
	}
}

// TestErrorsBesideSchemaError adds an unknown key at the end of each plan of
// TestParseErrors: every error found before is still found, in the same round, with the
// unknown key's after it. This holds for the checks of meaning too, which run on what
// passed the schema.
func TestErrorsBesideSchemaError(t *testing.T) {
	for _, tc := range parseErrorCases(t) {
		if strings.Contains(tc.want[0], "(top level)") || strings.Contains(tc.want[0], "(syntax)") {
			continue // a document that is not a mapping of keys, or one error stops the rest
		}
		t.Run(tc.name, func(t *testing.T) {
			src := strings.TrimSuffix(tc.src, "\n") + "\nzzz: 1\n"
			line := strings.Count(src, "\n")
			want := append(slices.Clone(tc.want), fmt.Sprintf("plan.yaml:%d:1: zzz: unknown key; expected one of: alpha, analyses, data, description, groups, id, multiplicity, rankplan, report, seed, title", line))
			_, err := Parse("plan.yaml", []byte(src))
			list, ok := AsList(err)
			if !ok {
				t.Fatalf("not a plan error list: %v", err)
			}
			if got := strings.Split(list.Error(), "\n"); !reflect.DeepEqual(got, want) {
				t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
			}
		})
	}
}

func parseErrorCases(t *testing.T) []parseErrorCase {
	return []parseErrorCase{
		{"unknown key", edit(t, "outcome: y", "outcome: y\ncolour: red"),
			[]string{"plan.yaml:8:3: data.colour: unknown key; expected one of: decimal, delimiter, file, group, missing, outcome, sha256, unit"}},
		{"unknown top-level key", goodPlan + "extra: 1\n",
			[]string{"plan.yaml:15:1: extra: unknown key; expected one of: alpha, analyses, data, description, groups, id, multiplicity, rankplan, report, seed, title"}},
		{"missing key", edit(t, "group: g", "# no group"),
			[]string{`plan.yaml:4:1: data: missing required key "group"`}},
		{"wrong type", edit(t, "alpha: 0.05", "alpha: [0.05]"),
			[]string{"plan.yaml:8:8: alpha: expected a number; found a list"}},
		{"alpha 0", edit(t, "alpha: 0.05", "alpha: 0"),
			[]string{"plan.yaml:8:8: alpha: expected a value > 0 and < 1; found 0"}},
		{"alpha 1.5", edit(t, "alpha: 0.05", "alpha: 1.5"),
			[]string{"plan.yaml:8:8: alpha: expected a value > 0 and < 1; found 1.5"}},
		{"enum", edit(t, "method: asymptotic", "method: chi2"),
			[]string{`plan.yaml:14:15: analyses[0].pvalue.method: expected one of "asymptotic", "exact", "permutation", "auto"; found the text "chi2"`}},
		{"duplicate key", edit(t, "alpha: 0.05", "alpha: 0.05\nalpha: 0.01"),
			[]string{`plan.yaml:9:1: alpha: duplicate key; "alpha" is already set at line 8`}},
		{"unquoted date", edit(t, "title: A plan", "title: 2026-12-01"),
			[]string{"plan.yaml:3:8: title: an unquoted date or time (2026-12-01); put it in quotes if it is meant as text"}},
		{"non-string key", goodPlan + "3: three\n",
			[]string{`plan.yaml:15:1: (top level): keys must be text; found an integer "3" (quote it if it is meant as a key)`}},
		{"nan", edit(t, "alpha: 0.05", "alpha: .nan"),
			[]string{"plan.yaml:8:8: alpha: .nan is not a finite number; plans hold finite numbers only"}},
		{"inf", edit(t, "alpha: 0.05", "alpha: -.inf"),
			[]string{"plan.yaml:8:8: alpha: -.inf is not a finite number; plans hold finite numbers only"}},
		{"alias", edit(t, "title: A plan", "title: &t A plan\ndescription: *t"),
			[]string{"plan.yaml:4:14: description: anchors and aliases (*t) are not supported in plans; write the value out"}},
		{"custom tag", edit(t, "title: A plan", "title: !secret x"),
			[]string{"plan.yaml:3:8: title: the YAML tag !secret is not supported in plans"}},
		{"top level list", "- a\n- b\n",
			[]string{"plan.yaml:1:1: (top level): expected a mapping; found a list"}},
		{"empty", "", []string{"plan.yaml:1:1: (top level): the plan file is empty; expected a YAML mapping of plan keys"}},
		{"only comments", "# nothing\n", []string{"plan.yaml:1:1: (top level): the plan file is empty; expected a YAML mapping of plan keys"}},
		{"two documents", goodPlan + "---\nid: x\n",
			[]string{"plan.yaml:15:1: (top level): a second YAML document; a plan file holds exactly one"}},
		{"duplicate analysis id", goodPlan + "  - id: a\n    test: kruskal-wallis\n    pvalue: {method: asymptotic}\n",
			[]string{`plan.yaml:15:9: analyses[1].id: duplicate analysis id "a"; analyses[0] has it already`}},
		{"resamples needed", edit(t, "method: asymptotic", "method: permutation"),
			[]string{
				`plan.yaml:13:5: analyses[0].pvalue: method "permutation" needs resamples, the number of Monte Carlo resamples (e.g. 100000)`,
			}},
		{"resamples not used", edit(t, "method: asymptotic", "method: exact\nresamples: 1000"),
			[]string{`plan.yaml:15:18: analyses[0].pvalue.resamples: applies only to the methods permutation and auto, not "exact"`}},
		{"interval level with exact", edit(t, "method: asymptotic", "method: exact\ninterval_level: 0.99"),
			[]string{`plan.yaml:15:23: analyses[0].pvalue.interval_level: applies only to the methods permutation and auto, not "exact": only a Monte Carlo p-value has an interval`}},
		{"interval level as a percentage", edit(t, "method: asymptotic", "method: permutation\nresamples: 1000\ninterval_level: 95"),
			[]string{`plan.yaml:16:23: analyses[0].pvalue.interval_level: expected a value > 0 and < 1; found 95`}},
		{"interval level 1", edit(t, "method: asymptotic", "method: auto\nresamples: 1000\ninterval_level: 1"),
			[]string{`plan.yaml:16:23: analyses[0].pvalue.interval_level: expected a value > 0 and < 1; found 1`}},
		{"interval level as text", edit(t, "method: asymptotic", "method: auto\nresamples: 1000\ninterval_level: 95%"),
			[]string{`plan.yaml:16:23: analyses[0].pvalue.interval_level: expected a number; found the text "95%"`}},
		{"stop rule with exact", edit(t, "method: asymptotic", "method: exact\nstop_at_exceedances: 10"),
			[]string{`plan.yaml:15:28: analyses[0].pvalue.stop_at_exceedances: applies only to the methods permutation and auto, not "exact": only a Monte Carlo p-value draws resamples`}},
		{"stop rule past the resamples", edit(t, "method: asymptotic", "method: permutation\nresamples: 1000\nstop_at_exceedances: 1001"),
			[]string{`plan.yaml:16:28: analyses[0].pvalue.stop_at_exceedances: 1001 exceedances cannot be reached in 1000 resamples; use at most 1000`}},
		{"stop rule 0", edit(t, "method: asymptotic", "method: permutation\nresamples: 1000\nstop_at_exceedances: 0"),
			[]string{`plan.yaml:16:28: analyses[0].pvalue.stop_at_exceedances: expected a value >= 1 and <= 10000000; found 0`}},
		{"asymptotic when large with permutation", edit(t, "method: asymptotic", "method: permutation\nresamples: 1000\nasymptotic_when_large: true"),
			[]string{`plan.yaml:16:30: analyses[0].pvalue.asymptotic_when_large: applies only to the method auto, not "permutation", which always draws resamples`}},
		{"asymptotic when large with asymptotic", edit(t, "method: asymptotic", "method: asymptotic\nasymptotic_when_large: false"),
			[]string{`plan.yaml:15:30: analyses[0].pvalue.asymptotic_when_large: applies only to the method auto, not "asymptotic"`}},
		{"effect level", goodPlan + "    effect_size: {level: 95}\n",
			[]string{"plan.yaml:15:26: analyses[0].effect_size.level: expected a value > 0 and < 1; found 95"}},
		{"effect resamples with the default interval", goodPlan + "    effect_size: {resamples: 2000}\n",
			[]string{`plan.yaml:15:30: analyses[0].effect_size.resamples: applies only to effect_size.interval "bootstrap", not "noncentral" (the default), which draws no resamples; remove resamples, or set effect_size.interval: bootstrap to keep a percentile bootstrap`}},
		{"effect resamples with noncentral", goodPlan + "    effect_size: {interval: noncentral, resamples: 2000}\n",
			[]string{`plan.yaml:15:52: analyses[0].effect_size.resamples: applies only to effect_size.interval "bootstrap", not "noncentral", which draws no resamples; remove resamples, or set effect_size.interval: bootstrap to keep a percentile bootstrap`}},
		{"effect resamples with none", goodPlan + "    effect_size: {interval: none, resamples: 10}\n",
			[]string{`plan.yaml:15:46: analyses[0].effect_size.resamples: applies only to effect_size.interval "bootstrap", not "none", which draws no resamples; remove resamples, or set effect_size.interval: bootstrap to keep a percentile bootstrap`}},
		{"bootstrap without resamples", goodPlan + "    effect_size: {interval: bootstrap}\n",
			[]string{`plan.yaml:15:5: analyses[0].effect_size: interval "bootstrap" needs resamples, the number of bootstrap resamples (e.g. 2000)`}},
		{"effect resamples 0", goodPlan + "    effect_size: {interval: bootstrap, resamples: 0}\n",
			[]string{"plan.yaml:15:51: analyses[0].effect_size.resamples: 0 resamples make no interval; for the estimates alone set effect_size.interval: none and remove resamples"}},
		{"effect resamples 0 with the default interval", goodPlan + "    effect_size: {resamples: 0}\n",
			[]string{"plan.yaml:15:30: analyses[0].effect_size.resamples: 0 resamples make no interval; for the estimates alone set effect_size.interval: none and remove resamples"}},
		{"bootstrap scheme with the default interval", goodPlan + "    effect_size: {scheme: counts-v2}\n",
			[]string{`plan.yaml:15:27: analyses[0].effect_size.scheme: applies only to effect_size.interval "bootstrap", not "noncentral", which draws no resamples; remove scheme`}},
		{"bootstrap scheme and resamples with none", goodPlan + "    effect_size: {interval: none, resamples: 10, scheme: indices-v1}\n",
			[]string{`plan.yaml:15:46: analyses[0].effect_size.resamples: applies only to effect_size.interval "bootstrap", not "none", which draws no resamples; remove resamples, or set effect_size.interval: bootstrap to keep a percentile bootstrap`,
				`plan.yaml:15:58: analyses[0].effect_size.scheme: applies only to effect_size.interval "bootstrap", not "none", which draws no resamples; remove scheme`}},
		{"bootstrap scheme unknown", goodPlan + "    effect_size: {interval: bootstrap, resamples: 10, scheme: counts}\n",
			[]string{`plan.yaml:15:63: analyses[0].effect_size.scheme: expected one of "counts-v2", "indices-v1"; found the text "counts"`}},
		{"effect interval unknown", goodPlan + "    effect_size: {interval: percentile}\n",
			[]string{`plan.yaml:15:29: analyses[0].effect_size.interval: expected one of "noncentral", "bootstrap", "none"; found the text "percentile"`}},
		{"not implemented test", edit(t, "test: kruskal-wallis", "test: median"),
			[]string{`plan.yaml:12:11: analyses[0].test: "median" is not implemented yet in this version of rankplan; use "kruskal-wallis"`}},
		{"adjust without posthoc", goodPlan + "    posthoc: {adjust: holm}\n",
			[]string{"plan.yaml:15:23: analyses[0].posthoc.adjust: an adjustment needs a post-hoc method; set posthoc.method"}},
		{"decimal comma with comma delimiter", edit(t, "outcome: y", "outcome: y\ndecimal: \",\""),
			[]string{`plan.yaml:8:12: data.decimal: a decimal comma needs another delimiter; set data.delimiter to ";" or "tab"`}},
		{"outcome is group", edit(t, "outcome: y", "outcome: g"),
			[]string{`plan.yaml:7:12: data.outcome: the outcome column must differ from the group column "g"`}},
		{"order differs from include", edit(t, "alpha: 0.05", "groups: {include: [A, B], order: [A, C]}\nalpha: 0.05"),
			[]string{"plan.yaml:8:27: groups.order: must list exactly the groups of groups.include, in the order wanted"}},
		{"unique items", edit(t, "alpha: 0.05", "groups: {include: [A, B, A]}\nalpha: 0.05"),
			[]string{`plan.yaml:8:26: groups.include[2]: the text "A" is listed twice (also item 0); items must be unique`}},
		{"multiplicity unknown id", goodPlan + "multiplicity: {rule: holm, analyses: [a, b]}\n",
			[]string{`plan.yaml:15:42: multiplicity.analyses[1]: no analysis has the id "b" (ids: "a")`}},
		{"multiplicity of one", goodPlan + "multiplicity: {rule: fixed-sequence}\n",
			[]string{"plan.yaml:15:1: multiplicity: a family needs at least two analyses; this plan's family has 1"}},
		{"multiplicity rule none", goodPlan + "multiplicity: {rule: none}\n",
			[]string{`plan.yaml:15:22: multiplicity.rule: expected one of "bonferroni", "sidak", "holm", "hochberg", "hommel", "benjamini-hochberg", "benjamini-yekutieli", "fixed-sequence"; found the text "none"`}},
		{"multiplicity rule of an earlier release", goodPlan + "multiplicity: {rule: bh}\n",
			[]string{`plan.yaml:15:22: multiplicity.rule: "bh" is no longer a method name; write benjamini-hochberg`}},
		{"adjustment of an earlier release", goodPlan + "    posthoc: {method: dunn, adjust: by}\n",
			[]string{`plan.yaml:15:37: analyses[0].posthoc.adjust: "by" is no longer a method name; write benjamini-yekutieli`}},
		{"old code where no adjustment is named", goodPlan + "    posthoc: {method: bh}\n",
			[]string{`plan.yaml:15:23: analyses[0].posthoc.method: expected one of "none", "dunn", "conover", "dscf", "nemenyi", "rank-sum"; found the text "bh"`}},
		{"multiplicity listed twice", goodPlan + "multiplicity: {rule: holm, analyses: [a, a]}\n",
			[]string{`plan.yaml:15:42: multiplicity.analyses[1]: the text "a" is listed twice (also item 0); items must be unique`}},
		{"subset on group column", goodPlan + "    subset: {column: g, values: [A]}\n",
			[]string{`plan.yaml:15:22: analyses[0].subset.column: the subset column must differ from the group column "g"; choose groups with groups.include`}},
		{"subset without values", goodPlan + "    subset: {column: site, values: []}\n",
			[]string{`plan.yaml:15:36: analyses[0].subset.values: expected at least one item; found none`}},
		{"unquoted number as text", edit(t, "group: g", "group: 12"),
			[]string{"plan.yaml:6:10: data.group: expected text; found 12; put it in quotes to make it text"}},

		// Schema errors and the checks of meaning in one round, in file order. A check
		// runs only when no value it reads has an error already (see checkRest).
		{"rule error before a schema error", strings.Replace(edit(t, "outcome: y", "outcome: y\ndecimal: \",\""), "id: p1", `id: "p 1"`, 1) + "    posthoc: {adjust: holm}\n",
			[]string{
				`plan.yaml:2:5: id: expected a short identifier of the plan: letters, digits, '.', '_' or '-', starting with a letter or digit; found the text "p 1"`,
				`plan.yaml:8:12: data.decimal: a decimal comma needs another delimiter; set data.delimiter to ";" or "tab"`,
				"plan.yaml:16:23: analyses[0].posthoc.adjust: an adjustment needs a post-hoc method; set posthoc.method",
			}},
		{"rule error after a conversion error", strings.Replace(edit(t, "method: asymptotic", "method: permutation"), "seed: 42", "seed: .inf", 1),
			[]string{
				"plan.yaml:9:7: seed: .inf is not a finite number; plans hold finite numbers only",
				`plan.yaml:13:5: analyses[0].pvalue: method "permutation" needs resamples, the number of Monte Carlo resamples (e.g. 100000)`,
			}},
		{"no rule beside a conversion error inside", edit(t, "method: asymptotic", "method: permutation\nextra: .inf"),
			[]string{"plan.yaml:15:14: analyses[0].pvalue.extra: .inf is not a finite number; plans hold finite numbers only"}},
		{"no rule on a refused value", edit(t, "method: asymptotic", "method: chi2\nresamples: 5"),
			[]string{`plan.yaml:14:15: analyses[0].pvalue.method: expected one of "asymptotic", "exact", "permutation", "auto"; found the text "chi2"`}},
		{"no rule on a value of the wrong type", edit(t, "outcome: y", "outcome: [g]"),
			[]string{"plan.yaml:7:12: data.outcome: expected text; found a list"}},
		{"no rule on a missing key", edit(t, "group: g", "# no group") + "    subset: {column: site, values: [A]}\n",
			[]string{`plan.yaml:4:1: data: missing required key "group"`}},
		{"no duplicate id for two missing ids", edit(t, "- id: a", "- title: first") + "  - test: kruskal-wallis\n    pvalue: {method: asymptotic}\n",
			[]string{
				`plan.yaml:11:5: analyses[0]: missing required key "id"`,
				`plan.yaml:15:5: analyses[1]: missing required key "id"`,
			}},
		{"no rule on a key written twice", edit(t, "method: asymptotic", "method: asymptotic\nresamples: 5\nresamples: 6"),
			[]string{`plan.yaml:16:7: analyses[0].pvalue.resamples: duplicate key; "resamples" is already set at line 15`}},
		{"no id lookup when an id is refused", strings.Replace(goodPlan, "- id: a", `- id: "a b"`, 1) + "multiplicity: {rule: holm, analyses: [\"a b\", c]}\n",
			[]string{`plan.yaml:11:9: analyses[0].id: expected a short identifier of the analysis, unique in the plan; found the text "a b"`}},
		{"no family check when the analyses are refused", strings.SplitAfter(goodPlan, "seed: 42\n")[0] + "analyses: 5\nmultiplicity: {rule: holm, analyses: [a, b]}\n",
			[]string{"plan.yaml:10:11: analyses: expected a list; found 5"}},
		{"no order check on a refused include", edit(t, "alpha: 0.05", "groups: {include: [A], order: [A, C]}\nalpha: 0.05"),
			[]string{"plan.yaml:8:19: groups.include: expected at least 2 items; found 1"}},
	}
}

// TestSyntaxErrorLines pins how yaml.v3 v3.0.1 numbers lines in syntax errors: scanner
// errors give the 1-based line, parser errors ("did not find expected …") the 0-based one,
// which syntaxError corrects. If a yaml.v3 upgrade changes this, this test says so.
func TestSyntaxErrorLines(t *testing.T) {
	for _, tc := range []struct {
		src  string
		want string
	}{
		{"a: 1\nb: 2\nc: d: e\n", "plan.yaml:3:1: (syntax): not a valid YAML plan: mapping values are not allowed in this context"},
		{"a: 1\n\tb: 2\n", "plan.yaml:2:2: (syntax): not a valid YAML plan: found a tab character that violates indentation"},
		{"a:\n  - 1\n - 2\n", "plan.yaml:3:2: (syntax): not a valid YAML plan: did not find expected key"},
		{"a: 1\nb: \"abc\nc: 2\n", "plan.yaml:2:1: (syntax): not a valid YAML plan: found unexpected end of stream"},
	} {
		_, err := Parse("plan.yaml", []byte(tc.src))
		if err == nil || err.Error() != tc.want {
			t.Errorf("%q:\n got %v\nwant %s", tc.src, err, tc.want)
		}
	}
}

func TestErrorsSorted(t *testing.T) {
	src := edit(t, "alpha: 0.05", "alpha: 2") + "zzz: 1\n"
	src = strings.Replace(src, "id: p1", "id: p1\nyyy: 2", 1)
	_, err := Parse("plan.yaml", []byte(src))
	list, _ := AsList(err)
	if len(list) != 3 {
		t.Fatalf("want 3 errors, got %v", err)
	}
	for i := 1; i < len(list); i++ {
		if list[i-1].Line > list[i].Line {
			t.Errorf("errors not sorted by line: %v", err)
		}
	}
}

func TestExamplesParse(t *testing.T) {
	files, err := filepath.Glob("../examples/*/plan.yaml")
	if err != nil || len(files) < 2 {
		t.Fatalf("examples: %v %v", files, err)
	}
	for _, f := range files {
		if _, err := Load(f); err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
}

func TestDraftParses(t *testing.T) {
	base := Draft{ID: "x", Title: `a "quoted" title: with colon`, DataFile: "d ir/data.csv", SHA256: strings.Repeat("a", 64),
		Delimiter: ";", Decimal: ",", Group: "arm: name", Outcome: "#score", GroupsFound: []string{`"A" (3 rows)`},
		Alpha: 0.01, Seed: 1<<64 - 1, PValue: Asymptotic, PostHoc: NoPostHoc, Adjust: NoAdjustment}
	layout := base
	layout.Source, layout.SHA256, layout.GroupsFound = DraftFromLayout, "", nil
	layout.Columns = []string{`"arm: name" (text)`, `"#score" (number)`}
	layout.Unit, layout.Missing, layout.Groups = "µg/l", []string{"n/a", "", "-"}, []string{"b", "a: 1", `"c"`}
	layout.EffectResamples, layout.PValue, layout.Resamples = 2000, Auto, 100000
	header := layout
	header.Source, header.Columns, header.Missing = DraftFromHeader, nil, []string{}
	for _, c := range []struct {
		name string
		d    Draft
		// want: texts the plan holds; absent: texts it must not hold.
		want, absent []string
	}{
		{"from data", base, []string{"from the data file below", "# sha256: \"" + strings.Repeat("a", 64), `# groups found: "A" (3 rows)`, "interval: noncentral"},
			[]string{"not pinned", "lock"}},
		{"from a declared layout", layout, []string{"from a declared layout", "`rankplan lock`", "# sha256: not pinned", `# declared columns: "arm: name" (text)`,
			"interval: bootstrap", "resamples: 2000"}, []string{"groups found", "sha256: \""}},
		{"from a header", header, []string{"from the header of the data file", "# sha256: not pinned", "# groups found: none yet", "tokens: []"},
			[]string{"declared columns"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			text := c.d.YAML()
			if !strings.HasPrefix(string(text), "# yaml-language-server: $schema=https://") {
				t.Errorf("first line does not point at the schema:\n%s", text)
			}
			for _, w := range c.want {
				if !strings.Contains(string(text), w) {
					t.Errorf("lacks %q:\n%s", w, text)
				}
			}
			for _, a := range c.absent {
				if strings.Contains(string(text), a) {
					t.Errorf("holds %q:\n%s", a, text)
				}
			}
			p, err := Parse("plan.yaml", text)
			if err != nil {
				t.Fatalf("%v\n%s", err, text)
			}
			d := c.d
			tokens := d.Missing
			if tokens == nil {
				tokens = DefaultMissingTokens()
			}
			interval, resamples, scheme := DefaultEffectInterval, int64(0), BootstrapScheme("")
			if d.EffectResamples > 0 {
				interval, resamples, scheme = BootstrapInterval, d.EffectResamples, CountsScheme
			}
			a := p.Analyses[0]
			if p.Title != d.Title || p.Data.Group != d.Group || p.Data.Outcome != d.Outcome || p.Data.File != d.DataFile ||
				uint64(p.Seed) != d.Seed || p.Alpha != 0.01 || p.Data.Decimal != "," || p.Data.Delimiter != ";" ||
				p.Data.SHA256 != "" || p.Data.Unit != d.Unit || !reflect.DeepEqual(p.Data.Missing.Tokens, tokens) ||
				!reflect.DeepEqual(p.Groups.Include, d.Groups) || a.PValue.Method != d.PValue || a.PValue.Resamples != d.Resamples ||
				a.EffectSize.Interval != interval || a.EffectSize.Resamples != resamples || a.EffectSize.Scheme != scheme {
				t.Errorf("draft did not round-trip: %+v", p)
			}
		})
	}
}

// FuzzParse: Parse never panics, every error is positioned, and an accepted plan written
// back as JSON (which is YAML) parses to the same plan.
func FuzzParse(f *testing.F) {
	f.Add([]byte(goodPlan))
	f.Add([]byte(goodPlan + "extra: [1, {a: b}]\n"))
	f.Add([]byte("rankplan: 1\nid: &a x\ntitle: *a\n"))
	f.Add([]byte("? [a, b]\n: c\n"))
	f.Add([]byte("seed: 1e400\nalpha: 0x10\n"))
	f.Add([]byte("a: !!binary aGVsbG8=\n"))
	f.Add([]byte("<<: {a: 1}\n"))
	f.Add([]byte("\xff\xfe"))
	f.Fuzz(func(t *testing.T, src []byte) {
		p, err := Parse("plan.yaml", src)
		if err != nil {
			list, ok := AsList(err)
			if !ok {
				t.Fatalf("not a plan error: %T %v", err, err)
			}
			for _, e := range list {
				if e.Line < 1 || e.Column < 1 {
					t.Fatalf("unpositioned error: %v", e)
				}
			}
			return
		}
		b, err := json.Marshal(p)
		if err != nil {
			t.Fatal(err)
		}
		q, err := Parse("plan.yaml", b)
		if err != nil {
			t.Fatalf("re-parse of %s: %v", b, err)
		}
		p.doc, q.doc = nil, nil
		if !reflect.DeepEqual(p, q) {
			t.Fatalf("round trip differs:\n%+v\n%+v", p, q)
		}
	})
}

func TestLoadMissingFile(t *testing.T) {
	_, err := Load(filepath.Join(t.TempDir(), "none.yaml"))
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("got %v", err)
	}
}

func TestMultiplicityAndSubset(t *testing.T) {
	src := goodPlan + `    subset: {column: site, values: ["north", "NA"]}
  - id: b
    test: kruskal-wallis
    outcome: z
    pvalue: {method: asymptotic}
multiplicity:
  rule: fixed-sequence
`
	p, err := Parse("plan.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	if got := p.Multiplicity.Analyses; !reflect.DeepEqual(got, []string{"a", "b"}) {
		t.Errorf("default family %q, want every analysis in plan order", got)
	}
	if s := p.Analyses[0].Subset; s == nil || s.Column != "site" || !reflect.DeepEqual(s.Values, []string{"north", "NA"}) {
		t.Errorf("subset %+v", s)
	}
	if p.Analyses[1].Subset != nil {
		t.Errorf("analysis b has a subset %+v", p.Analyses[1].Subset)
	}
	p, err = Parse("plan.yaml", []byte(strings.Replace(src, "rule: fixed-sequence", "rule: holm\n  analyses: [b, a]", 1)))
	if err != nil {
		t.Fatal(err)
	}
	if got := p.Multiplicity.Analyses; !reflect.DeepEqual(got, []string{"b", "a"}) || p.Multiplicity.Rule != "holm" {
		t.Errorf("family %q rule %q", got, p.Multiplicity.Rule)
	}
}

// TestRenamedAdjustment checks the table of retired adjustment codes: each code names a
// current adjustment, is itself no current name, and current names are not renamed.
func TestRenamedAdjustment(t *testing.T) {
	for _, tc := range []struct {
		code string
		want Adjustment
		ok   bool
	}{
		{"bh", BenjaminiHochberg, true},
		{"by", BenjaminiYekutieli, true},
		{"holm", "", false},
		{"benjamini-hochberg", "", false},
		{"BH", "", false},
		{"", "", false},
	} {
		got, ok := RenamedAdjustment(tc.code)
		if got != tc.want || ok != tc.ok {
			t.Errorf("RenamedAdjustment(%q) = %q, %v; want %q, %v", tc.code, got, ok, tc.want, tc.ok)
		}
	}
	for code, name := range renamedAdjustments {
		if !slices.Contains(Adjustments(), name) {
			t.Errorf("%q is renamed to %q, which is not an adjustment", code, name)
		}
		if slices.Contains(Adjustments(), Adjustment(code)) {
			t.Errorf("%q is both a current name and a retired code", code)
		}
	}
}

// TestIntervalLevelDefault: a Monte Carlo method gets the interval level 0.95 unless the
// plan gives one; the other methods have none (0), so their plans are unchanged.
func TestIntervalLevelDefault(t *testing.T) {
	for _, tc := range []struct {
		name, method string
		want         float64
	}{
		{"asymptotic", "method: asymptotic", 0},
		{"exact", "method: exact", 0},
		{"permutation", "method: permutation\nresamples: 1000", DefaultIntervalLevel},
		{"auto", "method: auto\nresamples: 1000", DefaultIntervalLevel},
		{"auto with a level", "method: auto\nresamples: 1000\ninterval_level: 0.99", 0.99},
		{"permutation with a level", "method: permutation\nresamples: 1000\ninterval_level: 0.9", 0.9},
	} {
		p, err := Parse("plan.yaml", []byte(edit(t, "method: asymptotic", tc.method)))
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if got := p.Analyses[0].PValue.IntervalLevel; got != tc.want {
			t.Errorf("%s: interval level %v, want %v", tc.name, got, tc.want)
		}
	}
	if DefaultIntervalLevel != 0.95 {
		t.Errorf("DefaultIntervalLevel = %v; plan format 1 says 0.95", DefaultIntervalLevel)
	}
}

// TestBootstrapSchemeAbsent: a plan without effect_size.scheme means the indices scheme,
// and its typed form, which is what is hashed, holds no scheme member, so plans written
// before the key existed keep their hash; a plan that names a scheme keeps it.
func TestBootstrapSchemeAbsent(t *testing.T) {
	for _, tc := range []struct {
		yaml   string
		want   BootstrapScheme
		member bool
	}{
		{"    effect_size: {interval: bootstrap, resamples: 10}\n", IndicesScheme, false},
		{"    effect_size: {interval: bootstrap, resamples: 10, scheme: indices-v1}\n", IndicesScheme, true},
		{"    effect_size: {interval: bootstrap, resamples: 10, scheme: counts-v2}\n", CountsScheme, true},
	} {
		p, err := Parse("plan.yaml", []byte(goodPlan+tc.yaml))
		if err != nil {
			t.Fatalf("%s: %v", tc.yaml, err)
		}
		es := p.Analyses[0].EffectSize
		b, err := json.Marshal(es)
		if err != nil {
			t.Fatal(err)
		}
		if es.BootstrapScheme() != tc.want || strings.Contains(string(b), `"scheme"`) != tc.member {
			t.Errorf("%s: scheme %q, JSON %s", tc.yaml, es.BootstrapScheme(), b)
		}
	}
}
