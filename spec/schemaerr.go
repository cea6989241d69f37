package spec

import (
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"github.com/santhosh-tekuri/jsonschema/v5"
	"gopkg.in/yaml.v3"

	"rankplan/schemas"
)

// validateSchema checks the converted plan against the embedded plan schema and turns
// every leaf failure into a positioned Error worded by this package. It also returns the
// key tokens of every value that failed (for a missing required key, the key's own
// tokens), whether or not its error is shown; nil tokens stand for the whole plan.
func validateSchema(d *document) (ErrorList, [][]string) {
	whole := [][]string{nil}
	schema, tree, err := schemas.Plan()
	if err != nil {
		return ErrorList{{File: d.file, Path: "(schema)", Msg: err.Error()}}, whole
	}
	err = schema.Validate(d.value)
	if err == nil {
		return nil, nil
	}
	var ve *jsonschema.ValidationError
	if !errors.As(err, &ve) {
		return ErrorList{{File: d.file, Line: 1, Column: 1, Path: "(top level)", Msg: err.Error()}}, whole
	}
	var errs ErrorList
	var failed [][]string
	var walk func(v *jsonschema.ValidationError)
	walk = func(v *jsonschema.ValidationError) {
		if len(v.Causes) > 0 {
			for _, c := range v.Causes {
				walk(c)
			}
			return
		}
		for _, e := range describe(d, tree, v) {
			failed = append(failed, e.tokens)
			if !d.underBad(e.tokens) {
				errs = append(errs, e.Error)
			}
		}
	}
	walk(ve)
	return errs, failed
}

// schemaAt returns the schema object that holds the keyword at an absolute keyword
// location such as https://…/plan-v1.json#/$defs/data/required, and the keyword.
func schemaAt(tree any, absolute string) (map[string]any, string) {
	_, frag, _ := strings.Cut(absolute, "#")
	tokens := strings.Split(strings.TrimPrefix(frag, "/"), "/")
	if len(tokens) == 0 {
		return nil, ""
	}
	keyword := tokens[len(tokens)-1]
	path := make([]string, len(tokens)-1)
	for i, t := range tokens[:len(tokens)-1] {
		path[i] = strings.ReplaceAll(strings.ReplaceAll(t, "~1", "/"), "~0", "~")
	}
	m, _ := walk(tree, path).(map[string]any)
	return m, keyword
}

var typeWords = map[string]string{
	"string": "text", "integer": "an integer", "number": "a number", "object": "a mapping",
	"array": "a list", "boolean": "true or false", "null": "an empty value",
}

// valueName describes a converted value for messages.
func valueName(v any) string {
	switch x := v.(type) {
	case nil:
		return "an empty value"
	case string:
		return fmt.Sprintf("the text %q", x)
	case bool:
		return strconv.FormatBool(x)
	case json.Number:
		return string(x)
	case map[string]any:
		return "a mapping"
	case []any:
		return "a list"
	}
	return fmt.Sprint(v)
}

func quoteAll(vs []any) string {
	parts := make([]string, len(vs))
	for i, v := range vs {
		b, _ := json.Marshal(v)
		parts[i] = string(b)
	}
	return strings.Join(parts, ", ")
}

// located is an error with the key tokens of the value it is about (which may be absent:
// a missing required key).
type located struct {
	tokens []string
	*Error
}

func describe(d *document, tree any, v *jsonschema.ValidationError) []located {
	tokens, inst := d.lookup(v.InstanceLocation)
	s, keyword := schemaAt(tree, v.AbsoluteKeywordLocation)
	at := func(format string, args ...any) []located {
		return []located{{tokens, d.errAt(tokens, false, format, args...)}}
	}
	if s == nil {
		return at("%s", v.Message)
	}
	switch keyword {
	case "required":
		obj, _ := inst.(map[string]any)
		var out []located
		for _, r := range s["required"].([]any) {
			if _, ok := obj[r.(string)]; !ok {
				// The error is shown at the mapping; it is about the missing key.
				sub := append(append([]string(nil), tokens...), r.(string))
				out = append(out, located{sub, d.errAt(tokens, true, "missing required key %q", r)})
			}
		}
		return out
	case "additionalProperties":
		obj, _ := inst.(map[string]any)
		props, _ := s["properties"].(map[string]any)
		allowed := make([]string, 0, len(props))
		for k := range props {
			allowed = append(allowed, k)
		}
		slices.Sort(allowed)
		var out []located
		for k := range obj {
			if _, ok := props[k]; !ok {
				sub := append(append([]string(nil), tokens...), k)
				out = append(out, located{sub, d.errAt(sub, true, "unknown key; expected one of: %s", strings.Join(allowed, ", "))})
			}
		}
		return out
	case "enum":
		enum := s["enum"].([]any)
		if text, ok := inst.(string); ok {
			if name, ok := RenamedAdjustment(text); ok && slices.Contains(enum, any(string(name))) {
				return at("%q is no longer a method name; write %s", text, name)
			}
		}
		return at("expected one of %s; found %s", quoteAll(enum), valueName(inst))
	case "const":
		return at("expected %s; found %s", quoteAll([]any{s["const"]}), valueName(inst))
	case "type":
		var want []string
		switch t := s["type"].(type) {
		case string:
			want = []string{typeWords[t]}
		case []any:
			for _, x := range t {
				want = append(want, typeWords[x.(string)])
			}
		}
		hint := ""
		if n, ok := d.nodes[pathKey(tokens)]; ok && n.val.Kind == yaml.ScalarNode && n.val.Style == 0 &&
			slices.Contains(want, "text") {
			hint = "; put it in quotes to make it text"
		}
		return at("expected %s; found %s%s", strings.Join(want, " or "), valueName(inst), hint)
	case "minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum":
		var bounds []string
		for _, b := range []struct{ kw, op string }{
			{"minimum", ">="}, {"exclusiveMinimum", ">"}, {"maximum", "<="}, {"exclusiveMaximum", "<"},
		} {
			if x, ok := s[b.kw]; ok {
				bounds = append(bounds, b.op+" "+fmt.Sprint(x))
			}
		}
		return at("expected a value %s; found %s", strings.Join(bounds, " and "), valueName(inst))
	case "minLength":
		if s["minLength"] == json.Number("1") {
			return at("must not be empty")
		}
		return at("expected at least %v characters; found %s", s["minLength"], valueName(inst))
	case "maxLength":
		return at("expected at most %v characters", s["maxLength"])
	case "minItems":
		n := 0
		if l, ok := inst.([]any); ok {
			n = len(l)
		}
		if s["minItems"] == json.Number("1") {
			return at("expected at least one item; found none")
		}
		return at("expected at least %v items; found %d", s["minItems"], n)
	case "maxItems":
		n := 0
		if l, ok := inst.([]any); ok {
			n = len(l)
		}
		return at("expected at most %v items; found %d", s["maxItems"], n)
	case "uniqueItems":
		l, _ := inst.([]any)
		for i := range l {
			for j := 0; j < i; j++ {
				if fmt.Sprint(l[i]) == fmt.Sprint(l[j]) {
					sub := append(append([]string(nil), tokens...), strconv.Itoa(i))
					return []located{{sub, d.errAt(sub, false, "%s is listed twice (also item %d); items must be unique", valueName(l[i]), j)}}
				}
			}
		}
		return at("items must be unique")
	case "pattern":
		desc, _ := s["description"].(string)
		return at("expected %s; found %s", desc, valueName(inst))
	}
	return at("%s", v.Message)
}
