package audit

import (
	"encoding/json"
	"slices"
	"testing"
)

func TestDiffTable(t *testing.T) {
	tests := []struct {
		name string
		a, b string
		want []string
	}{
		{"equal", `{"a":1,"b":[1,2]}`, `{"b":[1,2],"a":1}`, nil},
		{"scalar", `{"alpha":0.05}`, `{"alpha":0.01}`, []string{"alpha"}},
		{"nested", `{"analyses":[{"pvalue":{"method":"exact"}}]}`, `{"analyses":[{"pvalue":{"method":"auto"}}]}`,
			[]string{"analyses[0].pvalue.method"}},
		{"added and removed, sorted", `{"b":1,"d":2}`, `{"a":0,"b":1,"c":3}`, []string{"a", "c", "d"}},
		{"array longer", `{"x":[1]}`, `{"x":[1,2,3]}`, []string{"x[1]", "x[2]"}},
		{"array shorter", `[1,2]`, `[1]`, []string{"[1]"}},
		{"type change", `{"x":{"y":1}}`, `{"x":[1]}`, []string{"x"}},
		{"null vs false", `{"x":null}`, `{"x":false}`, []string{"x"}},
		{"string vs number", `{"x":"1"}`, `{"x":1}`, []string{"x"}},
		{"root scalar", `1`, `2`, []string{"(top level)"}},
		{"root type", `{}`, `[]`, []string{"(top level)"}},
		// RFC 8785 §3.2.3 order by UTF-16 code units: "€" (0x20AC) < "😀"
		// (0xD83D 0xDE00) < "ﬁ" (0xFB01); UTF-8 byte order would put ﬁ second.
		{"utf16 order", `{"ﬁ":1,"😀":1,"€":1}`, `{"ﬁ":2,"😀":2,"€":2}`, []string{"€", "😀", "ﬁ"}},
		{"document order", `{"z":{"b":1,"a":1},"m":[{"k":1}]}`, `{"z":{"b":2,"a":2},"m":[{"k":2}]}`,
			[]string{"m[0].k", "z.a", "z.b"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := Diff(json.RawMessage(tc.a), json.RawMessage(tc.b))
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got, tc.want) {
				t.Errorf("Diff = %q, want %q", got, tc.want)
			}
		})
	}
}

func TestDiffErrors(t *testing.T) {
	bad := []string{``, `{`, `{"a":1,"a":2}`, `[1] [2]`, `NaN`}
	for _, s := range bad {
		if _, err := Diff(json.RawMessage(s), json.RawMessage(`{}`)); err == nil {
			t.Errorf("Diff(%q, {}): no error", s)
		}
		if _, err := Diff(json.RawMessage(`{}`), json.RawMessage(s)); err == nil {
			t.Errorf("Diff({}, %q): no error", s)
		}
	}
}

func TestDiffDoesNotMutate(t *testing.T) {
	a := json.RawMessage(`{ "b" : 1 , "a" : 2 }`)
	b := json.RawMessage(`{"a":3}`)
	ca, cb := append(json.RawMessage(nil), a...), append(json.RawMessage(nil), b...)
	if _, err := Diff(a, b); err != nil {
		t.Fatal(err)
	}
	if string(a) != string(ca) || string(b) != string(cb) {
		t.Error("Diff changed its arguments")
	}
}
