package report

import (
	"bytes"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"golang.org/x/net/html"
	"golang.org/x/net/html/atom"

	"rankplan/runner/results"
	"rankplan/spec"
)

var update = flag.Bool("update", false, "rewrite the HTML report golden file under testdata/html")

// The fixtures are results.json of `rankplan run examples/NAME/plan.yaml` (invented demo
// data) and the observations of those examples, written by testdata/html/make_values.py.
// The symptom-scores fixture comes from that plan with `posthoc: {method: dscf, when:
// significant}` added to its analysis, so that a simultaneous procedure is rendered too.
var htmlFixtures = []string{"cream-trial", "dissolution", "pilot-bolts", "symptom-scores"}

// goldenMeta is invented provenance for the golden page.
var goldenMeta = Meta{
	PlanFile:            "examples/dissolution/plan.yaml",
	PlanSHA256:          "sha256:1111111111111111111111111111111111111111111111111111111111111111",
	PlanCanonicalSHA256: "sha256:2222222222222222222222222222222222222222222222222222222222222222",
	DataFile:            "examples/dissolution/tablets.csv",
	DataSHA256:          "sha256:e8d76906c4e88224fe309073695ca8ff5d297995b6e2cb583b91e1492afd50b3",
	Lock:                "no lock",
	Tool:                "rankplan test (revision none, go1.26)",
	RNG:                 "ChaCha8Rand per block",
	AuditHead:           "sha256:3333333333333333333333333333333333333333333333333333333333333333",
	AuditSeq:            4,
}

func loadFixture(t testing.TB, name string) (*results.Results, []AnalysisValues) {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("testdata", "html", name+".results.json"))
	if err != nil {
		t.Fatal(err)
	}
	var res results.Results
	if err := json.Unmarshal(b, &res); err != nil {
		t.Fatal(err)
	}
	b, err = os.ReadFile(filepath.Join("testdata", "html", name+".values.json"))
	if err != nil {
		t.Fatal(err)
	}
	var raw []struct {
		ID     string      `json:"id"`
		Groups [][]float64 `json:"groups"`
	}
	if err := json.Unmarshal(b, &raw); err != nil {
		t.Fatal(err)
	}
	vals := make([]AnalysisValues, len(raw))
	for i, r := range raw {
		vals[i] = AnalysisValues{ID: r.ID, Groups: r.Groups}
	}
	return &res, vals
}

func render(t testing.TB, res *results.Results, meta Meta, vals []AnalysisValues) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := HTML(&buf, res, meta, vals); err != nil {
		t.Fatalf("HTML: %v", err)
	}
	return buf.Bytes()
}

func parse(t testing.TB, page []byte) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatalf("parse: %v", err)
	}
	return doc
}

func walk(n *html.Node, f func(*html.Node)) {
	f(n)
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		walk(c, f)
	}
}

func attr(n *html.Node, name string) (string, bool) {
	for _, a := range n.Attr {
		if a.Key == name {
			return a.Val, true
		}
	}
	return "", false
}

func textOf(n *html.Node) string {
	var b strings.Builder
	walk(n, func(c *html.Node) {
		if c.Type == html.TextNode {
			b.WriteString(c.Data)
		}
	})
	return b.String()
}

// pairsRan reports whether the analysis has a heatmap.
func pairsRan(a *results.Analysis) bool {
	return a.PostHoc != nil && a.PostHoc.Ran && len(a.PostHoc.Pairs) > 0
}

// TestFixtureValuesMatchResults checks the value fixtures (read from the example CSVs by
// make_values.py) against the results the tool computed from the same files: group sizes,
// minimum, maximum and the median.
func TestFixtureValuesMatchResults(t *testing.T) {
	for _, name := range htmlFixtures {
		res, vals := loadFixture(t, name)
		if len(vals) != len(res.Analyses) {
			t.Fatalf("%s: %d value entries, %d analyses", name, len(vals), len(res.Analyses))
		}
		for i, v := range vals {
			a := res.Analyses[i]
			for gi, g := range v.Groups {
				rg := a.Groups[gi]
				n := len(g)
				if n != rg.N || n == 0 {
					t.Fatalf("%s/%s/%s: %d values, results n = %d", name, a.ID, rg.Name, n, rg.N)
				}
				med := (g[(n-1)/2] + g[n/2]) / 2
				if g[0] != rg.Min || g[n-1] != rg.Max || math.Abs(med-rg.Median) > 1e-12*math.Abs(rg.Median) {
					t.Errorf("%s/%s/%s: min/median/max %v/%v/%v, results %v/%v/%v", name, a.ID, rg.Name, g[0], med, g[n-1], rg.Min, rg.Median, rg.Max)
				}
			}
		}
	}
}

func TestHTMLStructure(t *testing.T) {
	for _, name := range htmlFixtures {
		t.Run(name, func(t *testing.T) {
			res, vals := loadFixture(t, name)
			page := render(t, res, goldenMeta, vals)
			if !bytes.HasPrefix(page, []byte("<!DOCTYPE html>\n")) {
				t.Errorf("page does not start with the HTML5 doctype")
			}
			doc := parse(t, page)
			var title, lang, charset string
			var h2, hrefs []string
			ids := map[string]bool{}
			svgs, footers := 0, 0
			walk(doc, func(n *html.Node) {
				if n.Type != html.ElementNode {
					return
				}
				if id, ok := attr(n, "id"); ok {
					ids[id] = true
				}
				switch n.DataAtom {
				case atom.A:
					if h, ok := attr(n, "href"); ok {
						hrefs = append(hrefs, h)
					}
				case atom.Title:
					if n.Parent != nil && n.Parent.DataAtom == atom.Head {
						title = textOf(n) // not the tooltips (<title>) inside the plots
					}
				case atom.Html:
					lang, _ = attr(n, "lang")
				case atom.Meta:
					if v, ok := attr(n, "charset"); ok {
						charset = v
					}
				case atom.H2:
					h2 = append(h2, textOf(n))
				case atom.Svg:
					svgs++
				case atom.Footer:
					footers++
				}
			})
			if !strings.Contains(title, res.Plan.Title) || !strings.Contains(title, res.Plan.ID) {
				t.Errorf("title %q lacks the plan's title or id", title)
			}
			if lang != "en" || charset != "utf-8" || footers != 1 {
				t.Errorf("lang %q, charset %q, %d footers", lang, charset, footers)
			}
			var want []string
			if len(res.Analyses) > 1 {
				want = append(want, "Contents")
			}
			want = append(want, "Plan, data and lock")
			wantSVG := 0
			for i := range res.Analyses {
				a := &res.Analyses[i]
				want = append(want, "Analysis "+a.ID+": "+a.Title)
				wantSVG += 2
				if pairsRan(a) {
					wantSVG++ // the heat map
					if len(a.PostHoc.Pairs) <= maxForestRows {
						wantSVG++ // the forest plot
					}
				}
			}
			if res.Multiplicity != nil {
				want = append(want, "Multiplicity across analyses")
			}
			want = append(want, "Reading these results")
			if !slices.Equal(h2, want) {
				t.Errorf("h2 headings\n got %q\nwant %q", h2, want)
			}
			// The contents (pages of more than one analysis) link to every h2 below it.
			if wantLinks := len(want) - 1; len(res.Analyses) > 1 && len(hrefs) != wantLinks {
				t.Errorf("%d links %q, want %d: one per section of the contents", len(hrefs), hrefs, wantLinks)
			}
			for _, h := range hrefs {
				if !strings.HasPrefix(h, "#") || !ids[h[1:]] {
					t.Errorf("link %q does not point at an element of the page", h)
				}
			}
			if svgs != wantSVG {
				t.Errorf("%d <svg> elements, want %d (box and mean-rank plot per analysis, heatmap and forest plot where pairs ran)", svgs, wantSVG)
			}
			text := textOf(doc)
			for _, s := range []string{Caution, "a value from one group exceeds a value from another", "same shape and spread",
				"Head of the audit chain when this report was written", "audit.head", goldenMeta.AuditHead, goldenMeta.Tool} {
				if !strings.Contains(text, s) {
					t.Errorf("page text lacks %q", s)
				}
			}
			for i := range res.Analyses {
				a := &res.Analyses[i]
				for _, s := range []string{a.PValue.Reason, a.Decision.Rule} {
					if !strings.Contains(text, s) {
						t.Errorf("analysis %s: page text lacks %q", a.ID, s)
					}
				}
				if ph := a.PostHoc; ph != nil {
					for _, s := range []string{ph.Note, ph.Simultaneous} {
						if !strings.Contains(text, s) {
							t.Errorf("analysis %s: page text lacks %q", a.ID, s)
						}
					}
				}
			}
		})
	}
}

var (
	urlFunc   = regexp.MustCompile(`(?i)url\(\s*['"]?([^)'"]*)`)
	importCSS = regexp.MustCompile(`(?i)@import`)
)

// TestHTMLSelfContained checks that the page fetches nothing: no URL scheme anywhere, no
// script, no link element, src only as data: and href and url() only to #ids or data:.
func TestHTMLSelfContained(t *testing.T) {
	for _, name := range htmlFixtures {
		t.Run(name, func(t *testing.T) {
			res, vals := loadFixture(t, name)
			page := render(t, res, goldenMeta, vals)
			low := bytes.ToLower(page)
			for _, s := range []string{"http://", "https://", "//www.", "<script", "<link", "<iframe", "<object", "<embed", "<img"} {
				if bytes.Contains(low, []byte(s)) {
					t.Errorf("page contains %q", s)
				}
			}
			if importCSS.Match(page) {
				t.Errorf("page has a CSS @import")
			}
			for _, m := range urlFunc.FindAllSubmatch(page, -1) {
				if u := string(m[1]); !strings.HasPrefix(u, "#") && !strings.HasPrefix(u, "data:") {
					t.Errorf("url(%s) points outside the page", u)
				}
			}
			walk(parse(t, page), func(n *html.Node) {
				if n.Type != html.ElementNode {
					return
				}
				if n.DataAtom == atom.Script {
					t.Errorf("page has a <script> element")
				}
				for _, a := range n.Attr {
					k := strings.ToLower(strings.TrimPrefix(a.Key, "xlink:"))
					switch {
					case k == "src" && !strings.HasPrefix(a.Val, "data:"),
						k == "href" && !strings.HasPrefix(a.Val, "#"),
						strings.HasPrefix(k, "on"),
						k == "xmlns" || a.Namespace == "xmlns":
						t.Errorf("<%s %s=%q> refers outside the page or runs code", n.Data, a.Key, a.Val)
					}
				}
			})
		})
	}
}

func TestHTMLDeterministic(t *testing.T) {
	for _, name := range htmlFixtures {
		res, vals := loadFixture(t, name)
		a, b := render(t, res, goldenMeta, vals), render(t, res, goldenMeta, vals)
		if !bytes.Equal(a, b) {
			t.Errorf("%s: two renderings differ", name)
		}
		for i := range res.Analyses {
			an := &res.Analyses[i]
			p1, _, err1 := boxPlotSVG(an, vals[i].Groups, spec.LinearScale)
			p2, _, err2 := boxPlotSVG(an, vals[i].Groups, spec.LinearScale)
			if err1 != nil || err2 != nil || !bytes.Equal(p1, p2) {
				t.Errorf("%s/%s: box plot not byte-identical run to run (%v, %v)", name, an.ID, err1, err2)
			}
		}
	}
}

// expectedKeys lists every data-key the page must carry with the results value it must
// hold, built from the results alone.
func expectedKeys(res *results.Results) map[string]*float64 {
	want := map[string]*float64{}
	f := func(x float64) *float64 { return &x }
	for _, a := range res.Analyses {
		id := a.ID
		want[id+".n"] = f(float64(a.N))
		for _, g := range a.Groups {
			want[id+".group."+g.Name+".n"] = f(float64(g.N))
			want[id+".group."+g.Name+".mean_rank"] = f(g.MeanRank)
		}
		if kw := a.KruskalWallis; kw != nil {
			want[id+".h"] = f(kw.H)
			want[id+".df"] = f(float64(kw.DF))
			want[id+".tie_correction"] = f(kw.TieCorrection)
		}
		if pv := a.PValue; pv != nil {
			want[id+".p"] = pv.Value
			if mc := pv.MonteCarlo; mc != nil {
				want[id+".mc_se"] = f(mc.SE)
				want[id+".mc_ci_low"] = f(mc.CI.Low)
				want[id+".mc_ci_high"] = f(mc.CI.High)
			}
		}
		if ap := a.AsymptoticP; ap != nil {
			want[id+".p_asymptotic"] = ap.Value
		}
		if d := a.Decision; d != nil && d.PAdjusted != nil {
			want[id+".p_adjusted"] = d.PAdjusted
		}
		if es := a.EffectSizes; es != nil {
			want[id+".epsilon_squared"] = f(es.EpsilonSquared)
			if es.EtaSquaredH != nil {
				want[id+".eta_squared_h"] = es.EtaSquaredH
			}
			if iv := es.Interval; iv != nil && iv.EpsilonSquared != nil {
				want[id+".epsilon_squared_low"] = f(iv.EpsilonSquared.Low)
				want[id+".epsilon_squared_high"] = f(iv.EpsilonSquared.High)
			}
			if iv := es.Interval; iv != nil && iv.PopulationEffect != nil {
				want[id+".population_effect_low"] = f(iv.PopulationEffect.Low)
				want[id+".population_effect_high"] = f(iv.PopulationEffect.High)
			}
		}
		if ph := a.PostHoc; ph != nil && ph.Ran {
			for _, p := range ph.Pairs {
				k := id + ".pair." + p.Groups[0] + "|" + p.Groups[1] + "."
				if p.NotComputable != "" {
					continue
				}
				want[k+"p"] = f(*p.P)
				want[k+"p_adjusted"] = f(*p.PAdjusted)
				want[k+"statistic"] = f(*p.Statistic)
				want[k+"cliffs_delta"] = f(p.CliffsDelta)
				want[k+"hl_shift"] = f(p.HodgesLehmann.Shift)
			}
		}
	}
	if m := res.Multiplicity; m != nil {
		for _, mem := range m.Members {
			want["multiplicity."+mem.ID+".p_adjusted"] = f(mem.PAdjusted)
		}
	}
	return want
}

// TestHTMLDataKeys checks every machine-findable number against results.json: the full
// value exactly, and the shown text as Num writes it (NumP for p-values).
func TestHTMLDataKeys(t *testing.T) {
	for _, name := range htmlFixtures {
		t.Run(name, func(t *testing.T) {
			res, vals := loadFixture(t, name)
			want := expectedKeys(res)
			seen := map[string]bool{}
			walk(parse(t, render(t, res, goldenMeta, vals)), func(n *html.Node) {
				key, ok := attr(n, "data-key")
				if n.Type != html.ElementNode || !ok {
					return
				}
				if seen[key] {
					t.Errorf("data-key %q appears twice", key)
				}
				seen[key] = true
				w, known := want[key]
				if !known {
					t.Errorf("data-key %q is not an expected key", key)
					return
				}
				got, hasValue := attr(n, "data-value")
				if w == nil {
					if hasValue {
						t.Errorf("%s: data-value %q for a p-value that results.json gives as null", key, got)
					}
					return
				}
				x, err := strconv.ParseFloat(got, 64)
				if err != nil || x != *w {
					t.Errorf("%s: data-value %q, results.json %v", key, got, *w)
				}
				show := Num
				if isPKey(key) {
					show = NumP
				}
				if txt, want := textOf(n), show(*w); txt != want {
					t.Errorf("%s: shown %q, want %q", key, txt, want)
				}
			})
			for k := range want {
				if !seen[k] {
					t.Errorf("data-key %q missing from the page", k)
				}
			}
		})
	}
}

// isPKey tells the keys of p-values, adjusted p-values and the ends of a p-value's
// interval, which the page shows as NumP writes them.
func isPKey(key string) bool {
	for _, end := range []string{".p", ".p_adjusted", ".p_asymptotic", ".mc_ci_low", ".mc_ci_high"} {
		if strings.HasSuffix(key, end) {
			return true
		}
	}
	return false
}

// TestHTMLDataKeyTinyP checks a p-value below the smallest normal double: no data-value,
// its log10 in data-log10 and the bound as FormatP writes it.
func TestHTMLDataKeyTinyP(t *testing.T) {
	res, vals := loadFixture(t, "pilot-bolts")
	a := &res.Analyses[0]
	a.PValue.Value, a.PValue.Log10 = nil, -400.25
	doc := parse(t, render(t, res, goldenMeta, vals))
	found := false
	walk(doc, func(n *html.Node) {
		if k, _ := attr(n, "data-key"); k == a.ID+".p" {
			found = true
			_, hasValue := attr(n, "data-value")
			lg, _ := attr(n, "data-log10")
			if hasValue || lg != "-400.25" || textOf(n) != FormatP(nil, -400.25) {
				t.Errorf("tiny p: data-value present %v, data-log10 %q, text %q", hasValue, lg, textOf(n))
			}
		}
	})
	if !found {
		t.Fatal("no data-key for the p-value")
	}
}

// TestHTMLEscapes renames a group and the plan title to markup and checks that they
// appear as text, in the tables and in the plots alike.
func TestHTMLEscapes(t *testing.T) {
	const nasty = `<b>&"`
	res, vals := loadFixture(t, "dissolution")
	old := res.Analyses[0].Groups[1].Name
	res.Analyses[0].Groups[1].Name = nasty
	for i := range res.Analyses[0].PostHoc.Pairs {
		p := &res.Analyses[0].PostHoc.Pairs[i]
		for j := range p.Groups {
			if p.Groups[j] == old {
				p.Groups[j] = nasty
			}
		}
	}
	res.Plan.Title = `</title><script>x()</script>`
	page := render(t, res, goldenMeta, vals)
	if bytes.Contains(page, []byte(nasty)) || bytes.Contains(page, []byte("<script>")) {
		t.Fatalf("raw markup from the results reached the page")
	}
	if !bytes.Contains(page, []byte("&lt;b&gt;&amp;&#34;")) {
		t.Errorf("escaped group name not found")
	}
	cells, svgTexts := 0, 0
	walk(parse(t, page), func(n *html.Node) {
		if n.Type == html.ElementNode && n.DataAtom == atom.Script {
			t.Errorf("a <script> element was parsed")
		}
		if n.Type == html.ElementNode && textOf(n) == nasty {
			switch n.Data {
			case "td":
				cells++
			case "text", "tspan":
				svgTexts++
			}
		}
	})
	if cells == 0 || svgTexts == 0 {
		t.Errorf("group name as text: %d table cells, %d SVG texts", cells, svgTexts)
	}
}

// TestHTMLGolden compares the whole page for one example with its golden file
// (go test ./runner/report -run TestHTMLGolden -update rewrites it).
func TestHTMLGolden(t *testing.T) {
	res, vals := loadFixture(t, "dissolution")
	got := render(t, res, goldenMeta, vals)
	path := filepath.Join("testdata", "html", "dissolution.golden.html")
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("page differs from %s; rerun with -update after checking the change", path)
	}
}

func TestHTMLDoesNotMutate(t *testing.T) {
	res, vals := loadFixture(t, "cream-trial")
	before, _ := json.Marshal(res)
	valsBefore, _ := json.Marshal(vals)
	render(t, res, goldenMeta, vals)
	after, _ := json.Marshal(res)
	valsAfter, _ := json.Marshal(vals)
	if !bytes.Equal(before, after) || !bytes.Equal(valsBefore, valsAfter) {
		t.Errorf("HTML changed its arguments")
	}
}

func TestHTMLRejectsBadInput(t *testing.T) {
	for _, tc := range []struct {
		name string
		edit func(*results.Results, []AnalysisValues) (*results.Results, []AnalysisValues)
		want string
	}{
		{"nil results", func(*results.Results, []AnalysisValues) (*results.Results, []AnalysisValues) { return nil, nil }, "no results"},
		{"unknown id", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].ID = "other"
			return r, v
		}, `analysis "other", which is not in the results`},
		{"given twice", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			return r, append(v, v[0])
		}, "given twice"},
		{"group count", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].Groups = v[0].Groups[:2]
			return r, v
		}, "2 groups, the results have 4"},
		{"group size", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].Groups[0] = append(v[0].Groups[0], v[0].Groups[0][11])
			return r, v
		}, `group "L1": 13 observations, the results have 12`},
		{"one of many", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].Groups[0] = v[0].Groups[0][:1]
			return r, v
		}, `group "L1": 1 observations, the results have 12`},
		{"thinned without the extremes", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].Groups[0] = v[0].Groups[0][:3]
			return r, v
		}, `group "L1": 3 of 12 observations that do not include the minimum and the maximum`},
		{"NaN", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			v[0].Groups[2][5] = math.NaN()
			return r, v
		}, "observation 6 is NaN"},
		{"unsorted", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			g := v[0].Groups[3]
			g[0], g[len(g)-1] = g[len(g)-1], g[0]
			return r, v
		}, "not sorted ascending at observation 2"},
		{"pair names unknown group", func(r *results.Results, v []AnalysisValues) (*results.Results, []AnalysisValues) {
			r.Analyses[0].PostHoc.Pairs[0].Groups[0] = "L9"
			return r, v
		}, `pair "L9" vs "L2" names a group not in the analysis`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, vals := tc.edit(loadFixture(t, "dissolution"))
			err := HTML(&bytes.Buffer{}, res, goldenMeta, vals)
			if err == nil || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// TestHTMLVariants renders the cases the examples do not reach: an analysis that is not
// computable, comparisons gated off, no values for the plots, many-to-one letters absent.
func TestHTMLVariants(t *testing.T) {
	for _, tc := range []struct {
		name   string
		edit   func(*results.Results, []AnalysisValues) []AnalysisValues
		want   []string
		svgs   int
		absent []string
	}{
		{"not computable", func(r *results.Results, v []AnalysisValues) []AnalysisValues {
			a := &r.Analyses[0]
			a.Status, a.Reason = "not-computable", "all values are tied"
			a.KruskalWallis, a.PValue, a.AsymptoticP, a.Decision, a.EffectSizes, a.PostHoc = nil, nil, nil, nil, nil, nil
			return v
		}, []string{"Not computable: all values are tied"}, 2, []string{"H (tie-corrected)", "Effect sizes"}},
		{"gated", func(r *results.Results, v []AnalysisValues) []AnalysisValues {
			ph := r.Analyses[0].PostHoc
			ph.Ran, ph.Why, ph.Pairs, ph.Letters = false, "not run: the omnibus test did not reject", nil, nil
			return v
		}, []string{"Not run: not run: the omnibus test did not reject"}, 2, []string{"Compact letter display"}},
		{"numbered letters, no adjustment", func(r *results.Results, v []AnalysisValues) []AnalysisValues {
			ph := r.Analyses[0].PostHoc
			ph.Adjust = "none"
			ph.Letters[0].Letters, ph.Letters[0].Display = []string{"a", "b1"}, "a.b1"
			return v
		}, []string{"not found to differ at α = 0.05 without adjustment", "a.b1", "names carry a number (a1, b1, …) and a group's names are joined with “.”"}, 4,
			[]string{"after adjustment", "do not differ"}},
		{"no values", func(r *results.Results, v []AnalysisValues) []AnalysisValues { return nil },
			[]string{"The observations were not given, so no dots are drawn."}, 4, []string{"Dots are the observations"}},
		{"hodges-lehmann intervals", func(r *results.Results, v []AnalysisValues) []AnalysisValues {
			// The first pair as if its groups held 3 values each (level not attainable), the
			// second with its index from the normal approximation, none tied.
			a := &r.Analyses[0]
			a.Groups[0].N, a.Groups[1].N = 3, 3
			pairs := a.PostHoc.Pairs
			widest := 0.9
			pairs[0].HodgesLehmann = results.HLShift{Shift: 1, Interval: results.Interval{Level: 0.95, Low: -6, High: 7},
				Coverage: &widest, IndexMethod: "exact", LevelAttainable: false}
			pairs[1].HodgesLehmann = results.HLShift{Shift: 1, Interval: results.Interval{Level: 0.95, Low: -2.5, High: 3},
				IndexMethod: "normal", LevelAttainable: true}
			for i := range pairs {
				pairs[i].HodgesLehmann.TiedValues = false
			}
			return nil
		}, []string{"widest [-6, 7], coverage 90% (95% not attainable)",
			"L1 vs L2: 95% not attainable with 3 and 3 values; widest interval, 90% coverage.",
			"95% [-2.5, 3], normal approximation", "its coverage is not computed"},
			4, []string{"Tied values", " *"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, vals := loadFixture(t, "dissolution")
			vals = tc.edit(res, vals)
			page := render(t, res, goldenMeta, vals)
			doc := parse(t, page)
			text := textOf(doc)
			for _, s := range tc.want {
				if !strings.Contains(text, s) {
					t.Errorf("text lacks %q", s)
				}
			}
			for _, s := range tc.absent {
				if strings.Contains(text, s) {
					t.Errorf("text has %q", s)
				}
			}
			if n := bytes.Count(page, []byte("<svg ")); n != tc.svgs {
				t.Errorf("%d plots, want %d", n, tc.svgs)
			}
		})
	}
}

func TestPColor(t *testing.T) {
	for _, tc := range []struct {
		p     float64
		shade float64
		color string
	}{
		{1, 0, "#fde725"}, {0.001, 1, "#440154"}, {1e-9, 1, "#440154"}, {0, 1, "#440154"},
		{math.Sqrt(0.1) * 0.1, 0.5, "#21918c"}, // 10^-1.5: the middle anchor
	} {
		if s := pShade(tc.p); math.Abs(s-tc.shade) > 1e-12 {
			t.Errorf("pShade(%v) = %v, want %v", tc.p, s, tc.shade)
		}
		if c := hexColor(pColor(tc.p)); c != tc.color {
			t.Errorf("pColor(%v) = %s, want %s", tc.p, c, tc.color)
		}
	}
	// Relative luminance (ITU-R BT.709 weights, common practice) falls as p falls.
	lum := func(p float64) float64 {
		c := pColor(p)
		return 0.2126*float64(c.R) + 0.7152*float64(c.G) + 0.0722*float64(c.B)
	}
	prev := math.Inf(1)
	for e := 0.0; e <= 3; e += 0.05 {
		l := lum(math.Pow(10, -e))
		if l > prev+1e-9 {
			t.Fatalf("luminance rises at p = 1e-%v", e)
		}
		prev = l
	}
}

func TestPointIndex(t *testing.T) {
	for _, tc := range []struct{ m, n int }{{1, 1}, {5, 5}, {400, 401}, {400, 10_000_000}} {
		last := -1
		for j := range tc.m {
			i := pointIndex(j, tc.m, tc.n)
			if i <= last || i >= tc.n {
				t.Fatalf("m=%d n=%d: index %d after %d", tc.m, tc.n, i, last)
			}
			last = i
		}
		if pointIndex(0, tc.m, tc.n) != 0 || (tc.m > 1 && last != tc.n-1) {
			t.Errorf("m=%d n=%d: extremes not kept", tc.m, tc.n)
		}
	}
}

// bigAnalysis is an invented analysis of three groups of n/3 observations each, with
// quartiles of the uniform values 0…n/3−1 (type 7); the results numbers are only for the
// plot and need not come from a run.
func bigAnalysis(n int) (*results.Results, []AnalysisValues) {
	m := n / 3
	res := &results.Results{Plan: results.Plan{ID: "big", Title: "invented large data", Alpha: 0.05, Seed: "1"}}
	a := results.Analysis{ID: "big", Test: "kruskal-wallis", Outcome: "y", N: 3 * m, Status: "not-computable", Reason: "rendering test only"}
	vals := AnalysisValues{ID: "big"}
	for g := range 3 {
		v := make([]float64, m)
		for i := range v {
			v[i] = float64(i + g)
		}
		q := func(p float64) float64 { return float64(g) + p*float64(m-1) }
		mr := float64(g*m) + float64(m+1)/2
		a.Groups = append(a.Groups, results.Group{Name: fmt.Sprint("g", g), N: m, Median: q(0.5), Q1: q(0.25), Q3: q(0.75), Min: q(0), Max: q(1), MeanRank: mr})
		vals.Groups = append(vals.Groups, v)
	}
	res.Analyses = []results.Analysis{a}
	return res, []AnalysisValues{vals}
}

// TestHTMLLargeGroupsCapped checks that a large group draws a bounded number of points.
func TestHTMLLargeGroupsCapped(t *testing.T) {
	res, vals := bigAnalysis(300_000)
	page := render(t, res, Meta{}, vals)
	if n := bytes.Count(page, []byte("<path")); n > 3*MaxPointsPerGroup+200 {
		t.Errorf("%d paths for 3 groups; points are not capped", n)
	}
	if !bytes.Contains(page, []byte("show 400 of them")) {
		t.Errorf("caption does not say that points were thinned")
	}
}

// BenchmarkHTML renders the report of an invented analysis of 10^7 observations
// (go test ./runner/report -run '^$' -bench HTML -benchtime=3x -benchmem).
func BenchmarkHTML(b *testing.B) {
	res, vals := bigAnalysis(10_000_000)
	var buf bytes.Buffer
	b.ResetTimer()
	for b.Loop() {
		buf.Reset()
		if err := HTML(&buf, res, Meta{}, vals); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(buf.Len()), "bytes/page")
}

func ExampleHTML() {
	// Invented numbers for one small analysis, as a run would put them in results.json.
	// Mean ranks of three of the ranks 1..9 lie in [2, 8]: two intervals are cut to it.
	iv := func(lo, hi float64, clipped bool) *results.RankInterval {
		return &results.RankInterval{Level: 0.95, Low: lo, High: hi, Clipped: clipped}
	}
	p, asym := 0.0286, 0.0498
	res := &results.Results{
		Plan: results.Plan{ID: "demo", Title: "Invented demo", Alpha: 0.05, Seed: "7"},
		Analyses: []results.Analysis{{
			ID: "a1", Test: "kruskal-wallis", Outcome: "score", Unit: "points", N: 9, Status: "ok",
			Groups: []results.Group{
				{Name: "x", N: 3, Median: 2, Q1: 1.5, Q3: 2.5, Min: 1, Max: 3, RankSum: 6, MeanRank: 2, MeanRankInterval: iv(2, 4.4, true)},
				{Name: "y", N: 3, Median: 5, Q1: 4.5, Q3: 5.5, Min: 4, Max: 6, RankSum: 15, MeanRank: 5, MeanRankInterval: iv(2.6, 7.4, false)},
				{Name: "z", N: 3, Median: 8, Q1: 7.5, Q3: 8.5, Min: 7, Max: 9, RankSum: 24, MeanRank: 8, MeanRankInterval: iv(5.6, 8, true)},
			},
			KruskalWallis: &results.KruskalWallis{H: 7.2, HUncorrected: 7.2, TieCorrection: 1, DF: 2},
			PValue:        &results.PValue{Requested: "exact", Method: "exact", Reason: "the plan asks for it", Value: &p, Log10: math.Log10(p)},
			AsymptoticP:   &results.Tail{Value: &asym, Log10: math.Log10(asym)},
			Decision:      &results.Decision{Alpha: 0.05, Reject: true, Rule: "own p-value: reject when p <= alpha"},
		}},
	}
	values := []AnalysisValues{{ID: "a1", Groups: [][]float64{{1, 2, 3}, {4, 5, 6}, {7, 8, 9}}}}
	var buf bytes.Buffer
	if err := HTML(&buf, res, Meta{Tool: "rankplan example"}, values); err != nil {
		fmt.Println(err)
		return
	}
	for _, line := range strings.Split(buf.String(), "\n") {
		if strings.Contains(line, `data-key="a1.h"`) {
			fmt.Println(strings.TrimSpace(line))
		}
	}
	fmt.Println(bytes.Count(buf.Bytes(), []byte("<svg ")), "plots")
	// Output:
	// <dt>H (tie-corrected)</dt><dd><span class="num" data-key="a1.h" data-value="7.2">7.2</span>, df = <span class="num" data-key="a1.df" data-value="2">2</span></dd>
	// 2 plots
}

// TestHTMLProvenanceAndLabels checks the header facts from Meta, the deviations list and
// the plots' axis texts (outcome with unit, "n = …" under each group).
func TestHTMLProvenanceAndLabels(t *testing.T) {
	res, vals := loadFixture(t, "dissolution")
	for _, tc := range []struct {
		name       string
		deviations []string
		want       []string
	}{
		{"no deviations", nil, []string{"Deviations from the locknone"}},
		{"deviations", []string{"alpha changed from 0.05 to 0.1", "analysis primary added"},
			[]string{"Deviations from the lockalpha changed from 0.05 to 0.1analysis primary added"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			meta := goldenMeta
			meta.Lock = "locked: lock sha256:abc matches"
			meta.Deviations = tc.deviations
			page := render(t, res, meta, vals)
			text := textOf(parse(t, page))
			want := append(tc.want, meta.PlanFile, meta.PlanSHA256, meta.PlanCanonicalSHA256, meta.DataFile,
				meta.DataSHA256, meta.Lock, "Seed 20261201", meta.RNG, "(record 4)")
			for _, s := range want {
				if !strings.Contains(text, s) {
					t.Errorf("page text lacks %q", s)
				}
			}
			if tc.deviations != nil && bytes.Count(page, []byte("<li>")) != len(tc.deviations) {
				t.Errorf("deviations are not one list item each")
			}
		})
	}
	box, _, err := boxPlotSVG(&res.Analyses[0], vals[0].Groups, spec.LinearScale)
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range []string{">minutes (min)</text>", ">n = 12</text>", ">n = 11</text>", ">L4</text>"} {
		if !bytes.Contains(box, []byte(s)) {
			t.Errorf("box plot lacks %q", s)
		}
	}
	// One jittered point per observation (47) in the box plot.
	if n := bytes.Count(box, []byte("<path")); n < 47 {
		t.Errorf("box plot has %d paths, fewer than the 47 observations", n)
	}
}

// TestHTMLSpread checks the diagnostics' spread line on the dissolution fixture, whose
// IQRs (Q3 − Q1 from results.json) are 3.25, 4.5, 3.5 and 1.875: the narrowest is L4's,
// the widest L2's, and 4.5 / 1.875 = 2.4.
func TestHTMLSpread(t *testing.T) {
	res, vals := loadFixture(t, "dissolution")
	page := string(render(t, res, Meta{}, vals))
	for _, want := range []string{
		"Spread: the IQR runs from 1.875 (L4) to 4.5 (L2), a ratio of 2.4.",
		`<td class="r">-0.461538</td>`,
	} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
}

// TestHTMLThinnedValues checks that a group given as a few evenly spaced order statistics
// (as the runner passes for large groups) is drawn: the page has its plots and dots.
func TestHTMLThinnedValues(t *testing.T) {
	res, vals := loadFixture(t, "dissolution")
	full := render(t, res, Meta{}, vals)
	g := vals[0].Groups[0]
	vals[0].Groups[0] = []float64{g[0], g[5], g[len(g)-1]}
	thinned := render(t, res, Meta{}, vals)
	if bytes.Equal(full, thinned) {
		t.Fatal("thinning a group did not change its dots")
	}
	if got, want := strings.Count(string(thinned), "<svg"), strings.Count(string(full), "<svg"); got != want {
		t.Errorf("%d plots with a thinned group, %d without", got, want)
	}
}

func TestUnitSuffix(t *testing.T) {
	for unit, want := range map[string]string{"": "", "min": " (min)", "points (0-10)": " [points (0-10)]"} {
		if got := unitSuffix(unit); got != want {
			t.Errorf("unitSuffix(%q) = %q, want %q", unit, got, want)
		}
	}
}

// TestHTMLLongPairsPrint checks the printed form of a long pairs table: with more than
// printPairsMax pairs the table is marked long, a note for paper says which pairs it lists
// and where the rest are, and exactly the pairs that neither differ nor are not computable
// are marked quiet (left off the paper); a short table prints whole.
func TestHTMLLongPairsPrint(t *testing.T) {
	for _, tc := range []struct {
		name         string
		groups       int
		differ, none int    // pairs made to differ, pairs made not computable
		note         string // "" : no note for paper
		long         bool
		quiet        int
	}{
		{"six groups print whole", 6, 2, 0, "", false, 0},
		{"seven groups", 7, 3, 1, "On paper this table lists only the pairs found to differ (3) and those not computable (1), of the 21 compared; every pair is in pairs.csv and in this table on screen.", true, 17},
		{"seven groups, one differs", 7, 1, 0, "On paper this table lists only the pairs found to differ (1), of the 21 compared; every pair is in pairs.csv and in this table on screen.", true, 20},
		{"seven groups none differ", 7, 0, 0, "On paper this table lists only the pairs found to differ, and none of the 21 compared was; every pair is in pairs.csv and in this table on screen.", true, 21},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res, _ := loadFixture(t, "dissolution")
			a := &res.Analyses[0]
			proto, pair := a.Groups[0], a.PostHoc.Pairs[0]
			a.Groups = a.Groups[:0]
			for i := range tc.groups {
				g := proto
				g.Name = fmt.Sprintf("G%d", i+1)
				a.Groups = append(a.Groups, g)
			}
			a.PostHoc.Pairs, a.PostHoc.Letters = nil, nil
			for i := range tc.groups {
				for j := i + 1; j < tc.groups; j++ {
					p := pair
					p.Groups = [2]string{a.Groups[i].Name, a.Groups[j].Name}
					n := len(a.PostHoc.Pairs)
					p.Reject = n < tc.differ
					if n >= tc.differ && n < tc.differ+tc.none {
						p.NotComputable, p.Statistic, p.P, p.PAdjusted = "every value is tied", nil, nil, nil
					}
					a.PostHoc.Pairs = append(a.PostHoc.Pairs, p)
				}
			}
			doc := parse(t, render(t, res, goldenMeta, nil))
			var note string
			var long bool
			quiet := 0
			walk(doc, func(n *html.Node) {
				class, _ := attr(n, "class")
				switch {
				case n.Data == "p" && class == "print-only":
					note = textOf(n)
				case n.Data == "table" && class == "long":
					long = true
				case n.Data == "tr" && class == "quiet":
					quiet++
				}
			})
			if note != tc.note || long != tc.long || quiet != tc.quiet {
				t.Errorf("note %q, long %v, %d quiet rows; want %q, %v, %d", note, long, quiet, tc.note, tc.long, tc.quiet)
			}
		})
	}
}
