// Package results defines the one results struct that a run computes and every rendering
// (results.json, the terminal summary, later the report) reads. It holds no timestamps,
// host names or paths, so that the same plan on the same data gives the same bytes on any
// machine; who ran it, when and where belongs in the audit log.
package results

import "rankplan/spec"

// Format names this layout of results.json; a change of layout changes the name.
const Format = "rankplan-results/2"

// Results is everything a run computed, in plan order.
type Results struct {
	Format      string      `json:"format"`
	Plan        Plan        `json:"plan"`
	Data        Data        `json:"data"`
	Conventions Conventions `json:"conventions"`
	Analyses    []Analysis  `json:"analyses"`
	// Multiplicity is present when the plan controls the error rate across analyses.
	Multiplicity *Multiplicity `json:"multiplicity,omitempty"`
}

// Plan identifies the plan that ran.
type Plan struct {
	ID    string  `json:"id"`
	Title string  `json:"title"`
	Alpha float64 `json:"alpha"`
	Seed  string  `json:"seed"` // decimal string: JSON numbers above 2^53 are not exact
}

// Data identifies the data that were read (by content, not by path).
type Data struct {
	SHA256 string `json:"sha256"`
	Bytes  int64  `json:"bytes"`
	Rows   int    `json:"rows"` // data rows read, header not counted
	// HighPrecisionCells counts numeric cells with more than 15 significant digits. Values are
	// compared as IEEE 754 doubles, so two such cells that differ only past the 15th digit
	// may be read as tied.
	HighPrecisionCells int `json:"high_precision_cells"`
	// LookAlikeGroups lists sets of group labels that differ only in ways a reader cannot
	// see (surrounding spaces, control characters, Unicode form, case). Labels are compared
	// exactly as written, so each is its own group; this is a warning, not a merge.
	LookAlikeGroups []LookAlike `json:"look_alike_groups,omitempty"`
}

// LookAlike is one set of distinct labels that look alike.
type LookAlike struct {
	Column string   `json:"column"`
	Labels []string `json:"labels"` // exactly as in the data
	// Shown writes each label visibly: quoted, with escapes and code points.
	Shown       []string `json:"shown"`
	Differences []string `json:"differences"` // how the later labels differ from the first
}

// Conventions states the definitions behind the numbers, so that a reader can recompute them.
type Conventions struct {
	Ranks        string `json:"ranks"`
	Quantiles    string `json:"quantiles"`
	Decision     string `json:"decision"`
	RandomStream string `json:"random_stream"`
}

// Analysis is the result of one planned analysis.
type Analysis struct {
	ID       string      `json:"id"`
	Title    string      `json:"title,omitempty"`
	Test     spec.Test   `json:"test"`
	Outcome  string      `json:"outcome"`
	Unit     string      `json:"unit,omitempty"` // the outcome's unit from the plan, for labels
	Subset   *Subset     `json:"subset,omitempty"`
	N        int         `json:"n"`
	Groups   []Group     `json:"groups"`
	Excluded []Exclusion `json:"excluded"`
	// Status is "ok", or "not-computable" with Reason saying why (e.g. all values tied).
	Status        string         `json:"status"`
	Reason        string         `json:"reason,omitempty"`
	KruskalWallis *KruskalWallis `json:"kruskal_wallis,omitempty"`
	// PValue is the p-value of the plan's method, on which the decision rests.
	PValue *PValue `json:"p_value,omitempty"`
	// AsymptoticP is the chi-square p-value, always reported beside the chosen one.
	AsymptoticP *Tail        `json:"asymptotic_p_value,omitempty"`
	Decision    *Decision    `json:"decision,omitempty"`
	EffectSizes *EffectSizes `json:"effect_sizes,omitempty"`
	PostHoc     *PostHoc     `json:"posthoc,omitempty"`
}

// Subset is the plan's restriction of an analysis to some rows: those whose cell in
// Column is one of Values.
type Subset struct {
	Column string   `json:"column"`
	Values []string `json:"values"`
}

// PostHoc is the pairwise follow-up of an analysis.
type PostHoc struct {
	Method  spec.PostHoc    `json:"method"` // any but none
	Adjust  spec.Adjustment `json:"adjust"`
	Family  string          `json:"family"` // all-pairs or many-to-one
	Control string          `json:"control,omitempty"`
	When    spec.When       `json:"when"`
	Ran     bool            `json:"ran"`
	Why     string          `json:"why"`
	// NotComputable, when not empty, says why the comparisons could not be computed on
	// these data (e.g. every group internally constant for Conover-Iman); Ran is then
	// false and there are no pairs. The rest of the run is unaffected.
	NotComputable string `json:"not_computable,omitempty"`
	// Simultaneous says, for DSCF and Nemenyi, why the p-values need no adjustment.
	Simultaneous string `json:"simultaneous,omitempty"`
	// Note labels the family's design where the procedure's properties depend on it.
	Note string `json:"note,omitempty"`
	// Statistic names the pairs' statistic: z (Dunn), t (Conover-Iman), q (Nemenyi), -W*
	// (DSCF: the W* of Critchlow & Fligner 1991 with its sign turned, so that, as for the
	// others, it is positive when the first group tends to be larger) or U (rank-sum).
	Statistic string `json:"statistic,omitempty"`
	Pairs     []Pair `json:"pairs,omitempty"`
	// Letters is the compact letter display of an all-pairs family ([stats.CompactLetters]),
	// one entry per group in group order: two groups share a letter exactly when their
	// comparison was not rejected at alpha (after the adjustment, if one was applied), and
	// groups with no letter in common were found to differ.
	Letters []GroupLetters `json:"letters,omitempty"`
	// LettersMethod names how the letters were built: insert-absorb-sweep (Piepho's
	// algorithm) or greedy-sweep (when the former would exceed its work budget).
	LettersMethod string `json:"letters_method,omitempty"`
}

// Pair is one pairwise comparison, with its effect sizes.
type Pair struct {
	Group1, Group2 string    `json:"-"`
	Groups         [2]string `json:"groups"`
	MeanRankDiff   float64   `json:"mean_rank_diff"` // of the joint ranks (Dunn, Conover) or of the pair's own ranks (rank-sum)
	// Statistic, P and PAdjusted are null when the pair is not computable (NotComputable
	// says why); such a pair enters the adjustment of the others with p = 1, so the family
	// does not shrink, and is never rejected.
	Statistic      *float64 `json:"statistic"`
	PMethod        string   `json:"p_method"` // normal, t, studentized-range, exact or normal-continuity
	P              *float64 `json:"p"`
	PAdjusted      *float64 `json:"p_adjusted"`
	Reject         bool     `json:"reject"`
	NotComputable  string   `json:"not_computable,omitempty"`
	CliffsDelta    float64  `json:"cliffs_delta"`
	VarghaDelaneyA float64  `json:"vargha_delaney_a"`
	HodgesLehmann  HLShift  `json:"hodges_lehmann"`
}

// HLShift is the Hodges-Lehmann shift of the first group against the second, with its
// distribution-free (Moses) interval.
type HLShift struct {
	Shift    float64  `json:"shift"`
	Interval Interval `json:"interval"`
	// Coverage is the interval's coverage 1 − 2 P0(U <= c) under the untied null: exact for
	// continuous data; null when the index c came from the normal approximation.
	Coverage *float64 `json:"coverage"`
	// IndexMethod says where c came from: "exact" (the exact null distribution of U) or
	// "normal" (its normal approximation, for designs beyond the exact computation's bound).
	IndexMethod string `json:"index_method"`
	// LevelAttainable is false when even the widest interval, from the smallest to the
	// largest difference, has coverage below Interval.Level (1 − 2/C(m+n, m), e.g. 0.9 for
	// 3 and 3 values); the interval is then that widest one and Coverage its coverage.
	LevelAttainable bool `json:"level_attainable"`
	// TiedValues: the two groups' values hold ties. Coverage is then that of continuous
	// data, not the actual coverage, which is typically higher.
	TiedValues bool `json:"tied_values"`
}

// GroupLetters is a group's letters in the compact letter display.
type GroupLetters struct {
	Group string `json:"group"`
	// Letters lists the names of the group's letters ([stats.LetterName]: a..z, A..Z, then
	// a letter followed by a number: a1, b1, ...), at least one.
	Letters []string `json:"letters"`
	// Display writes Letters for people ([stats.Letters.Text]): the names written together
	// when the display has at most 52 letters ("ab"), joined with "." beyond ("a.b1").
	Display string `json:"display"`
}

// Group describes one analysed group.
type Group struct {
	Name     string  `json:"name"`
	N        int     `json:"n"`
	Median   float64 `json:"median"`
	Q1       float64 `json:"q1"`
	Q3       float64 `json:"q3"`
	Min      float64 `json:"min"`
	Max      float64 `json:"max"`
	RankSum  float64 `json:"rank_sum"`
	MeanRank float64 `json:"mean_rank"`
	// QuartileSkewness is Bowley's coefficient ([stats.QuartileSkewness]) of the group's
	// quartiles; absent when Q1 = Q3.
	QuartileSkewness *float64 `json:"quartile_skewness,omitempty"`
	// MeanRankInterval is the mean rank ± z·SE under random labelling, at the effect-size
	// level, cut to the range a mean rank of the group can take ([stats.MeanRankInterval]):
	// descriptive, for the mean-rank plot.
	MeanRankInterval *RankInterval `json:"mean_rank_interval,omitempty"`
}

// RankInterval is a two-sided interval of a mean rank at a level; Clipped says that an end
// was cut to the range [(n + 1)/2, N − (n − 1)/2] a mean of n of the ranks 1..N can take.
type RankInterval struct {
	Level   float64 `json:"level"`
	Low     float64 `json:"low"`
	High    float64 `json:"high"`
	Clipped bool    `json:"clipped"`
}

// Exclusion counts the rows left out of an analysis for one group and reason.
type Exclusion struct {
	Group  string `json:"group"` // "" when the group label itself is missing
	Reason string `json:"reason"`
	Rows   int    `json:"rows"`
}

// Reasons for leaving a row out of an analysis.
const (
	ReasonMissingGroup   = "missing-group"
	ReasonMissingOutcome = "missing-outcome"
	ReasonNotIncluded    = "group-not-included"
	ReasonOutsideSubset  = "outside-subset"
)

// KruskalWallis is the omnibus statistic.
type KruskalWallis struct {
	H             float64 `json:"h"`             // tie-corrected H* = H / C
	HUncorrected  float64 `json:"h_uncorrected"` // H without the tie correction
	TieCorrection float64 `json:"tie_correction"`
	DF            int     `json:"df"`
	TieBlocks     int     `json:"tie_blocks"`  // distinct values that occur more than once
	TiedValues    int     `json:"tied_values"` // observations sharing their value with another
}

// PValue is a p-value with the method that produced it and why that method was used.
// Value is null when the p-value is below the smallest positive normal double; Log10 is
// always given.
type PValue struct {
	Requested  spec.PValueMethod `json:"requested"` // the plan's method
	Method     spec.PValueMethod `json:"method"`    // the method used: any but auto
	Reason     string            `json:"reason"`
	Value      *float64          `json:"value"`
	Log10      float64           `json:"log10"`
	Exact      *ExactWork        `json:"exact,omitempty"`
	MonteCarlo *MonteCarlo       `json:"monte_carlo,omitempty"`
}

// Tail is a p-value alone: Value null when below the smallest positive normal double.
type Tail struct {
	Value *float64 `json:"value"`
	Log10 float64  `json:"log10"`
}

// ExactWork records the work of the exact distribution, against its budget.
type ExactWork struct {
	PeakStates   int64 `json:"peak_states"`
	Work         int64 `json:"work"`
	BudgetStates int64 `json:"budget_states"`
	BudgetWork   int64 `json:"budget_work"`
}

// MonteCarlo records a Monte Carlo permutation p-value. Counts are decimal strings, so
// that they stay exact above 2^53.
type MonteCarlo struct {
	Resamples   string   `json:"resamples"`
	Exceedances string   `json:"exceedances"` // resamples whose statistic reached the observed one
	Estimator   string   `json:"estimator"`
	SE          float64  `json:"se"`
	CI          Interval `json:"ci"` // Clopper-Pearson interval of the permutation p
	Comparison  string   `json:"comparison"`
	Stream      string   `json:"stream"` // the stream purpose label and block size
	// Sequential is present when the plan sets pvalue.stop_at_exceedances.
	Sequential *Sequential `json:"sequential,omitempty"`
}

// Sequential records the sequential rule of a Monte Carlo p-value (Besag & Clifford
// 1991). When it stopped, MonteCarlo.Resamples is L, the resamples drawn up to the
// h-th exceedance, MonteCarlo.Exceedances is h, the p-value is h/L and MonteCarlo.CI is
// the interval named by Interval; when it did not, every one of MaxResamples was drawn
// and the fixed rule's estimate and Clopper-Pearson interval stand.
type Sequential struct {
	Rule              string `json:"rule"`
	StopAtExceedances string `json:"stop_at_exceedances"` // h
	MaxResamples      string `json:"max_resamples"`       // m
	Stopped           bool   `json:"stopped"`
	Interval          string `json:"interval"` // how MonteCarlo.CI was computed
}

// Interval is a two-sided interval at a level.
type Interval struct {
	Level float64 `json:"level"`
	Low   float64 `json:"low"`
	High  float64 `json:"high"`
}

// EffectSizes are the omnibus effect sizes with the interval the plan asks for.
type EffectSizes struct {
	EpsilonSquared float64 `json:"epsilon_squared"`
	// EtaSquaredH is null when N = k (every group holds one observation).
	EtaSquaredH *float64 `json:"eta_squared_h"`
	// Interval is absent when the plan's effect_size.interval is none.
	Interval *EffectInterval `json:"interval,omitempty"`
}

// EffectInterval is the interval of the omnibus effect sizes. Which bounds it holds depends
// on Method:
//
//   - noncentral: Noncentrality bounds the noncentrality λ of the chi-square approximation
//     of H* (inverting it at H*), and PopulationEffect bounds ξ² = λ/(N − k), the population
//     share of the rank variance between groups that both epsilon-squared and
//     eta-squared(H) estimate, cut to [0, 1] ([stats.KruskalWallisEffectInterval]).
//     NotComputed replaces both when N = k.
//   - bootstrap: EpsilonSquared and EtaSquaredH are percentile bootstrap intervals of the
//     two statistics themselves, with the resample count, the resamples in which every
//     value was tied and the random stream.
type EffectInterval struct {
	Method spec.IntervalMethod `json:"method"` // any but none
	// Description says in words how the interval was computed and what it bounds.
	Description string  `json:"description"`
	Level       float64 `json:"level"`
	// NotComputed says why the interval has no bounds; empty when it has them.
	NotComputed      string         `json:"not_computed,omitempty"`
	Noncentrality    *Bounds        `json:"noncentrality,omitempty"`
	PopulationEffect *ClippedBounds `json:"population_effect,omitempty"`
	EpsilonSquared   *Bounds        `json:"epsilon_squared,omitempty"`
	EtaSquaredH      *Bounds        `json:"eta_squared_h,omitempty"`
	Resamples        string         `json:"resamples,omitempty"`
	Degenerate       string         `json:"degenerate,omitempty"` // resamples with every value tied (H* taken as 0)
	Stream           string         `json:"stream,omitempty"`
	// Scheme is how the bootstrap drew its resamples, when the plan names one; absent
	// for plans without effect_size.scheme, whose runs keep the results of before.
	Scheme spec.BootstrapScheme `json:"scheme,omitempty"`
	// Warnings say why the interval may not mean what it seems to for these data.
	Warnings []string `json:"warnings,omitempty"`
}

// Bounds are the two ends of an interval whose level is given beside it.
type Bounds struct {
	Low  float64 `json:"low"`
	High float64 `json:"high"`
}

// ClippedBounds are the ends of an interval cut to the range of what it bounds; Clipped
// says that an end was cut.
type ClippedBounds struct {
	Low     float64 `json:"low"`
	High    float64 `json:"high"`
	Clipped bool    `json:"clipped"`
}

// Decision is the test's verdict at the plan's alpha.
type Decision struct {
	Alpha  float64 `json:"alpha"`
	Reject bool    `json:"reject"`
	// Rule says how the decision was made: on the analysis's own p-value, or under the
	// plan's multiplicity rule across analyses (see [Multiplicity]).
	Rule string `json:"rule"`
	// PAdjusted is the omnibus p-value adjusted across the family, for analyses in one.
	PAdjusted *float64 `json:"p_adjusted,omitempty"`
}

// Multiplicity is the error-rate control across the plan's analyses.
type Multiplicity struct {
	Rule   spec.MultiplicityRule `json:"rule"`
	Method string                `json:"method"`
	Alpha  float64               `json:"alpha"`
	// Members are the family's analyses, in the plan's listed order.
	Members []Member `json:"analyses"`
}

// Member is one analysis of a multiplicity family and its decision.
type Member struct {
	ID string `json:"id"`
	// P is the analysis's omnibus p-value, null when the test is not computable.
	P         *Tail   `json:"p"`
	PAdjusted float64 `json:"p_adjusted"`
	// Tested is false for analyses of a fixed sequence after the first that did not reject.
	Tested bool   `json:"tested"`
	Reject bool   `json:"reject"`
	Why    string `json:"why"`
}

// Preview is what `rankplan check` shows: the plan joined with its data, before anything
// is computed.
type Preview struct {
	Plan     Plan              `json:"plan"`
	Data     Data              `json:"data"`
	Analyses []PreviewAnalysis `json:"analyses"`
	// Multiplicity is the plan's rule across analyses and its family, in listed order.
	Multiplicity *PreviewMultiplicity `json:"multiplicity,omitempty"`
}

// PreviewMultiplicity is the plan's multiplicity section as it will apply.
type PreviewMultiplicity struct {
	Rule     spec.MultiplicityRule `json:"rule"`
	Analyses []string              `json:"analyses"`
}

// PreviewAnalysis is one analysis as it would run.
type PreviewAnalysis struct {
	ID     string            `json:"id"`
	Test   spec.Test         `json:"test"`
	PValue spec.PValueMethod `json:"p_value_method"`
	// Chosen is, for method auto, the method the run will use: exact when the exact
	// distribution fits the work budget, permutation (Monte Carlo) otherwise, or
	// asymptotic when pvalue.asymptotic_when_large applies; empty for
	// other methods and when no p-value can be computed (every value tied).
	Chosen spec.PValueMethod `json:"p_value_chosen,omitempty"`
	// Resamples is the Monte Carlo resample count (decimal string), for permutation and auto.
	Resamples string       `json:"resamples,omitempty"`
	Outcome   string       `json:"outcome"`
	Subset    *Subset      `json:"subset,omitempty"`
	N         int          `json:"n"`
	Groups    []GroupCount `json:"groups"`
	Excluded  []Exclusion  `json:"excluded"`
}

// GroupCount is a group and its number of observations.
type GroupCount struct {
	Name string `json:"name"`
	N    int    `json:"n"`
}
