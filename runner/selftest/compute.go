package selftest

import (
	"bufio"
	"bytes"
	"context"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"rankplan/runner"
	"rankplan/spec"
	"rankplan/stats"
	"rankplan/stats/stream"
)

// env is what the computations share while one case set is evaluated: the data sets,
// their rankings, and the results of the plans run so far, each made once.
type env struct {
	ctx     context.Context
	set     *CaseSet
	groups  map[string][][]float64
	ranks   map[string]*stats.Ranking
	plans   map[string]any // decoded results.json by plan name
	work    string         // scratch folder for plans and their data; "" until needed
	workers int
}

func newEnv(ctx context.Context, set *CaseSet, workers int) *env {
	return &env{ctx: ctx, set: set, groups: map[string][][]float64{}, ranks: map[string]*stats.Ranking{},
		plans: map[string]any{}, workers: workers}
}

// close removes the scratch folder.
func (e *env) close() {
	if e.work != "" {
		os.RemoveAll(e.work)
	}
}

// computation computes a case's obtained value from its input.
type computation func(e *env, c *Case) (Value, error)

// computations maps each computation name of the case file to the public function of
// package stats, stats/stream or runner that a run uses for that quantity.
var computations map[string]computation

func init() {
	computations = map[string]computation{
		// Kruskal-Wallis on a data set: stats.KruskalWallisTest.
		"kw.h":              kwField(func(k stats.KruskalWallis) Value { return NumberValue(k.H) }),
		"kw.tie-correction": kwField(func(k stats.KruskalWallis) Value { return NumberValue(k.TieCorrection) }),
		"kw.p":              kwField(func(k stats.KruskalWallis) Value { return NumberValue(k.P) }),
		"kw.log10p":         kwField(func(k stats.KruskalWallis) Value { return NumberValue(k.Log10P) }),
		// Effect sizes from the data set's H*: stats.EpsilonSquared, stats.EtaSquaredH.
		"effect.epsilon-squared": kwValue(func(k stats.KruskalWallis) (float64, error) { return stats.EpsilonSquared(k.H, k.N) }),
		"effect.eta-squared-h":   kwValue(func(k stats.KruskalWallis) (float64, error) { return stats.EtaSquaredH(k.H, k.N, k.K) }),
		// Chi-square upper tail at input.at with input.df: stats.ChiSquareUpperTail.
		"chisq.p":      chisq(false),
		"chisq.log10p": chisq(true),
		// Noncentral chi-square tails at input.at with input.df and input.noncentrality:
		// stats.NoncentralChiSquareTails → P(X ≤ at) or P(X > at).
		"noncentral-chisq.lower": noncentralTail(false),
		"noncentral-chisq.upper": noncentralTail(true),
		// Interval of the noncentrality from one value input.at with input.df at input.level:
		// stats.NoncentralityInterval → [low, high].
		"noncentrality.interval": noncentralityInterval,
		// Interval of the population effect from the data set's H* at input.level:
		// stats.KruskalWallisEffectInterval → its noncentrality ends [low, high].
		"effect.noncentrality-interval": effectInterval,
		// Type 7 quartiles of input.values: stats.Quartiles → [Q1, median, Q3].
		"quartiles": quartiles,
		// Exact conditional p of the data set, under the work budget runs use.
		"exact.p": exactP,
		// Monte Carlo permutation p on the specified stream (input seed, analysis_id, resamples).
		"permutation.exceedances": permutation(func(p stats.Permutation) Value { return TextValue(strconv.FormatInt(p.Exceed, 10)) }),
		"permutation.p":           permutation(func(p stats.Permutation) Value { return NumberValue(p.P) }),
		// Percentile bootstrap interval of H*: stats.KruskalWallisBootstrap → [low, high].
		"bootstrap.h-interval": bootstrap,
		// Post-hoc comparisons of all pairs (i < j, in order) on the joint or pairwise ranks.
		"dunn.z":         pairs(stats.DunnTest, false),
		"dunn.p":         pairs(stats.DunnTest, true),
		"conover.t":      pairs(stats.ConoverImanTest, false),
		"conover.p":      pairs(stats.ConoverImanTest, true),
		"nemenyi.q":      pairs(stats.NemenyiTest, false),
		"dscf.statistic": pairs(stats.DSCFTest, false),
		"dscf.p":         pairs(stats.DSCFTest, true),
		// The rank-sum test of input.pair: stats.RankSumTest.
		"ranksum.p-exact":     rankSum(func(r stats.RankSum) float64 { return r.PExact }, true),
		"ranksum.p-normal-cc": rankSum(func(r stats.RankSum) float64 { return r.PNorm }, true),
		// Adjusted p-values of input.p_values by input.method: stats.AdjustP.
		"adjust": adjust,
		// Pairwise effect sizes of input.pair: stats.PairEffectSizes, stats.HodgesLehmannShift.
		"pair.cliffs-delta":       pairEffect(func(p stats.PairEffect) float64 { return p.CliffsDelta }),
		"pair.vargha-delaney-a":   pairEffect(func(p stats.PairEffect) float64 { return p.VarghaDelaneyA }),
		"hodges-lehmann.shift":    hodgesLehmann(func(h stats.HodgesLehmann) Value { return NumberValue(h.Shift) }),
		"hodges-lehmann.interval": hodgesLehmann(func(h stats.HodgesLehmann) Value { return NumbersValue([]float64{h.Low, h.High}) }),
		"hodges-lehmann.coverage": hodgesLehmann(func(h stats.HodgesLehmann) Value { return NumberValue(h.Coverage) }),
		// The Moses interval's index c and its coverage for untied samples of input.sizes
		// at input.level: stats.HodgesLehmannShift → [c, coverage].
		"hodges-lehmann.index": mosesIndex,
		// Studentized range distribution: quantile at input.probability, survival at input.at.
		"srange.quantile": srange(stats.StudentizedRangeQuantile, func(in Input) *float64 { return in.Prob }),
		"srange.survival": srange(stats.StudentizedRangeSurvival, func(in Input) *float64 { return in.At }),
		// Beta quantile (Clopper-Pearson intervals): stats.BetaQuantile.
		"beta.quantile": betaQuantile,
		// The random stream: ChaCha8Rand outputs from a 32-byte seed, and the block key.
		"stream.chacha8": chacha8,
		"stream.key":     streamKey,
		// Compact letter display of k groups of which input.differ differ: stats.CompactLetters.
		"letters": letters,
		// A whole plan through spec.Load, runner.Prepare and runner.Execute: the values at
		// input.fields (RFC 6901 pointers) of its results.json.
		"plan": planFields,
	}
}

// data returns the groups of a data set, made once.
func (e *env) data(name string) ([][]float64, error) {
	if g, ok := e.groups[name]; ok {
		return g, nil
	}
	d := e.set.Datasets[name]
	if d == nil {
		return nil, fmt.Errorf("no data set %q", name)
	}
	var groups [][]float64
	switch {
	case d.NIST != "":
		b, err := files.ReadFile(path.Join("cases", d.NIST))
		if err != nil {
			return nil, err
		}
		if groups, err = parseNIST(b); err != nil {
			return nil, fmt.Errorf("data set %q: %w", name, err)
		}
	case d.SmLsScale > 0:
		groups = smlsDesign(d.SmLsScale)
	default:
		for _, g := range d.Groups {
			groups = append(groups, g.Values)
		}
	}
	e.groups[name] = groups
	return groups, nil
}

// groupNames are the labels of a data set's groups in a data file: the inline names, or
// t1, t2, … (which sort in treatment order for up to 9 treatments).
func (e *env) groupNames(name string, k int) []string {
	if d := e.set.Datasets[name]; d != nil && len(d.Groups) == k {
		out := make([]string, k)
		for i, g := range d.Groups {
			out[i] = g.Name
		}
		return out
	}
	out := make([]string, k)
	for i := range out {
		out[i] = "t" + strconv.Itoa(i+1)
	}
	return out
}

// flatten returns the group index and value columns of groups, group by group.
func flatten(groups [][]float64) ([]int32, []float64) {
	var g []int32
	var v []float64
	for i, xs := range groups {
		for _, x := range xs {
			g = append(g, int32(i))
			v = append(v, x)
		}
	}
	return g, v
}

// ranking returns the stats.Ranking of a data set, made once.
func (e *env) ranking(name string) (*stats.Ranking, error) {
	if r, ok := e.ranks[name]; ok {
		return r, nil
	}
	groups, err := e.data(name)
	if err != nil {
		return nil, err
	}
	g, v := flatten(groups)
	r, err := stats.Rank(g, v, len(groups))
	if err != nil {
		return nil, err
	}
	e.ranks[name] = r
	return r, nil
}

func (e *env) kw(name string) (stats.KruskalWallis, error) {
	r, err := e.ranking(name)
	if err != nil {
		return stats.KruskalWallis{}, err
	}
	return stats.KruskalWallisTest(r)
}

func kwField(f func(stats.KruskalWallis) Value) computation {
	return func(e *env, c *Case) (Value, error) {
		k, err := e.kw(c.Input.Dataset)
		if err != nil {
			return Value{}, err
		}
		return f(k), nil
	}
}

func kwValue(f func(stats.KruskalWallis) (float64, error)) computation {
	return func(e *env, c *Case) (Value, error) {
		k, err := e.kw(c.Input.Dataset)
		if err != nil {
			return Value{}, err
		}
		x, err := f(k)
		return NumberValue(x), err
	}
}

func chisq(log bool) computation {
	return func(e *env, c *Case) (Value, error) {
		in := c.Input
		if in.At == nil || in.DF == nil {
			return Value{}, errors.New("input at and df are required")
		}
		df := float64(*in.DF)
		if df != math.Trunc(df) || df < 1 || df > math.MaxInt32 {
			return Value{}, fmt.Errorf("df %v: expected a whole number of at least 1", df)
		}
		p, lp, err := stats.ChiSquareUpperTail(*in.At, int(df))
		if log {
			return NumberValue(lp), err
		}
		return NumberValue(p), err
	}
}

func noncentralTail(upper bool) computation {
	return func(e *env, c *Case) (Value, error) {
		in := c.Input
		if in.At == nil || in.DF == nil || in.NC == nil {
			return Value{}, errors.New("input at, df and noncentrality are required")
		}
		lower, up, err := stats.NoncentralChiSquareTails(*in.At, float64(*in.DF), *in.NC)
		if upper {
			return NumberValue(up), err
		}
		return NumberValue(lower), err
	}
}

func noncentralityInterval(e *env, c *Case) (Value, error) {
	in := c.Input
	if in.At == nil || in.DF == nil {
		return Value{}, errors.New("input at, df and level are required")
	}
	lo, hi, err := stats.NoncentralityInterval(*in.At, float64(*in.DF), in.Level)
	return NumbersValue([]float64{lo, hi}), err
}

func effectInterval(e *env, c *Case) (Value, error) {
	k, err := e.kw(c.Input.Dataset)
	if err != nil {
		return Value{}, err
	}
	iv, err := stats.KruskalWallisEffectInterval(k.H, k.N, k.K, c.Input.Level)
	return NumbersValue([]float64{iv.NoncentralityLow, iv.NoncentralityHigh}), err
}

// maxMosesSize bounds each size of the hodges-lehmann.index computation's samples.
const maxMosesSize = 100_000

// mosesIndex runs stats.HodgesLehmannShift on untied samples of the sizes m and n,
// x_i = i and y_j = 0.5 + 4j: the index c and its coverage depend on the sizes and the
// level alone when there are no ties.
func mosesIndex(e *env, c *Case) (Value, error) {
	in := c.Input
	if len(in.Sizes) != 2 || min(in.Sizes[0], in.Sizes[1]) < 1 || max(in.Sizes[0], in.Sizes[1]) > maxMosesSize {
		return Value{}, fmt.Errorf("input sizes %v: expected two sizes from 1 to %d", in.Sizes, maxMosesSize)
	}
	x := make([]float64, in.Sizes[0])
	for i := range x {
		x[i] = float64(i)
	}
	y := make([]float64, in.Sizes[1])
	for j := range y {
		y[j] = 0.5 + float64(4*j)
	}
	h, err := stats.HodgesLehmannShift(x, y, in.Level)
	if err != nil {
		return Value{}, err
	}
	if h.Tied || !h.ExactIndex {
		return Value{}, fmt.Errorf("sizes %v: the index did not come from the exact untied null", in.Sizes)
	}
	return NumbersValue([]float64{float64(h.C), h.Coverage}), nil
}

func quartiles(e *env, c *Case) (Value, error) {
	x := slices.Clone(c.Input.Values)
	slices.Sort(x)
	q1, med, q3, err := stats.Quartiles(x)
	return NumbersValue([]float64{q1, med, q3}), err
}

func exactP(e *env, c *Case) (Value, error) {
	r, err := e.ranking(c.Input.Dataset)
	if err != nil {
		return Value{}, err
	}
	ex, err := stats.KruskalWallisExact(e.ctx, r, stats.DefaultExactBudget)
	return NumberValue(ex.P), err
}

func permutation(f func(stats.Permutation) Value) computation {
	return func(e *env, c *Case) (Value, error) {
		in := c.Input
		if in.Seed == nil {
			return Value{}, errors.New("input seed is required")
		}
		groups, err := e.data(in.Dataset)
		if err != nil {
			return Value{}, err
		}
		r, err := e.ranking(in.Dataset)
		if err != nil {
			return Value{}, err
		}
		g, v := flatten(groups)
		p, err := stats.KruskalWallisPermutation(e.ctx, g, v, len(groups), r, stats.PermutationOptions{
			Seed: *in.Seed, AnalysisID: in.AnalysisID, Resamples: in.Resamples, Workers: e.workers})
		if err != nil {
			return Value{}, err
		}
		return f(p), nil
	}
}

func bootstrap(e *env, c *Case) (Value, error) {
	in := c.Input
	if in.Seed == nil {
		return Value{}, errors.New("input seed is required")
	}
	r, err := e.ranking(in.Dataset)
	if err != nil {
		return Value{}, err
	}
	b, err := stats.KruskalWallisBootstrap(e.ctx, r, stats.BootstrapOptions{
		Seed: *in.Seed, AnalysisID: in.AnalysisID, Resamples: in.Resamples, Level: in.Level, Workers: e.workers})
	return NumbersValue([]float64{b.HLow, b.HHigh}), err
}

func pairs(test func(*stats.Ranking, [][2]int) ([]stats.Comparison, error), p bool) computation {
	return func(e *env, c *Case) (Value, error) {
		r, err := e.ranking(c.Input.Dataset)
		if err != nil {
			return Value{}, err
		}
		cmp, err := test(r, stats.AllPairs(r.K))
		if err != nil {
			return Value{}, err
		}
		out := make([]float64, len(cmp))
		for i, x := range cmp {
			out[i] = x.Statistic
			if p {
				out[i] = x.P
			}
		}
		return NumbersValue(out), nil
	}
}

// pair returns the two samples of input.pair.
func (e *env) pair(in Input) (x, y []float64, err error) {
	groups, err := e.data(in.Dataset)
	if err != nil {
		return nil, nil, err
	}
	if len(in.Pair) != 2 || min(in.Pair[0], in.Pair[1]) < 0 || max(in.Pair[0], in.Pair[1]) >= len(groups) {
		return nil, nil, fmt.Errorf("input pair %v: expected two group indexes below %d", in.Pair, len(groups))
	}
	return groups[in.Pair[0]], groups[in.Pair[1]], nil
}

func rankSum(f func(stats.RankSum) float64, continuity bool) computation {
	return func(e *env, c *Case) (Value, error) {
		x, y, err := e.pair(c.Input)
		if err != nil {
			return Value{}, err
		}
		r, err := stats.RankSumTest(e.ctx, x, y, continuity, stats.DefaultExactBudget)
		return NumberValue(f(r)), err
	}
}

func adjust(e *env, c *Case) (Value, error) {
	p, err := stats.AdjustP(c.Input.Method, c.Input.PValues)
	return NumbersValue(p), err
}

func pairEffect(f func(stats.PairEffect) float64) computation {
	return func(e *env, c *Case) (Value, error) {
		x, y, err := e.pair(c.Input)
		if err != nil {
			return Value{}, err
		}
		p, err := stats.PairEffectSizes(x, y)
		return NumberValue(f(p)), err
	}
}

func hodgesLehmann(f func(stats.HodgesLehmann) Value) computation {
	return func(e *env, c *Case) (Value, error) {
		x, y, err := e.pair(c.Input)
		if err != nil {
			return Value{}, err
		}
		h, err := stats.HodgesLehmannShift(x, y, c.Input.Level)
		if err != nil {
			return Value{}, err
		}
		return f(h), nil
	}
}

func srange(f func(float64, int, float64) (float64, error), arg func(Input) *float64) computation {
	return func(e *env, c *Case) (Value, error) {
		in := c.Input
		if arg(in) == nil || in.DF == nil {
			return Value{}, errors.New("the point or probability, and df, are required")
		}
		x, err := f(*arg(in), in.K, float64(*in.DF))
		return NumberValue(x), err
	}
}

func betaQuantile(e *env, c *Case) (Value, error) {
	in := c.Input
	if in.Prob == nil || in.A == nil || in.B == nil {
		return Value{}, errors.New("input probability, a and b are required")
	}
	x, err := stats.BetaQuantile(*in.Prob, *in.A, *in.B)
	return NumberValue(x), err
}

func chacha8(e *env, c *Case) (Value, error) {
	var seed [32]byte
	if len(c.Input.Key) != len(seed) || c.Input.Count < 1 {
		return Value{}, fmt.Errorf("input key must be %d bytes of text and count at least 1", len(seed))
	}
	copy(seed[:], c.Input.Key)
	s := stream.New(seed)
	out := make([]string, c.Input.Count)
	for i := range out {
		out[i] = fmt.Sprintf("%016x", s.Uint64())
	}
	return TextValue(strings.Join(out, " ")), nil
}

func streamKey(e *env, c *Case) (Value, error) {
	in := c.Input
	if in.Seed == nil || in.Block == nil || in.Purpose == "" {
		return Value{}, errors.New("input purpose, seed and block are required")
	}
	k := stream.Key(in.Purpose, *in.Seed, in.AnalysisID, *in.Block)
	return TextValue(hex.EncodeToString(k[:])), nil
}

func letters(e *env, c *Case) (Value, error) {
	k := c.Input.K
	if k < 1 || k > 1000 {
		return Value{}, fmt.Errorf("input k %d: expected 1 to 1000 groups", k)
	}
	m := make([][]bool, k)
	for i := range m {
		m[i] = make([]bool, k)
	}
	for _, p := range c.Input.Differ {
		if min(p[0], p[1]) < 0 || max(p[0], p[1]) >= k {
			return Value{}, fmt.Errorf("input differ %v: group index outside 0..%d", p, k-1)
		}
		m[p[0]][p[1]], m[p[1]][p[0]] = true, true
	}
	l, err := stats.CompactLetters(m)
	if err != nil {
		return Value{}, err
	}
	texts := make([]string, k)
	for g := range texts {
		texts[g] = l.Text(g)
	}
	return TextValue(strings.Join(texts, " ")), nil
}

// planFields runs the case's plan (once per plan) and reads its fields: one field gives a
// number or text, several give a list of numbers.
func planFields(e *env, c *Case) (Value, error) {
	res, err := e.runPlan(c.Input.Plan)
	if err != nil {
		return Value{}, err
	}
	if len(c.Input.Fields) == 0 {
		return Value{}, errors.New("input fields: no field named")
	}
	var nums []float64
	for _, f := range c.Input.Fields {
		v, err := pointer(res, f)
		if err != nil {
			return Value{}, fmt.Errorf("plan %s: %w", c.Input.Plan, err)
		}
		switch x := v.(type) {
		case float64:
			nums = append(nums, x)
		case string:
			if len(c.Input.Fields) == 1 {
				return TextValue(x), nil
			}
			return Value{}, fmt.Errorf("plan %s: %s is text, not a number", c.Input.Plan, f)
		default:
			return Value{}, fmt.Errorf("plan %s: %s is %s, not a number or text", c.Input.Plan, f, jsonKind(v))
		}
	}
	if len(nums) == 1 {
		return NumberValue(nums[0]), nil
	}
	return NumbersValue(nums), nil
}

// runPlan writes the plan cases/plans/NAME.yaml and its data set (the plan's data.file
// names it: DATASET.csv, columns group and value) into the scratch folder, loads the plan
// as `rankplan run` does and runs it; the results.json it would write is kept decoded.
func (e *env) runPlan(name string) (any, error) {
	if res, ok := e.plans[name]; ok {
		return res, nil
	}
	src, err := files.ReadFile("cases/plans/" + name + ".yaml")
	if err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	if e.work == "" {
		if e.work, err = os.MkdirTemp("", "rankplan-selftest-"); err != nil {
			return nil, fmt.Errorf("scratch folder: %w", err)
		}
	}
	planPath := filepath.Join(e.work, name+".yaml")
	if err := os.WriteFile(planPath, src, 0o644); err != nil {
		return nil, err
	}
	p, err := spec.Load(planPath)
	if err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	dataset, ok := strings.CutSuffix(p.Data.File, ".csv")
	if !ok || filepath.Base(dataset) != dataset {
		return nil, fmt.Errorf("plan %q: data.file must name a data set as NAME.csv", name)
	}
	if err := e.writeCSV(dataset, p.DataPath()); err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	prep, err := runner.Prepare(e.ctx, p)
	if err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	res, err := runner.Execute(e.ctx, prep, runner.Options{Workers: e.workers})
	if err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	b, err := runner.EncodeResults(res)
	if err != nil {
		return nil, fmt.Errorf("plan %q: %w", name, err)
	}
	var tree any
	if err := json.Unmarshal(b, &tree); err != nil {
		return nil, err
	}
	e.plans[name] = tree
	return tree, nil
}

// writeCSV writes a data set as a data file with the columns group and value, group by
// group, every value with all its digits; an existing file is kept.
func (e *env) writeCSV(dataset, path string) error {
	if _, err := os.Stat(path); err == nil {
		return nil
	}
	groups, err := e.data(dataset)
	if err != nil {
		return err
	}
	names := e.groupNames(dataset, len(groups))
	var b bytes.Buffer
	b.WriteString("group,value\n")
	for i, g := range groups {
		for _, x := range g {
			b.WriteString(names[i])
			b.WriteByte(',')
			b.WriteString(num(x))
			b.WriteByte('\n')
		}
	}
	return os.WriteFile(path, b.Bytes(), 0o644)
}

// pointer resolves an RFC 6901 JSON Pointer in a decoded JSON value.
func pointer(v any, ptr string) (any, error) {
	if ptr == "" {
		return v, nil
	}
	if !strings.HasPrefix(ptr, "/") {
		return nil, fmt.Errorf("pointer %q does not start with /", ptr)
	}
	for _, tok := range strings.Split(ptr[1:], "/") {
		tok = strings.ReplaceAll(strings.ReplaceAll(tok, "~1", "/"), "~0", "~")
		switch x := v.(type) {
		case map[string]any:
			var ok bool
			if v, ok = x[tok]; !ok {
				return nil, fmt.Errorf("pointer %s: no member %q", ptr, tok)
			}
		case []any:
			i, err := strconv.Atoi(tok)
			if err != nil || i < 0 || i >= len(x) || strconv.Itoa(i) != tok {
				return nil, fmt.Errorf("pointer %s: no element %q", ptr, tok)
			}
			v = x[i]
		default:
			return nil, fmt.Errorf("pointer %s: %q is inside a %s", ptr, tok, jsonKind(v))
		}
	}
	return v, nil
}

func jsonKind(v any) string {
	switch v.(type) {
	case nil:
		return "null"
	case bool:
		return "boolean"
	case float64:
		return "number"
	case string:
		return "string"
	case []any:
		return "array"
	}
	return "object"
}

var nistDataLines = regexp.MustCompile(`^\s*Data\s+\(lines\s+(\d+)\s+to\s+(\d+)\)\s*$`)

// parseNIST reads a NIST StRD one-way ANOVA file: the header names the data lines ("Data
// (lines 61 to 249)"); each data line is a treatment number (1, 2, …) and a response.
// The groups come back in treatment order.
func parseNIST(b []byte) ([][]float64, error) {
	var lines []string
	sc := bufio.NewScanner(bytes.NewReader(b))
	for sc.Scan() {
		lines = append(lines, sc.Text())
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	first, last := 0, 0
	for _, l := range lines {
		if m := nistDataLines.FindStringSubmatch(l); m != nil {
			first, _ = strconv.Atoi(m[1])
			last, _ = strconv.Atoi(m[2])
			break
		}
	}
	if first < 1 || last < first || last > len(lines) {
		return nil, errors.New("no valid \"Data (lines A to B)\" header")
	}
	var groups [][]float64
	for n := first; n <= last; n++ {
		f := strings.Fields(lines[n-1])
		if len(f) != 2 {
			return nil, fmt.Errorf("line %d: expected a treatment and a response", n)
		}
		t, err := strconv.Atoi(f[0])
		if err != nil || t < 1 || t > 1000 {
			return nil, fmt.Errorf("line %d: treatment %q", n, f[0])
		}
		x, err := strconv.ParseFloat(f[1], 64)
		if err != nil {
			return nil, fmt.Errorf("line %d: response %q", n, f[1])
		}
		for len(groups) < t {
			groups = append(groups, nil)
		}
		groups[t-1] = append(groups[t-1], x)
	}
	return groups, nil
}

// smlsDesign rebuilds the NIST SmLs01–03 design at scale s (see [Dataset.SmLsScale]).
func smlsDesign(s int) [][]float64 {
	groups := make([][]float64, 9)
	for t := 1; t <= 9; t++ {
		one, lo, hi := 1.5, 1.4, 1.6
		switch {
		case t == 1:
			one, lo, hi = 1.4, 1.3, 1.5
		case t%2 == 0:
			one, lo, hi = 1.3, 1.2, 1.4
		}
		g := make([]float64, 0, 1+2*s)
		g = append(g, one)
		for range s {
			g = append(g, lo)
		}
		for range s {
			g = append(g, hi)
		}
		groups[t-1] = g
	}
	return groups
}
