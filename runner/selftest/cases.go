package selftest

import (
	"bytes"
	"embed"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"

	"rankplan/runner/audit"
)

// files holds the reference cases: cases/cases.json, the plans that some cases run
// (cases/plans/*.yaml) and the NIST StRD data file they read (cases/SmLs01.dat).
//
//go:embed cases/cases.json cases/plans/*.yaml cases/SmLs01.dat
var files embed.FS

// CasesFile is the embedded file of reference cases.
const CasesFile = "cases/cases.json"

// CasesFormat names the layout of the case file.
const CasesFormat = "rankplan-selftest-cases/1"

// CaseSet is the case file: named data sets and the cases that use them.
type CaseSet struct {
	Format   string              `json:"format"`
	Datasets map[string]*Dataset `json:"datasets"`
	Cases    []Case              `json:"cases"`
}

// Dataset is reference data, given in exactly one of three ways: inline groups, an
// embedded NIST StRD one-way ANOVA file, or the NIST SmLs01–03 design rebuilt at a scale.
type Dataset struct {
	Source string `json:"source"` // where the data come from (publication, standard or "invented")
	Origin string `json:"origin"` // the committed test or generator that uses the same data
	// File and Pointer locate the same groups in a committed reference file (an RFC 6901
	// JSON Pointer), so that a test can check this copy against it.
	File    string  `json:"file,omitempty"`
	Pointer string  `json:"pointer,omitempty"`
	Groups  []Group `json:"groups,omitempty"`
	NIST    string  `json:"nist,omitempty"` // an embedded file under cases/
	// SmLsScale rebuilds the NIST SmLs design: 9 treatments; treatment 1 is {1.4, 1.3 ×s,
	// 1.5 ×s}, even treatments {1.3, 1.2 ×s, 1.4 ×s}, the other odd ones {1.5, 1.4 ×s, 1.6 ×s}
	// (s = 10, 100, 1000 for SmLs01, 02, 03; the digits past the leading 1000000000000.
	// of SmLs04-09 are the same design).
	SmLsScale int `json:"smls_scale,omitempty"`
}

// Group is one named group of observations.
type Group struct {
	Name   string    `json:"name"`
	Values []float64 `json:"values"`
}

// Case is one reference case: a quantity rankplan computes, the value a source outside
// rankplan gives for it, and how close rankplan must come.
type Case struct {
	ID        string    `json:"id"`
	Checks    string    `json:"checks"`  // what is checked, in words
	Compute   string    `json:"compute"` // the computation: a key of computations
	Input     Input     `json:"input"`
	Expected  Value     `json:"expected"`
	Tolerance Tolerance `json:"tolerance"`
	Source    Source    `json:"source"`
}

// Input holds the arguments of a computation; each computation names the fields it reads
// (see computations), and the others stay empty.
type Input struct {
	Dataset    string    `json:"dataset,omitempty"`
	Pair       []int     `json:"pair,omitempty"`     // two group indexes of the data set: first, second
	Values     []float64 `json:"values,omitempty"`   // one sample
	PValues    []float64 `json:"p_values,omitempty"` // p-values to adjust
	Method     string    `json:"method,omitempty"`   // an adjustment method
	At         *float64  `json:"at,omitempty"`       // the point of a tail probability
	NC         *float64  `json:"noncentrality,omitempty"`
	Sizes      []int     `json:"sizes,omitempty"` // two sample sizes m, n (untied data made from them)
	Prob       *float64  `json:"probability,omitempty"`
	DF         *Number   `json:"df,omitempty"` // degrees of freedom; "inf" for infinity
	K          int       `json:"k,omitempty"`
	A          *float64  `json:"a,omitempty"` // Beta shape parameters
	B          *float64  `json:"b,omitempty"`
	Level      float64   `json:"level,omitempty"`
	Seed       *uint64   `json:"seed,omitempty"`
	AnalysisID string    `json:"analysis_id,omitempty"`
	Purpose    string    `json:"purpose,omitempty"`
	Block      *uint64   `json:"block,omitempty"`
	Resamples  int64     `json:"resamples,omitempty"`
	Key        string    `json:"key,omitempty"`    // a 32-byte generator seed, as text
	Count      int       `json:"count,omitempty"`  // how many outputs
	Differ     [][2]int  `json:"differ,omitempty"` // pairs of groups that differ (letters)
	Plan       string    `json:"plan,omitempty"`   // a plan of cases/plans, without .yaml
	Fields     []string  `json:"fields,omitempty"` // RFC 6901 pointers into its results.json
}

// Tolerance is how far the obtained value may be from the expected one: |obtained −
// expected| ≤ Abs, or ≤ Rel·|expected|; exact equality when both are 0 (and always for
// text). Why justifies it: the precision the source prints, or the accuracy the project's
// tests hold the computation to against that source.
type Tolerance struct {
	Abs float64 `json:"abs,omitempty"`
	Rel float64 `json:"rel,omitempty"`
	Why string  `json:"why"`
}

// Source says where a case's expected value comes from.
type Source struct {
	Reference string `json:"reference"` // the publication, standard, or library and version
	Origin    string `json:"origin"`    // the committed test or generator whose check this is: path, then the test's name
	// File and Pointers locate the expected value in a committed reference file, written by
	// its generator: one pointer to a value or an array, or one pointer per element.
	File     string   `json:"file,omitempty"`
	Pointers []string `json:"pointers,omitempty"`
	// InputPointer locates the case's p_values or values in File (an array), or an object
	// of File whose members x, df, nc, level, m and n hold the case's at, df,
	// noncentrality, level and sizes.
	InputPointer string `json:"input_pointer,omitempty"`
}

// Value is an expected or obtained value: a number, a list of numbers, or text (exact
// counts above 2^53 and hexadecimal generator outputs are text). In JSON it is a number,
// an array of numbers or a string.
type Value struct {
	Number  *float64
	Numbers []float64
	Text    *string
}

// NumberValue, NumbersValue and TextValue make a Value.
func NumberValue(x float64) Value    { return Value{Number: &x} }
func NumbersValue(x []float64) Value { return Value{Numbers: x} }
func TextValue(s string) Value       { return Value{Text: &s} }

func (v Value) isZero() bool   { return v.Number == nil && v.Numbers == nil && v.Text == nil }
func (v Value) String() string { return formatValue(v, 0) }

// kind names what v holds: number, numbers, text or none.
func (v Value) kind() string {
	switch {
	case v.Number != nil:
		return "number"
	case v.Numbers != nil:
		return "numbers"
	case v.Text != nil:
		return "text"
	}
	return "none"
}

// finite reports whether every number of v is finite.
func (v Value) finite() bool {
	if v.Number != nil && (math.IsNaN(*v.Number) || math.IsInf(*v.Number, 0)) {
		return false
	}
	for _, x := range v.Numbers {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// MarshalJSON writes the number, the array or the string.
func (v Value) MarshalJSON() ([]byte, error) {
	switch {
	case v.Number != nil:
		return json.Marshal(*v.Number)
	case v.Numbers != nil:
		return json.Marshal(v.Numbers)
	case v.Text != nil:
		return json.Marshal(*v.Text)
	}
	return nil, errors.New("selftest: empty value")
}

// UnmarshalJSON reads a number, an array of numbers or a string.
func (v *Value) UnmarshalJSON(b []byte) error {
	*v = Value{}
	b = bytes.TrimSpace(b)
	switch {
	case string(b) == "null":
		return errors.New("a value must be a number, a list of numbers or a string, not null")
	case len(b) > 0 && b[0] == '"':
		var s string
		if err := json.Unmarshal(b, &s); err != nil {
			return err
		}
		v.Text = &s
	case len(b) > 0 && b[0] == '[':
		var xs []float64
		if err := json.Unmarshal(b, &xs); err != nil {
			return err
		}
		if len(xs) == 0 {
			return errors.New("an empty list of numbers")
		}
		v.Numbers = xs
	default:
		var x float64
		if err := json.Unmarshal(b, &x); err != nil {
			return fmt.Errorf("a value must be a number, a list of numbers or a string: %w", err)
		}
		v.Number = &x
	}
	return nil
}

// Number is a float that JSON may also spell "inf" (degrees of freedom).
type Number float64

// UnmarshalJSON reads a number or the string "inf".
func (n *Number) UnmarshalJSON(b []byte) error {
	if string(b) == `"inf"` {
		*n = Number(math.Inf(1))
		return nil
	}
	var x float64
	if err := json.Unmarshal(b, &x); err != nil {
		return fmt.Errorf("expected a number or \"inf\": %w", err)
	}
	*n = Number(x)
	return nil
}

// MarshalJSON writes infinity as "inf".
func (n Number) MarshalJSON() ([]byte, error) {
	if math.IsInf(float64(n), 1) {
		return []byte(`"inf"`), nil
	}
	return json.Marshal(float64(n))
}

var caseID = regexp.MustCompile(`^[a-z0-9]+(-[a-z0-9.]+)*$`)

// Builtin returns the built-in reference cases and the SHA-256 of the case file.
func Builtin() (*CaseSet, string, error) {
	b, err := files.ReadFile(CasesFile)
	if err != nil {
		return nil, "", fmt.Errorf("selftest: %w", err)
	}
	set, err := ParseCases(b)
	if err != nil {
		return nil, "", fmt.Errorf("selftest: %s: %w", CasesFile, err)
	}
	return set, audit.Digest(b), nil
}

// ParseCases reads a case file strictly (no unknown fields) and checks each case: a
// unique identifier, a known computation, an expected value, a tolerance with its reason
// and no negative bound, and a source with a reference and an origin.
func ParseCases(b []byte) (*CaseSet, error) {
	var set CaseSet
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&set); err != nil {
		return nil, err
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return nil, errors.New("data after the case set")
	}
	if set.Format != CasesFormat {
		return nil, fmt.Errorf("format %q, want %q", set.Format, CasesFormat)
	}
	for name, d := range set.Datasets {
		if err := checkDataset(name, d); err != nil {
			return nil, err
		}
	}
	seen := map[string]bool{}
	for i := range set.Cases {
		if err := checkCase(&set, &set.Cases[i], seen); err != nil {
			return nil, fmt.Errorf("case %d (%s): %w", i+1, set.Cases[i].ID, err)
		}
	}
	return &set, nil
}

func checkDataset(name string, d *Dataset) error {
	if d == nil {
		return fmt.Errorf("data set %q is empty", name)
	}
	ways := 0
	for _, given := range []bool{len(d.Groups) > 0, d.NIST != "", d.SmLsScale > 0} {
		if given {
			ways++
		}
	}
	switch {
	case ways != 1:
		return fmt.Errorf("data set %q: give exactly one of groups, nist, smls_scale", name)
	case d.Source == "" || d.Origin == "":
		return fmt.Errorf("data set %q: source and origin are required", name)
	case len(d.Groups) == 1:
		return fmt.Errorf("data set %q: at least two groups", name)
	}
	return nil
}

func checkCase(set *CaseSet, c *Case, seen map[string]bool) error {
	switch {
	case !caseID.MatchString(c.ID):
		return errors.New("the id must be lowercase words joined by hyphens")
	case seen[c.ID]:
		return errors.New("the id is used twice")
	case c.Checks == "":
		return errors.New("checks is required")
	case computations[c.Compute] == nil:
		return fmt.Errorf("unknown computation %q", c.Compute)
	case c.Expected.isZero():
		return errors.New("no expected value")
	case !c.Expected.finite():
		return errors.New("the expected value is not finite")
	case !(c.Tolerance.Abs >= 0 && c.Tolerance.Rel >= 0) || math.IsInf(c.Tolerance.Abs, 0) || math.IsInf(c.Tolerance.Rel, 0):
		return errors.New("a tolerance must be finite and not negative")
	case c.Tolerance.Abs > 0 && c.Tolerance.Rel > 0:
		return errors.New("give an absolute or a relative tolerance, not both")
	case c.Tolerance.Why == "":
		return errors.New("the tolerance needs its reason (why)")
	case c.Source.Reference == "" || c.Source.Origin == "":
		return errors.New("source.reference and source.origin are required")
	case c.Input.Dataset != "" && set.Datasets[c.Input.Dataset] == nil:
		return fmt.Errorf("no data set %q", c.Input.Dataset)
	}
	seen[c.ID] = true
	return nil
}

// formatValue writes v for people with every digit (strconv 'g', −1); with most > 0 a
// longer list shows its first most−1 elements and its last.
func formatValue(v Value, most int) string {
	switch {
	case v.Number != nil:
		return num(*v.Number)
	case v.Text != nil:
		return *v.Text
	case v.Numbers != nil:
		var b bytes.Buffer
		b.WriteByte('[')
		n := len(v.Numbers)
		for i, x := range v.Numbers {
			if most > 0 && n > most && i >= most-1 && i < n-1 {
				if i == most-1 {
					b.WriteString(" …")
				}
				continue
			}
			if i > 0 {
				b.WriteByte(' ')
			}
			b.WriteString(num(x))
		}
		b.WriteByte(']')
		if most > 0 && n > most {
			fmt.Fprintf(&b, " (%d values)", n)
		}
		return b.String()
	}
	return "(none)"
}

func num(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
