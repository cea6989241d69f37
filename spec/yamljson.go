package spec

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"net/url"
	"regexp"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// node is where one value of the plan came from.
type node struct {
	key *yaml.Node // the mapping key, nil for list items and the document
	val *yaml.Node
}

// document is a plan converted from YAML: a JSON-compatible value (map[string]any, []any,
// string, json.Number, bool or nil) and the YAML node of every value, by key path.
type document struct {
	file  string
	value any
	nodes map[string]node // keyed by pathKey(tokens)
	bad   []string        // pathKeys of values that could not be converted
}

func pathKey(tokens []string) string { return strings.Join(tokens, "\x00") }

// displayPath writes key tokens as a dotted path: data.missing.tokens, analyses[0].id.
func displayPath(tokens []string, isIndex func(prefix []string) bool) string {
	if len(tokens) == 0 {
		return "(top level)"
	}
	var b strings.Builder
	for i, t := range tokens {
		switch {
		case isIndex(tokens[:i]):
			b.WriteString("[" + t + "]")
		case plainKey.MatchString(t):
			if i > 0 {
				b.WriteByte('.')
			}
			b.WriteString(t)
		default:
			b.WriteString("[" + strconv.Quote(t) + "]")
		}
	}
	return b.String()
}

var plainKey = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_-]*$`)

func (d *document) path(tokens []string) string {
	return displayPath(tokens, func(prefix []string) bool {
		n, ok := d.nodes[pathKey(prefix)]
		return ok && n.val.Kind == yaml.SequenceNode
	})
}

// errAt makes an error at the value found at tokens (or at its key, when atKey is set and
// the value has one). Missing paths fall back to the nearest ancestor that exists.
func (d *document) errAt(tokens []string, atKey bool, format string, args ...any) *Error {
	e := &Error{File: d.file, Path: d.path(tokens), Msg: fmt.Sprintf(format, args...)}
	for i := len(tokens); i >= 0; i-- {
		n, ok := d.nodes[pathKey(tokens[:i])]
		if !ok {
			continue
		}
		at := n.val
		if atKey && n.key != nil && i == len(tokens) {
			at = n.key
		}
		e.Line, e.Column = at.Line, at.Column
		break
	}
	return e
}

// parseYAML reads exactly one YAML document and converts it. Conversion problems are all
// reported; a syntax error stops at once (the parser cannot go on past it).
func parseYAML(file string, src []byte) (doc *document, err ErrorList) {
	defer func() {
		// yaml.v3 has panicked on malformed input in the past; never let that reach a user.
		if r := recover(); r != nil {
			doc, err = nil, ErrorList{{File: file, Line: 1, Column: 1, Path: "(top level)",
				Msg: fmt.Sprintf("the YAML parser failed on this file: %v", r)}}
		}
	}()
	if len(src) > MaxPlanBytes {
		return nil, ErrorList{sizeError(file, src, int64(len(src)))}
	}
	if e := checkText(file, src); e != nil {
		return nil, ErrorList{e}
	}
	dec := yaml.NewDecoder(bytes.NewReader(src))
	var root yaml.Node
	if err := dec.Decode(&root); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, ErrorList{{File: file, Line: 1, Column: 1, Path: "(top level)",
				Msg: "the plan file is empty; expected a YAML mapping of plan keys"}}
		}
		return nil, ErrorList{syntaxError(file, src, err)}
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		return nil, ErrorList{{File: file, Line: extra.Line, Column: extra.Column, Path: "(top level)",
			Msg: "a second YAML document; a plan file holds exactly one"}}
	} else if !errors.Is(err, io.EOF) {
		return nil, ErrorList{syntaxError(file, src, err)}
	}
	doc = &document{file: file, nodes: map[string]node{}}
	var errs ErrorList
	top := &root
	if top.Kind == yaml.DocumentNode && len(top.Content) == 1 {
		top = top.Content[0]
	}
	// Conversion keeps every value's key path, which costs the square of the depth:
	// refuse deep nesting before converting anything.
	if e := depthError(file, top, 1, nil, nil); e != nil {
		return nil, ErrorList{e}
	}
	doc.value = doc.convert(top, nil, nil, &errs)
	doc.checkSeed(&errs)
	return doc, errs
}

// underBad reports whether tokens name a value that failed conversion, or lies inside one;
// schema messages about such values would only repeat the conversion error.
func (d *document) underBad(tokens []string) bool {
	for _, b := range d.bad {
		for i := 0; i <= len(tokens); i++ {
			if pathKey(tokens[:i]) == b {
				return true
			}
		}
	}
	return false
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// syntaxError turns a yaml.v3 syntax error into a positioned Error. yaml.v3 reports only a
// line, so the column is that of the line's first non-blank character. For errors of its
// parser stage (all worded "did not find expected …") yaml.v3 v3.0.1 prints the zero-based
// line of the offending token, unlike its scanner errors; TestSyntaxErrorLines pins this.
func syntaxError(file string, src []byte, err error) *Error {
	e := &Error{File: file, Line: 1, Column: 1, Path: "(syntax)",
		Msg: "not a valid YAML plan: " + strings.TrimPrefix(err.Error(), "yaml: ")}
	if m := yamlLine.FindStringSubmatch(err.Error()); m != nil {
		e.Line, _ = strconv.Atoi(m[1])
		e.Msg = "not a valid YAML plan: " + m[2]
		if strings.HasPrefix(m[2], "exceeded max depth") {
			e.Msg = depthMsg
		}
		lines := strings.Split(string(src), "\n")
		if strings.HasPrefix(m[2], "did not find expected") && e.Line < len(lines) {
			e.Line++
		}
		if e.Line >= 1 && e.Line <= len(lines) {
			l := lines[e.Line-1]
			e.Column = len(l) - len(strings.TrimLeft(l, " \t")) + 1
		}
	}
	return e
}

// kindName describes what a YAML node holds, for messages.
func kindName(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.AliasNode:
		return "an alias"
	}
	switch n.ShortTag() {
	case "!!str":
		return "text"
	case "!!int":
		return "an integer"
	case "!!float":
		return "a number"
	case "!!bool":
		return "true or false"
	case "!!null":
		return "an empty value"
	case "!!timestamp":
		return "an unquoted date"
	}
	return "a value tagged " + n.Tag
}

func (d *document) convert(n *yaml.Node, key *yaml.Node, tokens []string, errs *ErrorList) any {
	d.nodes[pathKey(tokens)] = node{key: key, val: n}
	fail := func(format string, args ...any) any {
		d.bad = append(d.bad, pathKey(tokens))
		*errs = append(*errs, &Error{File: d.file, Line: n.Line, Column: n.Column,
			Path: d.path(tokens), Msg: fmt.Sprintf(format, args...)})
		return nil
	}
	switch n.Kind {
	case yaml.AliasNode:
		return fail("anchors and aliases (*%s) are not supported in plans; write the value out", n.Value)
	case yaml.MappingNode:
		m := make(map[string]any, len(n.Content)/2)
		seen := make(map[string]*yaml.Node, len(n.Content)/2)
		for i := 0; i+1 < len(n.Content); i += 2 {
			k, v := n.Content[i], n.Content[i+1]
			if k.Kind != yaml.ScalarNode || k.ShortTag() != "!!str" {
				what := kindName(k)
				if k.ShortTag() == "!!merge" {
					what = "a merge key (<<)"
				}
				*errs = append(*errs, &Error{File: d.file, Line: k.Line, Column: k.Column,
					Path: d.path(tokens), Msg: fmt.Sprintf("keys must be text; found %s %q (quote it if it is meant as a key)", what, k.Value)})
				continue
			}
			sub := append(append([]string(nil), tokens...), k.Value)
			if first, dup := seen[k.Value]; dup {
				*errs = append(*errs, &Error{File: d.file, Line: k.Line, Column: k.Column,
					Path: d.path(sub), Msg: fmt.Sprintf("duplicate key; %q is already set at line %d", k.Value, first.Line)})
				continue
			}
			seen[k.Value] = k
			m[k.Value] = d.convert(v, k, sub, errs)
		}
		return m
	case yaml.SequenceNode:
		s := make([]any, len(n.Content))
		for i, item := range n.Content {
			s[i] = d.convert(item, nil, append(append([]string(nil), tokens...), strconv.Itoa(i)), errs)
		}
		return s
	case yaml.ScalarNode:
		switch n.ShortTag() {
		case "!!str":
			return n.Value
		case "!!bool":
			var b bool
			if err := n.Decode(&b); err != nil {
				return fail("cannot read %q as true or false", n.Value)
			}
			return b
		case "!!null":
			return nil
		case "!!int":
			var i int64
			if err := n.Decode(&i); err == nil {
				return json.Number(strconv.FormatInt(i, 10))
			}
			var u uint64
			if err := n.Decode(&u); err == nil {
				return json.Number(strconv.FormatUint(u, 10))
			}
			return fail("the integer %s is out of range", n.Value)
		case "!!float":
			if integerText.MatchString(n.Value) {
				// An integer too large for 64 bits, which yaml.v3 resolves as a float:
				// keep its digits, so that messages show them and range checks see them.
				return json.Number(normalInteger(n.Value))
			}
			var f float64
			if err := n.Decode(&f); err != nil {
				return fail("cannot read %q as a number", n.Value)
			}
			if math.IsNaN(f) || math.IsInf(f, 0) {
				return fail("%s is not a finite number; plans hold finite numbers only", n.Value)
			}
			return json.Number(strconv.FormatFloat(f, 'g', -1, 64))
		case "!!timestamp":
			return fail("an unquoted date or time (%s); put it in quotes if it is meant as text", n.Value)
		}
		return fail("the YAML tag %s is not supported in plans", n.Tag)
	}
	return fail("unexpected YAML node")
}

var integerText = regexp.MustCompile(`^[-+]?[0-9]+$`)

// normalInteger writes a decimal integer as a JSON number: no plus sign, no leading zeros.
func normalInteger(s string) string {
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimLeft(strings.TrimLeft(s, "+-"), "0")
	if s == "" {
		return "0"
	}
	if neg {
		return "-" + s
	}
	return s
}

// checkSeed refuses a seed that is not an integer from 0 to 2^64 - 1, written as a number
// or as digits in quotes, with one wording for both, before the schema and the typed
// decoding see it.
func (d *document) checkSeed(errs *ErrorList) {
	top, _ := d.value.(map[string]any)
	var text, found string
	switch v := top["seed"].(type) {
	case json.Number:
		text, found = string(v), string(v)
	case string:
		text, found = v, strconv.Quote(v)
	default:
		return // absent, or of a type the schema describes
	}
	if _, err := strconv.ParseUint(text, 10, 64); err == nil {
		return
	}
	tokens := []string{"seed"}
	d.bad = append(d.bad, pathKey(tokens))
	*errs = append(*errs, d.errAt(tokens, false, "expected an integer from 0 to %d (64 bits), as a number or as digits in quotes; found %s", uint64(math.MaxUint64), found))
}

// lookup finds the value and tokens for a JSON Schema instance location, whose tokens are
// escaped both as JSON Pointer (~0, ~1) and with url.PathEscape (jsonschema v5).
func (d *document) lookup(pointer string) ([]string, any) {
	var tokens []string
	if pointer != "" {
		for _, t := range strings.Split(strings.TrimPrefix(pointer, "/"), "/") {
			if u, err := url.PathUnescape(t); err == nil {
				t = u
			}
			t = strings.ReplaceAll(strings.ReplaceAll(t, "~1", "/"), "~0", "~")
			tokens = append(tokens, t)
		}
	}
	return tokens, walk(d.value, tokens)
}

// walk follows unescaped key tokens through a JSON-compatible value; nil when a token
// does not lead anywhere.
func walk(v any, tokens []string) any {
	for _, t := range tokens {
		switch c := v.(type) {
		case map[string]any:
			v = c[t]
		case []any:
			i, err := strconv.Atoi(t)
			if err != nil || i < 0 || i >= len(c) {
				return nil
			}
			v = c[i]
		default:
			return nil
		}
	}
	return v
}
