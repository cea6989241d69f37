package runner

import (
	"bytes"
	"encoding/json"
	"runtime/debug"
)

// jsonRaw lets already-encoded JSON pass through audit.Canonical unchanged in meaning.
func jsonRaw(b []byte) json.RawMessage { return json.RawMessage(bytes.TrimSpace(b)) }

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
