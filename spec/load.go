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
	// Conversion errors and schema errors are reported together, in one pass.
	errs = append(errs, validateSchema(doc)...)
	if len(errs) > 0 {
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
	if errs := p.check(); len(errs) > 0 {
		return nil, errs.Err()
	}
	return p, nil
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

// check makes the checks of meaning that the schema cannot express.
func (p *Plan) check() ErrorList {
	var errs ErrorList
	add := func(path, format string, args ...any) { errs = append(errs, p.Errorf(path, format, args...)) }

	if !(p.Alpha > 0 && p.Alpha < 1) {
		add("alpha", "expected a value > 0 and < 1; found %v", p.Alpha)
	}
	if p.Data.Delimiter == "," && p.Data.Decimal == "," {
		add("data.decimal", `a decimal comma needs another delimiter; set data.delimiter to ";" or "tab"`)
	}
	for i, t := range p.Data.Missing.Tokens {
		if t != strings.TrimSpace(t) {
			add("data.missing.tokens."+strconv.Itoa(i), "tokens are compared after trimming spaces, so %q can never match; write %q", t, strings.TrimSpace(t))
		}
	}
	if p.Data.Group == p.Data.Outcome {
		add("data.outcome", "the outcome column must differ from the group column %q", p.Data.Group)
	}
	if len(p.Groups.Include) > 0 && len(p.Groups.Order) > 0 {
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
	for i, a := range p.Analyses {
		at := "analyses." + strconv.Itoa(i)
		if j, dup := ids[a.ID]; dup {
			add(at+".id", "duplicate analysis id %q; analyses[%d] has it already", a.ID, j)
		}
		ids[a.ID] = i
		if a.Outcome == p.Data.Group && p.Has(at+".outcome") {
			add(at+".outcome", "the outcome column must differ from the group column %q", p.Data.Group)
		}
		if a.Test != KruskalWallis {
			add(at+".test", "%q is %s; use %q", a.Test, notImplemented, KruskalWallis)
		}
		switch m := a.PValue.Method; m {
		case Permutation, Auto:
			if a.PValue.Resamples == 0 {
				add(at+".pvalue", "method %q needs resamples, the number of Monte Carlo resamples (e.g. 100000)", m)
			}
		default:
			if a.PValue.Resamples != 0 {
				add(at+".pvalue.resamples", "applies only to the methods permutation and auto, not %q", m)
			}
			if p.Has(at + ".pvalue.interval_level") {
				add(at+".pvalue.interval_level", "applies only to the methods permutation and auto, not %q: only a Monte Carlo p-value has an interval", m)
			}
		}
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
		ph := a.PostHoc
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
		if s := a.Subset; s != nil && s.Column == p.Data.Group {
			add(at+".subset.column", "the subset column must differ from the group column %q; choose groups with groups.include", p.Data.Group)
		}
	}
	if m := p.Multiplicity; m != nil {
		// The schema has refused duplicates already.
		for i, id := range m.Analyses {
			if _, ok := ids[id]; !ok {
				add("multiplicity.analyses."+strconv.Itoa(i), "no analysis has the id %q (ids: %s)", id, strings.Join(analysisIDs(p), ", "))
			}
		}
		if len(m.Analyses) < 2 {
			add("multiplicity", "a family needs at least two analyses; this plan's family has %d", len(m.Analyses))
		}
	}
	return errs
}

func analysisIDs(p *Plan) []string {
	out := make([]string, len(p.Analyses))
	for i, a := range p.Analyses {
		out[i] = strconv.Quote(a.ID)
	}
	return out
}
