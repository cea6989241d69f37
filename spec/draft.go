package spec

import (
	"bytes"
	"fmt"
	"strconv"
	"strings"

	"rankplan/schemas"
)

// DraftSource says what `rankplan init` saw of the data when it drafted a plan.
type DraftSource int

const (
	// DraftFromData: a data file with rows; the groups found and the file's SHA-256 are
	// shown in comments.
	DraftFromData DraftSource = iota
	// DraftFromHeader: a data file that holds its header and no rows yet.
	DraftFromHeader
	// DraftFromLayout: no data file; the plan follows the columns the user declared,
	// before the data exist.
	DraftFromLayout
)

// Draft is what `rankplan init` knows when it writes a new plan. [Draft.YAML] renders it
// as a commented plan file; the caller validates the text with [Parse] before writing it.
type Draft struct {
	ID, Title string
	Source    DraftSource
	DataFile  string // as it will be written in the plan: relative to the plan's folder
	SHA256    string // shown as a commented pin (DraftFromData only)
	Delimiter string // ",", ";" or "tab"
	Decimal   string // "." or ","
	Group     string
	Outcome   string
	Unit      string // the outcome's unit; "" for none
	// Columns describes the declared header, one entry per column (e.g. `"dose" (text)`),
	// for a comment (DraftFromLayout).
	Columns []string
	// GroupsFound lists the groups in the data with their row counts, for a comment.
	GroupsFound []string
	// Missing are the missing-value tokens; nil writes the plan format's default.
	Missing []string
	// Groups are the groups to analyse, in report order (groups.include); nil leaves the
	// choice to the data: every group found, ordered by label.
	Groups          []string
	Alpha           float64
	Seed            uint64
	PValue          PValueMethod
	Resamples       int64
	EffectResamples int64 // > 0: a bootstrap interval of the effect size with this many resamples
	PostHoc         PostHoc
	Adjust          Adjustment
	Control         string
}

// DraftLargeGroupSize is the group size that the drafted comment on
// pvalue.asymptotic_when_large names; the runner's rule (runner.LargeGroupSize) is
// tested to agree with it.
const DraftLargeGroupSize = 25

// YAML renders the draft as a plan file whose first line points editors at the schema
// (the yaml-language-server `$schema` comment).
func (d Draft) YAML() []byte {
	var b bytes.Buffer
	q := strconv.Quote
	p := func(format string, args ...any) { fmt.Fprintf(&b, format, args...) }
	p("# yaml-language-server: $schema=%s\n", schemas.PlanID)
	switch d.Source {
	case DraftFromData:
		p("# A rankplan analysis plan, drafted by `rankplan init` from the data file below.\n")
		p("# Read every line and adjust it before you register the plan; `rankplan check` validates it.\n")
	default:
		if d.Source == DraftFromHeader {
			p("# A rankplan analysis plan, drafted by `rankplan init` from the header of the data file\n")
			p("# below, which holds no rows yet.\n")
		} else {
			p("# A rankplan analysis plan, drafted by `rankplan init` from a declared layout, before\n")
			p("# the data exist.\n")
		}
		p("# Read every line and adjust it, then lock it before the data exist: `rankplan lock`\n")
		p("# records this plan's canonical form, its SHA-256 and the time, and needs no data.\n")
		p("# Once the data file exists, `rankplan check` validates plan and data together, and\n")
		p("# `rankplan run --lock` states whether the plan that ran is the plan that was locked.\n")
	}
	p("rankplan: %d\n", FormatVersion)
	p("id: %s\n", q(d.ID))
	p("title: %s\n", q(d.Title))
	p("# description: the hypothesis, the design, who wrote this plan and when\n\n")
	p("data:\n")
	p("  file: %s  # relative to this plan's folder\n", q(d.DataFile))
	if len(d.Columns) > 0 {
		p("  # declared columns: %s\n", strings.Join(d.Columns, ", "))
	}
	switch {
	case d.Source == DraftFromData && d.SHA256 != "":
		p("  # sha256: %s  # uncomment to refuse any other data\n", q(d.SHA256))
	case d.Source != DraftFromData:
		p("  # sha256: not pinned, since the data do not exist yet; any file at data.file is read.\n")
		p("  #   Each run records the SHA-256 of the data it read in its audit log, and verify\n")
		p("  #   checks it. `rankplan lock` records the plan's keys and values, so a sha256 added\n")
		p("  #   after locking is a change that `run --lock` refuses unless declared with --deviation.\n")
	}
	if d.Source == DraftFromData {
		p("  delimiter: %s\n", q(d.Delimiter))
		p("  decimal: %s\n", q(d.Decimal))
	} else {
		p("  delimiter: %s  # the field delimiter the data file must use: \",\" | \";\" | \"tab\"\n", q(d.Delimiter))
		p("  decimal: %s  # the decimal mark of its numbers: \".\" | \",\"\n", q(d.Decimal))
	}
	p("  group: %s\n", q(d.Group))
	switch {
	case len(d.GroupsFound) > 0:
		p("  # groups found: %s\n", strings.Join(d.GroupsFound, ", "))
	case d.Source == DraftFromHeader:
		p("  # groups found: none yet (the file holds only its header)\n")
	}
	p("  outcome: %s\n", q(d.Outcome))
	if d.Unit != "" {
		p("  unit: %s  # the outcome's unit, shown in report labels\n", q(d.Unit))
	} else {
		p("  # unit: the outcome's unit for report labels, e.g. \"mg\" (optional)\n")
	}
	missing := d.Missing
	if missing == nil {
		missing = DefaultMissingTokens()
	}
	quoted := make([]string, len(missing))
	for i, m := range missing {
		quoted[i] = q(m)
	}
	p("  missing:\n")
	p("    tokens: [%s]  # cell texts that mean a missing value\n", strings.Join(quoted, ", "))
	p("    policy: %s  # %s: leave such rows out and count them; %s: stop at the first\n\n", ExcludeMissing, ExcludeMissing, FailOnMissing)
	if len(d.Groups) > 0 {
		quoted = make([]string, len(d.Groups))
		for i, g := range d.Groups {
			quoted[i] = q(g)
		}
		p("groups:  # only these groups are analysed, in this order; rows of other groups are left out and counted\n")
		p("  include: [%s]\n\n", strings.Join(quoted, ", "))
	} else {
		p("# Every group found in the data is analysed, ordered by label (byte order), unless:\n")
		p("# groups:  # optional: analyse only some groups (include), or fix the report order (order)\n")
		p("#   include: [\"A\", \"B\", \"C\"]\n\n")
	}
	p("alpha: %s  # the significance level\n", strconv.FormatFloat(d.Alpha, 'g', -1, 64))
	p("seed: %d  # seeds every random stream; keep it once the plan is registered\n\n", d.Seed)
	p("analyses:\n")
	p("  - id: \"primary\"\n")
	p("    test: %s\n", KruskalWallis)
	p("    pvalue:\n")
	p("      method: %s  # %s\n", d.PValue, choices(PValueMethods()))
	if d.Resamples > 0 {
		p("      resamples: %d  # Monte Carlo resamples (permutation, auto)\n", d.Resamples)
		p("      interval_level: %v  # level of the Monte Carlo p-value's Clopper-Pearson interval\n", DefaultIntervalLevel)
	} else {
		p("      # resamples: 100000  # Monte Carlo resamples (permutation, auto)\n")
		p("      # interval_level: %v  # level of the Monte Carlo p-value's interval (permutation, auto)\n", DefaultIntervalLevel)
	}
	p("      # stop_at_exceedances: 10  # sequential Monte Carlo: stop once 10 resamples reach H (permutation, auto)\n")
	p("      # asymptotic_when_large: true  # auto: the chi-square p when the exact p does not fit and every group holds at least %d\n", DraftLargeGroupSize)
	p("    effect_size:\n")
	if d.EffectResamples > 0 {
		p("      interval: %s  # %s\n", BootstrapInterval, choices(IntervalMethods()))
		p("      resamples: %d  # bootstrap resamples (within groups)\n", d.EffectResamples)
		p("      scheme: %s  # %s (how resamples are drawn)\n", CountsScheme, choices(BootstrapSchemes()))
	} else {
		p("      interval: %s  # %s\n", DefaultEffectInterval, strings.Replace(choices(IntervalMethods()), string(BootstrapInterval), string(BootstrapInterval)+" (then also resamples: 2000, scheme: "+string(CountsScheme)+")", 1))
	}
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
