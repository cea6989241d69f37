package spec

import (
	"bytes"
	"fmt"
	"strconv"
	"strings"

	"rankplan/schemas"
)

// Draft is what `rankplan init` knows when it writes a new plan. [Draft.YAML] renders it
// as a commented plan file; the caller validates the text with [Parse] before writing it.
type Draft struct {
	ID, Title string
	DataFile  string // as it will be written in the plan: relative to the plan's folder
	SHA256    string // shown as a commented pin
	Delimiter string // ",", ";" or "tab"
	Decimal   string // "." or ","
	Group     string
	Outcome   string
	// GroupsFound lists the groups in the data with their row counts, for a comment.
	GroupsFound []string
	Alpha       float64
	Seed        uint64
	PValue      PValueMethod
	Resamples   int64
	PostHoc     PostHoc
	Adjust      Adjustment
	Control     string
}

// YAML renders the draft as a plan file whose first line points editors at the schema
// (the yaml-language-server `$schema` comment).
func (d Draft) YAML() []byte {
	var b bytes.Buffer
	q := strconv.Quote
	p := func(format string, args ...any) { fmt.Fprintf(&b, format, args...) }
	p("# yaml-language-server: $schema=%s\n", schemas.PlanID)
	p("# A rankplan analysis plan, drafted by `rankplan init` from the data file below.\n")
	p("# Read every line and adjust it before you register the plan; `rankplan check` validates it.\n")
	p("rankplan: %d\n", FormatVersion)
	p("id: %s\n", q(d.ID))
	p("title: %s\n", q(d.Title))
	p("# description: the hypothesis, the design, who wrote this plan and when\n\n")
	p("data:\n")
	p("  file: %s  # relative to this plan's folder\n", q(d.DataFile))
	if d.SHA256 != "" {
		p("  # sha256: %s  # uncomment to refuse any other data\n", q(d.SHA256))
	}
	p("  delimiter: %s\n", q(d.Delimiter))
	p("  decimal: %s\n", q(d.Decimal))
	p("  group: %s\n", q(d.Group))
	if len(d.GroupsFound) > 0 {
		p("  # groups found: %s\n", strings.Join(d.GroupsFound, ", "))
	}
	p("  outcome: %s\n", q(d.Outcome))
	p("  missing:\n")
	p("    tokens: [\"\", \"NA\"]  # cell texts that mean a missing value\n")
	p("    policy: %s  # %s: leave such rows out and count them; %s: stop at the first\n\n", ExcludeMissing, ExcludeMissing, FailOnMissing)
	p("# groups:  # optional: analyse only some groups (include), or fix the report order (order)\n")
	p("#   include: [\"A\", \"B\", \"C\"]\n\n")
	p("alpha: %s  # the significance level\n", strconv.FormatFloat(d.Alpha, 'g', -1, 64))
	p("seed: %d  # seeds every random stream; keep it once the plan is registered\n\n", d.Seed)
	p("analyses:\n")
	p("  - id: \"primary\"\n")
	p("    test: %s\n", KruskalWallis)
	p("    pvalue:\n")
	p("      method: %s  # %s\n", d.PValue, choices(PValueMethods()))
	if d.Resamples > 0 {
		p("      resamples: %d  # Monte Carlo resamples (permutation, auto)\n", d.Resamples)
	} else {
		p("      # resamples: 100000  # Monte Carlo resamples (permutation, auto)\n")
	}
	p("    effect_size:\n")
	p("      interval: %s  # %s\n", DefaultEffectInterval, strings.Replace(choices(IntervalMethods()), string(BootstrapInterval), string(BootstrapInterval)+" (then also resamples: 2000)", 1))
	p("      level: %s  # confidence level of the interval\n", strconv.FormatFloat(DefaultEffectLevel, 'g', -1, 64))
	p("    posthoc:\n")
	p("      method: %s  # %s\n", d.PostHoc, choices(PostHocs()))
	p("      adjust: %s  # %s\n", d.Adjust, choices(Adjustments()))
	if d.Control != "" {
		p("      control: %s  # compare each group with this one only\n", q(d.Control))
	}
	return b.Bytes()
}

// choices writes a vocabulary list as the draft's comments show it: "a | b | c".
func choices[T ~string](values []T) string { return strings.Join(Names(values), " | ") }
