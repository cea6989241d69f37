package audit

import (
	"bytes"
	"encoding/json"
	"fmt"
	"slices"
	"strconv"
	"unicode/utf16"

	"github.com/gowebpki/jcs"
)

// Diff lists the paths at which two JSON values differ, such as "alpha" or
// "analyses[0].pvalue.method": changed values, and keys or items present on one side
// only. The order is deterministic: document order with object keys sorted as RFC 8785
// §3.2.3 sorts them (by UTF-16 code units), list items by index. Invalid JSON, duplicate
// keys (which would hide one of the two values) and data after the value are errors. A path is listed
// once, at the highest level where the two sides stop being comparable (a value that
// changes type is one difference). Numbers are compared by their decimal text.
func Diff(a, b json.RawMessage) ([]string, error) {
	va, err := decodeNumbers(a)
	if err != nil {
		return nil, err
	}
	vb, err := decodeNumbers(b)
	if err != nil {
		return nil, err
	}
	var out []string
	diffValue("", va, vb, &out)
	return out, nil
}

func decodeNumbers(b []byte) (any, error) {
	// jcs rejects duplicate keys and trailing data, which encoding/json accepts.
	if _, err := jcs.Transform(b); err != nil {
		return nil, fmt.Errorf("diff: %w", err)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var v any
	if err := dec.Decode(&v); err != nil {
		return nil, fmt.Errorf("diff: %w", err)
	}
	return v, nil
}

// lessUTF16 orders strings by their UTF-16 code units (RFC 8785 §3.2.3).
func lessUTF16(a, b string) int {
	ua, ub := utf16.Encode([]rune(a)), utf16.Encode([]rune(b))
	return slices.Compare(ua, ub)
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func diffValue(path string, a, b any, out *[]string) {
	here := path
	if here == "" {
		here = "(top level)"
	}
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok {
			*out = append(*out, here)
			return
		}
		keys := make([]string, 0, len(x)+len(y))
		for k := range x {
			keys = append(keys, k)
		}
		for k := range y {
			if _, dup := x[k]; !dup {
				keys = append(keys, k)
			}
		}
		slices.SortFunc(keys, lessUTF16)
		for _, k := range keys {
			va, ina := x[k]
			vb, inb := y[k]
			if !ina || !inb {
				*out = append(*out, join(path, k))
				continue
			}
			diffValue(join(path, k), va, vb, out)
		}
	case []any:
		y, ok := b.([]any)
		if !ok {
			*out = append(*out, here)
			return
		}
		for i := 0; i < max(len(x), len(y)); i++ {
			p := path + "[" + strconv.Itoa(i) + "]"
			if i >= len(x) || i >= len(y) {
				*out = append(*out, p)
				continue
			}
			diffValue(p, x[i], y[i], out)
		}
	default:
		if a != b {
			*out = append(*out, here)
		}
	}
}
