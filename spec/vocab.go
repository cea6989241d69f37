package spec

// The plan's vocabulary: every name a plan can give a test, a p-value method, a post-hoc
// procedure, an adjustment, a multiplicity rule, an effect-size interval, a missing-value
// policy or the condition of the post-hoc comparisons is declared here once, as a typed
// constant, with the list of valid values in the order the documentation gives them.
// The plan schema (schemas/plan.schema.json), `rankplan init`, the README's plan-format
// table and the code all follow these lists; TestVocabularyAgrees in cmd/rankplan holds
// them equal.
//
// A list that no command calls (the command checks a plan against the schema, which the
// test holds equal to the list) stays on purpose: it is the definition the schema, init
// and the docs are checked against. .ci/deadcode-allowed names each such list.

// Test names an omnibus test. Only [KruskalWallis] runs in this release; the schema
// accepts the others so that plans can name them, and [Parse] refuses them as not
// implemented yet.
type Test string

// The omnibus tests a plan can name.
const (
	KruskalWallis      Test = "kruskal-wallis"
	JonckheereTerpstra Test = "jonckheere-terpstra"
	MedianTest         Test = "median"
	ANOVA              Test = "anova"
	WelchANOVA         Test = "welch-anova"
	FlignerKilleen     Test = "fligner-killeen"
)

// Tests returns every test a plan can name, the one implemented first.
func Tests() []Test {
	return []Test{KruskalWallis, JonckheereTerpstra, MedianTest, ANOVA, WelchANOVA, FlignerKilleen}
}

// ImplementedTests returns the tests this release runs.
func ImplementedTests() []Test { return []Test{KruskalWallis} }

// PValueMethod names how the omnibus p-value is computed.
type PValueMethod string

// The p-value methods a plan can name.
const (
	Asymptotic  PValueMethod = "asymptotic"  // chi-square reference distribution
	Exact       PValueMethod = "exact"       // exact permutation distribution given the ties
	Permutation PValueMethod = "permutation" // Monte Carlo permutation with a resample count
	Auto        PValueMethod = "auto"        // exact within the work budget, else Monte Carlo
)

// PValueMethods returns every p-value method a plan can name.
func PValueMethods() []PValueMethod { return []PValueMethod{Asymptotic, Exact, Permutation, Auto} }

// UsedPValueMethods returns the methods a p-value can have been computed by: every
// [PValueMethods] value but [Auto], which resolves to one of them.
func UsedPValueMethods() []PValueMethod { return []PValueMethod{Asymptotic, Exact, Permutation} }

// PostHoc names a pairwise procedure.
type PostHoc string

// The pairwise procedures a plan can name.
const (
	NoPostHoc PostHoc = "none"
	Dunn      PostHoc = "dunn"
	Conover   PostHoc = "conover"
	DSCF      PostHoc = "dscf"
	Nemenyi   PostHoc = "nemenyi"
	RankSum   PostHoc = "rank-sum"
)

// PostHocs returns every pairwise procedure a plan can name, [NoPostHoc] first.
func PostHocs() []PostHoc { return []PostHoc{NoPostHoc, Dunn, Conover, DSCF, Nemenyi, RankSum} }

// Adjustment names a multiplicity adjustment of p-values.
type Adjustment string

// The adjustments a plan can name.
const (
	NoAdjustment Adjustment = "none"
	Bonferroni   Adjustment = "bonferroni"
	Sidak        Adjustment = "sidak"
	Holm         Adjustment = "holm"
	Hochberg     Adjustment = "hochberg"
	Hommel       Adjustment = "hommel"
	// BenjaminiHochberg is the false discovery rate step-up of Benjamini & Hochberg (1995).
	BenjaminiHochberg Adjustment = "benjamini-hochberg"
	// BenjaminiYekutieli is the step-up of Benjamini & Yekutieli (2001), valid under any
	// dependence.
	BenjaminiYekutieli Adjustment = "benjamini-yekutieli"
)

// Adjustments returns every adjustment a plan can name, [NoAdjustment] first.
func Adjustments() []Adjustment {
	return []Adjustment{NoAdjustment, Bonferroni, Sidak, Holm, Hochberg, Hommel, BenjaminiHochberg, BenjaminiYekutieli}
}

// renamedAdjustments maps the short codes that plans of earlier releases wrote for an
// adjustment or a multiplicity rule to the names that replaced them.
var renamedAdjustments = map[string]Adjustment{
	"bh": BenjaminiHochberg,
	"by": BenjaminiYekutieli,
}

// RenamedAdjustment returns the name that replaced an adjustment code of an earlier
// release ("bh" gives [BenjaminiHochberg]), and false for any other text. The old codes
// are refused, never read as the new names: a plan says what it means in the words of
// the release that runs it.
func RenamedAdjustment(code string) (Adjustment, bool) {
	a, ok := renamedAdjustments[code]
	return a, ok
}

// MultiplicityRule names how decisions are made across a family of analyses: one of the
// [Adjustment] names other than none, or [FixedSequence].
type MultiplicityRule string

// FixedSequence tests the family's analyses in the order listed, each at the full alpha,
// and stops at the first that does not reject.
const FixedSequence MultiplicityRule = "fixed-sequence"

// MultiplicityRules returns every rule a plan can name: the adjustments other than
// [NoAdjustment], in their order, then [FixedSequence].
func MultiplicityRules() []MultiplicityRule {
	var out []MultiplicityRule
	for _, a := range Adjustments() {
		if a != NoAdjustment {
			out = append(out, MultiplicityRule(a))
		}
	}
	return append(out, FixedSequence)
}

// IntervalMethod names how the interval of the omnibus effect sizes is computed.
type IntervalMethod string

// The effect-size intervals a plan can name.
const (
	// NoncentralInterval inverts the noncentral chi-square approximation of H: an interval
	// of the population effect that agrees with the asymptotic test (the default).
	NoncentralInterval IntervalMethod = "noncentral"
	// BootstrapInterval is the percentile bootstrap of H, resampling within groups; it needs
	// resamples. Kept for plans that registered it.
	BootstrapInterval IntervalMethod = "bootstrap"
	// NoInterval reports the estimates alone.
	NoInterval IntervalMethod = "none"
)

// IntervalMethods returns every effect-size interval a plan can name, the default first.
func IntervalMethods() []IntervalMethod {
	return []IntervalMethod{NoncentralInterval, BootstrapInterval, NoInterval}
}

// BootstrapScheme names how the bootstrap interval of the effect sizes draws its
// resamples (effect_size.scheme, with interval bootstrap only).
type BootstrapScheme string

// The bootstrap resampling schemes a plan can name. Both resample within groups with
// replacement; they differ in the draws, so the same seed gives other intervals.
const (
	// CountsScheme draws each group's counts over its distinct values as a multinomial,
	// by conditional binomials (stats.BootstrapCounts): the work of a resample grows with
	// the number of distinct values, not of observations. `init` writes it.
	CountsScheme BootstrapScheme = "counts-v2"
	// IndicesScheme draws one uniform index per observation (stats.BootstrapIndices), the
	// scheme of the first releases; a plan without effect_size.scheme means it, so that
	// the runs of plans registered before the key existed are reproduced.
	IndicesScheme BootstrapScheme = "indices-v1"
)

// BootstrapSchemes returns every bootstrap scheme, the one `init` writes first.
func BootstrapSchemes() []BootstrapScheme {
	return []BootstrapScheme{CountsScheme, IndicesScheme}
}

// MissingPolicy says what happens to rows with a missing group or outcome.
type MissingPolicy string

// The missing-value policies.
const (
	ExcludeMissing MissingPolicy = "exclude" // leave the row out and count it per group and reason
	FailOnMissing  MissingPolicy = "fail"    // stop with an error naming the cell
)

// MissingPolicies returns every missing-value policy, the default first.
func MissingPolicies() []MissingPolicy { return []MissingPolicy{ExcludeMissing, FailOnMissing} }

// When names the condition under which the post-hoc comparisons run.
type When string

// The conditions of the post-hoc comparisons.
const (
	WhenSignificant When = "significant" // only when the omnibus test rejects at alpha
	WhenAlways      When = "always"      // whatever the omnibus result
)

// Whens returns every condition of the post-hoc comparisons, the default first.
func Whens() []When { return []When{WhenSignificant, WhenAlways} }

// Names returns the values of a vocabulary list as plain strings, in order.
func Names[T ~string](values []T) []string {
	out := make([]string, len(values))
	for i, v := range values {
		out[i] = string(v)
	}
	return out
}
