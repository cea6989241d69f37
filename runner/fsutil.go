package runner

import (
	"bytes"
	"encoding/json"
	"runtime/debug"
)

// jsonRaw lets already-encoded JSON pass through audit.Canonical unchanged in meaning.
func jsonRaw(b []byte) json.RawMessage { return json.RawMessage(bytes.TrimSpace(b)) }

// EncodeJSON writes v as indented JSON with a final newline and no HTML escaping.
func EncodeJSON(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// buildSetting returns a build setting recorded in the binary (e.g. GOAMD64), or "".
func buildSetting(key string) string {
	if bi, ok := debug.ReadBuildInfo(); ok {
		for _, s := range bi.Settings {
			if s.Key == key {
				return s.Value
			}
		}
	}
	return ""
}
