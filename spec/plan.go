package spec

import (
	"encoding/json"
	"fmt"
	"strconv"
)

// FormatVersion is the plan format this package reads (the plan's `rankplan` key).
const FormatVersion = 1

// Plan is a validated analysis plan. Optional keys hold their defaults after [Parse]
// (see [Plan.applyDefaults]); [Plan.Pos] finds where any key was written.
type Plan struct {
	Format      int        `json:"rankplan"`
	ID          string     `json:"id"`
	Title       string     `json:"title"`
	Description string     `json:"description,omitempty"`
	Data        Data       `json:"data"`
	Groups      Groups     `json:"groups"`
	Alpha       float64    `json:"alpha"`
	Seed        Seed       `json:"seed"`
	Analyses    []Analysis `json:"analyses"`
	// Multiplicity, when present, controls the error rate across analyses.
	Multiplicity *Multiplicity `json:"multiplicity,omitempty"`
	// Report holds the options of report.html; nil: every option at its default.
	Report *ReportOptions `json:"report,omitempty"`

	// File is the plan's path as given to Load (used in messages); Dir is the folder that
	// relative data paths are resolved against.
	File string `json:"-"`
	Dir  string `json:"-"`

	doc *document
}

// Data is the plan's data source.
type Data struct {
	File      string  `json:"file"`
	SHA256    string  `json:"sha256,omitempty"`
	Delimiter string  `json:"delimiter"` // ",", ";" or "tab"; default ","
	Decimal   string  `json:"decimal"`   // "." or ","; default "."
	Group     string  `json:"group"`
	Outcome   string  `json:"outcome"`
	Unit      string  `json:"unit,omitempty"` // the outcome's unit, for labels (e.g. "min")
	Missing   Missing `json:"missing"`
}

// DelimiterByte returns the delimiter as the byte the CSV reader uses.
func (d Data) DelimiterByte() byte {
	if d.Delimiter == "tab" {
		return '\t'
	}
	return d.Delimiter[0]
}

// Missing holds the tokens that mean a missing cell and the policy for their rows.
type Missing struct {
	Tokens []string      `json:"tokens"` // default ["", "NA"]
	Policy MissingPolicy `json:"policy"` // default exclude
}

// Groups optionally restricts and orders the groups.
type Groups struct {
	Include []string `json:"include,omitempty"`
	Order   []string `json:"order,omitempty"`
}

// Analysis is one analysis of one outcome.
type Analysis struct {
	ID         string      `json:"id"`
	Title      string      `json:"title,omitempty"`
	Test       Test        `json:"test"`
	Outcome    string      `json:"outcome"`        // default: the plan's data.outcome
	Unit       string      `json:"unit,omitempty"` // the outcome's unit, for labels; default: data.unit
	Subset     *Subset     `json:"subset,omitempty"`
	PValue     PValue      `json:"pvalue"`
	EffectSize EffectSize  `json:"effect_size"`
	PostHoc    PostHocPlan `json:"posthoc"`
}

// Subset restricts an analysis to the rows whose cell in Column is one of Values,
// compared with the cell text exactly as written in the file.
type Subset struct {
	Column string   `json:"column"`
	Values []string `json:"values"`
}

// Multiplicity is the plan's control of the error rate across analyses.
type Multiplicity struct {
	Rule MultiplicityRule `json:"rule"`
	// Analyses are the ids of the family, in testing order for a fixed sequence;
	// default: every analysis, in plan order.
	Analyses []string `json:"analyses"`
}

// ReportOptions are options of report.html that change how results are drawn, never a
// result. An absent key keeps the plan's canonical form as it was before the key existed.
type ReportOptions struct {
	// ValueScale is the scale of the box plot's value axis; empty: linear. With log, a
	// group holding a value of 0 or below is drawn on the linear scale instead and the
	// figure caption says so (the plan is checked before the data are read).
	ValueScale ValueScale `json:"value_scale,omitempty"`
}

// ValueScale names the scale of the box plot's value axis.
type ValueScale string

// The value scales of report.html's box plot.
const (
	LinearScale ValueScale = "linear"
	LogScale    ValueScale = "log"
)

// BoxValueScale is the plan's value scale for the box plot: linear unless the plan's report
// options say log.
func (p *Plan) BoxValueScale() ValueScale {
	if p.Report != nil && p.Report.ValueScale == LogScale {
		return LogScale
	}
	return LinearScale
}

// EffectSize is how an analysis reports its omnibus effect sizes.
type EffectSize struct {
	Level     float64        `json:"level"`               // confidence level of the intervals; default 0.95
	Interval  IntervalMethod `json:"interval"`            // default noncentral
	Resamples int64          `json:"resamples,omitempty"` // bootstrap resamples, with interval bootstrap only
	// Scheme is how the bootstrap draws its resamples, with interval bootstrap only. Empty
	// (the key absent) means [IndicesScheme], the scheme of plans written before the key
	// existed; it stays empty rather than being filled in, so that such a plan's
	// canonical form, and so its hash and lock, are unchanged.
	Scheme BootstrapScheme `json:"scheme,omitempty"`
}

// BootstrapScheme is the scheme the bootstrap of e uses: [IndicesScheme] when the plan
// names none.
func (e EffectSize) BootstrapScheme() BootstrapScheme {
	if e.Scheme == "" {
		return IndicesScheme
	}
	return e.Scheme
}

// DefaultMissingTokens returns a new copy of the default of data.missing.tokens (part of
// plan format 1): the empty cell and "NA".
func DefaultMissingTokens() []string { return []string{"", "NA"} }

// Default effect-size settings (part of plan format 1).
const (
	DefaultEffectLevel    = 0.95
	DefaultEffectInterval = NoncentralInterval
)

// PValue is how an analysis computes its omnibus p-value.
type PValue struct {
	Method    PValueMethod `json:"method"`
	Resamples int64        `json:"resamples,omitempty"`
	// IntervalLevel is the confidence level of the Clopper-Pearson interval of a Monte
	// Carlo p-value, strictly between 0 and 1; with the methods permutation and auto only,
	// where it defaults to [DefaultIntervalLevel], and 0 with the others.
	IntervalLevel float64 `json:"interval_level,omitempty"`
	// StopAtExceedances is h of the sequential rule of a Monte Carlo p-value (Besag &
	// Clifford 1991): stop at the resample that brings the h-th exceedance and report
	// h/L, L the resamples drawn; 0 (the key absent) draws every resample. With the
	// methods permutation and auto only, at most Resamples.
	StopAtExceedances int64 `json:"stop_at_exceedances,omitempty"`
	// AsymptoticWhenLarge lets method auto take the asymptotic chi-square p-value
	// instead of Monte Carlo when the exact distribution does not fit the work budget
	// and every group holds at least the number of observations the runner documents
	// (runner.LargeGroupSize); false (the key absent) keeps Monte Carlo. With method auto
	// only.
	AsymptoticWhenLarge bool `json:"asymptotic_when_large,omitempty"`
}

// DefaultIntervalLevel is the confidence level of a Monte Carlo p-value's interval when
// the plan gives no pvalue.interval_level (part of plan format 1).
const DefaultIntervalLevel = 0.95

// PostHocPlan is the pairwise follow-up of an analysis.
type PostHocPlan struct {
	Method  PostHoc    `json:"method"`            // default none
	Adjust  Adjustment `json:"adjust"`            // default none
	Control string     `json:"control,omitempty"` // empty: all pairs
	When    When       `json:"when,omitempty"`    // default significant, with a method
}

// Seed is the plan's seed, an unsigned 64-bit integer. In JSON it is written as a decimal
// string, since JSON numbers above 2^53 are not exact in many readers.
type Seed uint64

// MarshalJSON writes the seed as a decimal string.
func (s Seed) MarshalJSON() ([]byte, error) {
	return json.Marshal(strconv.FormatUint(uint64(s), 10))
}

// UnmarshalJSON reads a seed written as a JSON integer or as a string of decimal digits.
func (s *Seed) UnmarshalJSON(b []byte) error {
	var text string
	if len(b) > 0 && b[0] == '"' {
		if err := json.Unmarshal(b, &text); err != nil {
			return err
		}
	} else {
		text = string(b)
	}
	u, err := strconv.ParseUint(text, 10, 64)
	if err != nil {
		return fmt.Errorf("expected an integer from 0 to 18446744073709551615; found %s", text)
	}
	*s = Seed(u)
	return nil
}

func (s Seed) String() string { return strconv.FormatUint(uint64(s), 10) }

// applyDefaults fills the optional keys, so that the rest of the program never has to know
// a default. The defaults are part of the plan format: changing one is a format change.
func (p *Plan) applyDefaults() {
	if p.Data.Delimiter == "" {
		p.Data.Delimiter = ","
	}
	if p.Data.Decimal == "" {
		p.Data.Decimal = "."
	}
	if p.Data.Missing.Tokens == nil {
		p.Data.Missing.Tokens = DefaultMissingTokens()
	}
	if p.Data.Missing.Policy == "" {
		p.Data.Missing.Policy = ExcludeMissing
	}
	if m := p.Multiplicity; m != nil && m.Analyses == nil {
		for _, a := range p.Analyses {
			m.Analyses = append(m.Analyses, a.ID)
		}
	}
	for i := range p.Analyses {
		a := &p.Analyses[i]
		if a.Outcome == "" {
			a.Outcome = p.Data.Outcome
			if a.Unit == "" {
				a.Unit = p.Data.Unit
			}
		}
		if a.EffectSize.Level == 0 {
			a.EffectSize.Level = DefaultEffectLevel
		}
		if m := a.PValue.Method; (m == Permutation || m == Auto) && a.PValue.IntervalLevel == 0 {
			a.PValue.IntervalLevel = DefaultIntervalLevel
		}
		if a.EffectSize.Interval == "" {
			a.EffectSize.Interval = DefaultEffectInterval
		}
		if a.PostHoc.Method == "" {
			a.PostHoc.Method = NoPostHoc
		}
		if a.PostHoc.Adjust == "" {
			a.PostHoc.Adjust = NoAdjustment
		}
		if a.PostHoc.When == "" && a.PostHoc.Method != NoPostHoc {
			a.PostHoc.When = WhenSignificant
		}
	}
}

// GroupOrder returns the groups the plan names for analysis, in report order: groups.order
// if given, else groups.include; nil when the plan leaves both to the data.
func (p *Plan) GroupOrder() []string {
	if len(p.Groups.Order) > 0 {
		return p.Groups.Order
	}
	return p.Groups.Include
}
