package schemas

import (
	"encoding/json"
	"strings"
	"testing"
)

func TestCompile(t *testing.T) {
	for _, load := range []func() (any, any, error){
		func() (any, any, error) { return Plan() },
		func() (any, any, error) { return Results() },
		func() (any, any, error) { return Validation() },
		func() (any, any, error) { return AuditRecord() },
	} {
		s, tree, err := load()
		if err != nil || s == nil || tree == nil {
			t.Fatalf("compile: %v", err)
		}
	}
}

func TestSource(t *testing.T) {
	for _, name := range Names {
		b, err := Source(name)
		if err != nil {
			t.Fatal(err)
		}
		var v map[string]any
		if err := json.Unmarshal(b, &v); err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if id, _ := v["$id"].(string); !strings.HasPrefix(id, "https://") || v["$schema"] != "https://json-schema.org/draft/2020-12/schema" {
			t.Errorf("%s: $id %q $schema %v", name, id, v["$schema"])
		}
	}
	if _, err := Source("report"); err == nil {
		t.Error("unknown schema name accepted")
	}
}

// TestPlanSchemaEnumsDocumented keeps the enumerations of the plan schema and the values
// `rankplan init` offers in step: both are part of the interface scripts rely on.
func TestPlanSchemaEnums(t *testing.T) {
	_, tree, err := Plan()
	if err != nil {
		t.Fatal(err)
	}
	defs := tree.(map[string]any)["$defs"].(map[string]any)
	enum := func(def, prop string) []string {
		var out []string
		for _, v := range defs[def].(map[string]any)["properties"].(map[string]any)[prop].(map[string]any)["enum"].([]any) {
			out = append(out, v.(string))
		}
		return out
	}
	for _, tc := range []struct {
		def, prop, want string
	}{
		{"pvalue", "method", "asymptotic exact permutation auto"},
		{"posthoc", "method", "none dunn conover dscf nemenyi rank-sum"},
		{"posthoc", "adjust", "none bonferroni sidak holm hochberg hommel bh by"},
	} {
		if got := strings.Join(enum(tc.def, tc.prop), " "); got != tc.want {
			t.Errorf("%s.%s: %s, want %s", tc.def, tc.prop, got, tc.want)
		}
	}
}
