package spec

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// Load reads and validates the plan file at path. Every problem found is reported at once
// as an [ErrorList], and so is a file that cannot be read (see [ReadFile]).
func Load(path string) (*Plan, error) {
	src, err := ReadFile(path)
	if err != nil {
		return nil, err
	}
	p, err := Parse(path, src)
	if err != nil {
		return nil, err
	}
	p.Dir = filepath.Dir(path)
	return p, nil
}

// Parse validates a plan held in memory; name is used in messages and as [Plan.File].
// Relative data paths resolve against the folder of name.
func Parse(name string, src []byte) (*Plan, error) {
	doc, errs := parseYAML(name, src)
	if doc == nil {
		return nil, errs.Err()
	}
	// Conversion errors, schema errors and the checks of meaning are reported together,
	// in one pass: the checks run on the parts of the plan that the others left whole.
	schemaErrs, failed := validateSchema(doc)
	errs = append(errs, schemaErrs...)
	if len(errs) > 0 {
		errs = append(errs, doc.checkRest(failed)...)
		return nil, errs.Err()
	}
	raw, err := json.Marshal(doc.value)
	if err != nil {
		return nil, ErrorList{{File: name, Line: 1, Column: 1, Path: "(top level)", Msg: err.Error()}}
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	p := &Plan{File: name, Dir: filepath.Dir(name), doc: doc}
	if err := dec.Decode(p); err != nil {
		// The schema admits only what Plan can hold, so this is a schema/type mismatch;
		// it is reported at the value when the decoder names it.
		var te *json.UnmarshalTypeError
		var tokens []string
		if errors.As(err, &te) && te.Field != "" {
			tokens = strings.Split(te.Field, ".")
		}
		return nil, ErrorList{doc.errAt(tokens, false, "plan does not fit the plan types: %v", err)}
	}
	p.applyDefaults()
	if errs := p.check(doubt{}); len(errs) > 0 {
		return nil, errs.Err()
	}
	return p, nil
}

// checkRest makes the checks of meaning on a plan that has conversion or schema errors,
// so that one round reports every problem. failed holds the key tokens of the values the
// schema refused. Every doubtful value (refused by the schema, not convertible, or under
// a key written twice) is removed, the rest is decoded and given its defaults, and each
// check runs only when none of the values it reads is doubtful: no check reports a
// consequence of an error reported already. When what remains still does not decode,
// no check runs.
func (d *document) checkRest(failed [][]string) ErrorList {
	paths := append([][]string(nil), failed...)
	for _, k := range d.bad {
		paths = append(paths, splitPathKey(k))
	}
	paths = append(paths, d.duplicateKeys()...)
	v := deepCopy(d.value)
	for _, tokens := range paths {
		v = without(v, tokens)
	}
	raw, err := json.Marshal(v)
	if err != nil {
		return nil
	}
	p := &Plan{File: d.file, Dir: filepath.Dir(d.file), doc: d}
	if json.Unmarshal(raw, p) != nil {
		return nil
	}
	p.applyDefaults()
	return p.check(newDoubt(paths))
}

// duplicateKeys returns the key tokens of every key written twice in one mapping. The
// first value is the one converted; a check of it could report what the second fixes.
// Keys that are not text are dropped in conversion and name no plan key, so no check
// reads them.
func (d *document) duplicateKeys() [][]string {
	var out [][]string
	for k, n := range d.nodes {
		if n.val.Kind != yaml.MappingNode {
			continue
		}
		seen := map[string]bool{}
		for i := 0; i+1 < len(n.val.Content); i += 2 {
			key := n.val.Content[i]
			if key.Kind != yaml.ScalarNode || key.ShortTag() != "!!str" {
				continue
			}
			if seen[key.Value] {
				out = append(out, append(splitPathKey(k), key.Value))
			}
			seen[key.Value] = true
		}
	}
	return out
}

// splitPathKey is the inverse of pathKey. The empty key stands for the whole document
// (a top-level key "" has the same pathKey, so it is taken for the whole: the safe side).
func splitPathKey(k string) []string {
	if k == "" {
		return nil
	}
	return strings.Split(k, "\x00")
}

// deepCopy copies a converted value (maps, lists and scalars).
func deepCopy(v any) any {
	switch c := v.(type) {
	case map[string]any:
		m := make(map[string]any, len(c))
		for k, x := range c {
			m[k] = deepCopy(x)
		}
		return m
	case []any:
		l := make([]any, len(c))
		for i, x := range c {
			l[i] = deepCopy(x)
		}
		return l
	}
	return v
}

// without removes the value at tokens from v, in place, and returns v: a mapping loses
// the key, a list item becomes null (so that later items keep their indexes and decode
// to zero values) and the whole value becomes nil when tokens is empty.
func without(v any, tokens []string) any {
	if len(tokens) == 0 {
		return nil
	}
	switch c := v.(type) {
	case map[string]any:
		if len(tokens) == 1 {
			delete(c, tokens[0])
		} else if x, ok := c[tokens[0]]; ok {
			c[tokens[0]] = without(x, tokens[1:])
		}
	case []any:
		if i, err := strconv.Atoi(tokens[0]); err == nil && i >= 0 && i < len(c) {
			c[i] = without(c[i], tokens[1:])
		}
	}
	return v
}

// doubt is the set of values that an error reported already is about, by key path. Its
// zero value holds none.
type doubt struct {
	at    map[string]bool // pathKeys of the doubtful values
	above map[string]bool // pathKeys of the mappings and lists that hold one
}

func newDoubt(paths [][]string) doubt {
	d := doubt{at: map[string]bool{}, above: map[string]bool{}}
	for _, tokens := range paths {
		d.at[pathKey(tokens)] = true
		for i := range tokens {
			d.above[pathKey(tokens[:i])] = true
		}
	}
	return d
}

// intact reports whether no value at or above any of the dotted key paths is doubtful:
// the value is there as written, though something inside it may not be.
func (d doubt) intact(keyPaths ...string) bool {
	for _, kp := range keyPaths {
		tokens := strings.Split(kp, ".")
		for i := 0; i <= len(tokens); i++ {
			if d.at[pathKey(tokens[:i])] {
				return false
			}
		}
	}
	return true
}

// clean reports whether the values at the dotted key paths are intact and nothing inside
// them is doubtful either.
func (d doubt) clean(keyPaths ...string) bool {
	for _, kp := range keyPaths {
		if d.above[pathKey(strings.Split(kp, "."))] {
			return false
		}
	}
	return d.intact(keyPaths...)
}

// Errorf makes a positioned error at the key written as a dotted path of keys and list
// indexes, e.g. "data.outcome" or "analyses.0.outcome". When that key is absent from the
// file (a default applies), the error points at the nearest key that is present.
func (p *Plan) Errorf(keyPath, format string, args ...any) *Error {
	var tokens []string
	if keyPath != "" {
		tokens = strings.Split(keyPath, ".")
	}
	if p.doc == nil {
		return &Error{File: p.File, Path: keyPath, Msg: fmt.Sprintf(format, args...)}
	}
	// A mapping or list is pointed at by its key, where the reader's eye finds it.
	atKey := false
	if n, ok := p.doc.nodes[pathKey(tokens)]; ok && n.key != nil && n.val.Kind != yaml.ScalarNode {
		atKey = true
	}
	return p.doc.errAt(tokens, atKey, format, args...)
}

// Has reports whether the plan file wrote the key at keyPath (see [Plan.Errorf]).
func (p *Plan) Has(keyPath string) bool {
	if p.doc == nil {
		return false
	}
	_, ok := p.doc.nodes[pathKey(strings.Split(keyPath, "."))]
	return ok
}

// DataPath returns the data file's path: data.file resolved against the plan's folder.
func (p *Plan) DataPath() string {
	if filepath.IsAbs(p.Data.File) {
		return p.Data.File
	}
	return filepath.Join(p.Dir, filepath.FromSlash(p.Data.File))
}

// notImplemented is the one wording for features that later releases add.
const notImplemented = "not implemented yet in this version of rankplan"

// check makes the checks of meaning that the schema cannot express. Each check runs only
// when the values it reads are not in dt (see [document.checkRest]); for a plan that
// passed the schema dt is empty.
func (p *Plan) check(dt doubt) ErrorList {
	var errs ErrorList
	add := func(path, format string, args ...any) { errs = append(errs, p.Errorf(path, format, args...)) }

	if dt.clean("alpha") && !(p.Alpha > 0 && p.Alpha < 1) {
		add("alpha", "expected a value > 0 and < 1; found %v", p.Alpha)
	}
	if dt.clean("data.delimiter", "data.decimal") && p.Data.Delimiter == "," && p.Data.Decimal == "," {
		add("data.decimal", `a decimal comma needs another delimiter; set data.delimiter to ";" or "tab"`)
	}
	for i, t := range p.Data.Missing.Tokens {
		at := "data.missing.tokens." + strconv.Itoa(i)
		if dt.clean(at) && t != strings.TrimSpace(t) {
			add(at, "tokens are compared after trimming spaces, so %q can never match; write %q", t, strings.TrimSpace(t))
		}
	}
	if dt.clean("data.group", "data.outcome") && p.Data.Group == p.Data.Outcome {
		add("data.outcome", "the outcome column must differ from the group column %q", p.Data.Group)
	}
	if dt.clean("groups.include", "groups.order") && len(p.Groups.Include) > 0 && len(p.Groups.Order) > 0 {
		in := make(map[string]bool, len(p.Groups.Include))
		for _, g := range p.Groups.Include {
			in[g] = true
		}
		same := len(p.Groups.Order) == len(p.Groups.Include)
		for _, g := range p.Groups.Order {
			same = same && in[g]
		}
		if !same {
			add("groups.order", "must list exactly the groups of groups.include, in the order wanted")
		}
	}

	ids := map[string]int{}
	idsClean := dt.intact("analyses")
	for i, a := range p.Analyses {
		at := "analyses." + strconv.Itoa(i)
		if !dt.clean(at + ".id") {
			idsClean = false
		} else {
			if j, dup := ids[a.ID]; dup {
				add(at+".id", "duplicate analysis id %q; analyses[%d] has it already", a.ID, j)
			}
			ids[a.ID] = i
		}
		if dt.clean(at+".outcome", "data.group") && a.Outcome == p.Data.Group && p.Has(at+".outcome") {
			add(at+".outcome", "the outcome column must differ from the group column %q", p.Data.Group)
		}
		if dt.clean(at+".test") && a.Test != KruskalWallis {
			add(at+".test", "%q is %s; use %q", a.Test, notImplemented, KruskalWallis)
		}
		if dt.clean(at + ".pvalue") {
			switch m := a.PValue.Method; m {
			case Permutation, Auto:
				if a.PValue.Resamples == 0 {
					add(at+".pvalue", "method %q needs resamples, the number of Monte Carlo resamples (e.g. 100000)", m)
				}
				if h := a.PValue.StopAtExceedances; a.PValue.Resamples > 0 && h > a.PValue.Resamples {
					add(at+".pvalue.stop_at_exceedances", "%d exceedances cannot be reached in %d resamples; use at most %d", h, a.PValue.Resamples, a.PValue.Resamples)
				}
				if m == Permutation && p.Has(at+".pvalue.asymptotic_when_large") {
					add(at+".pvalue.asymptotic_when_large", "applies only to the method auto, not %q, which always draws resamples", m)
				}
			default:
				if a.PValue.Resamples != 0 {
					add(at+".pvalue.resamples", "applies only to the methods permutation and auto, not %q", m)
				}
				if p.Has(at + ".pvalue.interval_level") {
					add(at+".pvalue.interval_level", "applies only to the methods permutation and auto, not %q: only a Monte Carlo p-value has an interval", m)
				}
				if p.Has(at + ".pvalue.stop_at_exceedances") {
					add(at+".pvalue.stop_at_exceedances", "applies only to the methods permutation and auto, not %q: only a Monte Carlo p-value draws resamples", m)
				}
				if p.Has(at + ".pvalue.asymptotic_when_large") {
					add(at+".pvalue.asymptotic_when_large", "applies only to the method auto, not %q", m)
				}
			}
		}
		if dt.clean(at + ".effect_size") {
			switch es := a.EffectSize; {
			case es.Resamples == 0 && p.Has(at+".effect_size.resamples"):
				add(at+".effect_size.resamples", "0 resamples make no interval; for the estimates alone set effect_size.interval: none and remove resamples")
			case es.Interval == BootstrapInterval:
				if es.Resamples == 0 {
					add(at+".effect_size", "interval %q needs resamples, the number of bootstrap resamples (e.g. 2000)", es.Interval)
				}
			default:
				if es.Resamples != 0 {
					which := fmt.Sprintf("%q", es.Interval)
					if !p.Has(at + ".effect_size.interval") {
						which += " (the default)"
					}
					add(at+".effect_size.resamples", "applies only to effect_size.interval \"bootstrap\", not %s, which draws no resamples; remove resamples, or set effect_size.interval: bootstrap to keep a percentile bootstrap", which)
				}
			}
		}
		if es := a.EffectSize; es.Scheme != "" && es.Interval != BootstrapInterval && dt.clean(at+".effect_size") {
			add(at+".effect_size.scheme", "applies only to effect_size.interval \"bootstrap\", not %q, which draws no resamples; remove scheme", es.Interval)
		}
		if dt.clean(at + ".posthoc") {
			checkPostHoc(a.PostHoc, at, add)
		}
		if s := a.Subset; s != nil && dt.clean(at+".subset.column", "data.group") && s.Column == p.Data.Group {
			add(at+".subset.column", "the subset column must differ from the group column %q; choose groups with groups.include", p.Data.Group)
		}
	}
	// A family whose rule is in doubt is not checked: it may be meant to go.
	if m := p.Multiplicity; m != nil && dt.clean("multiplicity.rule") {
		// The schema has refused duplicates already. Ids are looked up only when every
		// analysis id is as written.
		for i, id := range m.Analyses {
			at := "multiplicity.analyses." + strconv.Itoa(i)
			if _, ok := ids[id]; !ok && idsClean && dt.clean(at) {
				add(at, "no analysis has the id %q (ids: %s)", id, strings.Join(analysisIDs(p), ", "))
			}
		}
		// The family is multiplicity.analyses, or by default every analysis.
		family := "analyses"
		if p.Has("multiplicity.analyses") {
			family = "multiplicity.analyses"
		}
		if dt.intact(family) && len(m.Analyses) < 2 {
			add("multiplicity", "a family needs at least two analyses; this plan's family has %d", len(m.Analyses))
		}
	}
	return errs
}

// checkPostHoc checks the post-hoc plan of the analysis at key path at.
func checkPostHoc(ph PostHocPlan, at string, add func(path, format string, args ...any)) {
	if ph.Method == NoPostHoc {
		if ph.Adjust != NoAdjustment {
			add(at+".posthoc.adjust", "an adjustment needs a post-hoc method; set posthoc.method")
		}
		if ph.Control != "" {
			add(at+".posthoc.control", "a control group needs a post-hoc method; set posthoc.method")
		}
		if ph.When != "" {
			add(at+".posthoc.when", "applies only with a post-hoc method; set posthoc.method")
		}
	} else if (ph.Method == DSCF || ph.Method == Nemenyi) && ph.Adjust != NoAdjustment {
		add(at+".posthoc.adjust", "%q is simultaneous by construction (its p-values come from the studentized range over all k groups), so it takes no adjustment; remove posthoc.adjust or set it to none", ph.Method)
	}
}

func analysisIDs(p *Plan) []string {
	out := make([]string, len(p.Analyses))
	for i, a := range p.Analyses {
		out[i] = strconv.Quote(a.ID)
	}
	return out
}
