package audit

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCanonicalRFC8785Files runs the sample vectors of the RFC 8785 authors
// (cyberphone/json-canonicalization testdata/input/*.json → testdata/output/*.json,
// see testdata/jcs/README.md) through Canonical as raw JSON.
func TestCanonicalRFC8785Files(t *testing.T) {
	names := []string{"arrays", "french", "structures", "unicode", "values", "weird"}
	for _, name := range names {
		t.Run(name, func(t *testing.T) {
			in, err := os.ReadFile(filepath.Join("testdata", "jcs", "input", name+".json"))
			if err != nil {
				t.Fatal(err)
			}
			want, err := os.ReadFile(filepath.Join("testdata", "jcs", "output", name+".json"))
			if err != nil {
				t.Fatal(err)
			}
			got, err := Canonical(json.RawMessage(in))
			if err != nil {
				t.Fatalf("Canonical: %v", err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("got  %s\nwant %s", got, want)
			}
		})
	}
}

// TestCanonicalRFC8785GoValue builds the RFC 8785 §3.2.2 example as a Go
// value (not text) and compares with the authors' expected bytes
// (cyberphone/json-canonicalization testdata/output/values.json).
func TestCanonicalRFC8785GoValue(t *testing.T) {
	// RFC 8785 §3.2.2 input, written here as a Go value rather than text.
	v := map[string]any{
		"numbers":  []any{333333333.33333329, 1e30, 4.50, 2e-3, 0.000000000000000000000000001},
		"string":   "\u20ac$\u000F\u000aA'\u0042\u0022\u005c\\\"/",
		"literals": []any{nil, true, false},
	}
	want, err := os.ReadFile(filepath.Join("testdata", "jcs", "output", "values.json"))
	if err != nil {
		t.Fatal(err)
	}
	got, err := Canonical(v)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("got  %s\nwant %s", got, want)
	}
}

// TestCanonicalNumbers checks the number serialisation samples of RFC 8785
// Appendix B, as listed in the authors' draft (cyberphone/json-canonicalization
// rfc/draft-rundgren-json-canonicalization-scheme.xml, section "Number
// Serialization Samples"), including the NaN and Infinity error rows.
func TestCanonicalNumbers(t *testing.T) {
	tests := []struct {
		bits uint64
		want string // "" means an error is required
	}{
		{0x0000000000000000, "0"},
		{0x8000000000000000, "0"},
		{0x0000000000000001, "5e-324"},
		{0x8000000000000001, "-5e-324"},
		{0x7fefffffffffffff, "1.7976931348623157e+308"},
		{0xffefffffffffffff, "-1.7976931348623157e+308"},
		{0x7fffffffffffffff, ""}, // NaN
		{0x7ff0000000000000, ""}, // Infinity
		{0x44b52d02c7e14af5, "9.999999999999997e+22"},
		{0x44b52d02c7e14af6, "1e+23"},
		{0x44b52d02c7e14af7, "1.0000000000000001e+23"},
		{0x444b1ae4d6e2ef4e, "999999999999999700000"},
		{0x444b1ae4d6e2ef4f, "999999999999999900000"},
		{0x444b1ae4d6e2ef50, "1e+21"},
		{0x444b1ae4d6e2ef51, "1.0000000000000001e+21"},
		{0x41b3de4355555553, "333333333.3333332"},
		{0x41b3de4355555554, "333333333.33333325"},
		{0x41b3de4355555555, "333333333.3333333"},
		{0x41b3de4355555556, "333333333.3333334"},
		{0x41b3de4355555557, "333333333.33333343"},
	}
	for _, tc := range tests {
		x := math.Float64frombits(tc.bits)
		got, err := Canonical([]float64{x})
		if tc.want == "" {
			if err == nil {
				t.Errorf("%016x: got %s, want an error", tc.bits, got)
			}
			continue
		}
		if err != nil {
			t.Errorf("%016x: %v", tc.bits, err)
			continue
		}
		if string(got) != "["+tc.want+"]" {
			t.Errorf("%016x: got %s, want [%s]", tc.bits, got, tc.want)
		}
	}
}

// TestCanonicalDiffersFromEncodingJSON shows the cases where Go's
// encoding/json output is not JCS and Canonical is (RFC 8785 §3.2.2.2
// strings, §3.2.2.3 numbers, §3.2.3 sorting by UTF-16 code units).
func TestCanonicalDiffersFromEncodingJSON(t *testing.T) {
	type zthenA struct {
		Z int `json:"z"`
		A int `json:"a"`
	}
	tests := []struct {
		name string
		v    any
		want string
	}{
		// U+20AC is one code unit 0x20AC; U+1F600 is the surrogate pair
		// D83D DE00. UTF-16 order puts € first (0x20AC < 0xD83D), as does UTF-8.
		{"euro before emoji", map[string]int{"\U0001F600": 2, "\u20ac": 1}, `{"€":1,"😀":2}`},
		// U+FB01 (0xFB01) sorts after U+1F600 (0xD83D...) in UTF-16, before it
		// in UTF-8 byte order, which encoding/json uses.
		{"emoji before fi ligature", map[string]int{"\ufb01": 1, "\U0001F600": 2}, `{"😀":2,"ﬁ":1}`},
		{"no HTML escaping", map[string]string{"s": "<a&b>"}, `{"s":"<a&b>"}`},
		{"minus zero", []float64{math.Copysign(0, -1)}, `[0]`},
		{"struct fields sorted", zthenA{Z: 1, A: 2}, `{"a":2,"z":1}`},
		{"exponent form", []float64{1e21, 1e-7, 1e20}, `[1e+21,1e-7,100000000000000000000]`},
		{"control and U+2028", []string{"\u0001\u001f\u2028"}, `["\u0001\u001f` + "\u2028" + `"]`},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := Canonical(tc.v)
			if err != nil {
				t.Fatal(err)
			}
			if string(got) != tc.want {
				t.Errorf("got %s, want %s", got, tc.want)
			}
		})
	}
	// The first case that encoding/json gets wrong, shown explicitly.
	std, _ := json.Marshal(map[string]int{"\ufb01": 1, "\U0001F600": 2})
	if string(std) == `{"😀":2,"ﬁ":1}` {
		t.Errorf("encoding/json now sorts by UTF-16; the test above no longer shows a difference")
	}
}

func TestCanonicalErrors(t *testing.T) {
	tests := []struct {
		name string
		v    any
	}{
		{"NaN", math.NaN()},
		{"Inf", math.Inf(-1)},
		{"duplicate keys", json.RawMessage(`{"a":1,"a":2}`)},
		{"lone surrogate", json.RawMessage(`"\ud800"`)},
		{"channel", make(chan int)},
	}
	for _, tc := range tests {
		if got, err := Canonical(tc.v); err == nil {
			t.Errorf("%s: got %s, want an error", tc.name, got)
		}
	}
}

func TestDigest(t *testing.T) {
	// SHA-256("abc") from FIPS 180-2 Appendix B.1.
	const abc = "sha256:ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
	if got := Digest([]byte("abc")); got != abc {
		t.Errorf("Digest(abc) = %s, want %s", got, abc)
	}
	if !isDigest(abc) || isDigest(strings.ToUpper(abc)) || isDigest(abc[:70]) || !isDigest(GenesisPrev) {
		t.Error("isDigest accepts or rejects the wrong strings")
	}
	p := filepath.Join(t.TempDir(), "f")
	if err := os.WriteFile(p, []byte("abc"), 0o644); err != nil {
		t.Fatal(err)
	}
	d, n, err := DigestFile(p)
	if err != nil || d != abc || n != 3 {
		t.Errorf("DigestFile = %s, %d, %v", d, n, err)
	}
	if _, _, err := DigestFile(filepath.Join(t.TempDir(), "missing")); err == nil {
		t.Error("DigestFile of a missing file: no error")
	}
}
